"""``sizing sweep CASE --vary NAME=LOW..HIGH:N [--vary ...] [--csv FILE]``: what-if tables.

A grid that fits on a screen (:data:`SCREEN_ROWS` rows) is printed whole; a larger one as a
summary (rows, the least and largest value of each column, where the target is met), with the full
table in the CSV.  The CSV is built column by column with pyarrow in blocks of rows (numbers to 10
significant digits, empty cells where there is no value) and streamed block by block through
:func:`sizing.files.write_atomic`.
"""

from __future__ import annotations

import csv
import importlib
import io
import os
import sys

import numpy as np

from ..case import load_case
from ..errors import InputError
from ..planning.sweep import parse_path, scaleup_note, sweep_columns
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


def _float_array(pa, x: np.ndarray, missing: np.ndarray | None = None):
    """Wrap a float64 array as a pyarrow array without copying, ``missing`` as nulls.

    Built from buffers, since ``pyarrow.array`` on a numpy array imports pandas (half a second).
    """
    x = np.ascontiguousarray(x, dtype=np.float64)
    validity, nulls = None, 0
    if missing is not None and missing.any():
        validity, nulls = pa.py_buffer(np.packbits(~missing, bitorder="little")), int(missing.sum())
    return pa.Array.from_buffers(pa.float64(), x.size, [validity, pa.py_buffer(x)], null_count=nulls)


def _text_scalar(pa, text: str):
    """A pyarrow large-string scalar built from buffers (``pyarrow.scalar`` imports pandas)."""
    raw = text.encode("utf-8")
    offsets = pa.py_buffer(np.array([0, len(raw)], dtype=np.int64))
    return pa.Array.from_buffers(pa.large_string(), 1, [None, offsets, pa.py_buffer(raw)])[0]


def _words_column(v: np.ndarray, pa):
    """Return a column of a few distinct texts (the ``reason``) as pyarrow text, each text encoded once."""
    words = list(dict.fromkeys(v.tolist()))  # the distinct texts, in order of appearance
    codes = np.zeros(v.size, dtype=np.int64)
    for k, w in enumerate(words[1:], start=1):
        codes[v == w] = k
    raw = [str(w).encode("utf-8") for w in words]
    if any(b"," in r or b'"' in r or b"\n" in r for r in raw):  # the CSV cells are unquoted
        raise ValueError("sweep: a text column holds a comma, quote or newline")
    lengths = np.array([len(r) for r in raw], dtype=np.int64)[codes]
    offsets = np.zeros(v.size + 1, dtype=np.int64)
    np.cumsum(lengths, out=offsets[1:])
    data = b"".join(raw[k] for k in codes.tolist()) if v.size else b""
    return pa.Array.from_buffers(pa.large_string(), v.size, [None, pa.py_buffer(offsets), pa.py_buffer(data)])


def _text_column(v: np.ndarray, pa, pc):
    """Return one column as pyarrow text: ``True``/``False``, a text column as it is, or numbers
    with nan as an empty cell."""
    if v.dtype == object:
        return _words_column(v, pa)
    if v.dtype == bool:
        flags = pa.Array.from_buffers(pa.bool_(), v.size, [None, pa.py_buffer(np.packbits(v, bitorder="little"))])
        return pc.if_else(flags, _text_scalar(pa, "True"), _text_scalar(pa, "False"))
    v = v.astype(float)
    if v.size and v[0] == v.min() == v.max():  # one value over the block (an input held, a ceiling)
        return pa.repeat(pc.cast(_float_array(pa, _rounded(v[:1])), pa.large_string())[0], v.size)
    r = _rounded(v)
    return pc.fill_null(pc.cast(_float_array(pa, r, np.isnan(r)), pa.large_string()), _text_scalar(pa, ""))


def _columns(table) -> dict[str, np.ndarray]:
    """The columns of a sweep table (a dict of arrays or a pandas DataFrame) as a dict of arrays."""
    return {str(c): np.asarray(table[c]) for c in table}


