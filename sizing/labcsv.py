"""Read lab-data CSV files whose header cells name a quantity and its unit in brackets.

``concentration [mM],tension [mN/m]`` -> columns ``concentration`` and ``tension`` in SI floats.
Columns without brackets (``replicate``, ``notes``) are kept as they are.  Every problem names
the file, the row (as a spreadsheet shows it: header = row 1) and the column.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .errors import InputError
from .units import parse

_HEADER = re.compile(r"^\s*([^\[\]]+?)\s*(?:\[\s*([^\]]*)\s*\])?\s*$")
MAX_BYTES = 5 * 1024 * 1024


@dataclass(frozen=True)
class LabTable:
    """A lab table in SI: ``columns[name]`` is a float array (or an object array for text)."""

    path: str
    columns: dict
    units: dict  # name -> unit text as written in the header ('' for none)

    def __len__(self) -> int:
        return len(next(iter(self.columns.values()))) if self.columns else 0


def split_header(cell: str) -> tuple[str, str]:
    """Split ``'tension [mN/m]'`` into ``('tension', 'mN/m')``; the unit is '' when absent.

    >>> split_header('upper [um]')
    ('upper', 'um')
    """
    m = _HEADER.match(str(cell))
    if not m:
        raise InputError(f"header cell {cell!r}: expected 'name [unit]', e.g. 'tension [mN/m]'")
    return m.group(1).strip().lower().replace(" ", "_"), (m.group(2) or "").strip()


def read_lab_csv(path, dimensions: dict[str, str], *, required: tuple[str, ...] = (),
                 text_columns: tuple[str, ...] = ("notes", "note", "sample", "label")) -> LabTable:
    """Read a lab CSV into SI floats.

    Parameters
    ----------
    path : str or Path
        The CSV file (at most 5 MB).
    dimensions : dict
        Column name -> dimension key of :data:`sizing.units.DIMENSIONS` for columns that carry
        a unit; other numeric columns (``replicate``) are read as plain numbers.
    required : tuple of str
        Columns that must be present.

    Raises
    ------
    InputError
        Missing file or column, a missing or wrong unit, a non-numeric cell (row and column
        named), an empty table.
    """
    import pandas as pd

    p = Path(path)
    if not p.exists():
        raise InputError(f"{p}: file not found")
    if p.stat().st_size > MAX_BYTES:
        raise InputError(f"{p}: the file is {p.stat().st_size / 1e6:.1f} MB; at most 5 MB is accepted")
    try:
        raw = pd.read_csv(p, dtype=str, skip_blank_lines=True, comment="#", keep_default_na=False)
    except Exception as exc:
        raise InputError(f"{p}: cannot read as CSV ({exc})") from exc
    if raw.shape[0] == 0:
        raise InputError(f"{p}: no data rows below the header")
    columns: dict = {}
    units: dict = {}
    problems: list[str] = []
    for cell in raw.columns:
        name, unit = split_header(cell)
        series = raw[cell].str.strip()
        if name in text_columns:
            columns[name] = series.to_numpy(dtype=object)
            units[name] = ""
            continue
        dim = dimensions.get(name)
        if dim and dim != "dimensionless" and not unit:
            problems.append(
                f"{p}: column {cell!r} has no unit; write it in brackets, e.g. '{name} [unit]'"
            )
            continue
        values = np.empty(len(series))
        scale = None
        for i, text in enumerate(series):
            if text == "":
                values[i] = np.nan
                continue
            try:
                number = float(text)
            except ValueError:
                problems.append(f"{p}: row {i + 2}, column {cell!r}: {text!r} is not a number")
                values[i] = np.nan
                continue
            if dim and unit:
                if scale is None:  # units are linear except temperature
                    try:
                        if dim == "temperature":
                            scale = ("temp", unit)
                        else:
                            scale = parse(f"1 {unit}", f"{p}: column {cell!r}", dim)
                    except InputError as exc:
                        problems.append(str(exc))
                        break
                if isinstance(scale, tuple):
                    values[i] = parse(f"{number} {unit}", f"{p}: column {cell!r}", dim)
                else:
                    values[i] = number * scale
            elif unit and not dim:
                if unit == "%":
                    values[i] = number  # percentages stay in percent for free-form columns
                else:
                    values[i] = number
            else:
                values[i] = number
        columns[name] = values
        units[name] = unit
    missing = [c for c in required if c not in columns]
    if missing:
        problems.append(
            f"{p}: missing column(s) {', '.join(missing)}; found {', '.join(columns) or 'none'}"
        )
    if problems:
        raise InputError(problems=problems)
    return LabTable(str(p), columns, units)
