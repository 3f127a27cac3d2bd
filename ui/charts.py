"""Altair charts and number formatting for the workbench (drawing only; data come from sizing.views)."""

from __future__ import annotations

import math

import altair as alt
import pandas as pd
import streamlit as st

from sizing.units import sig

UM = 1e6  # m -> um for display
MN = 1e3  # N/m -> mN/m for display


def num(x, unit: str = "", digits: int = 3) -> str:
    """Return ``x`` with ``digits`` significant figures and its unit; 'n/a' for None or nan.

    A power of ten is written short (``1.58e6``, ``2.5e-5``, not ``1.58e+06``) so that a metric
    tile keeps room for the unit.

    >>> num(1.5831e6, "m²")
    '1.58e6 m²'
    >>> num(0.000012345, "s")
    '1.23e-5 s'
    >>> num(2.18, "mg/m²")
    '2.18 mg/m²'
    """
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return "n/a"
    text = sig(x, digits)
    mantissa, e, power = text.partition("e")
    if e:
        text = f"{mantissa}e{int(power)}"
    return f"{text} {unit}".strip()


def tiles(items: list[tuple], per_row: int = 3, where=None) -> None:
    """Draw metric tiles ``(label, value[, help])`` in rows of ``per_row`` equal columns.

    Three tiles per row leave a value with its unit (``9.79e6 m²/m³``, ``2.8 µmol/m²``) whole at a
    1200 px window with the sidebar open; four or five per row cut it off with an ellipsis.
    """
    where = where or st
    for start in range(0, len(items), per_row):
        cols = where.columns(per_row)
        for col, item in zip(cols, items[start:start + per_row]):
            label, value, *rest = item
            help_text = rest[0] if rest else None
            col.metric(label, value, help=help_text)


def _rule(value: float, label: str, color: str, axis: str = "x", row: int = 0,
          align: str = "left") -> alt.LayerChart:
    df = pd.DataFrame({"v": [value], "label": [label]})
    enc = {axis: alt.X("v:Q") if axis == "x" else alt.Y("v:Q")}
    line = alt.Chart(df).mark_rule(color=color, strokeDash=[6, 4], size=2).encode(
        **enc, tooltip=[alt.Tooltip("label:N", title="marker"), alt.Tooltip("v:Q", title="value", format=".3g")])
    text = alt.Chart(df).mark_text(align=align, dx=4 if align == "left" else -4, dy=-6, color=color,
                                   fontSize=11).encode(
        **enc, text="label:N", **({"y": alt.value(12 + 14 * row)} if axis == "x" else {"x": alt.value(4)}))
    return line + text


def size_distribution(curve: dict, lab: bool = False) -> alt.LayerChart:
    """Volume density against log size with d32 and dv50 marked (``lab``: the d32 is the lab's)."""
    df = pd.DataFrame({"d_um": [d * UM for d in curve["d_m"]], "q3": curve["q3"]})
    base = alt.Chart(df).mark_area(
        line={"color": "#1f5f8b"}, color="#9ecae1", opacity=0.6,
        interpolate="step-after" if curve["kind"] == "table" else "monotone",
    ).encode(
        x=alt.X("d_um:Q", scale=alt.Scale(type="log"), title="drop or bubble diameter d [µm]"),
        y=alt.Y("q3:Q", title="volume density q3 per unit ln d [-]"),
        tooltip=[alt.Tooltip("d_um:Q", title="d [µm]", format=".3g"),
                 alt.Tooltip("q3:Q", title="q3 [-]", format=".3g")],
    )
    layers = base + _rule(curve["d32_m"] * UM, f"{'lab ' if lab else ''}d32 = {sig(curve['d32_m'] * UM, 3)} µm", "#d62728")
    if curve.get("dv50_m"):
        layers = layers + _rule(curve["dv50_m"] * UM, f"dv50 = {sig(curve['dv50_m'] * UM, 3)} µm", "#2ca02c",
                                row=1)
    return layers.properties(height=300)


def dose_split(rows: list[dict]) -> alt.Chart:
    """Horizontal bars: where the dose goes, in kg of active and per cent."""
    df = pd.DataFrame(rows)
    return alt.Chart(df).mark_bar(color="#1f5f8b").encode(
        y=alt.Y("place:N", title=None, sort=None),
        x=alt.X("kg_active:Q", title="active surfactant per batch [kg]"),
        tooltip=[alt.Tooltip("place:N", title="where"),
                 alt.Tooltip("kg_active:Q", title="active [kg]", format=".3g"),
                 alt.Tooltip("mol:Q", title="amount [mol]", format=".3g"),
                 alt.Tooltip("percent:Q", title="share [%]", format=".1f")],
    ).properties(height=170)


