"""The plan report: one self-contained HTML file with inline SVG charts and a print stylesheet.

The report is a constant tuple of section renderers, :data:`SECTIONS`; each takes a
:class:`sizing.planning.plan.Plan` and returns an HTML fragment ('' to skip).  The plan's
optional parts (scale-up, achievable d32, uncertainty, adsorption speed) are drawn by the
renderers of :mod:`sizing.outputs.report_parts`.

The head is a filing block a plant can keep: the date, the case file's name and SHA-256 hash, the
revision, and prepared-by / checked-by lines (names from ``sizing plan --prepared-by NAME
--checked-by NAME --revision TEXT``, else blank lines to sign).  Then the headline, its context
line and one box with every warning of the plan (the same list as the terminal and result.json).

Charts are inline SVG (:mod:`sizing.outputs.htmlbits`) in fixed layouts; the sections of a plan are
drawn once and kept while the plan lives, so a second render (new names in the head) draws no
chart again.  With a fixed hash salt the whole report is byte-identical for the same inputs and
the same date (``SOURCE_DATE_EPOCH`` fixes the date).  Nothing is loaded from the network.
"""

from __future__ import annotations

import base64
import datetime as _dt
import hashlib
import math
import os
import re
import weakref
from pathlib import Path

import numpy as np

from ..errors import InputError
from ..files import inside, read_regular
from ..fitting.block import plot_svg_for_provenance
from ..physics.phases import phase_names
from ..planning.blendplan import split_kg_active
from ..planning.plan import plan_warnings
from ..texts import DOSE_CONTEXT, PASS_NOTE, applicable_assumptions, pass_criterion, words_for
from ..version import __version__
from .htmlbits import CSS, chart, esc, hand_drawn, q, section, table, unit_text  # noqa: F401  (q: re-exported)
from .report_parts import (
    _input_name,
    render_achievable,
    render_adsorption,
    render_blend,
    render_conditions,
    render_recipe,
    render_scaleup,
    render_uncertainty,
)
from .solve_json import solution_json

# ---------------------------------------------------------------------------------------------
# sections


def _phase_names(plan):
    return phase_names(plan.case.case.system, plan.case.case.continuous)


def render_summary(plan) -> str:
    r = plan.recommendation
    c = plan.case
    t = solution_json(plan.solution, plan.case)["target"]
    kind = t["kind"]
    if kind == "coverage":
        target = q(t["value_si"], "(coverage, -)")
    elif kind == "tension":
        target = q(t["value_si"], "mN/m (tension)", scale=1e3)
    else:
        target = q(t["value_si"], f"mM ({words_for(c)['free']})")
    lead = (f'<p class="big">Charge {esc(q(r.kg_product_per_batch, "kg"))} of '
            f'{esc(c.active_name)} per batch ({esc(q(r.kg_active_per_batch, "kg"))} active)</p>'
            f'<p class="context">{esc(DOSE_CONTEXT)}</p>')
    if not plan.feasible:
        lead += ('<p class="warn"><b>Target not reachable at equilibrium.</b> This charge is built on the '
                 'dose that just reaches the CMC ceiling; see "Target not reachable" below.</p>')
    rows = [
        ("target", target + f" (margin {r.margin * 100:.3g} %)"),
        (("dose covering the chosen percentile of the spreads (before margin)" if plan.uncertainty is not None
          else "dose for the target (before margin)") if plan.feasible else "dose at the CMC ceiling",
         q(r.base_kg_product, "kg product")),
        ("recommended charge", q(r.kg_product_per_batch, "kg product per batch")),
        ("of which active", f"{q(r.kg_active_per_batch, 'kg')} ({q(r.mol_per_batch, 'mol')})"),
        ("rounding", f"up to {q(r.increment_kg, 'kg')} steps ({r.increment_source})"),
        ("of batch mass", q(r.wt_percent, "wt% (product)")),
        ("per litre of batch", q(r.g_per_l, "g/L (product)")),
        *([("on dispersed phase", q(r.percent_on_dispersed, "% by mass (product)"))]
          if c.case.system != "foam" else []),
        ("per interfacial area", q(r.mg_per_m2, "mg/m**2 (active)")),
        ("cost per batch", q(r.cost_per_batch, r.currency, digits=5)),
        ("expected coverage at the charge", q(r.coverage_at_charge, "(-)")),
        (f"{words_for(c)['free']} at the charge", q(r.free_concentration_at_charge, "mM")),
        *([("tension at the charge", q(r.tension_at_charge, "mN/m", scale=1e3))]
          if not plan.solution.inputs.macromolecule else  # a protein: no model tension (issue 14 item 4)
          [("surface load at the charge", q(r.coverage_at_charge * float(plan.solution.inputs.max_surface_excess)
                                            * float(plan.solution.inputs.molar_mass) * 1e6, "mg/m**2")),
           ("plateau tension (measured)", q(plan.solution.inputs.plateau_tension, "mN/m", scale=1e3)
            if np.isfinite(plan.solution.inputs.plateau_tension) else "not given: measure it")]),
        *([("micelles at the charge", q(100 * r.micelle_share_at_charge, "% of the charge"))]
          if words_for(c)["has_cmc"] else []),
    ]
    warnings = plan_warnings(plan)
    if warnings:  # one box, the same list as the terminal and result.json "warnings"
        lead += ('<div class="checks" id="checks"><b>Check before the trial '
                 f'({len(warnings)}):</b><ul>' + "".join(f"<li>{esc(unit_text(w))}</li>" for w in warnings) + "</ul></div>")
    return section("recommendation", "Recommendation", lead + table(rows))


