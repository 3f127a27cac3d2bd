"""``sizing plan [CASE] [--out DIR]``: the recommendation, the trial matrix and the report.

Writes ``report.html``, ``result.json`` and ``trial_plan.csv`` into DIR (default
``./<case-stem>_plan``).  Everything is computed in memory first, then written to a new folder
beside DIR that takes DIR's place in one rename, so a failed run leaves an earlier report whole.  Without CASE the built-in demo (``sizing/data/demo.toml``) is planned.
"""

from __future__ import annotations

import math
from importlib.resources import files
from pathlib import Path

from ..case import load_case, loads_case
from ..errors import InputError
from ..model import case_inputs, solve, split_by_phase
from ..outputs import report
from ..outputs.jsonify import dumps
from ..outputs.plan_files import OUTPUTS, build_outputs, write_outputs  # noqa: F401
from ..outputs.result_json import plan_json
from ..outputs.solve_json import solution_json
from ..planning.plan import plan_warnings
from ..texts import CLI_CAUTION, DOSE_CONTEXT_SHORT, words_for
from ..units import sig
from .common import clean, numeric_guard, read_dose


def register(sub) -> None:
    p = sub.add_parser("plan", help="recommended charge, trial matrix and an HTML report",
                       description="Plan a case: the recommended charge per batch, the trial matrix, "
                                   "and report.html, result.json and trial_plan.csv in DIR.")
    p.add_argument("case", nargs="?", help="case file (TOML); omit to plan the built-in demo case")
    p.add_argument("--out", metavar="DIR", help="output folder (default ./<case-name>_plan)")
    p.add_argument("--prepared-by", metavar="NAME", help="name for the report's 'prepared by' line (blank line to sign without)")
    p.add_argument("--checked-by", metavar="NAME", help="name for the report's 'checked by' line (blank line to sign without)")
    p.add_argument("--revision", metavar="TEXT", help="revision shown in the report's head, e.g. 'B' or '2' (blank without)")
    p.add_argument("--dose", metavar="Q", help="also show a charge of your own against the plan: product as delivered "
                                             "('13.5 kg product') or active ('4 kg', '4 kg active', '14 mol'); "
                                             "result.json gets 'dose_given'")
    p.add_argument("--json", action="store_true", help="print result.json on stdout instead of the summary (the files are still written)")
    p.set_defaults(func=run)


def demo_case_path():
    """Return the path of the built-in demo case shipped inside the package."""
    return files("sizing.data") / "demo.toml"


def describe(plan) -> str:
    """Return the terminal text of a plan: the recommendation with units and the trial levels."""
    r = plan.recommendation
    w = words_for(plan.case)

    def u(x, unit, scale=1.0, digits=4):
        return "n/a" if x is None or not math.isfinite(x) else f"{sig(x * scale, digits)} {unit}"

    lines = [plan.case.case.title, "-" * len(plan.case.case.title)]
    if not plan.feasible:
        lines += ["TARGET NOT REACHABLE at equilibrium: " + solution_json(plan.solution, plan.case).get("unreachable", ""),
                  "  the charge below is built on the dose that reaches the CMC ceiling; options:"]
        lines += [f"  - {o}" for o in plan.options]
    lines += [
        f"  recommended charge     {u(r.kg_product_per_batch, 'kg')} of {plan.case.active_name} per batch",
        f"                         ({DOSE_CONTEXT_SHORT})",
        f"  active                 {u(r.kg_active_per_batch, 'kg')} ({u(r.mol_per_batch, 'mol')})",
        f"  built on               {u(r.base_kg_product, 'kg')} product"
        f" {'at the CMC ceiling' if not plan.feasible else ('covering P%g of the spreads' % plan.uncertainty.monte_carlo.percentile) if plan.uncertainty is not None else 'for the target'}, margin {r.margin * 100:.3g} %, "
        f"rounded up to {u(r.increment_kg, 'kg')}",
        f"  of batch mass          {u(r.wt_percent, 'wt% (product)')}",
        *([f"  on dispersed phase     {u(r.percent_on_dispersed, '% by mass (product)')}"]
          if w["system"] != "foam" else []),
        f"  cost per batch         {u(r.cost_per_batch, r.currency, digits=5)}",
        f"  coverage at the charge {u(r.coverage_at_charge, '(-)')}, {w['free']} "
        f"{u(r.free_concentration_at_charge, 'mM')}",
    ]
    if plan.blend is not None:
        lines += [f"    {c.name:<20} {u(c.kg_product, 'kg')} product ({u(c.kg_active, 'kg')} active)"
                  for c in plan.blend.components]
        ch = plan.blend.cheapest
        if ch is not None and math.isfinite(ch.fraction):
            lines.append(f"  cheapest ratio         {ch.component} at {ch.fraction:.3g} ({ch.basis} fraction): "
                         f"{u(ch.cost_per_batch, ch.currency, digits=5)} per batch before margin"
                         + (" (at an end of the range)" if ch.at_bound else ""))
    lines += [
        "",
        "  trial levels: " + ", ".join(f"{t.level:g} x = {u(t.kg_product, 'kg')} (coverage {t.coverage:.3f})"
                                       for t in plan.trial),
    ]
    return "\n".join(lines)