def csv_chunks(table, chunk_rows: int = 1 << 16):
    """Yield the CSV text of a sweep table (UTF-8 bytes), the header first, then blocks of rows.

    The header is the table's own column names; numbers carry :data:`DIGITS` significant digits,
    ``feasible`` is ``True``/``False`` and a missing value (nan) is an empty cell, as pandas'
    ``to_csv`` writes them.  Each block's columns become text in one pyarrow call each and the
    block is written by pyarrow's CSV writer (:func:`pyarrow.csv.write_csv`, no quoting: the cells
    are numbers and words), so memory beyond the table is one block's text, whatever the grid.
    """
    pa = importlib.import_module("pyarrow")  # deferred: pyarrow is heavy and only the CSV needs it
    pc = importlib.import_module("pyarrow.compute")
    pcsv = importlib.import_module("pyarrow.csv")

    head = io.StringIO()
    cols = _columns(table)
    csv.writer(head, lineterminator="\n").writerow(list(cols))
    yield head.getvalue().encode("utf-8")
    names = [f"c{i}" for i in range(len(cols))]  # the header is written above, as csv quotes it
    options = pcsv.WriteOptions(include_header=False, quoting_style="none", batch_size=chunk_rows)
    columns = list(cols.values())
    n = len(columns[0]) if columns else 0
    for lo in range(0, n, chunk_rows):
        text = [_text_column(c[lo: lo + chunk_rows], pa, pc) for c in columns]
        sink = pa.BufferOutputStream()
        pcsv.write_csv(pa.Table.from_arrays(text, names=names), sink, write_options=options)
        yield sink.getvalue()


def csv_bytes(table, chunk_rows: int = 1 << 16) -> bytes:
    """Return the whole CSV text of a sweep table (UTF-8), as :func:`csv_chunks` writes it.

    The same text as pandas' ``to_csv(index=False, float_format="%.10g")`` (reference library):

    >>> import pandas as pd
    >>> df = pd.DataFrame({"d32 [um]": [1.0, 2.5], "feasible": [True, False],
    ...                    "dose [kg]": [1 / 3, np.nan], "area [m**2]": [1.26e6, 2.0 / 3 * 1e-7]})
    >>> csv_bytes(df).decode() == df.to_csv(index=False, float_format="%.10g").replace("e-08", "e-8")
    True
    """
    return b"".join(bytes(c) for c in csv_chunks(table, chunk_rows))


def terminal_width() -> int | None:
    """The terminal's width in characters: ``COLUMNS`` if set, else stdout's terminal; None when
    stdout is not a terminal (a file or a pipe takes the whole table)."""
    env = os.environ.get("COLUMNS", "")
    if env.isdigit() and int(env) > 0:
        return int(env)
    try:
        return os.get_terminal_size(sys.stdout.fileno()).columns if sys.stdout.isatty() else None
    except (OSError, ValueError, AttributeError):
        return None


def _num(x) -> str:
    return "-" if not np.isfinite(x) else f"{x:.5g}"