def dose_vs_coverage(curve: dict) -> alt.LayerChart:
    """Dose of product against coverage, with the target and the CMC ceiling marked."""
    df = pd.DataFrame({"coverage": curve["coverage"], "kg_product": curve["kg_product"]})
    line = alt.Chart(df).mark_line(color="#1f5f8b", strokeWidth=2).encode(
        x=alt.X("coverage:Q", title="coverage theta = Gamma/Gamma_inf [-]", scale=alt.Scale(domain=[0, 1])),
        y=alt.Y("kg_product:Q", title="dose of product per batch [kg]"),
        tooltip=[alt.Tooltip("coverage:Q", title="coverage [-]", format=".3f"),
                 alt.Tooltip("kg_product:Q", title="product [kg]", format=".4g")],
    )
    layers = line
    if curve.get("has_cmc", True):  # a protein or a polymer forms no micelles: no ceiling to mark
        layers = layers + _rule(curve["max_coverage"], f"CMC ceiling {curve['max_coverage']:.3f}", "#d62728")
    if curve.get("target_coverage") is not None:
        layers = layers + _rule(curve["target_coverage"], f"target {curve['target_coverage']:.3f}", "#2ca02c",
                                row=1)
        if curve.get("target_kg_product") is not None:
            pt = pd.DataFrame({"coverage": [curve["target_coverage"]], "kg_product": [curve["target_kg_product"]]})
            layers = layers + alt.Chart(pt).mark_point(color="#2ca02c", size=90, filled=True).encode(
                x="coverage:Q", y="kg_product:Q",
                tooltip=[alt.Tooltip("kg_product:Q", title="dose for the target [kg]", format=".4g")])
    return layers.properties(height=320)


def dose_vs_d32(curve: dict, whatif_d32: float | None = None, whatif_kg: float | None = None) -> alt.LayerChart:
    """Dose of product for the target against d32 (log axis), the case and the what-if marked."""
    df = pd.DataFrame({"d32_um": [d * UM for d in curve["d32_m"]], "kg_product": curve["kg_product"]})
    df = df[df["kg_product"].notna()]
    line = alt.Chart(df).mark_line(color="#1f5f8b", strokeWidth=2).encode(
        x=alt.X("d32_um:Q", scale=alt.Scale(type="log"), title="Sauter mean diameter d32 [µm]"),
        y=alt.Y("kg_product:Q", scale=alt.Scale(type="log"), title="dose of product per batch [kg]"),
        tooltip=[alt.Tooltip("d32_um:Q", title="d32 [µm]", format=".3g"),
                 alt.Tooltip("kg_product:Q", title="product [kg]", format=".4g")],
    )
    label = curve.get("case_label", "case")
    layers = line + _rule(curve["case_d32_m"] * UM, f"{label} {sig(curve['case_d32_m'] * UM, 3)} µm", "#555555")
    if whatif_d32 is not None and whatif_kg is not None and math.isfinite(whatif_kg):
        pt = pd.DataFrame({"d32_um": [whatif_d32 * UM], "kg_product": [whatif_kg]})
        layers = layers + alt.Chart(pt).mark_point(color="#ff7f0e", size=120, filled=True).encode(
            x="d32_um:Q", y="kg_product:Q",
            tooltip=[alt.Tooltip("d32_um:Q", title="what-if d32 [µm]", format=".3g"),
                     alt.Tooltip("kg_product:Q", title="product [kg]", format=".4g")])
    return layers.properties(height=320)


def points_and_curve(points: pd.DataFrame, curve: pd.DataFrame, x: str, y: str, x_title: str, y_title: str,
                     log_x: bool = True) -> alt.LayerChart:
    """Measured points with a fitted curve (x on a log axis by default)."""
    xs = alt.Scale(type="log") if log_x else alt.Scale()
    pts = alt.Chart(points).mark_point(filled=True, size=50, color="#1f5f8b").encode(
        x=alt.X(f"{x}:Q", scale=xs, title=x_title), y=alt.Y(f"{y}:Q", title=y_title, scale=alt.Scale(zero=False)),
        tooltip=[alt.Tooltip(f"{x}:Q", format=".4g"), alt.Tooltip(f"{y}:Q", format=".4g")])
    line = alt.Chart(curve).mark_line(color="#d62728").encode(x=f"{x}:Q", y=f"{y}:Q")
    return (pts + line).properties(height=300)


