"""``sizing sweep CASE --vary NAME=LOW..HIGH:N [--vary ...] [--csv FILE]``: what-if tables.

A grid that fits on a screen (:data:`SCREEN_ROWS` rows) is printed whole; a larger one as a
summary (rows, the least and largest value of each column, where the target is met), with the full
table in the CSV.  The CSV is built column by column with pyarrow (numbers to 10 significant
digits, empty cells where there is no value) and written through :func:`sizing.files.write_atomic`.
"""

from __future__ import annotations

import csv
import importlib
import io
import sys

import numpy as np

from ..case import load_case
from ..errors import InputError
from ..planning.sweep import sweep
from .common import write_atomic

SCREEN_ROWS = 40  # at most this many rows are printed as a table; more give a summary
DIGITS = 10  # significant digits of the numbers in the CSV


def register(sub) -> None:
    p = sub.add_parser("sweep", help="what-if table of the dose over one or two inputs",
                       description="Solve a case over a grid of one or two inputs (one vectorised solve). "
                                   "NAME is d32, dispersed_fraction, volume, coverage, temperature, ... "
                                   "or any numeric case field by its TOML path (surfactant.cmc). Grids of "
                                   f"more than {SCREEN_ROWS} points print a summary; --csv keeps the full table.")
    p.add_argument("case", help="case file (TOML)")
    p.add_argument("--vary", action="append", required=True, metavar="NAME=LOW..HIGH:N[:log]",
                   help="e.g. 'd32=1um..5um:9', 'd32=0.3um..30um:9:log' (log spacing) or "
                        "'batch.temperature=20..60 degC:5'; at most twice")
    p.add_argument("--csv", metavar="FILE", help="also write the table as CSV (atomically)")
    p.set_defaults(func=run)


