"""The workbench entry: ``sizing app`` runs ``streamlit run`` on this file."""

import sys
from pathlib import Path

import streamlit as st

if __package__ in (None, "") and str(Path(__file__).resolve().parents[1]) not in sys.path:
    sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # a source checkout

from ui import state  # noqa: E402

# the page icon is a file of the package: an icon name would make the browser fetch it from a font server
st.set_page_config(page_title="sizing workbench", page_icon=str(Path(__file__).resolve().parent / "icon.png"),
                   layout="wide")

HERE = Path(__file__).resolve().parent / "screens"
CASE_PAGE = st.Page(str(HERE / "case.py"), title="Case", icon=":material/description:", url_path="case")


def _start() -> None:
    """The address without a page ('/') opens the Case page, so that '/case' is a page of its own."""
    st.switch_page(CASE_PAGE, query_params=dict(st.query_params))


pages = [
    st.Page(_start, title="Start", default=True, visibility="hidden", url_path="start"),
    CASE_PAGE,
    st.Page(str(HERE / "drops.py"), title="Drops and bubbles", icon=":material/bubble_chart:", url_path="drops"),
    st.Page(str(HERE / "surfactant.py"), title="Surfactant", icon=":material/science:", url_path="surfactant"),
    st.Page(str(HERE / "process.py"), title="Process and storage", icon=":material/thermostat:", url_path="process"),
    st.Page(str(HERE / "dose.py"), title="Dose balance", icon=":material/balance:", url_path="dose"),
    st.Page(str(HERE / "scaleup.py"), title="Scale-up and uncertainty", icon=":material/trending_up:",
            url_path="scaleup"),
    st.Page(str(HERE / "plan.py"), title="Plan", icon=":material/assignment:", url_path="plan"),
    st.Page(str(HERE / "trials.py"), title="Plant trials", icon=":material/factory:", url_path="trials"),
    st.Page(str(HERE / "compare.py"), title="Scenarios", icon=":material/compare:", url_path="scenarios"),
    st.Page(str(HERE / "library.py"), title="Library", icon=":material/menu_book:", url_path="library"),
]
page = st.navigation(pages)
state.ensure_case()
if st.session_state.get("_page") != page.url_path:
    # a field widget of the last page would come back empty on this one (Streamlit forgets it):
    # drop them all, each field is seeded again from the case
    state.forget_widgets()
    st.session_state["_page"] = page.url_path
state.sidebar_status()
try:
    page.run()
finally:  # also after st.stop() and st.rerun(): the working case is saved after every run
    state.save_workspace()