def render_case(plan) -> str:
    j = solution_json(plan.solution, plan.case)
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
    ]
    if plan.blend is not None:
        b = j["blend"]
        rows += [
            ("blend", plan.case.active_name),
            ("interface", "competitive Langmuir"),
            ("mixed micelles", "ideal (Clint)" if b["micelles"] == "ideal"
             else f"regular solution (Rubingh), beta = {b['interaction']:g}"),
            ("mixed CMC at the charged composition (continuous phase alone)", q(b["mixed_cmc_mol_m3"], "mM")),
            ("largest coverage found", q(j["max_coverage"], "(-)")),
            ("clean-interface tension", q(s["clean_tension_N_m"], "mN/m", scale=1e3)),
            ("mean molar mass of the active", q(s["molar_mass_kg_mol"], "g/mol", scale=1e3)),
            ("active fraction of the products together", q(s["active_fraction"], "(-)")),
        ]
        return section("case", "The case as resolved", table(rows) + _component_table(plan))
    rows += [
        ("isotherm", s["model"]),
        ("maximum surface excess", q(s["max_surface_excess_mol_m2"], "umol/m**2", scale=1e6)
         + f" ({q(s['max_surface_excess_mol_m2'] * s['molar_mass_kg_mol'], 'mg/m**2', scale=1e6)})"),
        ("adsorption constant K", q(s["adsorption_constant_m3_mol"], "m**3/mol")),
        *([("CMC", q(s["cmc_mol_m3"], "mM")), ("largest coverage (at the CMC)", q(j["max_coverage"], "(-)"))]
          if s["cmc_mol_m3"] is not None else []),  # a protein or polymer: no CMC line
        *([("partition coefficient c_oil/c_water", q(s["partition_coefficient"], "(-)"))]
          if plan.case.case.system != "foam" else []),
        ("clean-interface tension", q(s["clean_tension_N_m"], "mN/m", scale=1e3)),
        ("molar mass", q(s["molar_mass_kg_mol"], "g/mol", scale=1e3)),
        ("active fraction of the product", q(s["active_fraction"], "(-)")),
    ]
    return section("case", "The case as resolved", table(rows))


def _component_table(plan) -> str:
    """The components of a blend as the case gives them (SI shown in the units people use)."""
    bi = plan.inputs.blend
    m = bi.size

    def col(x):
        return np.asarray(x, dtype=float).reshape(-1, m)[0]

    alpha, mm, act, cmc = col(bi.mole_fractions), col(bi.molar_mass), col(bi.active_fraction), col(bi.cmc)
    gi, k, p, price = col(bi.max_surface_excess), col(bi.adsorption_constant), col(bi.partition_coefficient), col(bi.price)
    rows = []
    for j, name in enumerate(bi.names):
        rows.append((name, q(alpha[j], ""), q(mm[j] * 1e3, ""), q(act[j], ""),
                     q(cmc[j], "") if math.isfinite(cmc[j]) else "none", q(gi[j] * 1e6, ""), q(k[j], ""),
                     q(p[j], ""), q(price[j], "") if math.isfinite(price[j]) else "-"))
    head = ("component", "mole fraction [-]", "molar mass [g/mol]", "active fraction [-]", "CMC [mM]",
            "Gamma_inf [umol/m**2]", "K [m**3/mol]", "P c_oil/c_water [-]",
            f"price [{plan.case.currency or 'currency'}/kg product]")
    return table(rows, head, numeric_cols=(1, 2, 3, 4, 5, 6, 7, 8))


