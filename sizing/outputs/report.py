"""The plan report: one self-contained HTML file with inline SVG charts and a print stylesheet.

The report is a list of section renderers, :data:`SECTIONS`; each takes a
:class:`sizing.plan.Plan` and returns an HTML fragment ('' to skip).  Later parts append their
own renderer (``SECTIONS.append(render_uncertainty)``) or insert it before the cautions.

Charts are drawn by matplotlib's SVG backend (no pyplot, no display), imported only when a
report is rendered.  A fixed ``svg.hashsalt`` and no date in the metadata make the SVG, and so
the whole report, byte-identical for the same inputs.  Nothing is loaded from the network.
"""

from __future__ import annotations

import html
import io
import math

import numpy as np

from ..units import sig

SVG_RC = {"svg.hashsalt": "sizing-report", "svg.fonttype": "path", "font.size": 9,
          "axes.grid": True, "grid.alpha": 0.3, "font.family": "DejaVu Sans"}

CSS = """
body{font-family:system-ui,-apple-system,'Segoe UI',Helvetica,Arial,sans-serif;max-width:60rem;
margin:1.5rem auto;padding:0 1rem;color:#1b1b1b;line-height:1.4}
h1{font-size:1.5rem;margin-bottom:.2rem}h2{font-size:1.15rem;border-bottom:1px solid #bbb;
margin-top:1.8rem}table{border-collapse:collapse;margin:.5rem 0;font-size:.9rem}
th,td{border:1px solid #ccc;padding:.25rem .5rem;text-align:left;vertical-align:top}
td.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}th{background:#f0f0f0}
.big{font-size:1.3rem;font-weight:600}.warn{background:#fff3cd;border:1px solid #e0b000;
padding:.6rem .8rem}.caution{background:#f6f6f6;border-left:4px solid #888;padding:.4rem .8rem}
figure{margin:.5rem 0}figure svg{max-width:100%;height:auto}figcaption{font-size:.85rem;color:#444}
pre.notes{white-space:pre-wrap;font-size:.8rem;background:#fafafa;border:1px solid #ddd;padding:.5rem}
.muted{color:#555;font-size:.85rem}
@media print{body{max-width:none;margin:0;font-size:10pt}section{break-inside:avoid-page}
h2{break-after:avoid}figure{break-inside:avoid}a{color:inherit;text-decoration:none}
@page{size:A4;margin:15mm}}
"""


# ---------------------------------------------------------------------------------------------
# formatting helpers


def esc(x) -> str:
    return html.escape(str(x), quote=True)


def q(x, unit: str, digits: int = 4, scale: float = 1.0) -> str:
    """Format a number with its unit (``'13.5 kg'``); 'n/a' when unknown.

    >>> q(13.5, "kg"), q(2e-6, "um", scale=1e6), q(float("nan"), "kg")
    ('13.5 kg', '2 um', 'n/a')
    """
    if x is None:
        return "n/a"
    x = float(x)
    if not math.isfinite(x):
        return "n/a"
    return f"{sig(x * scale, digits)} {unit}".strip()


def table(rows, header=None, numeric_cols=(1,)) -> str:
    """Return an HTML table; ``rows`` are sequences of already formatted cells."""
    out = ["<table>"]
    if header:
        out.append("<tr>" + "".join(f"<th>{esc(h)}</th>" for h in header) + "</tr>")
    for r in rows:
        cells = []
        for j, c in enumerate(r):
            cls = ' class="n"' if j in numeric_cols else ""
            cells.append(f"<td{cls}>{esc(c)}</td>")
        out.append("<tr>" + "".join(cells) + "</tr>")
    out.append("</table>")
    return "\n".join(out)


def section(anchor: str, title: str, body: str) -> str:
    return f'<section id="{esc(anchor)}">\n<h2>{esc(title)}</h2>\n{body}\n</section>'


def _figure():
    from matplotlib.figure import Figure

    return Figure(figsize=(7.0, 3.6), dpi=100, layout="constrained")


def svg_of(fig) -> str:
    """Return the figure as inline SVG text (no XML prolog; byte-stable)."""
    import matplotlib

    buf = io.StringIO()
    with matplotlib.rc_context(SVG_RC):
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    text = buf.getvalue()
    start = text.find("<svg")
    return text[start:] if start >= 0 else text