def residuals(df: pd.DataFrame, x: str, y: str, x_title: str, y_title: str, log_x: bool = True) -> alt.LayerChart:
    """Residuals against x with a zero line, on a y scale symmetric about zero with labelled ticks."""
    xs = alt.Scale(type="log") if log_x else alt.Scale()
    values = pd.to_numeric(df[y], errors="coerce").abs()
    top = float(values.max()) if values.notna().any() and float(values.max()) > 0 else 1.0
    ys = alt.Scale(domain=[-1.2 * top, 1.2 * top], nice=True)
    pts = alt.Chart(df).mark_point(filled=True, size=45, color="#1f5f8b").encode(
        x=alt.X(f"{x}:Q", scale=xs, title=x_title),
        y=alt.Y(f"{y}:Q", title=y_title, scale=ys, axis=alt.Axis(tickCount=5, format=".2~g", grid=True)),
        tooltip=[alt.Tooltip(f"{x}:Q", format=".4g"), alt.Tooltip(f"{y}:Q", format=".3g")])
    zero = alt.Chart(pd.DataFrame({"z": [0.0]})).mark_rule(color="#888888").encode(y=alt.Y("z:Q", scale=ys))
    return (pts + zero).properties(height=180)


def histogram_from_bins(edges, counts, title: str, markers: dict[str, float]) -> alt.LayerChart:
    """Histogram from bin edges and counts (Monte Carlo samples) with percentile markers."""
    df = pd.DataFrame({"lo": edges[:-1], "hi": edges[1:], "n": counts})
    bars = alt.Chart(df).mark_bar(color="#9ecae1", stroke="#1f5f8b", strokeWidth=0.3).encode(
        x=alt.X("lo:Q", title=title, scale=alt.Scale(zero=False)), x2="hi:Q",
        y=alt.Y("n:Q", title="samples [-]"), y2=alt.datum(0),
        tooltip=[alt.Tooltip("lo:Q", title="from [kg]", format=".4g"), alt.Tooltip("hi:Q", title="to [kg]", format=".4g"),
                 alt.Tooltip("n:Q", title="samples")])
    layers = bars
    colors = ["#2ca02c", "#d62728", "#2ca02c", "#555555"]
    for i, (label, v) in enumerate(markers.items()):
        # the lowest marker's label to the left of its line, so the next line does not cross it
        layers = layers + _rule(v, f"{label} {sig(v, 3)} kg", colors[i % len(colors)], row=i % 2,
                                align="right" if i == 0 and len(markers) > 1 else "left")
    return layers.properties(height=280)


def d32_vs_dose(curve: dict, dose_kg: float | None = None) -> alt.LayerChart:
    """Drops reached against the dose (log-log), the knee and the case's dose marked."""
    df = pd.DataFrame({"kg": curve["kg_product"], "d32_um": [d * UM for d in curve["d32_m"]],
                       "limited_by": curve["limited_by"]})
    df = df[df["d32_um"].map(math.isfinite)]
    line = alt.Chart(df).mark_line(strokeWidth=2).encode(
        x=alt.X("kg:Q", scale=alt.Scale(type="log"), title="dose of product per batch [kg]"),
        y=alt.Y("d32_um:Q", scale=alt.Scale(type="log"), title="d32 reached [µm]"),
        color=alt.Color("limited_by:N", title="limited by",
                        scale=alt.Scale(domain=["surfactant", "homogeniser"], range=["#d62728", "#1f5f8b"])),
        tooltip=[alt.Tooltip("kg:Q", title="product [kg]", format=".4g"),
                 alt.Tooltip("d32_um:Q", title="d32 [µm]", format=".3g"), alt.Tooltip("limited_by:N")])
    layers = line + _rule(curve["knee_kg_product"], f"knee {sig(curve['knee_kg_product'], 3)} kg", "#555555")
    if dose_kg is not None and math.isfinite(dose_kg):
        layers = layers + _rule(dose_kg, f"dose for the target {sig(dose_kg, 3)} kg", "#2ca02c", row=1)
    return layers.properties(height=300)


