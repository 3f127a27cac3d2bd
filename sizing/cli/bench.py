"""``sizing bench [--json]``: vectorised balance throughput against the same solve per case and a scipy loop."""

from __future__ import annotations

from ..bench import ENTRIES
from ..bench import run as bench_run
from ..errors import InputError
from .common import print_json, table


def register(sub) -> None:
    p = sub.add_parser("bench", help="benchmark the vectorised balance against a per-case loop",
                       description="Time the vectorised dose -> state solve over random physical cases "
                                   "against the same solve called per case and a plain brentq loop on a "
                                   "sample, each side several times, interleaved, in the same run; "
                                   "minimum and median reported.")
    p.add_argument("--cases", type=int, default=1_000_000, help="vectorised cases per isotherm (default 10^6)")
    p.add_argument("--loop-cases", type=int, default=2000, help="cases solved by the plain loop (default 2000)")
    p.add_argument("--repeats", type=int, default=5, help="timed runs of each side (default 5)")
    p.add_argument("--seed", type=int, default=7)
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=run)


def run(args) -> int:
    if not 1 <= args.repeats <= 100:
        raise InputError(f"--repeats: expected 1 to 100 timed runs, got {args.repeats}")
    if args.cases < 1000 or args.loop_cases < 10 or args.loop_cases > args.cases:
        raise InputError(f"--cases/--loop-cases: expected cases >= 1000 and 10 <= loop cases <= cases, "
                         f"got {args.cases} and {args.loop_cases}")
    out = bench_run(args.cases, args.loop_cases, args.seed, repeats=args.repeats)
    if args.json:
        print_json(out)
        return 0
    rows = []
    for m in ENTRIES:
        t = out["timing"][m]
        target = out["targets"]["ratio_vs_loop"].get(m)
        rows.append((m, f"vectorised {out['cases_per_s'][m]:.3g} cases/s (min {t['vectorised']['min']:.3g} s, "
                        f"median {t['vectorised']['median']:.3g} s), peak {out['peak_memory_mb'][m]:.0f} MB"))
        rows.append(("  vs same solve per case", f"{out['ratio_vs_same_per_case'][m]:.1f}x "
                     f"({out['same_per_case_cases_per_s'][m]:.3g} cases/s; min {t['same_per_case']['min']:.3g} s, "
                     f"median {t['same_per_case']['median']:.3g} s)"))
        rows.append(("  vs scipy brentq loop", f"{out['ratio_vs_loop'][m]:.1f}x "
                     f"({out['loop_cases_per_s'][m]:.3g} cases/s; min {t['scipy_loop']['min']:.3g} s, "
                     f"median {t['scipy_loop']['median']:.3g} s)" + (f", target {target}x" if target else "")))
        if m in out.get("ratio_vs_reference", {}):
            ref_target = out["targets"].get("ratio_vs_reference", {}).get(m)
            rows.append((f"  vs {out['reference'][m]}",
                         f"{out['ratio_vs_reference'][m]:.2f}x the reference's speed on the same cases "
                         f"(median {t['reference']['median']:.3g} s)"
                         + (f", target {ref_target:.2f}x" if ref_target else "")))
    rows.append(("agreement", f"max relative difference {out['max_rel_diff']:.2g} (target 1e-9)"))
    rows.append(("mass balance", f"max relative error {out['max_mass_balance_error']:.2g}"))
    if "monte_carlo" in out:
        mc = out["monte_carlo"]
        rows.append(("Monte Carlo", f"median {mc['median_s']:.3g} s for {mc['samples']} samples of "
                                    f"{mc.get('case', 'a demo case')} ({mc.get('repeats', '?')} repeats; "
                                    f"target 0.5 s)"))
    print(table(rows, f"sizing bench: {out['cases']} cases per entry, {out['loop_cases']} per case, "
                      f"{out['repeats']} interleaved runs of each side (throughput from the median)"))
    return 0
