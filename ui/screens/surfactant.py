"""Surfactant: its parameters, or fit them from the lab's tension series or depletion runs."""

import importlib

import pandas as pd
import streamlit as st

from sizing import views
from sizing.errors import SizingError
from sizing.outputs import fit_json
from sizing.physics.isotherm import MODELS
from ui import charts, state
from ui.charts import MN, num
from ui.state import field

state.ensure_case()
st.title("Surfactant")

try:  # the fits are optional in this version of the engine
    fit = importlib.import_module("sizing.fitting.block")
except ImportError:  # pragma: no cover - depends on the engine version
    fit = None

left, right = st.columns([1, 1], gap="large")
with left:
    st.subheader("Parameters")
    state.show_errors("surfactant")
    field("surfactant.name", "Name", kind="text")
    field("surfactant.molar_mass", "Molar mass [e.g. 288.4 g/mol]")
    field("surfactant.active_fraction", "Active fraction of the product as delivered [-]", kind="number",
          help="0.30 for a 30 % solution")
    field("surfactant.cmc", "CMC [concentration, e.g. 8.2 mM]", optional=True,
          help="leave empty for an emulsifier without micelles (a protein, a polymer)")
    field("surfactant.isotherm", "Isotherm", kind="choice", options=list(MODELS))
    choice = state.either("Saturated surface excess given as",
                          ["surfactant.max_surface_excess", "surfactant.area_per_molecule"],
                          {"surfactant.max_surface_excess": "surface excess",
                           "surfactant.area_per_molecule": "area per molecule"},
                          {"surfactant.max_surface_excess": "3.3 umol/m**2",
                           "surfactant.area_per_molecule": "0.5 nm**2"}, key="sel_excess")
    if choice == "surfactant.max_surface_excess":
        field("surfactant.max_surface_excess", "Max surface excess Gamma_inf [e.g. 3.3 umol/m**2 or 2 mg/m**2]")
    else:
        field("surfactant.area_per_molecule", "Minimum area per molecule [e.g. 0.50 nm**2]")
    field("surfactant.adsorption_constant", "Adsorption constant K [e.g. 0.85 m**3/mol or 850 L/mol]")
    if state.get("surfactant.isotherm") == "frumkin" or state.get("surfactant.interaction") not in (None, 0, 0.0):
        field("surfactant.interaction", "Frumkin interaction beta [-]", kind="number", optional=True)
    field("surfactant.gibbs_prefactor", "Gibbs prefactor n [-] (1 nonionic, 2 a 1:1 ionic without salt)",
          kind="number", optional=True)
    field("surfactant.partition_coefficient", "Partition coefficient P = c_oil/c_water [-]", kind="number",
          optional=True)
    field("surfactant.clean_tension", "Clean-interface tension [e.g. 50 mN/m]", optional=True,
          help="needed for tension outputs and tension targets; a foam defaults to water (IAPWS R1-76)")
    c1, c2 = st.columns(2)
    field("surfactant.price_per_kg", "Price per kg of product [currency/kg]", kind="number", optional=True, where=c1)
    field("surfactant.currency", "Currency", kind="text", optional=True, where=c2)
    field("surfactant.diffusivity", "Monomer diffusivity [e.g. 5e-10 m**2/s]", optional=True)

# ---- fits from lab data -------------------------------------------------------------------------


def _upload(slot: str, label: str) -> str | None:
    """Save a new CSV upload into the work dir after ``validate``; return the path in use."""
    up = st.file_uploader(label, type=["csv"], key=f"up_{slot}")
    if state.new_upload(up, slot):
        try:
            text = state.check_upload(up.name, up.getvalue(), (".csv",), f"{slot} data")
            name = state.save_upload(up.name, text, lambda p: None)
        except SizingError as exc:
            st.session_state[f"{slot}_error"] = state.scrub(str(exc))
        else:
            st.session_state.pop(f"{slot}_error", None)
            st.session_state[f"{slot}_file"] = str(state.work_dir() / name)
            st.session_state.pop(f"{slot}_result", None)
    if st.session_state.get(f"{slot}_error"):
        st.error(st.session_state[f"{slot}_error"], icon=":material/error:")
    path = st.session_state.get(f"{slot}_file")
    if path:
        st.caption(f"data: {path.rsplit('/', 1)[-1]}")
    return path


