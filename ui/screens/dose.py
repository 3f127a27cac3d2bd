"""Dose balance: the dose for the target, where it goes, and how it moves with coverage and d32."""

import math

import numpy as np
import pandas as pd
import streamlit as st

from ui import charts, state
from ui.charts import MN, UM, num

state.ensure_case()
st.title("Dose balance")
result = state.needs_valid_case()
s = result["summary"]
case = result["case"]
target = s["target"]
currency = case.currency
has_cmc = case.surfactant is None or case.surfactant.cmc is not None  # a blend: its mixed micelles
d32 = state.view("d32_info")  # where the d32 the dose uses comes from (lab or plant)
plant = d32["scaleup"] is not None

# ---- target and result ---------------------------------------------------------------------
target_text = {
    "coverage": f"coverage {num(target['value_si'], '', 3)}",
    "tension": f"tension {num(target['value_si'] * MN, 'mN/m')}",
    "free_concentration": f"free concentration {num(target['value_si'], 'mM')}",
}[target["kind"]]
if target.get("given") == "surface_load":  # a protein's surface load, solved as the coverage it is
    target_text = (f"surface load {num(target['surface_load_kg_m2'] * 1e6, 'mg/m²')} "
                   f"(coverage {num(target['value_si'], '', 3)} of the saturation load)")
d32_text = (f"plant d32 {num(s['d32_m'] * UM, 'µm')} (scale-up; lab d32 {num(d32['lab_d32_m'] * UM, 'µm')})"
            if plant else f"d32 {num(s['d32_m'] * UM, 'µm')}")
st.caption(f"Target: **{target_text}** · {d32_text} · "
           f"area {num(s['interfacial_area_m2'], 'm²')} · safety margin {num(target['margin'] * 100, '%', 3)} "
           "(applied on the Plan page)")

if plant:
    st.info("**Plant d32.** " + d32["note"], icon=":material/trending_up:")
elif case.drops.distribution in (None, "d32"):
    with st.container(border=True):
        state.field("drops.d32", "Sauter mean diameter d32 of the case [length, e.g. 2.4 µm]",
                    help="the same field as on the Drops and bubbles page; the dose below follows it")
for w in s.get("warnings", []):
    st.warning("**Check:** " + state.md_escape(w), icon=":material/warning:")
if not s["feasible"]:
    st.warning("**The target is not reachable at equilibrium.** " + state.view("unreachable_text"),
               icon=":material/block:")
    dose = None
else:
    dose = s["dose"]
    with st.container(border=True):
        charts.tiles([
            ("Product as delivered", num(dose["kg_product"], "kg"), "per batch, before the margin"),
            ("Active", num(dose["kg_active"], "kg"), f"per batch: {num(dose['mol'], 'mol')}"),
            ("Of batch mass", num(dose["wt_percent"], "wt%"), "product as delivered, per batch mass"),
            ("Per litre of batch", num(dose["g_per_l"], "g/L"), "product as delivered"),
            ("Per interfacial area", num(dose["mg_per_m2"], "mg/m²"), "active per m² of interface"),
            ("On dispersed phase", num(dose.get("percent_on_dispersed"), "%"),
             "product as delivered, by mass of the dispersed phase"),
            ("Cost per batch", num(dose.get("cost"), currency), "product as delivered, before the margin"),
            ("Largest coverage", num(s["max_coverage"], "(-)"), "the most any dose reaches: the coverage at the CMC"
             if has_cmc else "no CMC given: no micelles, the coverage approaches 1"),
        ])

