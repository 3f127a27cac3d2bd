"""Scale-up and uncertainty: plant d32 with its band, the Monte Carlo spread, the tornado, the knee."""

import pandas as pd
import streamlit as st

from sizing import views
from sizing.errors import InputError
from ui import charts, state
from ui.charts import UM, num
from ui.state import field

state.ensure_case()
st.title("Scale-up and uncertainty")
st.caption("Predict the plant drop size from the lab points or the vessels, see how sure the dose is, "
           "and what the dose does to the drops when the surfactant runs short.")

# ---- plant conditions -----------------------------------------------------------------------
TEMPLATE = {"method": "power_law", "variable": "pressure",
            "points": [{"pressure": "200 bar", "d32": "0.4 um"}, {"pressure": "600 bar", "d32": "0.2 um"}],
            "plant": "500 bar"}
VARIABLE_UNIT = {"pressure": "e.g. 500 bar", "energy_density": "e.g. 5e7 J/m**3", "tip_speed": "e.g. 12 m/s"}

DRAFT = "scaleup_draft"  # a scale-up being written: not part of the case until confirmed


def _draft_form(draft: dict) -> None:
    """Edit a new power-law section with EXAMPLE points; it enters the case only when confirmed."""
    st.warning("**Example values, not yet used.** The points and the plant setting below are examples: "
               "replace them with your lab's measurements, then press *Use these points in the case*. "
               "Until then the dose uses the d32 of the Drops and bubbles page.", icon=":material/edit_note:")
    var_names = list(VARIABLE_UNIT)
    with st.form("form_scaleup_draft"):
        d1, d2 = st.columns(2)
        var = d1.selectbox("Process variable", var_names, index=var_names.index(draft["variable"]),
                           key="draft_variable")
        plant_x = d2.text_input(f"Plant setting [{VARIABLE_UNIT[var]}]", value=str(draft["plant"]), key="draft_plant")
        rows = pd.DataFrame([{"setting (example)": str(p.get(draft["variable"], "")), "d32 (example)": str(p["d32"])}
                             for p in draft["points"]])
        edited = st.data_editor(rows, num_rows="dynamic", key="editor_draft_points", width="stretch")
        b1, b2 = st.columns(2)
        use = b1.form_submit_button("Use these points in the case", type="primary", key="btn_draft_use")
        drop = b2.form_submit_button("Discard the example", key="btn_draft_discard")
    if drop:
        st.session_state.pop(DRAFT, None)
        st.rerun()
    if use:
        points = [{var: str(r["setting (example)"]).strip(), "d32": str(r["d32 (example)"]).strip()}
                  for _, r in edited.iterrows()
                  if str(r["setting (example)"]).strip() or str(r["d32 (example)"]).strip()]
        state.ensure_case()["scaleup"] = {"method": "power_law", "variable": var, "points": points,
                                          "plant": plant_x.strip()}
        st.session_state.pop(DRAFT, None)
        st.rerun()