def chart(draw, caption: str) -> str:
    """Run ``draw(fig)`` under the report's style and return a <figure> with inline SVG."""
    import matplotlib

    with matplotlib.rc_context(SVG_RC):
        fig = _figure()
        draw(fig)
        svg = svg_of(fig)
    return f"<figure>{svg}<figcaption>{esc(caption)}</figcaption></figure>"


# ---------------------------------------------------------------------------------------------
# sections


def _phase_names(plan):
    from ..physics.phases import phase_names

    return phase_names(plan.case.case.system, plan.case.case.continuous)


def render_summary(plan) -> str:
    r = plan.recommendation
    c = plan.case
    t = plan.solve_json["target"]
    kind = t["kind"]
    if kind == "coverage":
        target = q(t["value_si"], "(coverage, -)")
    elif kind == "tension":
        target = q(t["value_si"], "mN/m (tension)", scale=1e3)
    else:
        target = q(t["value_si"], "mM (free monomer)")
    lead = (f'<p class="big">Charge {esc(q(r.kg_product_per_batch, "kg"))} of '
            f'{esc(c.surfactant.name)} per batch ({esc(q(r.kg_active_per_batch, "kg"))} active)</p>')
    if not plan.feasible:
        lead += ('<p class="warn"><b>Target not reachable at equilibrium.</b> This charge is built on the '
                 'dose that just reaches the CMC ceiling; see "Target not reachable" below.</p>')
    rows = [
        ("target", target + f" (margin {r.margin * 100:.3g} %)"),
        (("dose covering the chosen percentile of the spreads (before margin)" if "uncertainty" in plan.extras
          else "dose for the target (before margin)") if plan.feasible else "dose at the CMC ceiling",
         q(r.base_kg_product, "kg product")),
        ("recommended charge", q(r.kg_product_per_batch, "kg product per batch")),
        ("of which active", f"{q(r.kg_active_per_batch, 'kg')} ({q(r.mol_per_batch, 'mol')})"),
        ("rounding", f"up to {q(r.increment_kg, 'kg')} steps ({r.increment_source})"),
        ("of batch mass", q(r.wt_percent, "wt% (product)")),
        ("per litre of batch", q(r.g_per_l, "g/L (product)")),
        ("on dispersed phase", q(r.percent_on_dispersed, "% by mass (product)")),
        ("per interfacial area", q(r.mg_per_m2, "mg/m**2 (active)")),
        ("cost per batch", q(r.cost_per_batch, r.currency, digits=5)),
        ("expected coverage at the charge", q(r.coverage_at_charge, "(-)")),
        ("free monomer at the charge", q(r.free_concentration_at_charge, "mM")),
        ("tension at the charge", q(r.tension_at_charge, "mN/m", scale=1e3)),
        ("micelles at the charge", q(100 * r.micelle_share_at_charge, "% of the charge")),
    ]
    from ..planning.plan import plan_warnings

    for w in plan_warnings(plan):
        lead += f'<p class="warn"><b>Check:</b> {esc(w)}</p>'
    return section("recommendation", "Recommendation", lead + table(rows))