def given_charge(plan, dose) -> dict:
    """The equilibrium at a charge given with ``--dose`` (result.json ``dose_given``)."""
    sol = solve(plan.solution.inputs, dose.mol)
    split = {k: float(v) for k, v in split_by_phase(sol).items()}
    total = sum(split.values()) or 1.0
    r = plan.recommendation
    return {**dose.as_json(), "coverage": float(sol.state.coverage),
            "free_concentration_mol_m3": float(sol.state.free_concentration),
            "split_mol": split, "split_share": {k: v / total for k, v in split.items()},
            "times_recommended_charge": dose.kg_product / r.kg_product_per_batch
            if r.kg_product_per_batch and math.isfinite(r.kg_product_per_batch) else None}


def describe_given(g: dict, echo: str, free: str = "free surfactant monomer") -> str:
    """The terminal lines of a ``--dose`` charge against the plan."""
    where = ", ".join(f"{k} {100 * v:.3g} %" for k, v in g["split_share"].items() if v > 0)
    times = g["times_recommended_charge"]
    lines = [f"  your charge            {sig(g['kg_product'], 4)} kg product, {sig(g['kg_active'], 4)} kg active"
             + (f" ({sig(times, 3)} x the recommended charge)" if times is not None else ""),
             f"                         {echo}",
             f"  at your charge         coverage {sig(g['coverage'], 4)} (-), {free} "
             f"{sig(g['free_concentration_mol_m3'], 4)} mM; {where}"]
    return "\n".join(lines)


def run(args) -> int:
    if args.case is None:
        demo = demo_case_path()
        source = Path(str(demo))
        case = loads_case(demo.read_text(encoding="utf-8"), None, name="built-in demo case")
        stem = "demo"
    else:
        source = Path(args.case)
        case = load_case(source)
        stem = source.stem
    out_dir = Path(args.out) if args.out else Path.cwd() / f"{stem}_plan"
    with numeric_guard(args):  # before any file is written: a failed run keeps the old plan
        dose = None
        if getattr(args, "dose", None) is not None:  # read before the plan: a bad --dose costs nothing
            dose = read_dose(args.dose, case, case_inputs(case))
        plan, files = build_outputs(case, source)
        names = {k: getattr(args, k, None) for k in ("prepared_by", "checked_by", "revision")}
        if any(names.values()):  # the sections are kept per plan: only the head is drawn again
            files["report.html"] = report.render(plan, **names)
        result = plan_json(plan)
        if dose is not None:
            given = given_charge(plan, dose)
            result["dose_given"] = {**given, "echo": dose.echo()}
            files["result.json"] = dumps(result) + "\n"
    try:
        written = write_outputs(out_dir, files)
    except OSError as exc:
        raise InputError(f"--out: cannot write the plan into {out_dir} "
                         f"({exc.strerror or exc}{': ' + str(exc.filename) if exc.filename else ''})") from None
    if args.json:  # one JSON object on stdout (result.json), nothing else
        print(dumps(result))
        return 0
    print(clean(describe(plan)))
    if dose is not None:
        print("\n" + clean(describe_given(result["dose_given"], dose.echo(), words_for(case)["free"])))
    if plan.recipe is not None:
        r = plan.recipe
        total = sum(r.split_mol.values()) or 1.0
        where = ", ".join(f"{k} {100 * v / total:.3g} %" for k, v in r.split_mol.items() if v > 0)
        print("\n" + clean(f"  current recipe charge  {sig(r.kg_product, 4)} kg product ({sig(r.times_recommended, 3)} x "
                           f"the recommended charge): coverage {sig(r.coverage, 4)} (-); {where}; "
                           + (f"reserve beyond the equilibrium demand {100 * r.reserve_share:.3g} % of it"
                              if r.kg_product >= r.demand_kg_product else
                              f"BELOW the equilibrium demand for the target ({sig(r.demand_kg_product, 4)} kg "
                              "product): the interface is short of the target")))
    for w in plan_warnings(plan):
        print(clean(f"warning: {w}"))
    print()
    for p in written:
        print(clean(f"wrote {p}"))
    print("\n" + CLI_CAUTION)
    return 0