data = state.ensure_case()
with st.container(border=True):
    st.subheader("Plant conditions")
    if not isinstance(data.get("scaleup"), dict):
        st.info("This case has no scale-up section: the drops of the Drops and bubbles page are taken as "
                "the plant's. Add one to predict the plant d32 from lab points.", icon=":material/info:")
        draft = st.session_state.get(DRAFT)
        if draft is None:
            if st.button("Add a power-law scale-up from lab points", key="btn_add_scaleup"):
                st.session_state[DRAFT] = {k: (list(v) if isinstance(v, list) else v) for k, v in TEMPLATE.items()}
                st.rerun()
        else:
            _draft_form(draft)
    else:
        state.show_errors("scaleup")
        method = data["scaleup"].get("method", "power_law")
        c1, c2, c3 = st.columns(3)
        field("scaleup.method", "Method", kind="choice", options=["power_law", "stirred_tank"], where=c1)
        if method == "power_law":
            field("scaleup.variable", "Process variable", kind="choice",
                  options=["pressure", "energy_density", "tip_speed"], where=c2)
            var = data["scaleup"].get("variable", "pressure")
            field("scaleup.plant", f"Plant {var.replace('_', ' ')} [{VARIABLE_UNIT.get(var, '')}]", where=c3)
            field("scaleup.exponent", "Exponent b (empty: fitted from the points) [-]", kind="number",
                  optional=True, where=c1)
            pts = data["scaleup"].get("points") or []
            table = pd.DataFrame([{var: str(p.get(var, "")), "d32": str(p.get("d32", ""))} for p in pts]
                                 or [{var: "", "d32": ""}])
            with st.form("form_points"):
                st.caption(f"Lab points: {var.replace('_', ' ')} and the d32 measured there, with units")
                edited = st.data_editor(table, num_rows="dynamic", key="editor_points", width="stretch")
                if st.form_submit_button("Apply the lab points"):
                    rows = [{var: str(r[var]).strip(), "d32": str(r["d32"]).strip()}
                            for _, r in edited.iterrows() if str(r[var]).strip() or str(r["d32"]).strip()]
                    data["scaleup"]["points"] = rows
                    st.rerun()
            state.show_errors("scaleup.points")
        else:
            field("scaleup.rule", "Scale-up rule", kind="choice",
                  options=["constant_power_per_volume", "constant_tip_speed", "constant_speed", "given_speed"],
                  where=c2)
            field("scaleup.weber_exponent", "Weber exponent [-]", kind="number", optional=True, where=c3)
            field("scaleup.lab_diameter", "Lab impeller diameter [e.g. 0.06 m]", where=c1)
            field("scaleup.lab_speed", "Lab speed [e.g. 600 rpm]", where=c2)
            field("scaleup.plant_diameter", "Plant impeller diameter [e.g. 0.8 m]", where=c3)
            if data["scaleup"].get("rule") == "given_speed":
                field("scaleup.plant_speed", "Plant speed [e.g. 120 rpm]", where=c1)
        if st.button("Remove the scale-up section", key="btn_remove_scaleup"):
            st.session_state.setdefault(state.STASH, {})["scaleup"] = data.pop("scaleup")
            for k in [k for k in st.session_state if isinstance(k, str) and k.startswith(state.PREFIX + "scaleup.")]:
                del st.session_state[k]
            st.rerun()

# ---- spreads for the Monte Carlo -------------------------------------------------------------
KINDS = {"lognormal": "log-normal (relative SD)", "uniform": "uniform (low..high)"}
EDITED = "_spread_edited"  # (path, message lines of the entry builder) of the last submitted spread

checked = state.check()
if checked["case"] is not None:  # the field list of the last valid case stays usable while it is fixed
    st.session_state["_spread_fields"] = state.view("spread_fields")
fields = {f["path"]: f for f in st.session_state.get("_spread_fields") or []}


def _option(path: str) -> str:
    f = fields[path]
    value = f["value"] + (" (-)" if f["dimension"] == "dimensionless" and f["value"] else "")
    mark = " · has a spread" if f["spread"] else ""
    return f"{f['label']} ({path}) = {value or '-'}{mark}"


def _spread_table(rows: list[dict]) -> list[dict]:
    """Return the spread rows without their unit column: each value carries its unit, (-) if none."""
    out = []
    for row in rows:
        r = {k: v for k, v in row.items() if k != "unit"}
        if row.get("unit") == "-":
            for k in ("value", "spread", "P10", "P90"):
                r[k] = f"{r[k]} (-)"
        out.append(r)
    return out