def render_case(plan) -> str:
    j = plan.solve_json
    cont, disp = _phase_names(plan)
    ph, area, size, s = j["phases"], j["area"], j["size_m"], j["surfactant"]
    i = plan.inputs
    rows = [
        ("system", f"{plan.case.case.system}, continuous {cont}, dispersed {disp}"),
        ("batch volume", q(ph["batch_volume_m3"], "m**3")),
        ("batch mass", q(ph["batch_mass_kg"], "kg")),
        (f"continuous phase ({cont})", q(ph["continuous_volume_m3"], "m**3")),
        (f"dispersed phase ({disp})", q(ph["dispersed_volume_m3"], "m**3")),
        ("dispersed fraction", q(float(np.asarray(i.dispersed_fraction)), "(-)")),
        ("temperature", q(float(np.asarray(i.temperature)) - 273.15, "degC")),
        ("Sauter mean d32", q(j["d32_m"], "um", scale=1e6)),
    ]
    for key, label in (("d10", "number mean d10"), ("d43", "volume mean d43"), ("dv10", "dv10"),
                       ("dv50", "dv50"), ("dv90", "dv90")):
        if size.get(key) is not None:
            rows.append((label, q(size[key], "um", scale=1e6)))
    if size.get("span") is not None:
        rows.append(("span (dv90 - dv10)/dv50", q(size["span"], "(-)")))
    rows += [
        ("shape factor", q(float(np.asarray(i.shape_factor)), "(-)")),
        ("interfacial area per batch", q(area["per_batch_m2"], "m**2")),
        ("area per m**3 of dispersion", q(area["per_m3_dispersion_m2_m3"], "m**2/m**3")),
        ("area per m**3 of continuous phase", q(area["per_m3_continuous_m2_m3"], "m**2/m**3")),
        ("area per kg of dispersed phase", q(area["per_kg_dispersed_m2_kg"], "m**2/kg")),
        ("isotherm", s["model"]),
        ("maximum surface excess", q(s["max_surface_excess_mol_m2"], "umol/m**2", scale=1e6)
         + f" ({q(s['max_surface_excess_mol_m2'] * s['molar_mass_kg_mol'], 'mg/m**2', scale=1e6)})"),
        ("adsorption constant K", q(s["adsorption_constant_m3_mol"], "m**3/mol")),
        ("CMC", q(s["cmc_mol_m3"], "mM") if s["cmc_mol_m3"] is not None else "none (no micelles)"),
        ("largest coverage (at the CMC)", q(j["max_coverage"], "(-)")),
        ("partition coefficient c_oil/c_water", q(s["partition_coefficient"], "(-)")),
        ("clean-interface tension", q(s["clean_tension_N_m"], "mN/m", scale=1e3)),
        ("molar mass", q(s["molar_mass_kg_mol"], "g/mol", scale=1e3)),
        ("active fraction of the product", q(s["active_fraction"], "(-)")),
    ]
    return section("case", "The case as resolved", table(rows))


_SPLIT_COLORS = {"water": "#4c8bd6", "oil": "#d6a04c", "interface": "#4caf50", "micelles": "#9c6ad6"}


def render_split(plan) -> str:
    r = plan.recommendation
    M = float(np.asarray(plan.inputs.molar_mass))
    at_target = plan.solve_json["split_mol"]
    at_charge = r.split_mol_at_charge
    rows = []
    for k in ("water", "oil", "interface", "micelles"):
        a = at_target.get(k) or 0.0
        b = at_charge.get(k) or 0.0
        tot_a = sum(v or 0.0 for v in at_target.values()) or 1.0
        tot_b = sum(v or 0.0 for v in at_charge.values()) or 1.0
        rows.append((k, q(a * M, "kg"), q(100 * a / tot_a, "%", 3), q(b * M, "kg"), q(100 * b / tot_b, "%", 3)))
    head = ("where", "dose for the target [kg active]" if plan.feasible else "at the CMC ceiling [kg active]",
            "share [%]", "recommended charge [kg active]", "share [%]")

    def draw(fig):
        ax = fig.add_subplot()
        labels = ["dose for target" if plan.feasible else "CMC ceiling", "recommended charge"]
        left = np.zeros(2)
        for k in ("water", "oil", "interface", "micelles"):
            vals = np.array([(at_target.get(k) or 0.0) * M, (at_charge.get(k) or 0.0) * M])
            if np.all(vals == 0):
                continue
            ax.barh(labels, vals, left=left, color=_SPLIT_COLORS[k], label=k)
            left += vals
        ax.set_xlabel("active surfactant per batch [kg]")
        ax.legend(loc="lower right", fontsize=8)
        ax.invert_yaxis()

    body = table(rows, head, numeric_cols=(1, 2, 3, 4)) + chart(
        draw, "Where the active surfactant goes at equilibrium [kg active per batch].")
    return section("split", "Where the dose goes", body)


def render_coverage_chart(plan) -> str:
    cv, r = plan.curves, plan.recommendation
    j = plan.solve_json

    def draw(fig):
        ax = fig.add_subplot()
        ax.plot(cv.dose_kg_product, cv.coverage, color="#1f5fa8", label="equilibrium coverage")
        ax.axhline(plan.target_coverage, color="#c0392b", ls="--", lw=1,
                   label=f"target coverage {plan.target_coverage:.3g}")
        if math.isfinite(cv.ceiling_kg_product):
            ax.axhline(j["max_coverage"], color="#7d3c98", ls=":", lw=1,
                       label=f"CMC ceiling, coverage {j['max_coverage']:.3g}")
            ax.axvspan(cv.ceiling_kg_product, cv.dose_kg_product[-1], color="#7d3c98", alpha=0.08,
                       label=f"micelles above {q(cv.ceiling_kg_product, 'kg')}")
        ax.plot([t.kg_product for t in plan.trial], [t.coverage for t in plan.trial], "o",
                color="#555", ms=4, label="trial levels")
        ax.plot([r.kg_product_per_batch], [r.coverage_at_charge], "D", color="#c0392b", ms=6,
                label=f"charge {q(r.kg_product_per_batch, 'kg')}")
        ax.set_xlabel("product charged per batch [kg]")
        ax.set_ylabel("coverage theta [-]")
        ax.set_ylim(0, 1.0)
        ax.set_xlim(0, cv.dose_kg_product[-1])
        ax.legend(loc="lower right", fontsize=7)

    return section("coverage", "Dose against coverage", chart(
        draw, "Coverage of the interface at equilibrium against the product charged per batch [kg]; "
              "the dashed line is the target, the dotted line the largest coverage the CMC allows."))


