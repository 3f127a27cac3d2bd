"""``sizing solve CASE [--dose Q] [--json]``: the dose for the target, or the state for a dose."""

from __future__ import annotations

from ..case import load_case
from ..model import case_inputs, solve_case
from ..outputs.solve_json import solution_json
from ..texts import words_for
from ..units import sig
from .common import clean, numeric_guard, print_json, read_dose, table


def register(sub) -> None:
    p = sub.add_parser("solve", help="dose for the case's target, or the equilibrium for a given dose",
                       description="Solve the surfactant mass balance of a case.")
    p.add_argument("case", help="case file (TOML)")
    p.add_argument("--dose", metavar="Q", help="dose per batch: active as a mass or moles ('12 kg', '40 mol', "
                                             "'12 kg active'), or product as delivered ('13.5 kg product')")
    p.add_argument("--json", action="store_true", help="print the result as one JSON object")
    p.set_defaults(func=run)


def _fmt(x, unit, digits=4, scale=1.0):
    return "n/a" if x is None else f"{sig(x * scale, digits)} {unit}".strip()


def describe(out: dict, words: dict | None = None) -> str:
    """Return the readable text of a solve result (the JSON object).

    ``words`` (:func:`sizing.texts.words_for` of the case) names the free surfactant and leaves
    out the places that do not exist (no oil in a foam, no micelles or CMC line without a CMC).
    """
    w = words or {"free": "free surfactant monomer", "places": None, "has_cmc": True}
    rows = [
        ("d32", _fmt(out["d32_m"], "um", scale=1e6)),
        ("interfacial area", _fmt(out["interfacial_area_m2"], "m**2")),
        ("continuous phase", f"{out['phases']['continuous']}, {_fmt(out['phases']['continuous_volume_m3'], 'm**3')}"),
        ("dispersed phase", f"{out['phases']['dispersed']}, {_fmt(out['phases']['dispersed_volume_m3'], 'm**3')}"),
    ]
    if w["has_cmc"]:
        rows.append(("largest coverage (CMC)", _fmt(out["max_coverage"], "")))
    text = [table(rows, out.get("title") or "case")]
    if out.get("dose_basis"):
        text.append(clean(out["dose_basis"]["echo"]))
    if out["dose"] is not None:
        d = out["dose"]
        title = "dose for the target" if out["mode"] == "target" else "dose given"
        drows = [
            ("active", f"{_fmt(d['kg_active'], 'kg')}  ({_fmt(d['mol'], 'mol')})"),
            ("product as delivered", _fmt(d["kg_product"], "kg")),
            ("of batch mass", _fmt(d["wt_percent"], "wt% (product)")),
            ("per litre of batch", _fmt(d["g_per_l"], "g/L (product)")),
            ("per interfacial area", _fmt(d["mg_per_m2"], "mg/m**2 (active)")),
        ]
        if d.get("percent_on_dispersed") is not None:
            drows.append(("on dispersed phase", _fmt(d["percent_on_dispersed"], "% by mass (product)")))
        text.append(table(drows, title))
    else:
        text.append(clean("TARGET NOT REACHABLE at equilibrium: " + out.get("unreachable", "")))
    s = out["state"]
    srows = [
        (w["free"], _fmt(s["free_concentration_mol_m3"], "mM")),
        ("coverage", _fmt(s["coverage"], "")),
        ("surface excess", _fmt(s["surface_excess_mol_m2"], "umol/m**2", scale=1e6)),
    ]
    if s.get("surface_load_kg_m2") is not None and w["free"] == "unadsorbed protein or polymer":
        srows.append(("surface load", _fmt(s["surface_load_kg_m2"], "mg/m**2", scale=1e6)))
    if s.get("tension_N_m") is not None:
        srows.append(("tension", _fmt(s["tension_N_m"], "mN/m", scale=1e3)))
    elif s.get("plateau_tension_N_m") is not None:
        srows.append(("plateau tension (measured)", _fmt(s["plateau_tension_N_m"], "mN/m", scale=1e3)))
    text.append(table(srows, "equilibrium state" + (" (at the CMC ceiling)" if s.get("at_cmc_ceiling") else "")))
    split = out["split_mol"]
    total = sum(v for v in split.values() if v) or 1.0
    text.append(table([(k, f"{_fmt(v, 'mol')}  ({100 * (v or 0) / total:.1f} %)") for k, v in split.items()
                       if w["places"] is None or k in w["places"] or v],
                      "where the surfactant is"))
    text += [clean(f"warning: {w}") for w in out.get("warnings", [])]
    return "\n\n".join(text)


def run(args) -> int:
    case = load_case(args.case)
    with numeric_guard(args):  # an overflow is one error naming the input, before any output
        dose = read_dose(args.dose, case, case_inputs(case)) if args.dose is not None else None
        out = solution_json(solve_case(case, dose=dose.mol if dose is not None else None), case)
    if dose is not None:
        out["dose_given"] = args.dose
        out["dose_basis"] = {**dose.as_json(), "echo": dose.echo()}  # how --dose was read
    if args.json:
        print_json(out)
    else:
        print(describe(out, words_for(case)))
    return 0
