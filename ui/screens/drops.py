"""Drops and bubbles: the size description or a measured size table, its plot and the area."""

import streamlit as st

from sizing.case import read_size_table
from sizing.errors import InputError
from ui import charts, state
from ui.charts import UM, num
from ui.state import field

state.ensure_case()
st.title("Drops and bubbles")
st.caption("Describe the drop (or bubble) sizes the homogeniser gives: d32 directly, a log-normal or RRSB "
           "distribution, or a measured table of size classes.")

DESCRIPTIONS = {"d32": "d32 given directly", "lognormal": "log-normal", "rrsb": "RRSB (Rosin-Rammler)",
                "table": "measured size table (CSV)"}
DEFAULTS = {"lognormal": {"median": "1.5 um", "gsd": 1.6, "basis": "number"},
            "rrsb": {"characteristic_size": "3 um", "spread": 2.0}, "table": {}}
KEYS = ("d32", "distribution", "median", "gsd", "basis", "characteristic_size", "spread", "file")

now = state.get("drops.distribution") or "d32"
left, right = st.columns([1, 2], gap="large")
with left:
    kind = st.selectbox("Size description", list(DESCRIPTIONS), index=list(DESCRIPTIONS).index(now),
                        format_func=DESCRIPTIONS.get, key="sel_drops_kind")
    if kind != now:
        stash = st.session_state.setdefault(state.STASH, {})
        drops = state.ensure_case().setdefault("drops", {})
        stash[f"drops:{now}"] = {k: drops.pop(k) for k in KEYS if k in drops}
        restored = stash.pop(f"drops:{kind}", None)
        if restored is None:
            restored = {"d32": "2 um"} if kind == "d32" else {"distribution": kind, **DEFAULTS[kind]}
        drops.update(restored)
        for k in KEYS:
            st.session_state.pop(state.PREFIX + f"drops.{k}", None)
        st.rerun()
    state.show_errors("drops")
    lab = isinstance(state.ensure_case().get("scaleup"), dict)  # a [scaleup] section sets the plant d32
    if lab:
        info = state.view("d32_info") if state.check()["case"] is not None else None
        st.info("**Lab drops.** " + (info["note"] if info else
                "The case has a scale-up section: the dose uses the plant d32 it predicts, not this one."),
                icon=":material/science:")
    if kind == "d32":
        field("drops.d32", ("Lab d32 (the lab recipe's drops)" if lab else "Sauter mean diameter d32")
              + " [length, e.g. 2.4 µm]")
    elif kind == "lognormal":
        field("drops.median", "Median diameter [length, e.g. 1.5 µm]")
        field("drops.gsd", "Geometric standard deviation [-] (> 1)", kind="number")
        field("drops.basis", "Basis of the median", kind="choice", options=["number", "volume"],
              help="number: count median diameter; volume: volume (mass) median diameter")
    elif kind == "rrsb":
        field("drops.characteristic_size", "Characteristic size d' (63.2 % by volume) [length]")
        field("drops.spread", "Spread n [-] (> 1)", kind="number")
    else:
        up = st.file_uploader("Size table (CSV, at most 5 MB): e.g. 'upper [um],volume [%]' or "
                              "'size [um],undersize [%]'", type=["csv"], key="up_sizes")
        if state.new_upload(up, "sizes"):
            try:
                text = state.check_upload(up.name, up.getvalue(), (".csv",), "drops.file")
                name = state.save_upload(up.name, text, read_size_table)
            except InputError as exc:
                st.session_state["sizes_error"] = state.scrub(str(exc))
            else:
                st.session_state.pop("sizes_error", None)
                state.put("drops.file", name)
                st.session_state.pop(state.PREFIX + "drops.file", None)
                st.rerun()
        if st.session_state.get("sizes_error"):
            st.error(st.session_state["sizes_error"] + " — the table in use is unchanged.",
                     icon=":material/error:")
        field("drops.file", "Size table file (relative to the case file)", kind="text")
    field("drops.shape_factor", "Shape factor s [-] (1 spheres; kelvin, weaire_phelan for dry foam)",
          kind="number", optional=True)

result = state.check()
with right:
    if result["case"] is None:
        st.info("Fix the problems in the case to see the distribution and the area.", icon=":material/info:")
        st.stop()
    s = result["summary"]
    size = s["size_m"]  # the drops this page describes (the lab's when [scaleup] sets the plant d32)
    lab_d32 = size.get("d32") or s["d32_m"]
    d32_tiles = [("Lab d32" if lab else "d32", num(lab_d32 * UM, "µm"),
                  "Sauter mean diameter of the size description: sum of d³ over sum of d²")]
    if lab:
        d32_tiles.append(("Plant d32 (for dose)", num(s["d32_m"] * UM, "µm"),
                          "predicted by the scale-up section (Scale-up page); the area below uses it"))
    charts.tiles(d32_tiles + [
        ("dv50", num(size.get("dv50") and size["dv50"] * UM, "µm"), "volume median diameter"),
        ("d43", num(size.get("d43") and size["d43"] * UM, "µm"), "volume-weighted mean diameter"),
        ("d10", num(size.get("d10") and size["d10"] * UM, "µm"), "number mean diameter"),
        ("span", num(size.get("span"), "(-)"), "(dv90 - dv10) / dv50 on the volume distribution"),
    ])
    try:
        curve = state.view("size_curve")
    except InputError as exc:
        st.error(state.scrub(str(exc)), icon=":material/error:")
        curve = None
    if curve is None:
        st.info("d32 is given directly: there is no distribution to plot. Choose a log-normal, RRSB or "
                "measured description to see one.", icon=":material/info:")
    else:
        charts.draw("size_distribution", curve, lab, key="chart_sizes")
    a = s["area"]
    st.subheader("Interfacial area")
    charts.tiles([
        ("per batch", num(a["per_batch_m2"], "m²")),
        ("per m³ of dispersion", num(a["per_m3_dispersion_m2_m3"], "m²/m³")),
        ("per m³ of continuous phase", num(a["per_m3_continuous_m2_m3"], "m²/m³")),
        ("per kg of dispersed phase", num(a.get("per_kg_dispersed_m2_kg"), "m²/kg")),
    ], per_row=2)
    st.caption(f"A = s · 6 V_d / d32 with V_d = {num(s['phases']['dispersed_volume_m3'], 'm³')} of "
               f"{s['phases']['dispersed']} drops or bubbles"
               + (f" and the plant d32 {num(s['d32_m'] * UM, 'µm')} of the scale-up." if lab else "."))