_SPLIT_COLORS = {"water": "#4c8bd6", "oil": "#d6a04c", "interface": "#4caf50", "micelles": "#9c6ad6"}


def render_split(plan) -> str:
    r = plan.recommendation
    # active mass per place; a blend's components count with their own molar masses
    at_target = split_kg_active(plan.solution)
    at_charge = plan.blend.split_kg_at_charge if plan.blend is not None else {
        k: (v or 0.0) * float(np.asarray(plan.inputs.molar_mass)) for k, v in r.split_mol_at_charge.items()}
    M = 1.0
    rows = []
    for k in words_for(plan.case)["places"]:  # no oil row in a foam, no micelles without a CMC
        a = at_target.get(k) or 0.0
        b = at_charge.get(k) or 0.0
        tot_a = sum(v or 0.0 for v in at_target.values()) or 1.0
        tot_b = sum(v or 0.0 for v in at_charge.values()) or 1.0
        rows.append((k, q(a * M, "kg"), q(100 * a / tot_a, "%", 3), q(b * M, "kg"), q(100 * b / tot_b, "%", 3)))
    head = ("where", "dose for the target [kg active]" if plan.feasible else "at the CMC ceiling [kg active]",
            "share [%]", "recommended charge [kg active]", "share [%]")

    @hand_drawn
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
    j = solution_json(plan.solution, plan.case)

    @hand_drawn
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
              "the dashed line is the target"
              + (", the dotted line the largest coverage the CMC allows." if math.isfinite(cv.ceiling_kg_product) else ".")))


def render_d32_chart(plan) -> str:
    cv, r = plan.curves, plan.recommendation
    d32_case = solution_json(plan.solution, plan.case)["d32_m"]

    @hand_drawn
    def draw(fig):
        ax = fig.add_subplot()
        lab = "dose for the target" if plan.feasible else "dose at the CMC ceiling"
        ax.plot(cv.d32 * 1e6, cv.d32_dose_kg_product, color="#1f5fa8", label=f"{lab} (no margin)")
        ax.step(cv.d32 * 1e6, cv.d32_charge_kg_product, where="mid", color="#c0392b", lw=1,
                label="charge with margin, rounded")
        ax.plot([d32_case * 1e6], [r.kg_product_per_batch], "D", color="#c0392b", ms=6,
                label=f"this case: d32 {q(d32_case, 'um', scale=1e6)}")
        ax.set_xscale("log")  # plain tick labels 0.1, 0.2, 0.5 ... (htmlbits' fixed layout)
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
    if plan.uncertainty is not None:
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
            "expected coverage [-]", f"{words_for(plan.case)['free']} [mM]", "tension [mN/m]", "micelles [% of dose]",
            "batches")
    if not words_for(plan.case)["has_cmc"]:  # no micelles column without a CMC
        rows, head = [r[:7] + r[8:] for r in rows], head[:7] + head[8:]
    total = sum(t.kg_product * t.batches for t in plan.trial)
    body = (table(rows, head, numeric_cols=tuple(range(1, len(head))))
            + f"<p>{len(plan.trial)} levels, {sum(t.batches for t in plan.trial)} batches in all, "
              f"{esc(q(total, 'kg'))} of product for the whole trial. Levels are multiples of the "
              f"recommended charge, rounded to the nearest {esc(q(plan.recommendation.increment_kg, 'kg'))} step; "
              f"coverage, {words_for(plan.case)['free']}, tension"
              f"{' and micelles' if words_for(plan.case)['has_cmc'] else ''} are the forward equilibrium for the amount "
              "charged.</p>")
    d32_um = solution_json(plan.solution, plan.case)["d32_m"] * 1e6
    sysname, cont = plan.case.case.system, plan.case.case.continuous
    body += "<p>What to measure at each level, and what result accepts it:</p><ul>" + "".join(
        f"<li><b>{t.level:g} x ({esc(q(t.kg_product, 'kg'))})</b>: {esc('; '.join(t.measure))}."
        f"<br><b>Pass criterion:</b> {esc(pass_criterion(sysname, cont, t.level, d32_um))}.</li>"
        for t in plan.trial) + f'</ul><p class="muted">{esc(PASS_NOTE)}</p>'
    return section("trial", "Trial matrix", body)