def _tension_tab() -> None:
    path = _upload("tension", "Tension series (CSV): 'concentration [mM],tension [mN/m]'")
    with st.form("form_tension_fit"):
        temp = st.text_input("Temperature [e.g. 25 degC]", value="", placeholder="the file's column, else 25 degC",
                             key="fit_t_temp", help="empty: the file's temperature column, else 25 degC")
        c2, c3 = st.columns(2)
        n = c2.number_input("Gibbs prefactor n [-]", min_value=1.0, max_value=3.0, value=1.0, step=1.0,
                            key="fit_t_n")
        model = c3.selectbox("Isotherm", ["best by AICc", *MODELS], key="fit_t_model")
        go = st.form_submit_button("Fit the tension series", disabled=path is None, key="btn_fit_tension")
    if go and path:
        from sizing.units import parse

        try:
            t = parse(temp, "temperature", "temperature") if temp.strip() else None
            data = fit.read_tension_csv(path)
            res = fit.fit_tension(data, temperature=t, gibbs_prefactor=n,
                                  model=None if model.startswith("best") else model)
        except SizingError as exc:  # a user mistake or a fit that did not converge
            st.session_state["tension_result"] = None
            st.error(state.scrub(str(exc)), icon=":material/error:")
        else:
            st.session_state["tension_result"] = res
    res = st.session_state.get("tension_result")
    if not res:
        return
    b = res.best
    pts = pd.DataFrame({"c_mM": res.data.concentration, "tension_mN_m": res.data.tension * MN,
                        "residual_mN_m": b.residuals * MN})
    gc, gt = fit.fitted_curve(res)
    curve = pd.DataFrame({"c_mM": gc, "tension_mN_m": gt * MN})
    st.altair_chart(charts.points_and_curve(pts, curve, "c_mM", "tension_mN_m", "concentration c [mM]",
                                            "tension [mN/m]"), width="stretch", key="chart_tension_fit")
    st.altair_chart(charts.residuals(pts, "c_mM", "residual_mN_m", "concentration c [mM]",
                                     "residual [mN/m]"), width="stretch",
                    key="chart_tension_res")
    block = fit.surfactant_block(res)["surfactant"]
    j = fit_json.tension_fit_json(res)
    iv = j["intervals"]
    rows = [
        {"parameter": "CMC", "value": block["cmc"],
         "95 % interval": f"{num(iv['cmc_mol_m3'][0], '')} to {num(iv['cmc_mol_m3'][1], 'mM')}"},
        {"parameter": "max surface excess", "value": block["max_surface_excess"],
         "95 % interval": f"{num(iv['max_surface_excess_mol_m2'][0] * 1e6, '')} to "
                          f"{num(iv['max_surface_excess_mol_m2'][1] * 1e6, 'umol/m**2')}"},
        {"parameter": "adsorption constant", "value": block["adsorption_constant"],
         "95 % interval": f"{num(iv['adsorption_constant_m3_mol'][0], '')} to "
                          f"{num(iv['adsorption_constant_m3_mol'][1], 'm**3/mol')}"},
        {"parameter": "clean tension", "value": block["clean_tension"],
         "95 % interval": f"{num(iv['clean_tension_N_m'][0] * MN, '')} to {num(iv['clean_tension_N_m'][1] * MN, 'mN/m')}"},
    ]
    st.table(pd.DataFrame(rows).set_index("parameter"))
    st.caption(f"isotherm {res.model} ({res.selection}); residual sd {num(j['residual_sd_N_m'] * MN, 'mN/m')}")
    for w in res.warnings:
        st.warning(w, icon=":material/warning:")
    if st.button("Use these parameters in the case", key="btn_use_tension_fit"):
        for k, v in block.items():
            state.put(f"surfactant.{k}", v)
            st.session_state.pop(state.PREFIX + f"surfactant.{k}", None)
        state.put("surfactant.area_per_molecule", None)
        st.session_state.pop("sel_excess", None)
        st.rerun()


