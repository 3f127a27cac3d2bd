"""Plan: the recommended charge, the trial matrix, the cautions and the downloads."""

import re

import pandas as pd
import streamlit as st

from sizing.errors import InputError
from ui import charts, state
from ui.charts import MN, num


def _recipe_fields() -> None:
    st.subheader("The current recipe charge")
    state.field("recipe.current_charge", "Current recipe charge per batch [mass, e.g. 50 kg]", optional=True,
                help="optional: today's charge, to see where it goes and its reserve beyond the demand")
    if state.get("recipe.current_charge"):
        state.field("recipe.basis", "The current charge is given as", kind="choice", options=["product", "active"],
                    help="product as delivered, or active matter")
    elif state.get("recipe.basis") is not None:  # no charge left: no recipe section
        state.put("recipe.basis", None)


state.ensure_case()
st.title("Plan")
# a bad recipe charge stops the plan: its field comes first so that it can be mended here
recipe_first = any(p.startswith("recipe") for p in state.check()["by_field"])
if recipe_first:
    _recipe_fields()
result = state.needs_valid_case()
slug = re.sub(r"[^a-z0-9]+", "_", str(state.get("case.title") or "case").lower()).strip("_") or "case"

try:
    plan = state.view("plan_view")
except ImportError:  # pragma: no cover - an engine without the plan
    plan = None
    st.info("The recommendation, the trial matrix and the report are not available in this version.",
            icon=":material/info:")
except InputError as exc:
    plan = None
    for line in exc.problems:
        st.error(line, icon=":material/error:")