st_ = s["state"]
charts.tiles([
    ("Free monomer", num(st_["free_concentration_mol_m3"], "mM"), "in the continuous phase, at equilibrium"),
    ("Coverage", num(st_["coverage"], "(-)"), "surface excess over its saturated value"),
    ("Surface excess", num(st_["surface_excess_mol_m2"] * 1e6, "µmol/m²")),
    ("Surface load", num(st_.get("surface_load_kg_m2") and st_["surface_load_kg_m2"] * 1e6, "mg/m²"),
     "adsorbed mass per area") if st_.get("tension_N_m") is None else
    ("Tension", num(st_["tension_N_m"] * MN, "mN/m")),
])
if st_.get("tension_N_m") is None and st_.get("plateau_tension_N_m") is not None:
    st.caption(f"Measured plateau tension (full coverage): {num(st_['plateau_tension_N_m'] * MN, 'mN/m')}; "
               "the model gives no tension for a protein or polymer.")
if st_["at_cmc_ceiling"]:
    st.caption("The state shown is at the CMC ceiling.")

# ---- where the dose goes, dose against coverage ----------------------------------------------
left, right = st.columns(2, gap="large")
with left:
    st.subheader("Where the dose goes")
    rows = state.view("dose_split")
    charts.draw("dose_split", rows, key="chart_split")
    st.table(pd.DataFrame(
        [{"where": r["place"], "active [kg]": num(r["kg_active"], "", 4), "amount [mol]": num(r["mol"], "", 4),
          "share [%]": f"{r['percent']:.1f}"} for r in rows]).set_index("where"))
with right:
    st.subheader("Dose against coverage")
    charts.draw("dose_vs_coverage", state.view("dose_vs_coverage"), key="chart_cov")
    if has_cmc:
        st.caption("Above the CMC ceiling no dose raises the coverage: extra surfactant forms micelles.")
    else:
        st.caption("No CMC is given (a protein or polymer emulsifier): no micelles form, and the dose rises "
                   "steeply as the coverage nears 1.")

# ---- dose against d32 with a what-if slider -------------------------------------------------
st.subheader("Dose against d32 (what if the drops come out different)")
curve = state.view("dose_vs_d32")
grid = np.geomspace(curve["d32_m"][0], curve["d32_m"][-1], 41)
options = sorted({float(f"{d * UM:.3g}") for d in grid} | {float(f"{s['d32_m'] * UM:.4g}")})
default = float(f"{s['d32_m'] * UM:.4g}")
if st.session_state.get("whatif_d32") not in options:
    st.session_state["whatif_d32"] = default
c1, c2 = st.columns([2, 1], gap="large")
with c2:
    pick = st.select_slider("What-if " + ("plant " if plant else "") + "d32 [µm]", options=options, key="whatif_d32",
                            format_func=lambda v: f"{v:g}")
    own = pick == default  # the case's own d32 (rounded for the slider): no change to report
    what = s if own else state.view("summary", d32=pick / UM)
    if what["feasible"]:
        kg = what["dose"]["kg_product"]
        delta = None
        if not own and dose is not None and abs(kg - dose["kg_product"]) > 1e-9 * abs(kg):
            delta = f"{kg - dose['kg_product']:+.3g} kg against the case"
        st.metric(f"Product at d32 = {pick:g} µm", num(kg, "kg"), delta=delta, delta_color="inverse")
        st.caption(f"area {num(what['interfacial_area_m2'], 'm²')}, {num(what['dose']['wt_percent'], 'wt%')} "
                   "of the batch" + (" (the case's own d32)" if own else ""))
    else:
        kg = math.nan
        st.metric(f"Product at d32 = {pick:g} µm", "not reachable")
    if not own and not plant and case.drops.distribution in (None, "d32"):
        if st.button(f"Use d32 = {pick:g} µm in the case", key="btn_whatif_apply"):
            state.put("drops.d32", f"{pick:g} um")
            st.session_state.pop(state.PREFIX + "drops.d32", None)
            st.rerun()
    elif not own and plant:
        st.caption("What-if only: the plant d32 comes from the scale-up section (Scale-up page).")
with c1:
    charts.draw("dose_vs_d32", {**curve, "case_label": "plant" if plant else "case"}, pick / UM, kg,
                key="chart_d32")
st.caption("Smaller drops mean more interface to cover: the dose climbs towards the interface term as d32 "
           "falls. Equilibrium estimate; confirm by trial.")
