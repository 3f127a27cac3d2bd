"""``sizing sweep CASE --vary NAME=LOW..HIGH:N [--vary ...] [--csv FILE]``: what-if tables."""

from __future__ import annotations

import sys

from ..case import load_case
from ..errors import InputError
from ..planning.sweep import sweep
from .common import write_atomic


def register(sub) -> None:
    p = sub.add_parser("sweep", help="what-if table of the dose over one or two inputs",
                       description="Solve a case over a grid of one or two inputs (one vectorised solve). "
                                   "NAME is d32, dispersed_fraction, volume, coverage, temperature, ... "
                                   "or any numeric case field by its TOML path (surfactant.cmc).")
    p.add_argument("case", help="case file (TOML)")
    p.add_argument("--vary", action="append", required=True, metavar="NAME=LOW..HIGH:N[:log]",
                   help="e.g. 'd32=1um..5um:9', 'd32=0.3um..30um:9:log' (log spacing) or "
                        "'batch.temperature=20..60 degC:5'; at most twice")
    p.add_argument("--csv", metavar="FILE", help="also write the table as CSV (atomically)")
    p.set_defaults(func=run)


def run(args) -> int:
    case = load_case(args.case)
    df = sweep(case, args.vary)
    print(df.to_string(index=False, float_format=lambda x: f"{x:.5g}"))
    for col in df.columns[:len(args.vary)]:
        others = [c for c in df.columns[:len(args.vary)] if c != col]
        dose = next((c for c in df.columns if c.startswith("dose product")), None)
        if dose is None:
            break
        groups = df.groupby(others)[dose] if others else [(None, df[dose])]
        flat = all(g.nunique(dropna=False) <= 1 for _, g in groups)
        if flat:
            print(f"note: the dose does not change with {col} in this case"
                  + (" (the temperature enters only the tension, through R T in the equation of state; the "
                     "isotherm constants are taken as given)" if "temperature" in col else ""), file=sys.stderr)
    if args.csv:
        try:
            write_atomic(args.csv, df.to_csv(index=False, float_format="%.10g"))
        except OSError as exc:
            raise InputError(f"--csv: cannot write {args.csv} ({exc.strerror or exc})") from None
        print(f"\nwrote {args.csv}")
    return 0
