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
BLEND = isinstance(state.ensure_case().get("blend"), dict)  # a [blend] of components instead of [surfactant]

try:  # the fits are optional in this version of the engine
    fit = importlib.import_module("sizing.fitting.block")
except ImportError:  # pragma: no cover - depends on the engine version
    fit = None

PENDING = "pending_blend_switch"  # "to_blend" or ("to_single", index) waiting for a yes


def _fraction_of(raw) -> float:
    raw = raw.get("value") if isinstance(raw, dict) else raw
    try:
        return float(raw)
    except (TypeError, ValueError):
        return float("nan")


def _components() -> list:
    comps = (state.ensure_case().get("blend") or {}).get("component")
    return comps if isinstance(comps, list) else []


def _forget_component_widgets() -> None:
    for k in [k for k in st.session_state if isinstance(k, str) and k.startswith(state.PREFIX + "blend.component[")]:
        del st.session_state[k]


def _store_fraction(i: int) -> None:
    """Store component i's fraction; with 'keep the sum at 1' the others keep their proportions."""
    key = state.PREFIX + f"blend.component[{i}].fraction"
    text = str(st.session_state.get(key, "")).strip()
    value = state._number(text) if text else text
    comps = _components()
    if isinstance(value, (int, float)) and st.session_state.get("blend_keep_sum", True) and len(comps) > 1 \
            and 0 <= value <= 1 and all(_fraction_of(c.get("fraction")) == _fraction_of(c.get("fraction"))
                                        for k, c in enumerate(comps) if k != i):
        new = views.rescaled_fractions([_fraction_of(c.get("fraction")) for c in comps], i, value)
        for k, f in enumerate(new):
            old = comps[k].get("fraction")
            comps[k]["fraction"] = {**old, "value": f} if isinstance(old, dict) else f
            if k != i:
                st.session_state.pop(state.PREFIX + f"blend.component[{k}].fraction", None)
        return
    old = comps[i].get("fraction") if i < len(comps) else None
    if i < len(comps):
        comps[i]["fraction"] = {**old, "value": value} if isinstance(old, dict) else value


def _rename(i: int) -> None:
    """Rename component i; a [blend.ratio] naming it follows."""
    comps = _components()
    new = str(st.session_state.get(state.PREFIX + f"blend.component[{i}].name", ""))
    if i >= len(comps):
        return
    old = comps[i].get("name")
    comps[i]["name"] = new
    ratio = state.ensure_case()["blend"].get("ratio")
    if isinstance(ratio, dict) and ratio.get("component") == old:
        ratio["component"] = new


def _store_micelles() -> None:
    """Ideal micelles take no interaction: keep it aside, bring it back with regular micelles."""
    choice = st.session_state.get(state.PREFIX + "blend.micelles")
    stash = st.session_state.setdefault(state.STASH, {})
    state.put("blend.micelles", choice)
    if choice == "ideal" and state.get("blend.interaction") is not None:
        stash["blend.interaction"] = state.get("blend.interaction")
        state.put("blend.interaction", None)
    elif choice == "regular" and state.get("blend.interaction") is None and "blend.interaction" in stash:
        state.put("blend.interaction", stash.pop("blend.interaction"))
    st.session_state.pop(state.PREFIX + "blend.interaction", None)


def _add_component() -> None:
    comps = _components()
    new = {k: v for k, v in (comps[-1] if comps else {}).items()}
    names = {str(c.get("name")) for c in comps}
    n = len(comps) + 1
    while f"component {n}" in names:
        n += 1
    new["name"] = f"component {n}"
    new["fraction"] = 0.0
    comps.append(new)
    _forget_component_widgets()


def _remove_component(i: int) -> None:
    comps = _components()
    if len(comps) <= 1 or i >= len(comps):
        return
    gone = comps.pop(i)
    fr = [_fraction_of(c.get("fraction")) for c in comps]
    total = sum(f for f in fr if f == f)
    if total > 0:
        for c, f in zip(comps, fr):
            if f == f:
                new = float(f"{f / total:.10g}")
                c["fraction"] = {**c["fraction"], "value": new} if isinstance(c.get("fraction"), dict) else new
    ratio = state.ensure_case()["blend"].get("ratio")
    if isinstance(ratio, dict) and (ratio.get("component") == gone.get("name") or len(comps) < 2):
        st.session_state.setdefault(state.STASH, {})["blend.ratio"] = state.ensure_case()["blend"].pop("ratio")
        st.session_state["blend_note"] = (f"The cost-against-ratio range named {gone.get('name')!r}; it is kept "
                                          "aside (add the component back and undo to restore it).")
    _forget_component_widgets()