def render_unreachable(plan) -> str:
    if plan.feasible:
        return ""
    j = solution_json(plan.solution, plan.case)
    body = (f'<p class="warn">{esc(j.get("unreachable", "the target is not reachable"))}. The target asks '
            f"for a coverage of {esc(q(plan.target_coverage, '(-)'))}; the largest the CMC allows is "
            f"{esc(q(j['max_coverage'], '(-)'))}. Extra surfactant beyond "
            f"{esc(q(plan.curves.ceiling_kg_product, 'kg'))} of product forms micelles and does not raise "
            "the coverage.</p><p>Options:</p><ul>"
            + "".join(f"<li>{esc(o)}</li>" for o in plan.options) + "</ul>")
    return section("unreachable", "Target not reachable", body)


def render_assumptions(plan) -> str:
    comps = tuple(plan.inputs.blend.names) if getattr(plan.inputs, "blend", None) is not None else ()
    rows = [(_input_name(a["path"], comps) if a["path"] and a["label"] == a["path"] else a["label"],
             unit_text(a["value"]), a["path"], a["source"]) for a in plan.assumptions
            if words_for(plan.case)["has_cmc"] or not a["path"].endswith(".cmc")]  # no CMC line without one
    body = table(rows, ("parameter", "value as given", "case path", "where it came from"), numeric_cols=())
    body += "<p>Model:</p><ul>" + "".join(
        f"<li>{esc(t)}</li>" for t in applicable_assumptions(plan.model_assumptions, words_for(plan.case)["has_cmc"],
                                                             plan.case.case.system)) + "</ul>"
    prov = plan.case.provenance
    if prov:
        body += "<p>Fitted surfactant block: " + esc(prov.get("file", "")) + "</p>"
        # the file is named above, model and Gibbs prefactor are rows of the table above: not twice
        keep = {k: unit_text(v) if isinstance(v, str) else v for k, v in prov.items()
                if isinstance(v, (str, int, float, bool)) and k not in ("file", "model", "gibbs_prefactor")}
        body += table(sorted(keep.items()), ("provenance", "value"), numeric_cols=())
        img, note = _fit_plot(prov, plan.case.base_dir)
        if img:
            body += f"<figure>{img}<figcaption>The lab fit behind the surfactant parameters.</figcaption></figure>"
        elif note:
            body += f'<p class="muted">{esc(note)}</p>'
    if plan.case_notes:
        body += f'<p>Case file notes{(" (" + esc(plan.source) + ")") if plan.source else ""}:</p>' \
                f'<pre class="notes">{esc(plan.case_notes)}</pre>'
    return section("assumptions", "Assumptions and where each value came from", body)


MAX_PLOT_BYTES = 2 * 1024 * 1024


def _fit_plot(prov, case_dir=None) -> tuple[str | None, str | None]:
    """Return ``(<img> tag, None)`` for the fitted block's plot, or ``(None, note)`` to leave it out.

    Only an SVG file inside the fitted block's own folder (symlinks resolved), a regular file of
    at most 2 MB, is taken; without one, the plot is re-rendered from the block's source CSV if
    that lies inside the case file's folder (``case_dir``; the block's folder when None).  The SVG goes in as an ``<img>`` with a base64 data
    URI: a browser draws it as a picture and never runs a script in it nor loads anything it links.
    """
    file = prov.get("file") if isinstance(prov, dict) else None
    if not file:
        return None, None
    folder = Path(file).parent
    plot, src = prov.get("plot"), prov.get("source_path")
    left_out = "The fit plot named in the fitted block was left out: "
    svg = None
    try:
        if plot:
            path = inside(plot, folder, "provenance.plot")
            if path.suffix.lower() != ".svg":
                return None, left_out + "it is not an .svg file."
            if path.exists():
                svg = read_regular(path, "provenance.plot", MAX_PLOT_BYTES)
        if svg is None and src:
            # re-render only from a source CSV inside the case's folder (the block's when none)
            inside(Path(folder, str(src)), folder if case_dir is None else case_dir, "provenance.source_path")
            text = plot_svg_for_provenance(file, source_root=folder if case_dir is None else case_dir)
            svg = text.encode("utf-8") if text else None
    except InputError as exc:
        return None, left_out + str(exc).splitlines()[0]
    except Exception:  # the fit plot is an extra: never fail the report for it
        return None, left_out + "it could not be read or drawn."
    if not svg:
        return None, None
    start = svg.find(b"<svg")
    if start < 0 or b"</svg>" not in svg:
        return None, left_out + "it is not an SVG picture."
    data = base64.b64encode(svg[start:]).decode("ascii")
    return (f'<img alt="the lab fit behind the surfactant parameters" style="max-width:100%" '
            f'src="data:image/svg+xml;base64,{data}">'), None