with st.container(border=True):
    st.subheader("Spreads for the Monte Carlo")
    if not fields:
        st.info("Fix the case's problems first: the spread editor lists the fields of a valid case.",
                icon=":material/info:")
    else:
        with st.form("form_spread"):
            c1, c2 = st.columns([3, 2])
            path = c1.selectbox("Field", list(fields), format_func=_option, key="spread_path",
                                help="any numeric field of the case; the value stays as it is")
            kind = c2.radio("Distribution", list(KINDS), format_func=KINDS.get, key="spread_kind",
                            horizontal=True)
            c3, c4, c5 = st.columns(3)
            rel = c3.text_input("rel_sd, for log-normal [-, e.g. 0.15 or 15 %]", key="spread_rel_sd",
                                help="coefficient of variation: standard deviation over the mean, 0 to 3")
            low = c4.text_input("low, for uniform [the field's unit, e.g. 1.8 um]", key="spread_low")
            high = c5.text_input("high, for uniform [the field's unit, e.g. 2.4 um]", key="spread_high")
            st.caption("low and high take the same kind of unit as the field (a plain number for a "
                       "dimensionless one) and must enclose its value.")
            with st.container(horizontal=True):
                apply = st.form_submit_button("Apply the spread", key="btn_spread_apply", type="primary")
                remove = st.form_submit_button("Remove the spread", key="btn_spread_remove")
        if apply or remove:
            raw = state.get(path)
            try:
                entry = views.spread_entry(raw, "none" if remove else kind, rel, low, high, path)
            except InputError as exc:
                st.session_state[EDITED] = (path, list(exc.problems))
            else:
                state.put(path, entry)
                st.session_state.pop(state.PREFIX + path, None)  # the field's widget shows the new value
                st.session_state[EDITED] = (path, [])
            st.rerun()
        edited = st.session_state.get(EDITED)
        if edited:
            e_path, lines = edited
            lines = list(lines) + state.errors_for(e_path)
            if not lines and state.check()["case"] is not None:
                try:
                    state.view("uncertainty_view")
                except InputError as exc:  # the Monte Carlo's checks (a spread that moves nothing, ...)
                    lines = [ln.partition(": ")[2] for ln in exc.problems if ln.startswith(e_path + ":")]
            for msg in lines:
                msg = msg.partition(": ")[2] if msg.startswith(e_path + ":") else msg
                st.error(f"**{e_path}** ({state.md_escape(views.field_label(e_path))}): {state.md_escape(msg)}. "
                         "A spread is either rel_sd from 0 to 3 on a value > 0, or low < value < high in the "
                         "field's unit, on a field that moves the dose.", icon=":material/error:")
            note = views.spread_note(state.check()["case"], e_path) if not lines and e_path in fields \
                and state.check()["case"] is not None else None
            if note:
                st.warning(state.md_escape(note), icon=":material/warning:")
            elif not lines and e_path in fields:
                st.success(f"{e_path}: spread updated; the Monte Carlo below uses it.",
                           icon=":material/check_circle:")
        if state.check()["case"] is not None:
            rows = state.view("spread_rows")
            if rows:
                st.table(pd.DataFrame(_spread_table(rows)).set_index("field"))
            else:
                st.caption("No field carries a spread yet.")
    st.markdown("**Monte Carlo settings** (the same fields as in *Uncertainty (Monte Carlo settings)* on "
                "the Case page)")
    u1, u2, u3 = st.columns(3)
    field("uncertainty.samples", "Samples [-]", kind="number", optional=True, placeholder="100000", where=u1)
    field("uncertainty.seed", "Seed [-]", kind="number", optional=True, placeholder="20261201", where=u2)
    field("uncertainty.percentile", "Percentile for the charge [%]", kind="number", optional=True,
          placeholder="90", where=u3)

# ---- process and adsorption speed ------------------------------------------------------------
with st.container(border=True):
    st.subheader("Process and adsorption speed")
    p1, p2 = st.columns([1, 1], gap="large")
    field("process.residence_time", "Residence time in the homogeniser [time, e.g. 0.5 ms or 2 s] (optional)",
          optional=True, where=p1, help="time the drops spend in the homogeniser's break-up zone ([process])")
    diff = state.get("surfactant.diffusivity")
    p2.caption("Monomer diffusivity D (`surfactant.diffusivity`, set on the Surfactant page): "
               + (f"{state.md_escape(state._shown(diff))}" if diff is not None else "not given"))
    if state.check()["case"] is not None:
        charts.adsorption_panel(state.view("adsorption_view"))


result = state.needs_valid_case()

# ---- predicted plant d32 -----------------------------------------------------------------------
try:
    sc = state.view("scaleup_view")
except InputError as exc:
    st.error(state.scrub(str(exc)), icon=":material/error:")
    sc = None