def tornado(rows: list[dict], x_title: str) -> alt.LayerChart:
    """Tornado bars: rows ``{"input", "low", "high"}`` as the change of the output, every bar labelled.

    Each bar carries its own name as a text label left of the axis (the axis labels alone were
    thinned out by Vega where they crowded); the base value is marked by a rule when given.
    """
    df = pd.DataFrame(rows)
    df["lo"] = df[["low", "high"]].min(axis=1)
    df["hi"] = df[["low", "high"]].max(axis=1)
    y = alt.Y("input:N", sort=None, title=None,
              axis=alt.Axis(labelLimit=320, labelOverlap=False, labelFontSize=12, labelPadding=6))
    bars = alt.Chart(df).mark_bar(color="#1f5f8b", height=18).encode(
        y=y, x=alt.X("lo:Q", title=x_title, scale=alt.Scale(zero=False)), x2="hi:Q",
        tooltip=[alt.Tooltip("input:N", title="input"), alt.Tooltip("low:Q", title="at P10 / low [kg]", format=".4g"),
                 alt.Tooltip("high:Q", title="at P90 / high [kg]", format=".4g")])
    ends = alt.Chart(df).mark_text(align="left", dx=4, fontSize=11, color="#333333").encode(
        y=alt.Y("input:N", sort=None), x="hi:Q", text=alt.Text("hi:Q", format=".3g"))
    starts = alt.Chart(df).mark_text(align="right", dx=-4, fontSize=11, color="#333333").encode(
        y=alt.Y("input:N", sort=None), x="lo:Q", text=alt.Text("lo:Q", format=".3g"))
    return (bars + starts + ends).properties(height=max(140, 40 * len(df)))


@st.cache_data(max_entries=512, show_spinner=False)
def _spec(name: str, args: tuple) -> dict:
    """Return the Vega-Lite spec (plain data) of one of this module's altair charts."""
    return globals()[name](*args).to_dict()


def draw(name: str, *args, key: str) -> None:
    """Draw the altair chart built by ``charts.<name>(*args)``, its spec cached across reruns.

    Building an altair chart and validating its spec costs tens of milliseconds per chart;
    the spec is plain data, so it is cached on the chart's inputs.
    """
    st.vega_lite_chart(_spec(name, args), width="stretch", key=key)
    export_buttons(_spec(name, args), key)


def adsorption_panel(view: dict, where=None) -> None:
    """Show the adsorption-speed check of ``sizing.views.adsorption_view``: figures and the flag."""
    where = where or st
    status = view["status"]
    if status == "missing":
        from sizing.views import ADSORPTION_FIELDS

        need = " and ".join(f"`{p}` ({ADSORPTION_FIELDS[p]})" for p in view["missing"])
        where.info(f"The adsorption-speed check is off: it needs {need}. With both, it compares the "
                   "diffusion time to cover new interface with the time drops spend in the homogeniser.",
                   icon=":material/info:")
        return
    if status == "unreachable":
        where.info("The adsorption-speed check needs a reachable target; this target lies above the CMC "
                   "ceiling (see the Dose balance page).", icon=":material/info:")
        return
    j = view["check"]
    tiles([("Adsorption depth h", num(j["depth_m"] * UM, "µm"), "h = Gamma / c: the depth of continuous phase "
            "that holds as much surfactant as the interface carries"),
           ("Diffusion time tau_D", num(j["diffusion_time_s"], "s"),
            f"tau_D = h² / D; Ward-Tordai short-time estimate {num(j['ward_tordai_time_s'], 's')}"),
           ("Residence time t_res", num(j["residence_time_s"], "s"), "time in the homogeniser's break-up zone"),
           ("tau_D / t_res", num(j["ratio"], "(-)"), f"flagged above {j['threshold']:g}")],
          per_row=4, where=where)
    figures = (f"free monomer {num(j['free_concentration_mol_m3'], 'mM')}, surface excess "
               f"{num(j['surface_excess_mol_m2'] * 1e6, 'µmol/m²')}, D {num(j['diffusivity_m2_s'], 'm²/s')}")
    if status == "flagged":
        where.warning(f"**Adsorption may be too slow: the equilibrium dose is optimistic.** tau_D / t_res = "
                      f"{num(j['ratio'], '')} is above {j['threshold']:g}, so new interface is not covered while "
                      "the drops are made; expect larger drops or more coalescence than the balance assumes, and "
                      f"test a higher level in the trial ({figures}).", icon=":material/warning:")
    else:
        where.success(f"Adsorption is fast enough: tau_D / t_res = {num(j['ratio'], '')} is at most "
                      f"{j['threshold']:g} ({figures}).", icon=":material/check_circle:")