def render_cautions(plan) -> str:
    body = "".join(f'<p class="caution">{esc(c)}</p>' for c in plan.cautions)
    return section("cautions", "Cautions", body)


#: The report's sections, in order (each ``(plan) -> str``, '' to skip).
SECTIONS = (render_summary, render_case, render_split, render_recipe, render_blend, render_coverage_chart, render_d32_chart,
            render_trial, render_scaleup, render_achievable, render_uncertainty, render_adsorption,
            render_conditions,
            render_unreachable, render_assumptions, render_cautions)


_BODIES: dict[int, str] = {}  # id(plan) -> the sections' HTML, dropped when the plan is collected
MAX_CASE_BYTES = 16 * 1024 * 1024
_CONTROL = re.compile(r"[\x00-\x1f\x7f-\x9f\u200e\u200f\u202a-\u202e\u2066-\u2069]")


def _body(plan) -> str:
    key = id(plan)
    body = _BODIES.get(key)
    if body is None:
        body = "\n".join(p for p in (r(plan) for r in SECTIONS) if p)
        try:
            weakref.finalize(plan, _BODIES.pop, key, None)
            _BODIES[key] = body
        except TypeError:  # an object without weak references: no cache
            pass
    return body


def report_date() -> str:
    """Return the report's date, ISO (``SOURCE_DATE_EPOCH`` when set, else today in UTC)."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    when = (_dt.datetime.fromtimestamp(int(epoch), _dt.timezone.utc) if epoch.isdigit()
            else _dt.datetime.now(_dt.timezone.utc))
    return when.date().isoformat()


def case_file_hash(source) -> str | None:
    """Return the SHA-256 (hex) of the case file the user handed over, None without one."""
    if not source:
        return None
    try:
        return hashlib.sha256(read_regular(Path(source), "case", MAX_CASE_BYTES)).hexdigest()
    except (InputError, OSError):
        return None


def _person(text) -> str:
    """A name for the head: printable, at most 120 characters, '' for none."""
    return _CONTROL.sub("?", str(text or "")).strip()[:120]


def render_filing(plan, prepared_by=None, checked_by=None, revision=None, date=None) -> str:
    """Return the filing block: date, case file and its SHA-256, revision, prepared-by and checked-by."""
    blank = "\u00a0" * 2
    name = Path(plan.source).name if plan.source else "none (case built in memory)"
    digest = case_file_hash(plan.source)
    rev = _person(revision)
    rows = [
        ("date", date or report_date(), "case file", name, "revision", rev or blank),
        ("SHA-256 of the case file", digest or "not available (no case file read)"),
        ("prepared by", _person(prepared_by) or blank, "signature", blank, "date", blank),
        ("checked by", _person(checked_by) or blank, "signature", blank, "date", blank),
    ]
    out = ['<table class="filing" id="filing">']
    for r in rows:
        if len(r) == 2:
            out.append(f"<tr><th>{esc(r[0])}</th><td colspan=\"5\"><code>{esc(r[1])}</code></td></tr>")
            continue
        cells = []
        for j in range(0, len(r), 2):
            cls = ' class="sign"' if r[j] in ("prepared by", "checked by", "signature") else ""
            cells.append(f"<th>{esc(r[j])}</th><td{cls}>{esc(r[j + 1])}</td>")
        out.append("<tr>" + "".join(cells) + "</tr>")
    out.append("</table>")
    return "\n".join(out)


def render(plan, sections=None, *, prepared_by=None, checked_by=None, revision=None, date=None) -> str:
    """Return the report as one self-contained HTML document (deterministic for given inputs and date).

    Parameters
    ----------
    plan : :class:`sizing.plan.Plan`
    sections : renderers to use (default :data:`SECTIONS`; those are drawn once per plan)
    prepared_by, checked_by, revision : names and revision for the filing block (blank lines without)
    date : the report date as text (default :func:`report_date`)
    """
    if sections is None:
        body = _body(plan)
    else:
        body = "\n".join(p for p in (r(plan) for r in sections) if p)
    title = plan.case.case.title
    head = (f'<!DOCTYPE html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n'
            f"<title>{esc(title)}: surfactant dose plan</title>\n<style>{CSS}</style>\n</head>\n<body>\n"
            f"<h1>{esc(unit_text(title))}</h1>\n<p class=\"muted\">Surfactant dose plan by sizing {esc(__version__)}. "
            "Every quantity carries its unit; (-) marks a dimensionless number.</p>\n"
            + render_filing(plan, prepared_by, checked_by, revision, date) + "\n")
    return head + body + "\n</body>\n</html>\n"
