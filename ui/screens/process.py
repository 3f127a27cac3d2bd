"""Process and storage: batch temperature, salt and storage temperature, the surfactant's temperature
and salt laws, the values the balance used at the batch, the Krafft and cloud points, and the charge's
coverage from the batch to storage."""

import pandas as pd
import streamlit as st

from sizing import views
from sizing.errors import SizingError
from sizing.outputs.htmlbits import unit_text
from ui import charts, state
from ui.charts import MN, num
from ui.state import field

state.ensure_case()
st.title("Process and storage")
st.caption("The CMC and the adsorption constant hold where they were measured (the reference temperature, "
           "without salt); the balance moves them to the batch (van 't Hoff in temperature, Corrin-Harkins in "
           "salt for an ionic surfactant). Leave the laws empty to use the values as given at every temperature.")

data = state.ensure_case()
BLEND = isinstance(data.get("blend"), dict)
CAUTION = ("Temperatures and salt levels here move the balance only. Hot batches, electrolytes and each "
           "surfactant are handled as their safety data sheets, the plant's procedures and local codes require; "
           "have qualified people approve the process conditions and any plant trial.")


def _laws(prefix: str, where) -> None:
    """The condition keys of one surfactant or blend component (``prefix``: ``surfactant`` or
    ``blend.component[i]``)."""
    with where:
        state.show_errors(prefix)
        c1, c2 = st.columns(2)
        field(f"{prefix}.reference_temperature", "Reference temperature of CMC and K [e.g. 25 degC]",
              optional=True, where=c1, help="where the CMC and the adsorption constant were measured; empty: "
                                            "at the batch temperature (no correction)")
        field(f"{prefix}.counterion_binding", "Counter-ion binding b [-] (0 nonionic, about 0.6-0.7 ionic)",
              kind="number", optional=True, where=c2, help="between 0 and 1; sets the salt effect on the CMC")
        c1, c2 = st.columns(2)
        field(f"{prefix}.micellisation_enthalpy", "Micellisation enthalpy dH_mic [e.g. -2 kJ/mol]", optional=True,
              where=c1, help="van 't Hoff law of the CMC; needs the reference temperature")
        field(f"{prefix}.adsorption_enthalpy", "Adsorption enthalpy dH_ads [e.g. -15 kJ/mol]", optional=True,
              where=c2, help="van 't Hoff law of K; needs the reference temperature")
        c1, c2 = st.columns(2)
        field(f"{prefix}.krafft_point", "Krafft point [e.g. 16 degC]", optional=True, where=c1,
              help="below it an ionic surfactant crystallises instead of forming micelles")
        field(f"{prefix}.cloud_point", "Cloud point [e.g. 65 degC]", optional=True, where=c2,
              help="above it a nonionic phase-separates")


# ---- the fields --------------------------------------------------------------------------------
left, right = st.columns([1, 2], gap="large")
with left:
    st.subheader("Batch and storage")
    field("batch.temperature", "Batch temperature [e.g. 75 degC]")
    field("batch.salt", "Added salt in the water phase [1:1 electrolyte, e.g. 50 mM]", optional=True,
          help="empty: no added salt")
    field("batch.storage_temperature", "Storage temperature [e.g. 20 degC]", optional=True,
          help="the charged dose is re-equilibrated there (same drops and phases)")
with right:
    if BLEND:
        st.subheader("Temperature and salt laws of each component")
        comps = data["blend"].get("component") or []
        tabs = st.tabs([f"{k + 1} · {c.get('name') or 'unnamed'}" for k, c in enumerate(comps)])
        for k, tab in enumerate(tabs):
            _laws(f"blend.component[{k}]", tab)
    else:
        st.subheader("Temperature and salt laws of the surfactant")
        _laws("surfactant", st.container())

# ---- what the balance used ----------------------------------------------------------------------
result = state.needs_valid_case()
case = result["case"]
s = result["summary"]

notes = state.view("condition_notes")
for w in notes:
    st.error("**Krafft or cloud point.** " + state.md_escape(unit_text(w)), icon=":material/thermostat:")
if notes:
    st.warning("The balance does not describe a batch outside the surfactant's working range: do not plan a plant "
               "batch on these numbers. " + CAUTION, icon=":material/warning:")

st.subheader("Values the balance used at the batch")
ab = s["at_batch"]
t_batch = ab["temperature_K"] - 273.15
actives = ([(c.name, c) for c in case.blend.component] if case.blend is not None
           else [(case.surfactant.name, case.surfactant)])