def _rounded(x: np.ndarray, digits: int = DIGITS) -> np.ndarray:
    """Return ``x`` rounded to ``digits`` significant digits (as ``'%.{digits}g'`` would print it).

    Each value becomes the double nearest to a decimal of at most ``digits`` digits, so its
    shortest text (what pyarrow writes) has at most that many digits.  Zeros, nan, inf and values
    whose power of ten is not exact in a double (below about 1e-13 or above 1e31) are left as given.

    >>> [float(v) for v in _rounded(np.array([1 / 3, 2.0 / 3 * 1e-6, 123456789012.0, 0.0, np.nan]))]
    [0.3333333333, 6.666666667e-07, 123456789000.0, 0.0, nan]
    """
    x = np.asarray(x, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        e = np.floor(np.log10(np.abs(x)))
        k = (digits - 1) - e  # decimal places that keep `digits` significant digits
        ok = np.isfinite(x) & (x != 0) & np.isfinite(k) & (np.abs(k) <= 22)
        kk = np.where(ok, k, 0.0)
        up, down = 10.0 ** np.maximum(kk, 0), 10.0 ** np.maximum(-kk, 0)  # both exact powers of ten
        r = np.round(x * up / down) * down / up
    return np.where(ok, r, x)


def _text_column(v: np.ndarray, pa, pc):
    """Return one column as pyarrow text: ``True``/``False``, or numbers with nan as an empty cell."""
    if v.dtype == bool:
        return pa.array(np.where(v, "True", "False"), type=pa.large_string())
    v = v.astype(float)
    if v.size and v[0] == v.min() == v.max():  # one value over the block (an input held, a ceiling)
        return pa.repeat(pc.cast(pa.array(_rounded(v[:1])), pa.large_string())[0], v.size)
    r = _rounded(v)
    return pc.fill_null(pc.cast(pa.array(r, mask=np.isnan(r)), pa.large_string()), "")


def csv_bytes(df, chunk_rows: int = 1 << 14) -> bytearray:
    """Return the CSV text of a sweep table (UTF-8), built column by column in blocks of rows.

    The header is the table's own column names; numbers carry :data:`DIGITS` significant digits,
    ``feasible`` is ``True``/``False`` and a missing value (nan) is an empty cell, as pandas'
    ``to_csv`` writes them.  Each block's columns become text in one pyarrow call each and are
    joined row-wise in one more, so memory beyond the table is about the CSV's own size.

    The same text as pandas' ``to_csv(index=False, float_format="%.10g")`` (reference library):

    >>> import pandas as pd
    >>> df = pd.DataFrame({"d32 [um]": [1.0, 2.5], "feasible": [True, False],
    ...                    "dose [kg]": [1 / 3, np.nan], "area [m**2]": [1.26e6, 2.0 / 3 * 1e-7]})
    >>> bytes(csv_bytes(df)).decode() == df.to_csv(index=False, float_format="%.10g").replace("e-08", "e-8")
    True
    """
    pa = importlib.import_module("pyarrow")  # deferred: pyarrow is heavy and only the CSV needs it
    pc = importlib.import_module("pyarrow.compute")

    head = io.StringIO()
    csv.writer(head, lineterminator="\n").writerow(list(df.columns))
    out = bytearray(head.getvalue().encode("utf-8"))
    comma = pa.scalar(",", pa.large_string())
    for lo in range(0, len(df), chunk_rows):
        block = df.iloc[lo: lo + chunk_rows]  # a block at a time: no copy of the whole table
        cols = [_text_column(block[name].to_numpy(), pa, pc) for name in df.columns]
        rows = pc.binary_join_element_wise(*cols, comma) if len(cols) > 1 else cols[0]
        offsets = np.frombuffer(rows.buffers()[1], dtype=np.int64)[rows.offset: rows.offset + len(rows) + 1]
        start = int(offsets[0])
        data = np.frombuffer(rows.buffers()[2], dtype=np.uint8)[start: int(offsets[-1])]
        out += np.insert(data, offsets[1:] - start, np.uint8(10)).data  # a newline after each row
    return out


def _num(x) -> str:
    return "-" if not np.isfinite(x) else f"{x:.5g}"


def summary(df, n_inputs: int, csv_path: str | None) -> str:
    """Return the terminal text of a table too long to print: size, column ranges, where the target is met."""
    n = len(df)
    inputs = list(df.columns[:n_inputs])
    grid = " x ".join(f"{df[c].nunique()}" for c in inputs)
    lines = [f"sweep: {n:,} grid points ({grid} over {', '.join(inputs)}); the table is too long to print"]
    lines.append(f"the full table is in {csv_path}" if csv_path else "give --csv FILE to keep the full table")
    width = max(len(c) for c in df.columns)
    lines += ["", f"  {'column':<{width}}  {'least':>12}  {'largest':>12}  {'no value':>9}"]
    for c in df.columns:
        if c == "feasible":
            continue
        v = df[c].to_numpy(dtype=float)
        fin = v[np.isfinite(v)]
        lo, hi = (fin.min(), fin.max()) if fin.size else (np.nan, np.nan)
        lines.append(f"  {c:<{width}}  {_num(lo):>12}  {_num(hi):>12}  {n - fin.size:>9,}")
    met = df["feasible"].to_numpy(dtype=bool)
    k = int(met.sum())
    lines += ["", f"target met at {k:,} of {n:,} points ({100 * k / n:.3g} %)"]
    if 0 < k < n:
        for c in inputs:
            v = df[c].to_numpy(dtype=float)[met]
            lines.append(f"  where it is met: {c} from {_num(v.min())} to {_num(v.max())}")
    return "\n".join(lines)


def _flat_inputs(df, n_inputs: int) -> list[str]:
    """Return the swept inputs along which the dose does not change (the grid is the ravelled outer product)."""
    dose = next((c for c in df.columns if c.startswith("dose product")), None)
    if dose is None:
        return []
    inputs = list(df.columns[:n_inputs])
    shape = tuple(df[c].nunique() for c in inputs)
    if int(np.prod(shape)) != len(df):
        return []
    a = df[dose].to_numpy(dtype=float).reshape(shape)
    out = []
    for axis, col in enumerate(inputs):
        first = np.take(a, [0], axis=axis)
        same = (a == first) | (np.isnan(a) & np.isnan(first))
        if bool(same.all()):
            out.append(col)
    return out


def run(args) -> int:
    case = load_case(args.case)
    df = sweep(case, args.vary)
    n_inputs = len(args.vary)
    if len(df) <= SCREEN_ROWS:
        print(df.to_string(index=False, float_format=lambda x: f"{x:.5g}"))
    else:
        print(summary(df, n_inputs, args.csv))
    for col in _flat_inputs(df, n_inputs):
        print(f"note: the dose does not change with {col} in this case"
              + (" (the temperature enters only the tension, through R T in the equation of state; the "
                 "isotherm constants are taken as given)" if "temperature" in col else ""), file=sys.stderr)
    if args.csv:
        try:
            write_atomic(args.csv, csv_bytes(df))
        except OSError as exc:
            raise InputError(f"--csv: cannot write {args.csv} ({exc.strerror or exc})") from None
        print(f"\nwrote {args.csv}")
    return 0
