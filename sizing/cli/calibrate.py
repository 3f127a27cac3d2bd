"""``sizing calibrate CASE TRIALS.csv [--out DIR] [--json]``: learn from plant trials, set the next charge."""

from __future__ import annotations

from pathlib import Path

from ..case import load_case
from ..files import write_folder
from ..outputs.calibrate_json import (
    calibration_html,
    calibration_json,
    learned_name,
    shown,
    updated_case_toml,
)
from ..outputs.jsonify import dumps
from ..planning.calibrate import calibrate, read_trials
from ..units import sig
from .common import clean, guarded, print_json


def register(sub) -> None:
    p = sub.add_parser("calibrate", help="update the case's spreads from plant trials and set the next charge",
                       description="Weight the case's Monte Carlo draws by trial measurements (d32, serum "
                                   "concentration, serum tension, stable yes/no) and plan the next charge.")
    p.add_argument("case", help="case file (TOML) with spreads on the uncertain inputs")
    p.add_argument("trials", metavar="TRIALS.csv",
                   help="batch, charge [kg] (product), and any of d32 [um], serum concentration [mM], "
                        "serum tension [mN/m], stable (yes/no)")
    p.add_argument("--samples", type=int, help="Monte Carlo draws (default: the case's, at most 50000)")
    p.add_argument("--seed", type=int, help="seed of the draws (default: the case's)")
    p.add_argument("--out", metavar="DIR", help="write DIR/result.json, DIR/report.html, DIR/updated_case.toml")
    p.add_argument("--json", action="store_true", help="print the result as one JSON object")
    p.set_defaults(func=guarded(run))


def describe(j: dict, scaleup: bool = False) -> str:
    def u(x, unit):
        return "n/a" if x is None else f"{sig(x, 4)} {unit}".strip()

    nx = j["next"]
    lines = [f"calibrated on {len(j['trials'])} trial batch(es), effective sample size "
             f"{j['effective_sample_size']:.0f} of {j['samples']} draws",
             f"  next charge            {u(nx['kg_product_per_batch'], 'kg')} of product per batch "
             f"(P{nx['percentile']:g} dose {u(nx['dose_kg_product'], 'kg')} before margin and rounding)",
             f"  before the trials      {u(j['prior_charge_kg'], 'kg')}; probability the charge meets the target "
             f"{u(j['probability_target_met_before'], '')} before, {u(nx['probability_target_met'], '')} after",
             "", f"  {'learned input':<38} prior p10 / p50 / p90  ->  posterior p10 / p50 / p90"]
    units = j.get("units") or {}
    for p in j["posterior"]:
        a, b = j["prior"][p], j["posterior"][p]
        un = units.get(p) or ""
        lines.append(f"  {learned_name(p, scaleup)[:38]:<38} " + " / ".join(shown(a[k], un) for k in ("p10", "p50", "p90")) + "  ->  "
                     + " / ".join(shown(b[k], un) for k in ("p10", "p50", "p90")))
    st = j.get("stability")
    if st and st.get("coverage_for_90_percent") is not None:
        lo, hi = st.get("coverage_for_90_percent_interval") or (None, None)
        lines.append(f"  stability: 90 % chance of a stable batch from coverage {st['coverage_for_90_percent']:.3g} "
                     f"(95 %: {'open' if lo is None else f'{lo:.3g}'} to {'open' if hi is None else f'{hi:.3g}'}), "
                     f"dose {u(st.get('dose_kg_product_for_90_percent'), 'kg')} of product before margin")
    lines += [f"warning: {w}" for w in j.get("warnings", [])]
    lines += [f"note: {n}" for n in j["notes"]]
    lines += ["", "Equilibrium estimate from trial data: confirm the next charge by trial; follow safety data "
                  "sheets, legal emulsifier limits and local codes."]
    return "\n".join(clean(x) for x in lines)


def run(args) -> int:
    case = load_case(args.case)
    trials = read_trials(args.trials)
    cal = calibrate(case, trials, samples=args.samples, seed=args.seed)
    j = calibration_json(cal, case)
    if args.out:
        files = {"result.json": dumps(j) + "\n", "report.html": calibration_html(case, cal, j),
                 "updated_case.toml": updated_case_toml(case, cal, args.trials)}
        write_folder(Path(args.out), files)
    if args.json:
        print_json(j)
    else:
        print(describe(j, getattr(case, "scaleup", None) is not None))
        if args.out:
            print(f"\nwrote {args.out}/result.json, report.html, updated_case.toml")
    return 0