used = ab.get("components") or [{"name": actives[0][0], "cmc_mol_m3": ab["cmc_mol_m3"],
                                 "adsorption_constant_m3_mol": ab["adsorption_constant_m3_mol"],
                                 "gibbs_prefactor": ab["gibbs_prefactor"]}]
rows = []
for (name, given), at in zip(actives, used):
    ref = given.reference_temperature
    rows.append({
        "surfactant": name,
        "measured at": unit_text(str(ref.raw)) if ref is not None else "the batch temperature",
        "CMC as given": unit_text(str(given.cmc.raw)) if given.cmc is not None else "none (no micelles)",
        f"CMC at {t_batch:.4g} °C [mM]": num(at["cmc_mol_m3"], "", 4) if given.cmc is not None else "—",
        "K as given": unit_text(str(given.adsorption_constant.raw)),
        f"K at {t_batch:.4g} °C [m³/mol]": num(at["adsorption_constant_m3_mol"], "", 4),
        "Gibbs prefactor n [-]": num(at["gibbs_prefactor"], "", 3),
    })
st.table(pd.DataFrame(rows).set_index("surfactant"))
salt = case.batch.salt
st.caption(f"Batch at {t_batch:.4g} °C"
           + (f" with {num(salt.si, 'mM')} of added salt" if salt is not None and salt.si > 0 else ", no added salt")
           + ". The Gibbs prefactor of a 1:1 ionic surfactant falls from 2 towards 1 as salt is added "
             "(n = 1 + c / (c + c_salt)); a nonionic keeps n = 1."
           + (" For the blend, the mixed CMC at the batch is "
              f"{num(ab['cmc_mol_m3'], 'mM')}." if case.blend is not None else ""))

if s.get("storage"):
    stg = s["storage"]
    st.subheader(f"At storage, {stg['temperature_K'] - 273.15:.4g} °C (the dose for the target before the margin, re-equilibrated)")
    if stg.get("coverage") is None:
        st.info(stg.get("note") or "no dose to store", icon=":material/info:")
    else:
        target = s["target"]
        cov_help = "surface excess over its saturated value, at storage"
        charts.tiles([
            ("Coverage at storage", num(stg["coverage"], "(-)"), cov_help),
            ("Free monomer at storage", num(stg["free_concentration_mol_m3"], "mM"), "in the continuous phase"),
            ("CMC at storage", num(stg["cmc_mol_m3"], "mM"), "after the temperature and salt laws"),
            ("Micelles at storage", num(stg["micelle_mol"], "mol"), "surfactant held in micelles, per batch"),
        ] + ([("Tension at storage", num(stg["tension_N_m"] * MN, "mN/m"), "of the covered interface")]
             if stg.get("tension_N_m") is not None else []) + ([("K at storage", num(stg["adsorption_constant_m3_mol"], "m³/mol"), "adsorption constant there")]
             if stg.get("adsorption_constant_m3_mol") is not None else []))
        if target["kind"] == "coverage" and stg["coverage"] < target["value_si"]:
            st.warning(f"**Storage coverage {num(stg['coverage'], '')} is below the target "
                       f"{num(target['value_si'], '')}**: the drops are less covered once the batch cools; consider "
                       "dosing for the storage conditions, or confirm stability in a storage test.",
                       icon=":material/warning:")
elif case.batch.storage_temperature is None:
    st.caption("No storage temperature is given: the charge is shown at the batch only.")

# ---- the charge across temperatures ----------------------------------------------------------------
st.subheader("Coverage of the charge against temperature")
try:
    plan = state.view("plan_view")
except SizingError as exc:
    st.error(state.scrub(str(exc)), icon=":material/error:")
    plan = None
curve = views.conditions_curve(plan["result"]) if plan is not None else None
if curve is None:
    st.info("The chart needs a storage temperature or a temperature law (a reference temperature) in the case, "
            "and a reachable target.", icon=":material/info:")
else:
    rec = plan["result"]["recommendation"]
    charts.draw("coverage_vs_temperature", curve, key="chart_cov_temperature")
    st.caption(f"The recommended charge ({num(rec['kg_product_per_batch'], 'kg', 4)} of product per batch, Plan page) "
               f"held at every temperature from {curve['temperature_C'][0]:.3g} to {curve['temperature_C'][-1]:.3g} °C "
               "with the same drops and phases"
               + (f"; at storage its coverage is {num(curve['storage_coverage'], '')}"
                  if curve.get("storage_coverage") is not None else "") + ".")
for w in s.get("warnings", []):
    if w not in notes:
        st.warning("**Check:** " + state.md_escape(unit_text(w)), icon=":material/warning:")
st.caption("Equilibrium estimate: confirm by trial. " + CAUTION)