# ---------------------------------------------------------------------------------------------
# blends, process conditions and plant trials


def blend_interface(rows: list[dict], charge_kg: float | None = None) -> alt.LayerChart:
    """Coverage held by each component against the blend's dose (rows ``dose_kg``, ``component``,
    ``coverage``), the recommended charge marked."""
    df = pd.DataFrame(rows)
    line = alt.Chart(df).mark_line(strokeWidth=2).encode(
        x=alt.X("dose_kg:Q", title="blend charge, product as delivered per batch [kg]"),
        y=alt.Y("coverage:Q", title="interface share θ_i [-]", scale=alt.Scale(domain=[0, 1])),
        color=alt.Color("component:N", title="component", sort=None, legend=alt.Legend(orient="bottom"),
                        scale=alt.Scale(scheme="category10")),
        tooltip=[alt.Tooltip("component:N"), alt.Tooltip("dose_kg:Q", title="charge [kg]", format=".4g"),
                 alt.Tooltip("coverage:Q", title="coverage [-]", format=".3f")])
    layers = line
    if charge_kg is not None and math.isfinite(charge_kg):
        layers = layers + _rule(charge_kg, f"recommended charge {sig(charge_kg, 3)} kg", "#555555")
    return layers.properties(height=300)


def blend_split(rows: list[dict]) -> alt.Chart:
    """Stacked bars: where each component's active goes at the charge (rows ``component``, ``place``,
    ``kg_active``, ``percent``)."""
    df = pd.DataFrame(rows)
    return alt.Chart(df).mark_bar().encode(
        y=alt.Y("component:N", title=None, sort=None),
        x=alt.X("kg_active:Q", title="active per batch at the charge [kg]", stack="zero"),
        color=alt.Color("place:N", title="where", sort=["interface", "water", "oil", "micelles"],
                        scale=alt.Scale(domain=["interface", "water", "oil", "micelles"],
                                        range=["#1f5f8b", "#9ecae1", "#ff7f0e", "#999999"])),
        tooltip=[alt.Tooltip("component:N"), alt.Tooltip("place:N", title="where"),
                 alt.Tooltip("kg_active:Q", title="active [kg]", format=".3g"),
                 alt.Tooltip("percent:Q", title="share of the component [%]", format=".1f")],
    ).properties(height=int(110 + 45 * (df["component"].nunique() if len(df) else 1)))  # room for the bars


def coverage_vs_temperature(curve: dict) -> alt.LayerChart:
    """Coverage of the charged dose against temperature [°C], target, batch and storage marked
    (``temperature_C``, ``coverage``, ``target_coverage``, ``batch_C``, ``storage_C``)."""
    df = pd.DataFrame({"t": curve["temperature_C"], "coverage": curve["coverage"]})
    df = df[df["coverage"].notna()]
    # at least 0.1 of coverage on the axis: a nearly flat line must not look like a steep one
    values = list(df["coverage"]) + ([curve["target_coverage"]] if curve.get("target_coverage") is not None else [])
    lo, hi = (min(values), max(values)) if values else (0.0, 1.0)
    pad = max(0.0, 0.1 - (hi - lo)) / 2 + 0.01
    ys = alt.Scale(domain=[max(0.0, lo - pad), min(1.0, hi + pad)])
    line = alt.Chart(df).mark_line(color="#1f5f8b", strokeWidth=2).encode(
        x=alt.X("t:Q", title="temperature [°C]", scale=alt.Scale(zero=False)),
        y=alt.Y("coverage:Q", title="coverage of the charge θ [-]", scale=ys),
        tooltip=[alt.Tooltip("t:Q", title="temperature [°C]", format=".1f"),
                 alt.Tooltip("coverage:Q", title="coverage [-]", format=".3f")])
    layers = line
    if curve.get("target_coverage") is not None:
        layers = layers + _rule(curve["target_coverage"], f"target {curve['target_coverage']:.3f}", "#2ca02c",
                                axis="y")
    layers = layers + _rule(curve["batch_C"], f"batch {sig(curve['batch_C'], 3)} °C", "#d62728")
    if curve.get("storage_C") is not None:
        layers = layers + _rule(curve["storage_C"], f"storage {sig(curve['storage_C'], 3)} °C", "#555555", row=1)
    return layers.properties(height=300)


