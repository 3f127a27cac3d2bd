"""Scale-up and uncertainty: plant d32 with its band, the Monte Carlo spread, the tornado, the knee."""

import importlib

import streamlit as st

from ui import state

state.ensure_case()
st.title("Scale-up and uncertainty")
result = state.needs_valid_case()


def _have(name: str) -> bool:
    try:
        importlib.import_module(name)
    except ImportError:
        return False
    return True


if not (_have("sizing.scaleup") or _have("sizing.uncertainty") or _have("sizing.achievable")):
    st.info("Scale-up, uncertainty and the achievable-d32 knee are not available in this version.",
            icon=":material/info:")