if plan is not None:
    r = plan["result"]
    rec = r["recommendation"]
    name = result["case"].active_name
    sf = result["case"].surfactant
    plateau = sf.plateau_tension.si if sf is not None and sf.plateau_tension is not None else None
    for w in r.get("warnings", []):
        st.warning("**Check:** " + state.md_escape(w), icon=":material/warning:")
    if not rec["reaches_target"]:
        st.warning("**The target is not reachable at equilibrium.** " + r.get("unreachable", "")
                   + ". The charge below is built on the dose that reaches the CMC ceiling.",
                   icon=":material/block:")
        for o in r.get("options", []):
            st.markdown(f"- {o}")
    with st.container(border=True):
        st.subheader("Recommended charge per batch")
        charts.tiles([
            ("Product as delivered", num(rec["kg_product_per_batch"], "kg", 4), f"{name}, per batch"),
            ("Active", num(rec["kg_active_per_batch"], "kg", 4), f"per batch: {num(rec['mol_per_batch'], 'mol')}"),
            ("Of batch mass", num(rec["wt_percent"], "wt%"), "product as delivered, per batch mass"),
            ("Cost per batch", num(rec["cost_per_batch"], rec["currency"], 4), "product as delivered"),
        ])
        st.caption(
            f"Built on {num(rec['base_kg_product'], 'kg')} of product "
            + ("at the CMC ceiling" if not rec["reaches_target"] else
               f"covering P{r['uncertainty']['percentile']:g} of the spreads" if r.get("uncertainty")
               else "for the target")
            + ", margin "
            f"{num(100 * rec['margin'], '%')}, rounded up to {num(rec['increment_kg'], 'kg')} "
            f"({rec['increment_source']}). At the charge: coverage {num(rec['coverage_at_charge'], '')}, "
            f"free monomer {num(rec['free_concentration_at_charge_mol_m3'], 'mM')}"
            + (f", tension {num(rec['tension_at_charge_N_m'] * MN, 'mN/m')}" if rec["tension_at_charge_N_m"] else "")
            + (f", measured plateau tension {num(plateau * MN, 'mN/m')}" if plateau else "")
            + ".")

    if not recipe_first:
        _recipe_fields()
    rp = r.get("recipe")
    if rp:
        charts.tiles([
            ("Current charge", num(rp["current_charge_kg_product"], "kg", 4),
             f"product per batch ({num(rp['current_charge_kg_active'], 'kg')} active)"),
            ("Against the recommended", num(rp["times_recommended_charge"], "×"), "current over recommended charge"),
            ("Coverage it gives", num(rp["coverage"], "(-)"),
             f"free {num(rp['free_concentration_mol_m3'], 'mM')} at equilibrium"),
            ("Reserve", num(100 * rp["reserve_share"], "% of the charge"), "beyond the equilibrium demand")
            if rp["current_charge_kg_product"] >= rp["demand_kg_product"] else
            ("Short of the demand", num(rp["demand_kg_product"], "kg"), "product needed for the target"),
        ])
        total = sum(v or 0 for v in rp["split_mol"].values()) or 1.0
        st.caption("Where it goes: " + ", ".join(f"{k} {num(100 * (v or 0) / total, '%', 3)}"
                                                 for k, v in rp["split_mol"].items() if v))
        st.caption("The reserve may be doing other work (storage stability, texture, process losses). Lower a "
                   "recipe charge only through trials, within the legal limits for the product and with "
                   "qualified people.")

    info = state.view("d32_info")
    if info["scaleup"]:
        st.info(f"**Dosed for the plant d32 {num(info['used_d32_m'] * 1e6, 'µm')}** predicted by the scale-up "
                f"section (lab d32 {num(info['lab_d32_m'] * 1e6, 'µm')}); see the Scale-up page for its band.",
                icon=":material/trending_up:")

    st.subheader("Trial matrix")
    rows = [{"level [× charge]": f"{t['level']:g}", "product [kg/batch]": num(t["kg_product"], "", 4),
             "active [kg/batch]": num(t["kg_active"], "", 4), "product [wt% of batch]": num(t["wt_percent"], ""),
             "coverage [-]": num(t["coverage"], ""), "free monomer [mM]": num(t["free_concentration_mol_m3"], ""),
             "tension [mN/m]": num(t["tension_N_m"] and t["tension_N_m"] * MN, ""),
             "micelle share [%]": num(100 * t["micelle_share"], "") if t["micelle_share"] else "0",
             "batches [-]": t["batches"]} for t in r["trial"]]
    if result["case"].surfactant is not None and result["case"].surfactant.cmc is None:  # no CMC (a protein, a polymer): no micelles at any level
        for row in rows:
            row.pop("micelle share [%]", None)
    if all(t["tension_N_m"] is None for t in r["trial"]):  # a protein or polymer: no model tension
        for row in rows:
            row.pop("tension [mN/m]", None)
    st.table(pd.DataFrame(rows).set_index("level [× charge]"))
    with st.expander("What to measure at each level"):
        for t in r["trial"]:
            st.markdown(f"**{t['level']:g} × charge** ({num(t['kg_product'], 'kg', 4)}): " + "; ".join(t["measure"]))
    if "uncertainty" in r:
        u = r["uncertainty"]
        d = u["dose_kg_product"]
        st.caption(f"Monte Carlo ({u['samples']} samples): dose P10 {num(d['p10'], 'kg')}, P50 {num(d['p50'], 'kg')}, "
                   f"P90 {num(d['p90'], 'kg')}; the target is met in {num(100 * u['probability_target_met'], '%')} "
                   "of the draws with the charge.")

    st.subheader("Adsorption speed")
    charts.adsorption_panel(state.view("adsorption_view"))

    st.subheader("Downloads")
    files = plan["files"]
    with st.container(horizontal=True):
        st.download_button("report.html", data=files["report.html"], file_name="report.html", mime="text/html",
                           key="dl_report", icon=":material/download:", help="the plan as an HTML report")
        st.download_button("result.json", data=files["result.json"], file_name="result.json",
                           mime="application/json", key="dl_result", icon=":material/download:",
                           help="the plan's figures as JSON, for other programs")
        st.download_button("trial_plan.csv", data=files["trial_plan.csv"], file_name="trial_plan.csv",
                           mime="text/csv", key="dl_trial", icon=":material/download:", help="the trial matrix")
        st.download_button("case TOML", data=result["toml"], file_name=f"{slug}.toml",
                           mime="application/toml", key="dl_plan_case", icon=":material/download:",
                           help=f"the case being edited, saved as {slug}.toml")
    st.caption(f"The same files as `sizing plan CASE.toml --out DIR`; the case is saved as `{slug}.toml`. Keep "
               "any size table or fitted block the case names beside the TOML file.")
    cautions = r.get("cautions") or state.CAUTIONS
else:
    cautions = state.CAUTIONS

st.subheader("Cautions")
for line in cautions:
    st.markdown(f"- {line}")