def prior_posterior(rows: list[dict], x_title: str) -> alt.LayerChart:
    """Prior and posterior bands of one learned input: p10 to p90 as a bar, p50 as a tick
    (rows ``which``, ``p10``, ``p50``, ``p90``)."""
    df = pd.DataFrame(rows)
    y = alt.Y("which:N", title=None, sort=["prior", "posterior"])
    color = alt.Color("which:N", legend=None, scale=alt.Scale(domain=["prior", "posterior"],
                                                              range=["#9ecae1", "#1f5f8b"]))
    tips = [alt.Tooltip("which:N", title="band"), alt.Tooltip("p10:Q", title="p10", format=".4g"),
            alt.Tooltip("p50:Q", title="p50", format=".4g"), alt.Tooltip("p90:Q", title="p90", format=".4g")]
    bars = alt.Chart(df).mark_bar(height=16).encode(
        y=y, x=alt.X("p10:Q", title=x_title, scale=alt.Scale(zero=False)), x2="p90:Q", color=color, tooltip=tips)
    mid = alt.Chart(df).mark_tick(color="#d62728", thickness=3, size=22).encode(y=y, x="p50:Q", tooltip=tips)
    return (bars + mid).properties(height=150)  # Streamlit shrinks a shorter chart onto one row


def measured_vs_predicted(rows: list[dict], y_title: str) -> alt.Chart:
    """Each trial's measured value against the posterior prediction (rows ``batch``, ``which``, ``value``)."""
    df = pd.DataFrame(rows)
    df = df[df["value"].notna()]
    return alt.Chart(df).mark_point(filled=True, size=90).encode(
        x=alt.X("batch:N", title="trial batch", sort=None),
        y=alt.Y("value:Q", title=y_title, scale=alt.Scale(zero=False)),
        shape=alt.Shape("which:N", title=None, sort=["measured", "predicted"], legend=alt.Legend(orient="bottom")),
        color=alt.Color("which:N", title=None, sort=["measured", "predicted"],
                        scale=alt.Scale(domain=["measured", "predicted"], range=["#d62728", "#1f5f8b"])),
        tooltip=[alt.Tooltip("batch:N"), alt.Tooltip("which:N"), alt.Tooltip("value:Q", format=".4g")],
    ).properties(height=240)


# ---------------------------------------------------------------------------------------------
# chart export: the chart's own toolbar offers "Download as PNG" (drawn in the browser); these
# buttons add SVG and a print-size PNG, converted on this computer by vl-convert when clicked


EXPORT_WIDTH = 720  # px of a chart drawn to a file (the page's charts take the column's width)


def _export_spec(spec: dict) -> dict:
    out = dict(spec)
    if not any(k in out for k in ("width", "hconcat", "vconcat", "concat", "facet", "repeat")):
        out["width"] = EXPORT_WIDTH
    return out


def chart_file(spec: dict, fmt: str) -> bytes:
    """Return a Vega-Lite spec drawn as an SVG or PNG file (vl-convert: no browser, no network)."""
    import vl_convert  # deferred: only a click on an export button needs it

    if fmt == "svg":
        return vl_convert.vegalite_to_svg(_export_spec(spec)).encode("utf-8")
    return vl_convert.vegalite_to_png(_export_spec(spec), scale=2)


def export_buttons(spec: dict, key: str, where=None) -> None:
    """Draw 'SVG' and 'PNG' download buttons for a chart; the file is made only when clicked."""
    import importlib.util  # only to see whether vl-convert is installed, without importing it

    if importlib.util.find_spec("vl_convert") is None:  # not installed: the toolbar's PNG download remains
        return
    where = where or st
    stem = key.removeprefix("chart_") or "chart"
    with where.container(horizontal=True, gap="small"):
        for fmt, mime in (("svg", "image/svg+xml"), ("png", "image/png")):
            st.download_button(f"{fmt.upper()}", data=lambda fmt=fmt: chart_file(spec, fmt),
                               file_name=f"{stem}.{fmt}", mime=mime, key=f"dl_{key}_{fmt}",
                               icon=":material/download:", type="tertiary", on_click="ignore",
                               help=f"this chart as a {fmt.upper()} file")