def _depletion_tab() -> None:
    path = _upload("depletion", "Depletion runs (CSV): dose, continuous_volume, dispersed_volume, area, "
                                "continuous_concentration with units")
    cont = st.radio("Continuous phase of the runs", ["water", "oil"], horizontal=True, key="sel_depletion_cont",
                    index=0 if (state.get("case.continuous") or "water") == "water" else 1,
                    help="oil: W/O runs, where the water drops hold c/P (P = c_oil/c_water)")
    if path and st.button("Compute the surface excess", key="btn_depletion_fit"):
        try:
            st.session_state["depletion_result"] = fit.fit_depletion(path, continuous=cont)
        except SizingError as exc:  # a user mistake or a fit that did not converge
            st.error(state.scrub(str(exc)), icon=":material/error:")
    res = st.session_state.get("depletion_result")
    if not res:
        return
    df = pd.DataFrame(res.rows)
    if {"continuous_concentration_mol_m3", "surface_excess_mol_m2"} <= set(df.columns):
        fitted = [k for k, v in res.langmuir.items() if isinstance(v, dict) and "max_surface_excess_mol_m2" in v]
        plotted = df[df["sample"].isin(fitted)] if fitted and "sample" in df.columns else df
        if len(plotted) < len(df):  # a blank (salt only) would stretch the axis to its own concentration
            st.caption("Plotted: the samples with a fitted isotherm; "
                       f"{len(df) - len(plotted)} other row(s) (blanks) are in the table only.")
        pts = pd.DataFrame({"c_mM": plotted["continuous_concentration_mol_m3"],
                            "gamma_umol_m2": plotted["surface_excess_mol_m2"] * 1e6})
        curve = pd.DataFrame({"c_mM": [], "gamma_umol_m2": []})
        for lf in res.langmuir.values():
            line = views.depletion_curve(lf, float(pts["c_mM"].min()), float(pts["c_mM"].max()))
            if line is not None:
                curve = pd.DataFrame({"c_mM": line["c_mol_m3"],
                                      "gamma_umol_m2": [g * 1e6 for g in line["surface_excess_mol_m2"]]})
                break
        st.altair_chart(charts.points_and_curve(pts, curve, "c_mM", "gamma_umol_m2",
                                                "free concentration after equilibration [mM]",
                                                "surface excess [µmol/m²]"), width="stretch",
                        key="chart_depletion")
    st.dataframe(pd.DataFrame(views.display_rows(res.rows)), hide_index=True, width="stretch",
                 key="table_depletion")
    for note in res.notes:
        st.caption(note)


def _partition_tab() -> None:
    path = _upload("partition", "Paired concentrations (CSV): water and oil concentrations with units")
    if path and st.button("Fit the partition coefficient", key="btn_partition_fit"):
        try:
            st.session_state["partition_result"] = fit.fit_partition(path)
        except SizingError as exc:  # a user mistake or a fit that did not converge
            st.error(state.scrub(str(exc)), icon=":material/error:")
    res = st.session_state.get("partition_result")
    if not res:
        return
    lo, hi = res.interval
    st.metric("Partition coefficient P", num(res.partition_coefficient, ""),
              help=f"95 % interval {num(lo, '')} to {num(hi, '')}; {res.method}")
    st.dataframe(pd.DataFrame(views.display_rows(res.rows)), hide_index=True, width="stretch",
                 key="table_partition")
    if st.button("Use this coefficient in the case", key="btn_use_partition"):
        state.put("surfactant.partition_coefficient", float(f"{res.partition_coefficient:.6g}"))
        st.session_state.pop(state.PREFIX + "surfactant.partition_coefficient", None)
        st.rerun()


with right:
    st.subheader("Fit from lab data")
    if fit is None:
        st.info("Fitting lab data is not available in this version.", icon=":material/info:")
    else:
        t1, t2, t3 = st.tabs(["Tension series", "Depletion runs", "Partition"])
        with t1:
            _tension_tab()
        with t2:
            _depletion_tab()
        with t3:
            _partition_tab()