def _grid_shape(cols: dict, n_inputs: int) -> tuple[int, ...]:
    """The grid's shape from its ravelled input columns (the last input varies fastest).

    The first input holds each of its values for a run of rows as long as the last input's
    points, so the first change in it gives that length without sorting a million values.
    """
    first = next(iter(cols.values()))
    n = len(first)
    if n_inputs == 1 or n == 0:
        return (n,)
    changes = np.flatnonzero(first != first[0])
    inner = int(changes[0]) if changes.size else n
    return (n // inner, inner)


def summary(table, n_inputs: int, csv_path: str | None, why: str = "too long to print") -> str:
    """Return the terminal text of a table too long (or too wide) to print: size, column ranges,
    where the target is met and why not elsewhere."""
    cols = _columns(table)
    n = len(cols["feasible"])
    inputs = list(cols)[:n_inputs]
    grid = " x ".join(f"{k}" for k in _grid_shape(cols, n_inputs))
    lines = [f"sweep: {n:,} grid points ({grid} over {', '.join(inputs)})", f"the table is {why}"]
    lines.append(f"the full table is in {csv_path}" if csv_path else "give --csv FILE to keep the full table")
    width = max(len(c) for c in cols)
    lines += ["", f"  {'column':<{width}}  {'least':>12}  {'largest':>12}  {'no value':>9}"]
    for c in cols:
        if c == "feasible" or cols[c].dtype == object:  # flags and texts have no range
            continue
        v = cols[c].astype(float)
        fin = v[np.isfinite(v)]
        lo, hi = (fin.min(), fin.max()) if fin.size else (np.nan, np.nan)
        lines.append(f"  {c:<{width}}  {_num(lo):>12}  {_num(hi):>12}  {n - fin.size:>9,}")
    met = cols["feasible"].astype(bool)
    k = int(met.sum())
    lines += ["", f"target met at {k:,} of {n:,} points ({100 * k / n:.3g} %)"]
    if 0 < k < n:
        for c in inputs:
            v = cols[c].astype(float)[met]
            lines.append(f"  where it is met: {c} from {_num(v.min())} to {_num(v.max())}")
    if k < n and "reason" in cols:
        reasons = cols["reason"][~met]
        for r in dict.fromkeys(reasons.tolist()):
            m = int(np.sum(reasons == r))
            lines.append(f"  not met at {m:,} point{'' if m == 1 else 's'}: {r}")
    return "\n".join(lines)


def _flat_inputs(table, n_inputs: int) -> list[str]:
    """Return the swept inputs along which the dose does not change (the grid is the ravelled outer product)."""
    cols = _columns(table)
    dose = next((c for c in cols if c.startswith("dose product")), None)
    if dose is None:
        return []
    inputs = list(cols)[:n_inputs]
    shape = _grid_shape(cols, n_inputs)
    if int(np.prod(shape)) != len(cols[dose]):
        return []
    a = cols[dose].astype(float).reshape(shape)
    out = []
    for axis, col in enumerate(inputs):
        first = np.take(a, [0], axis=axis)
        same = (a == first) | (np.isnan(a) & np.isnan(first))
        if bool(same.all()):
            out.append(col)
    return out


def run(args) -> int:
    case = load_case(args.case)
    cols = sweep_columns(case, args.vary)  # no pandas unless the table is printed whole
    n_inputs = len(args.vary)
    if len(cols["feasible"]) <= SCREEN_ROWS:
        import pandas as pd  # deferred: pandas is heavy and only the printed table needs it

        text = pd.DataFrame(cols).to_string(index=False, float_format=lambda x: f"{x:.5g}")
        wide = max(len(line) for line in text.splitlines())
        room = terminal_width()
        if room is not None and wide > room:  # a table wider than the terminal would wrap into a mess
            print(summary(cols, n_inputs, args.csv, why=f"{wide} characters wide, wider than this terminal ({room})"))
        else:
            print(text)
    else:
        print(summary(cols, n_inputs, args.csv))
    note = scaleup_note(case, [parse_path(v) for v in args.vary])
    flat = _flat_inputs(cols, n_inputs)
    if note:
        print(note, file=sys.stderr)
    for col in flat:
        if note and col.startswith("d32 ["):
            continue  # said by the scale-up note
        print(f"note: the dose does not change with {col} in this case"
              + (" (the temperature enters only the tension, through R T in the equation of state; the "
                 "isotherm constants are taken as given)" if "temperature" in col else ""), file=sys.stderr)
    if args.csv:
        try:
            write_atomic(args.csv, csv_chunks(cols))  # streamed: one block of rows in memory at a time
        except OSError as exc:
            raise InputError(f"--csv: cannot write {args.csv} ({exc.strerror or exc})") from None
        print(f"\nwrote {args.csv}")
    return 0