def _replace_active(data: dict, notes: list, what: str) -> None:
    """Replace the case by its blend (or single-surfactant) form; the old one is kept for Undo."""
    loaded = st.session_state.get(state.LOADED)
    state.set_case(data, str(st.session_state.get(state.SOURCE) or "case"))
    st.session_state[state.LOADED] = loaded  # the edits before the switch still count as edits
    st.session_state["blend_switched"] = (what + (" (" + "; ".join(notes) + ")" if notes else ""), state.case_toml())


def _switch_panel() -> None:
    """Turn a single surfactant into a two-component blend and back, asking first; undoable."""
    done = st.session_state.get("blend_switched")
    if done and done[1] != state.case_toml():  # the new case has been edited since: the note goes
        st.session_state.pop("blend_switched", None)
        done = None
    if done:
        u1, u2 = st.columns([3, 1])
        u1.success(f"{done[0]}. The case before the change is kept aside.", icon=":material/swap_horiz:")
        if u2.button("Undo", key="btn_undo_blend_switch", icon=":material/undo:"):
            state.undo_replace()
            st.session_state.pop("blend_switched", None)
            st.session_state.pop(PENDING, None)
            st.rerun()
    pending = st.session_state.get(PENDING)
    if BLEND:
        comps = _components()
        c1, c2 = st.columns([2, 1])
        keep = c1.selectbox("Component to keep as the single surfactant", range(len(comps)), key="sel_keep_component",
                            format_func=lambda k: str(comps[k].get("name") or f"component {k + 1}"))
        if c2.button("Turn into a single surfactant", key="btn_to_single", icon=":material/call_merge:"):
            st.session_state[PENDING] = ("to_single", int(keep))
            st.rerun()
    elif st.button("Turn into a two-component blend", key="btn_to_blend", icon=":material/call_split:",
                   help="the surfactant becomes component 1; component 2 starts as a copy at 20 % for you to edit"):
        st.session_state[PENDING] = "to_blend"
        st.rerun()
    if not pending:
        return
    if pending == "to_blend":
        text = ("Replace the single surfactant by a two-component blend? The surfactant becomes component 1 "
                "(80 % of the active); component 2 starts as a copy of it (20 %), so the dose stays the same until "
                "you edit it. You can undo this.")
    else:
        comps = _components()
        name = comps[pending[1]].get("name") if pending[1] < len(comps) else "?"
        text = (f"Replace the blend by the single surfactant **{state.md_escape(name)}**? The other components and "
                "the mixed-micelle settings are dropped. You can undo this.")
    st.warning(text, icon=":material/help:")
    k1, k2 = st.columns(2)
    if k1.button("Replace", key="btn_confirm_blend_switch", type="primary"):
        st.session_state.pop(PENDING, None)
        try:
            if pending == "to_blend":
                data, notes = views.blend_of_surfactant(state.ensure_case())
                _replace_active(data, notes, "The surfactant is now a two-component blend")
            else:
                data, notes = views.surfactant_of_blend(state.ensure_case(), pending[1])
                _replace_active(data, notes, "The blend is now a single surfactant")
        except SizingError as exc:
            st.session_state["blend_switch_error"] = state.scrub(str(exc))
        st.rerun()
    if k2.button("Keep the case", key="btn_cancel_blend_switch"):
        st.session_state.pop(PENDING, None)
        st.rerun()