if sc is not None:
    lo, hi = sc["plant_d32_band_m"]
    band = sc.get("dose_band_kg_product")
    charts.tiles([
        ("Lab d32", num(sc["lab_d32_m"] * UM, "µm"), "the d32 of the Drops and bubbles page"
         + (" (not used by a power law: its lab points carry their own sizes)" if sc["method"] == "power_law" else "")),
        ("Predicted plant d32", num(sc["plant_d32_m"] * UM, "µm"),
         f"band {num(lo * UM, '')} to {num(hi * UM, 'µm')}: {sc['band_method']}; every dose page uses it"),
        ("Plant d32 band", f"{num(lo * UM, '')}–{num(hi * UM, 'µm')}", sc["band_method"]),
        ("Dose over the band", f"{num(band[0], '')}–{num(band[1], 'kg')}" if band else "not reachable",
         "product per batch at the ends of the plant d32 band"),
    ])
    st.caption(f"Exponent {num(sc['exponent'], '')} ({sc['exponent_source']}). The dose pages use the plant d32; "
               f"at the lab d32 the dose would be {num(sc.get('lab_dose_kg_product'), 'kg')} of product.")
    for w in sc["warnings"]:
        st.warning(w, icon=":material/warning:")

# ---- Monte Carlo and tornado ---------------------------------------------------------------------
left, right = st.columns(2, gap="large")
with left:
    st.subheader("Monte Carlo of the dose")
    try:
        mc = state.view("uncertainty_view")
    except InputError as exc:
        for line in exc.problems:
            st.error(line, icon=":material/error:")
        mc = None
    if mc is None:
        st.info("No input carries a spread. Add one in *Spreads for the Monte Carlo* above, or add a "
                "scale-up section.", icon=":material/info:")
    else:
        u = mc["summary"]
        for note in u.get("notes", []):
            st.warning(state.md_escape(note), icon=":material/warning:")
        charts.draw("histogram_from_bins", mc["edges_kg"], mc["counts"], "dose of product per batch [kg]",
                    {"P10": mc["p10"], "P50": mc["p50"], "P90": mc["p90"]}, key="chart_mc")
        charts.tiles([
            ("P10", num(mc["p10"], "kg"), "dose of product per batch: 10 % of the draws need less"),
            ("P50", num(mc["p50"], "kg"), "dose of product per batch: the median of the draws"),
            ("P90", num(mc["p90"], "kg"), "dose of product per batch: 90 % of the draws need less"),
            ("P(target met)", num(100 * u["probability_target_met"], "%"),
             f"share of draws where the charge {num(u['charge_kg_product'], 'kg')} (P{u['percentile']:g} "
             "with the margin) meets the target"),
        ], per_row=2)
        st.caption(f"{u['samples']} samples, seed {u['seed']}; {u['sampling']}. "
                   f"Unreachable draws: {num(100 * u['infeasible_fraction'], '%')}.")
with right:
    st.subheader("What moves the dose (tornado)")
    if mc is not None and mc["summary"].get("sensitivity"):
        rows = [{"input": views.field_label(e["path"]), "low": e["dose_low_kg"], "high": e["dose_high_kg"]}
                for e in mc["summary"]["sensitivity"]]
        charts.draw("tornado", rows, "product per batch [kg]",
                    key="chart_tornado")
        st.caption("Each bar: the dose with one input at its P10 and P90 (or low and high), the others at "
                   "their values.")
    else:
        st.info("The tornado needs inputs with spreads.", icon=":material/info:")

# ---- d32 against dose with the knee ---------------------------------------------------------------
st.subheader("Drops reached against the dose (surfactant-poor regime)")
ach = state.view("achievable_view")
charts.draw("d32_vs_dose", ach, result["summary"]["dose"] and result["summary"]["dose"]["kg_product"],
            key="chart_knee")
st.caption(f"Below the knee ({num(ach['knee_kg_product'], 'kg')} of product) the surfactant, not the homogeniser, "
           f"limits the drops: d32 = 6 s V_d Gamma_inf theta / (N − bulk losses). Bulk losses "
           f"{num(ach['bulk_loss_kg_product'], 'kg')} of product.")