def render_d32_chart(plan) -> str:
    cv, r = plan.curves, plan.recommendation
    d32_case = plan.solve_json["d32_m"]

    def draw(fig):
        ax = fig.add_subplot()
        lab = "dose for the target" if plan.feasible else "dose at the CMC ceiling"
        ax.plot(cv.d32 * 1e6, cv.d32_dose_kg_product, color="#1f5fa8", label=f"{lab} (no margin)")
        ax.step(cv.d32 * 1e6, cv.d32_charge_kg_product, where="mid", color="#c0392b", lw=1,
                label="charge with margin, rounded")
        ax.plot([d32_case * 1e6], [r.kg_product_per_batch], "D", color="#c0392b", ms=6,
                label=f"this case: d32 {q(d32_case, 'um', scale=1e6)}")
        ax.set_xscale("log")
        from matplotlib.ticker import LogLocator, NullFormatter, ScalarFormatter

        ax.xaxis.set_major_locator(LogLocator(subs=(1.0, 2.0, 5.0)))
        ax.xaxis.set_major_formatter(ScalarFormatter())
        ax.xaxis.set_minor_formatter(NullFormatter())
        ax.set_xlabel("Sauter mean diameter d32 [um]")
        ax.set_ylabel("product per batch [kg]")
        ax.set_ylim(bottom=0)
        ax.legend(fontsize=7)

    lo, hi = cv.d32[0], cv.d32[-1]
    rows = []
    for f in (0.5, 1.0, 2.0):
        k = int(np.argmin(np.abs(cv.d32 - f * d32_case)))
        rows.append((q(cv.d32[k], "um", scale=1e6), q(cv.d32_dose_kg_product[k], "kg"),
                     q(cv.d32_charge_kg_product[k], "kg")))
    body = chart(draw, f"What if the plant makes other drops: dose against d32 from "
                       f"{q(lo, 'um', scale=1e6)} to {q(hi, 'um', scale=1e6)}, all else as in the case.")
    body += table(rows, ("d32 [um]", "dose [kg product]", "charge [kg product]"), numeric_cols=(0, 1, 2))
    if "uncertainty" in plan.extras:
        body += ('<p>These what-if doses and charges are for the nominal inputs. The '
                 'recommendation covers the chosen percentile of the spreads (see the Monte Carlo '
                 'below), so its charge sits above this curve.</p>')
    return section("d32", "Dose against d32 (what-if)", body)


def render_trial(plan) -> str:
    rows = []
    for t in plan.trial:
        rows.append((f"{t.level:g} x", q(t.kg_product, "kg"), q(t.kg_active, "kg"), q(t.wt_percent, "wt%"),
                     q(t.coverage, "(-)"), q(t.free_concentration, "mM"), q(t.tension, "mN/m", scale=1e3),
                     q(100 * t.micelle_share, "%", 3), str(t.batches)))
    head = ("level [x charge]", "product [kg/batch]", "active [kg/batch]", "product [wt% of batch]",
            "expected coverage [-]", "free monomer [mM]", "tension [mN/m]", "micelles [% of dose]",
            "batches")
    total = sum(t.kg_product * t.batches for t in plan.trial)
    body = (table(rows, head, numeric_cols=(1, 2, 3, 4, 5, 6, 7, 8))
            + f"<p>{len(plan.trial)} levels, {sum(t.batches for t in plan.trial)} batches in all, "
              f"{esc(q(total, 'kg'))} of product for the whole trial. Levels are multiples of the "
              f"recommended charge, rounded to the nearest {esc(q(plan.recommendation.increment_kg, 'kg'))} step; "
              "coverage, free monomer, tension and micelles are the forward equilibrium for the amount "
              "charged.</p>")
    body += "<p>What to measure at each level:</p><ul>" + "".join(
        f"<li><b>{t.level:g} x ({esc(q(t.kg_product, 'kg'))})</b>: {esc('; '.join(t.measure))}</li>"
        for t in plan.trial) + "</ul>"
    return section("trial", "Trial matrix", body)


