"""Scenarios side by side: named variants of the case in one table and on one dose-versus-coverage chart."""

import altair as alt
import pandas as pd
import streamlit as st

from sizing import views
from sizing.case import parse_case
from sizing.errors import InputError
from ui import state
from ui.charts import UM, num

state.ensure_case()
st.title("Scenarios")
st.caption("Keep variants of the case under a name (lab against plant d32, two surfactants, two batch sizes) "
           "and compare them: one table, one dose-against-coverage chart. Values that differ from the first "
           "scenario are marked ◆.")
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

rows, curves = [], []
for label, data in scen.items():
    try:
        case = parse_case(data, st.session_state[state.BASE])
        s = views.summary(case)
        info = views.d32_info(case)
        cov = views.dose_vs_coverage(case, points=40)
    except InputError as exc:
        rows.append({"scenario": label, "problem": state.scrub(exc.problems[0] if exc.problems else str(exc))})
        continue
    dose = s["dose"] or {}
    rows.append({"scenario": label,
                 "d32 for the dose [µm]": num(info["used_d32_m"] * UM, ""),
                 "d32 source": "plant (scale-up)" if info["scaleup"] else "case",
                 "batch [m³]": num(s["phases"]["batch_volume_m3"], ""),
                 "area [m²]": num(s["interfacial_area_m2"], ""),
                 "target coverage [-]": num(s["state"]["coverage"], ""),
                 "product [kg/batch]": num(dose.get("kg_product"), "") if dose else "not reachable",
                 "product [wt%]": num(dose.get("wt_percent"), "") if dose else "-",
                 "surfactant": str(data.get("surfactant", {}).get("name", "blend" if "blend" in data else ""))})
    curves.append(pd.DataFrame({"coverage": cov["coverage"], "kg_product": cov["kg_product"], "scenario": label}))

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
with st.container(horizontal=True):
    drop = st.selectbox("Scenario", list(scen), key="sel_scenario")
    if st.button("Open it as the working case", key="btn_open_scenario"):
        state.set_case(views.case_copy(scen[drop]), f"scenario {drop}")
        st.rerun()
    if st.button("Remove it", key="btn_remove_scenario"):
        scen.pop(drop, None)
        st.rerun()
