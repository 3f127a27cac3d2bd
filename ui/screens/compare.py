"""Scenarios side by side: named variants of the case in one table and on one dose-versus-coverage chart."""

import altair as alt
import pandas as pd
import streamlit as st

from sizing import views
from sizing.case import parse_case
from sizing.errors import InputError
from ui import charts, state
from ui.charts import num

state.ensure_case()
st.title("Scenarios")
st.caption("Keep variants of the case under a name (lab against plant d32, two surfactants, two batch sizes) "
           "and compare them: one table, one dose-against-coverage chart. Values that differ from the first "
           "scenario are marked ◆. Each chart downloads as SVG or PNG (the buttons under it; the chart's own "
           "toolbar also offers 'Download as PNG').")
SCEN = state.SCENARIOS
scen: dict = st.session_state.setdefault(SCEN, {})

c1, c2 = st.columns([2, 1])
name = c1.text_input("Name for the case as it is now", value=str(state.get("case.title") or "scenario"),
                     key="scenario_name")
if c2.button("Keep as a scenario", key="btn_keep_scenario", type="primary"):
    scen[name.strip() or "scenario"] = views.case_copy(state.ensure_case())
    st.rerun()

if not scen:
    st.info("No scenario kept yet: edit the case on the other pages, then keep each variant here.",
            icon=":material/info:")
    st.stop()

#: the page's column names (kept as they were), for the keys of views.compare_view
LABELS = {"d32_um": "d32 for the dose [µm]", "d32_source": "d32 source", "batch_m3": "batch [m³]",
          "area_m2": "area [m²]", "coverage": "target coverage [-]", "kg_product": "product [kg/batch]",
          "kg_active": "active [kg/batch]", "wt_percent": "product [wt%]",
          "where": "where the surfactant goes", "surfactant": "surfactant"}

good, bad = [], []
for label, data in scen.items():
    try:
        good.append((label, parse_case(data, st.session_state[state.BASE])))
    except InputError as exc:
        bad.append({"scenario": label, "problem": state.scrub(exc.problems[0] if exc.problems else str(exc))})
view = views.compare_view(good, points=40) if good else {"rows": [], "curves": []}
rows = []
for r in view["rows"]:
    row = {"scenario": r["scenario"]}
    for key, name in LABELS.items():
        v = r[key]
        row[name] = v if isinstance(v, str) else num(v, "") if v is not None else "not reachable"
    rows.append(row)
rows += bad
curves = [pd.DataFrame({"coverage": c["coverage"], "kg_product": c["kg_product"], "scenario": c["scenario"]})
          for c in view["curves"]]

table = pd.DataFrame(rows).set_index("scenario")
if len(table) > 1:  # mark what differs from the first scenario
    first = table.iloc[0]
    table = table.apply(lambda col: [v if i == 0 or v == first[col.name] else f"◆ {v}"
                                     for i, v in enumerate(col)])
st.table(table)
if curves:
    df = pd.concat(curves)
    chart = alt.Chart(df).mark_line(strokeWidth=2).encode(
        x=alt.X("coverage:Q", title="coverage theta [-]", scale=alt.Scale(domain=[0, 1])),
        y=alt.Y("kg_product:Q", title="dose of product per batch [kg]"),
        color=alt.Color("scenario:N", title="scenario"),
        tooltip=["scenario:N", alt.Tooltip("coverage:Q", format=".3f"), alt.Tooltip("kg_product:Q", format=".4g")],
    ).properties(height=340)
    st.altair_chart(chart, width="stretch", key="chart_scenarios")
    charts.export_buttons(chart.to_dict(), "chart_scenarios")
with st.container(horizontal=True):
    drop = st.selectbox("Scenario", list(scen), key="sel_scenario")
    if st.button("Open it as the working case", key="btn_open_scenario"):
        state.set_case(views.case_copy(scen[drop]), f"scenario {drop}")
        st.rerun()
    if st.button("Remove it", key="btn_remove_scenario"):
        scen.pop(drop, None)
        st.rerun()
