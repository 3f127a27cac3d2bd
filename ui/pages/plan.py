"""Plan: the recommended charge, the trial matrix, the cautions and the downloads."""

import importlib
import json
import re

import streamlit as st

from ui import state

state.ensure_case()
st.title("Plan")
result = state.needs_valid_case()
slug = re.sub(r"[^a-z0-9]+", "_", str(state.get("case.title") or "case").lower()).strip("_") or "case"

try:
    plan = importlib.import_module("sizing.plan")
except ImportError:
    plan = None

if plan is None:
    st.info("The recommendation, the trial matrix and the HTML report are not available in this version; "
            "the solve result and the case file can be downloaded.", icon=":material/info:")
    c1, c2 = st.columns(2)
    c1.download_button("result.json", data=json.dumps(result["summary"], indent=2), file_name="result.json",
                       mime="application/json", key="dl_result_json")
    c2.download_button("case TOML", data=result["toml"], file_name=f"{slug}.toml", mime="application/toml",
                       key="dl_plan_case")

st.subheader("Cautions")
for line in state.CAUTIONS:
    st.markdown(f"- {line}")