def render_unreachable(plan) -> str:
    if plan.feasible:
        return ""
    j = plan.solve_json
    body = (f'<p class="warn">{esc(j.get("unreachable", "the target is not reachable"))}. The target asks '
            f"for a coverage of {esc(q(plan.target_coverage, '(-)'))}; the largest the CMC allows is "
            f"{esc(q(j['max_coverage'], '(-)'))}. Extra surfactant beyond "
            f"{esc(q(plan.curves.ceiling_kg_product, 'kg'))} of product forms micelles and does not raise "
            "the coverage.</p><p>Options:</p><ul>"
            + "".join(f"<li>{esc(o)}</li>" for o in plan.options) + "</ul>")
    return section("unreachable", "Target not reachable", body)


def render_assumptions(plan) -> str:
    rows = [(a["label"], a["value"], a["path"], a["source"]) for a in plan.assumptions]
    body = table(rows, ("parameter", "value as given", "case path", "where it came from"), numeric_cols=())
    body += "<p>Model:</p><ul>" + "".join(f"<li>{esc(t)}</li>" for t in plan.model_assumptions) + "</ul>"
    prov = plan.case.provenance
    if prov:
        body += "<p>Fitted surfactant block: " + esc(prov.get("file", "")) + "</p>"
        keep = {k: v for k, v in prov.items() if isinstance(v, (str, int, float, bool))}
        body += table(sorted(keep.items()), ("provenance", "value"), numeric_cols=())
        svg = _fit_plot(prov.get("file"))
        if svg:
            start = svg.find("<svg")
            body += f"<figure>{svg[start:] if start >= 0 else svg}<figcaption>The lab fit behind the " \
                    "surfactant parameters.</figcaption></figure>"
    if plan.case_notes:
        body += f'<p>Case file notes{(" (" + esc(plan.source) + ")") if plan.source else ""}:</p>' \
                f'<pre class="notes">{esc(plan.case_notes)}</pre>'
    return section("assumptions", "Assumptions and where each value came from", body)


def _fit_plot(path):
    if not path:
        return None
    try:
        from ..fitting.block import plot_svg_for_provenance
    except ImportError:
        return None
    try:
        return plot_svg_for_provenance(path)
    except Exception:  # the fit plot is an extra: never fail the report for it
        return None


def render_cautions(plan) -> str:
    body = "".join(f'<p class="caution">{esc(c)}</p>' for c in plan.cautions)
    return section("cautions", "Cautions", body)


#: The report's sections, in order.  Append or insert renderers ``(plan) -> str``.
SECTIONS = [render_summary, render_case, render_split, render_coverage_chart, render_d32_chart,
            render_trial, render_unreachable, render_assumptions, render_cautions]
# scale-up, achievable d32, uncertainty and adsorption speed (sizing.whatif), after the trial matrix
from ..planning.parts import SECTIONS as _WHATIF  # noqa: E402

SECTIONS[SECTIONS.index(render_trial) + 1:SECTIONS.index(render_trial) + 1] = list(_WHATIF)


def render(plan, sections=None) -> str:
    """Return the report as one self-contained HTML document (deterministic for given inputs).

    Parameters
    ----------
    plan : :class:`sizing.plan.Plan`
    sections : renderers to use (default :data:`SECTIONS`)
    """
    from .. import __version__

    parts = [r(plan) for r in (SECTIONS if sections is None else sections)]
    title = plan.case.case.title
    head = (f'<!DOCTYPE html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n'
            f"<title>{esc(title)}: surfactant dose plan</title>\n<style>{CSS}</style>\n</head>\n<body>\n"
            f"<h1>{esc(title)}</h1>\n<p class=\"muted\">Surfactant dose plan by sizing {esc(__version__)}"
            f"{(' from ' + esc(plan.source)) if plan.source else ''}. Every quantity carries its unit; "
            "(-) marks a dimensionless number.</p>\n")
    return head + "\n".join(p for p in parts if p) + "\n</body>\n</html>\n"