def _component_editor(i: int, where) -> None:
    base = f"blend.component[{i}]"
    with where:
        state.show_errors(base)
        key = state.PREFIX + f"{base}.name"
        if key not in st.session_state:
            st.session_state[key] = str(state.get(f"{base}.name") or "")
        st.text_input("Name", key=key, on_change=_rename, args=(i,))
        state.show_errors(f"{base}.name")
        key = state.PREFIX + f"{base}.fraction"
        raw = state.get(f"{base}.fraction")
        if key not in st.session_state:
            st.session_state[key] = state._shown(raw)
        basis = state.get("blend.fractions") or "mass"
        extra = ""
        if isinstance(raw, dict):
            extra = " (uncertain: " + ", ".join(f"{k} = {v}" for k, v in raw.items() if k != "value") + ")"
        st.text_input(state.md_escape(f"Fraction of the active blend, by {basis} [-]{extra}"), key=key,
                      on_change=_store_fraction, args=(i,), help="0.6 = 60 % of the blend's active")
        state.show_errors(f"{base}.fraction")
        c1, c2 = st.columns(2)
        field(f"{base}.molar_mass", "Molar mass [e.g. 288.4 g/mol]", where=c1)
        field(f"{base}.active_fraction", "Active fraction of its product [-]", kind="number", where=c2,
              help="each component is charged as its own product: 0.30 for a 30 % solution")
        field(f"{base}.cmc", "CMC [concentration, e.g. 8.2 mM]", optional=True,
              help="leave empty for a component without micelles")
        if state.get(f"{base}.area_per_molecule") is not None and state.get(f"{base}.max_surface_excess") is None:
            field(f"{base}.area_per_molecule", "Minimum area per molecule [e.g. 0.50 nm**2]")
        else:
            field(f"{base}.max_surface_excess", "Max surface excess Gamma_inf [e.g. 3.3 umol/m**2]")
        field(f"{base}.adsorption_constant", "Adsorption constant K [e.g. 0.85 m**3/mol]")
        c1, c2 = st.columns(2)
        field(f"{base}.partition_coefficient", "Partition coefficient P = c_oil/c_water [-]", kind="number",
              optional=True, where=c1)
        field(f"{base}.gibbs_prefactor", "Gibbs prefactor n [-]", kind="number", optional=True, where=c2)
        field(f"{base}.price", "Price per kg of its product [e.g. 1.8 EUR/kg]", optional=True,
              help="with a price on every component the plan reports the cost and the cheapest ratio")
        field(f"{base}.diffusivity", "Monomer diffusivity [e.g. 5e-10 m**2/s]", optional=True,
              help="for the adsorption-speed check (with the residence time of the process)")
        if len(_components()) > 1:
            st.button("Remove this component", key=f"btn_remove_component_{i}", icon=":material/delete:",
                      on_click=_remove_component, args=(i,))


def _blend_editor() -> None:
    state.show_errors("blend")
    c1, c2, c3 = st.columns(3)
    field("blend.name", "Blend name", kind="text", where=c1)
    field("blend.fractions", "Fractions by", kind="choice", options=["mass", "mole"], where=c2,
          help="the basis of each component's fraction; switching keeps the numbers, so they then mean "
               "another composition")
    key = state.PREFIX + "blend.micelles"
    if key not in st.session_state:
        st.session_state[key] = state.get("blend.micelles") or "ideal"
    c3.selectbox("Mixed micelles", ["ideal", "regular"], key=key, on_change=_store_micelles,
                 help="ideal: Clint's mixing rule; regular: Rubingh's regular solution with an interaction beta "
                      "(two components)")
    state.show_errors("blend.micelles", c3)
    c1, c2, c3 = st.columns(3)
    if (state.get("blend.micelles") or "ideal") == "regular":
        field("blend.interaction", "Micelle interaction beta [-] (0 = ideal, < 0 attraction)", kind="number",
              optional=True, where=c1)
    field("blend.clean_tension", "Clean-interface tension [e.g. 30 mN/m]", optional=True, where=c2)
    keep = c3.checkbox("Keep the fractions adding up to 1", value=True, key="blend_keep_sum",
                       help="editing one fraction scales the others so that they keep their proportions")
    if not keep:
        st.caption("The fractions are stored as typed; the case asks for them to add up to 1.")
    state.show_errors("blend.component")
    state.show_errors("blend.ratio")
    if st.session_state.get("blend_note"):
        st.info(st.session_state["blend_note"], icon=":material/info:")
    comps = _components()
    tabs = st.tabs([f"{k + 1} · {c.get('name') or 'unnamed'}" for k, c in enumerate(comps)])
    for k, tab in enumerate(tabs):
        _component_editor(k, tab)
    st.button("Add a component", key="btn_add_component", icon=":material/add:", on_click=_add_component,
              help="a copy of the last component at fraction 0, for you to edit")


