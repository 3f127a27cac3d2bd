"""``sizing achievable CASE --dose Q [--json]``: the d32 a dose can reach, and the knee dose."""

from __future__ import annotations

from ..case import load_case
from ..outputs.result_json import achievable_json
from ..units import sig
from .common import print_json, table


def register(sub) -> None:
    p = sub.add_parser("achievable", help="drop size reached with a dose when surfactant may limit it",
                       description="The d32 reached with a dose: the larger of the homogeniser's own size "
                                   "and the size the surfactant can cover at the target coverage, after what "
                                   "the continuous phase and the drops take; and the knee dose.")
    p.add_argument("case", help="case file (TOML)")
    p.add_argument("--dose", metavar="Q", required=True,
                   help="active amount per batch, a mass or moles ('12 kg', '40 mol')")
    p.add_argument("--json", action="store_true", help="print the result as one JSON object")
    p.set_defaults(func=run)


def _um(x):
    return "none (no stable interface)" if x is None else f"{sig(x * 1e6, 4)} um"


def describe(out: dict) -> str:
    """Return the readable text of an achievable result (the JSON object)."""
    if not out["feasible"]:
        return f"{out.get('title') or 'case'}\n\nNOT REACHABLE: {out['unreachable']}"
    rows = [("dose (active)", f"{sig(out['dose_kg_active'], 4)} kg  ({sig(out['dose_mol'], 4)} mol)"),
            ("d32 reached", _um(out["d32_m"])),
            ("limited by", out["limited_by"]),
            ("homogeniser's own d32", _um(out["homogeniser_d32_m"])),
            ("d32 the surfactant can cover", _um(out["surfactant_d32_m"])),
            ("coverage to stabilise", f"{sig(out['min_coverage'], 4)}"),
            ("taken by bulk and drops", f"{sig(out['bulk_loss_mol'], 4)} mol"),
            ("KNEE dose (active)", f"{sig(out['knee_dose_kg_active'], 4)} kg  ({sig(out['knee_dose_mol'], 4)} mol)"),
            ("knee dose (product)", f"{sig(out['knee_dose_kg_product'], 4)} kg")]
    text = [table(rows, out.get("title") or "case"),
            "beyond the knee dose more surfactant no longer makes smaller drops (equilibrium estimate)"]
    if out.get("note"):
        text.append("note: " + out["note"])
    return "\n\n".join(text)


def run(args) -> int:
    case = load_case(args.case)
    out = achievable_json(case, args.dose)
    if args.json:
        print_json(out)
    else:
        print(describe(out))
    return 0