def _blend_results() -> None:
    """The blend's figures: dose per component for the target, charge per component, where each goes,
    the interface composition against the charge, the mixed CMC."""
    result = state.check()
    if result["case"] is None:
        st.info("The blend's results appear once the case is valid (see the problems above).",
                icon=":material/info:")
        return
    s = result["summary"]
    bl = s.get("blend") or {}
    if s["feasible"]:
        tiles = [("Blend for the target", num(s["dose"]["kg_product"], "kg"),
                  "product as delivered, all components, per batch, before the margin")]
        tiles += [(f"{c['name']} for the target", num(c["kg_product"], "kg"), "its product as delivered, per batch, "
                   f"before the margin; {num(100 * c['mole_fraction'], '%')} of the active by mole")
                  for c in s.get("components", [])]
    else:
        tiles = [("Blend for the target", "not reachable", state.view("unreachable_text") or "")]
    tiles.append(("Mixed CMC", num(bl.get("mixed_cmc_mol_m3"), "mM"),
                  "total monomer at the onset of mixed micelles, in the continuous phase alone"))
    charts.tiles(tiles)
    for w in s.get("warnings", []):
        st.warning("**Check:** " + state.md_escape(w), icon=":material/warning:")
    try:
        plan = state.view("plan_view")
    except SizingError as exc:
        st.error(state.scrub(str(exc)), icon=":material/error:")
        return
    rows = views.blend_rows(plan["result"])
    if rows is None:
        return
    st.markdown(f"**At the recommended charge of {num(rows['charge_kg'], 'kg', 4)} per batch** "
                "(margin and rounding of the Plan page)")
    table = []
    for c in rows["charge"]:
        row = {"component": c["name"], "product [kg/batch]": num(c["kg_product"], "", 4),
               "active [kg/batch]": num(c["kg_active"], "", 4),
               "mass fraction [%]": num(100 * c["mass_fraction"], ""),
               "mole fraction [%]": num(100 * c["mole_fraction"], ""),
               "share of the interface θ [-]": num(c["coverage"], "")}
        for place in ("interface", "water", "oil", "micelles"):
            if place in c["percent"]:
                row[f"in {place} [%]"] = f"{c['percent'][place]:.1f}"
        table.append(row)
    st.table(pd.DataFrame(table).set_index("component"))
    onset = rows["onset_kg_product"]
    st.caption(f"Mixed CMC {num(rows['mixed_cmc_mol_m3'], 'mM')} ({rows['micelles']} micelles"
               + (f", beta {num(rows['interaction'], '')}" if rows["interaction"] is not None else "")
               + f"); micelles first form in this batch at a blend charge of {num(onset, 'kg')}.")
    c1, c2 = st.columns(2, gap="large")
    with c1:
        st.markdown("**Where each component goes**")
        charts.draw("blend_split", rows["split"], key="chart_blend_split")
    with c2:
        st.markdown("**Interface composition against the charge**")
        charts.draw("blend_interface", rows["interface"], rows["charge_kg"], key="chart_blend_interface")
    ch = rows["cheapest"]
    if ch and ch.get("fraction") is not None:
        st.caption(f"Cheapest ratio in the case's range: {ch['component']} at {num(100 * ch['fraction'], '%')} "
                   f"({ch['basis']} basis), {num(ch['cost_per_batch'], ch['currency'])} per batch for "
                   f"{num(ch['kg_product'], 'kg')} of product before the margin"
                   + (" (at the end of the range: the optimum may lie beyond)" if ch.get("at_bound") else "")
                   + "; see the report on the Plan page for the cost against the ratio.")
    st.caption("Equilibrium estimate; confirm the blend's charge by trial. Check each product's safety data sheet "
               "and any legal limits for emulsifiers in the product; defer to local codes and qualified people.")


_switch_panel()
if st.session_state.get("blend_switch_error"):
    st.error(st.session_state.pop("blend_switch_error"), icon=":material/error:")

if BLEND:
    st.subheader("Blend components")
    _blend_editor()
    st.subheader("The blend in the balance")
    _blend_results()
    st.divider()



def _single_parameters() -> None:
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
    field("surfactant.measured_in", "CMC and K measured in", kind="choice", options=["", "water", "oil"], optional=True,
          help="the phase the CMC and adsorption constant were measured in; empty = the continuous phase. "
               "In an oil-continuous case, water values are converted through the partition coefficient")
    field("surfactant.plateau_tension", "Plateau tension, measured at full coverage [e.g. 50 mN/m]", optional=True,
          help="a protein or polymer: the model gives no tension for it; the measured value is shown instead")
    c1, c2 = st.columns(2)
    field("surfactant.price_per_kg", "Price per kg of product [currency/kg]", kind="number", optional=True, where=c1)
    field("surfactant.currency", "Currency", kind="text", optional=True, where=c2)
    field("surfactant.diffusivity", "Monomer diffusivity [e.g. 5e-10 m**2/s]", optional=True)


if BLEND:
    right = st.container()
else:
    left, right = st.columns([1, 1], gap="large")
    with left:
        _single_parameters()

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
    if BLEND:
        st.caption("A blend's components are edited above: copy the fitted values into a component's fields.")
    elif st.button("Use these parameters in the case", key="btn_use_tension_fit"):
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
    if BLEND:
        st.caption("A blend's components are edited above: copy the coefficient into a component's field.")
    elif st.button("Use this coefficient in the case", key="btn_use_partition"):
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
