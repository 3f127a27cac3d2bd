"""Read lab-data CSV files whose header cells name a quantity and its unit in brackets.

``concentration [mM],tension [mN/m]`` -> columns ``concentration`` and ``tension`` in SI floats.
Columns without brackets (``replicate``, ``notes``) are kept as they are.  Every problem names
the file, the row (as a spreadsheet shows it: header = row 1, counting only the rows that are
not blank or ``#`` comments) and the column.

The separator is taken from the header line: ``,`` (the default), ``;`` or a tab.  In a file
separated by ``;`` or tabs a decimal comma (``70,2``) is read as a decimal point, as European
spreadsheet exports write it.  A first line ``sep=;`` (as spreadsheets write it) names the
separator; UTF-16 text with a byte-order mark is read too.  ``nan``, ``inf`` and numbers too large
for a float are refused by row and column (an empty cell is the way to say "no value"), and so
are magnitudes outside the accepted range of the column's quantity (:mod:`sizing.plausible`);
those outside its usual range are kept with a warning in ``LabTable.warnings``.  At most
5 MB and 10,000 data rows are read.  Messages quote a cell value as a token of at most 20
characters and a header cell of at most 40, control characters replaced by ``?``.
"""

from __future__ import annotations

import contextlib
import contextvars
import io
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .errors import InputError
from .files import MAX_TOKEN, read_regular, token
from .plausible import check_array
from .units import DIMENSIONS, parse

_HEADER = re.compile(r"^\s*([^\[\]]+?)\s*(?:\[\s*([^\]]*)\s*\])?\s*$")
# '70,2', '-0,5', ',5', '9,676e-05': a number written with a decimal comma
_DECIMAL_COMMA = re.compile(r"^[-+]?(?:\d+,\d*|,\d+)(?:[eE][-+]?\d+)?$")
_SEPARATORS = (",", ";", "\t")
_SEPARATOR_NAMES = {",": "','", ";": "';'", "\t": "a tab"}
_GENERIC_EXAMPLE = "'upper [um]' or 'tension [mN/m]'"
_LISTED = 3  # non-numeric cells listed one by one per column before summarising
MAX_BYTES = 5 * 1024 * 1024
MAX_ROWS = 10_000  # data rows of a lab CSV (lab series and size tables have tens to hundreds)
_SEP_LINE = re.compile(r'^\s*"?sep=([,;\t])"?\s*$', re.IGNORECASE)
MAX_HEADER = 40  # characters of a header cell quoted in a message (cell values: MAX_TOKEN = 20)


@dataclass(frozen=True)
class LabTable:
    """A lab table in SI: ``columns[name]`` is a float array (or an object array for text)."""

    path: str
    columns: dict
    units: dict  # name -> unit text as written in the header ('' for none)
    warnings: tuple = ()  # values outside the usual range of their quantity (sizing.plausible)

    def __len__(self) -> int:
        return len(next(iter(self.columns.values()))) if self.columns else 0


def split_header(cell: str, example: str | None = None) -> tuple[str, str]:
    """Split ``'tension [mN/m]'`` into ``('tension', 'mN/m')``; the unit is '' when absent.

    Parameters
    ----------
    cell : str
        One header cell.
    example : str, optional
        A well-formed header cell quoted in the error message (default: a generic pair).

    Returns
    -------
    tuple of str
        The column name (lower case, spaces as ``_``) and the unit text ('' for none).

    Raises
    ------
    InputError
        The cell is not ``name`` or ``name [unit]``.

    Examples
    --------
    >>> split_header('upper [um]')
    ('upper', 'um')
    >>> split_header('Sample ID')
    ('sample_id', '')
    """
    m = _HEADER.match(str(cell))
    if not m:
        shown = f"'{example}'" if example else _GENERIC_EXAMPLE
        raise InputError(f"header cell {token(cell, MAX_HEADER)}: expected 'name [unit]', e.g. {shown}")
    return m.group(1).strip().lower().replace(" ", "_"), (m.group(2) or "").strip()


def detect_separator(header_line: str) -> str:
    """Return the cell separator of a CSV from its header line: ``','``, ``';'`` or a tab.

    The separator counted most often outside brackets and quotes wins; ``','`` on a tie
    (including a one-column header).

    Examples
    --------
    >>> detect_separator('concentration [mM];tension [mN/m]')
    ';'
    >>> detect_separator('upper [um],volume [%]')
    ','
    >>> detect_separator('lower [um]\\tupper [um]\\tvolume [%]') == '\\t'
    True
    """
    bare = re.sub(r'\[[^\]]*\]|"[^"]*"', "", header_line)
    counts = {sep: bare.count(sep) for sep in _SEPARATORS}
    best = max(_SEPARATORS, key=lambda sep: counts[sep])  # max keeps the first (',') on a tie
    return best if counts[best] > 0 else ","


def _header_line(text: str) -> str:
    """Return the first line that is neither blank nor a ``#`` comment ('' if none)."""
    for line in text.splitlines():
        content = line.split("#", 1)[0]
        if content.strip():
            return content
    return ""


def _example(dimensions: dict[str, str]) -> str | None:
    """Return ``'name [SI unit]'`` for the first expected column that has a unit."""
    for name, dim in dimensions.items():
        si_unit = DIMENSIONS.get(dim, ("", "", ""))[1]
        if si_unit:
            return f"{name} [{si_unit}]"
    return None


def _split_decimal(cells: list[str]) -> str | None:
    """Return the first ``'int,digits'`` pair in a row split at decimal commas, else None."""
    for a, b in zip(cells, cells[1:]):
        if re.fullmatch(r"\s*[-+]?\d+", a) and re.fullmatch(r"\d+(?:[eE][-+]?\d+)?\s*", b):
            return f"{a.strip()},{b.strip()}"
    return None


def _fix_hint(sample: str) -> str:
    return (f"values like {token(sample)} use a decimal comma; write '.' as the decimal point, "
            "or save the CSV with ';' as the separator")


# a molar mass a caller sets for the files it reads (``sizing fit ... --molar-mass``), so that
# the fitting functions need not pass it through; see :func:`molar_mass_for_mass_columns`
_MOLAR_MASS: contextvars.ContextVar[float | None] = contextvars.ContextVar("labcsv_molar_mass", default=None)


@contextlib.contextmanager
def molar_mass_for_mass_columns(molar_mass: float | None):
    """Read concentration columns given by mass (``[g/L]``) with this molar mass [kg/mol] inside."""
    tok = _MOLAR_MASS.set(molar_mass)
    try:
        yield
    finally:
        _MOLAR_MASS.reset(tok)


_MOLAR_MASS_LINE = re.compile(r"^\s*#\s*molar[ _]mass\s*[=:]\s*(.+?)\s*$", re.IGNORECASE)


def _file_molar_mass(text: str, p) -> float | None:
    """The molar mass a ``# molar_mass = 288.4 g/mol`` comment line of the file gives [kg/mol]."""
    for line in text.splitlines():
        m = _MOLAR_MASS_LINE.match(line)
        if m:
            return parse(m.group(1), f"{p}: the '# molar_mass' line", "molar_mass")
    return None


def _concentration_factor(unit: str, field: str, molar_mass: float | None, p) -> float:
    """SI factor of a concentration column: mol/m**3 per unit; a mass concentration (g/L) via M."""
    try:
        return parse(f"1 {unit}", field, "concentration")
    except InputError as molar_error:
        try:
            per_volume = parse(f"1 {unit}", field, "density")  # g/L = kg/m**3: mass per volume
        except InputError:
            raise molar_error from None
    if molar_mass is None:
        raise InputError(f"{field}: {token(unit)} is a mass concentration; reading it in mol/m**3 needs the "
                         "molar mass of the surfactant: add a line '# molar_mass = 288.4 g/mol' to the file, "
                         "or give --molar-mass '288.4 g/mol' to 'sizing fit' (or the column in mM)")
    return per_volume / molar_mass


def read_lab_csv(path, dimensions: dict[str, str], *, required: tuple[str, ...] = (),
                 text_columns: tuple[str, ...] = ("notes", "note", "sample", "label"),
                 molar_mass: float | None = None) -> LabTable:
    """Read a lab CSV into SI floats.

    Parameters
    ----------
    path : str or Path
        The CSV file (at most 5 MB), separated by ``,``, ``;`` or tabs (taken from the header
        line); with ``;`` or tabs a decimal comma is accepted.
    dimensions : dict
        Column name -> dimension key of :data:`sizing.units.DIMENSIONS` for columns that carry
        a unit; other numeric columns (``replicate``) are read as plain numbers.
    required : tuple of str
        Columns that must be present.
    text_columns : tuple of str
        Columns kept as text (object arrays), e.g. ``notes``.
    molar_mass : float, optional
        [kg/mol] to read a concentration column given by mass (``c [g/L]``, ``c [mg/L]``) as
        mol/m**3 (c = rho_s / M); without it, a ``# molar_mass = 288.4 g/mol`` line of the file
        gives it (the caller's value wins, then one set by :func:`molar_mass_for_mass_columns`),
        else such a column is refused with that hint.

    Returns
    -------
    LabTable
        ``columns[name]`` in SI (a unit column times its unit's SI factor; an empty cell is
        NaN), ``units[name]`` the unit as written.

    Raises
    ------
    InputError
        Missing file or column, a missing or wrong unit, a malformed header cell, rows with
        more cells than the header, non-numeric cells (up to three per column listed with row
        and column, then a count; decimal commas in a ','-separated file in one line per
        column that names the fix), an empty table.

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp()
    >>> f = os.path.join(d, 'eu.csv')
    >>> _ = open(f, 'w').write('concentration [mM];tension [mN/m]\\n0,5;70,2\\n')
    >>> t = read_lab_csv(f, {'concentration': 'concentration', 'tension': 'tension'})
    >>> [round(float(t.columns['concentration'][0]), 12), round(float(t.columns['tension'][0]), 12)]
    [0.5, 0.0702]
    """
    p = Path(path)
    raw = read_regular(p, str(p), MAX_BYTES)
    if raw[:2] in (b"\xff\xfe", b"\xfe\xff"):  # spreadsheets' "Unicode text" export
        try:
            raw = raw.decode("utf-16").encode("utf-8")
        except UnicodeDecodeError as exc:
            raise InputError(f"{p}: starts as UTF-16 text but does not decode as UTF-16; "
                             "save it as CSV UTF-8") from exc
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        # spreadsheet exports on Windows are often cp1252 ('µm', '°C'); every byte decodes there
        try:
            text = raw.decode("cp1252")
        except UnicodeDecodeError as exc:
            raise InputError(f"{p}: cannot read as text (neither UTF-8 nor Windows-1252)") from exc
    sep = None
    lines = text.splitlines()
    first = next((i for i, line in enumerate(lines) if line.strip()), None)
    if first is not None:
        m = _SEP_LINE.match(lines[first])
        if m:  # a spreadsheet's 'sep=;' line names the separator and is not the header
            sep = m.group(1)
            text = "\n".join(lines[:first] + lines[first + 1:]) + "\n"
    if sep is None:
        sep = detect_separator(_header_line(text))
    if molar_mass is None:
        molar_mass = _MOLAR_MASS.get()
    if molar_mass is None:
        molar_mass = _file_molar_mass(text, p)
    width = max((line.count(sep) for line in text.splitlines()), default=0) + 1
    try:
        import pandas as pd  # deferred: pandas is heavy and only lab files need it

        grid = pd.read_csv(io.StringIO(text), sep=sep, header=None, names=range(width), dtype=str,
                           skip_blank_lines=True, comment="#", keep_default_na=False)
    except Exception as exc:
        raise InputError(f"{p}: cannot read as CSV ({str(exc)[:120]})") from exc
    grid = grid.fillna("")
    if grid.shape[0] == 0:
        raise InputError(f"{p}: no data rows below the header")
    header = [str(c) for c in grid.iloc[0]]
    ncols = max((j + 1 for j, c in enumerate(header) if c.strip()), default=0)
    body = grid.iloc[1:].reset_index(drop=True)
    if body.shape[0] == 0:
        raise InputError(f"{p}: no data rows below the header")
    if body.shape[0] > MAX_ROWS:
        raise InputError(f"{p}: {body.shape[0]} data rows; at most {MAX_ROWS} are accepted")

    problems: list[str] = []
    # rows with more cells than the header (often numbers split at a decimal comma)
    if ncols == 0:
        raise InputError(f"{p}: the header row is empty; expected cells like "
                         f"'{_example(dimensions) or 'tension [mN/m]'}'")
    extra = body.iloc[:, ncols:].map(str.strip).ne("").any(axis=1).to_numpy()
    if extra.any():
        rows = np.flatnonzero(extra)
        first = rows[0]
        cells = [str(c) for c in body.iloc[first].tolist()]
        while cells and not cells[-1].strip():
            cells.pop()
        more = f" ({len(rows)} rows like this)" if len(rows) > 1 else ""
        msg = (f"{p}: row {first + 2} has {len(cells)} cells but the header has {ncols} columns"
               f" separated by {_SEPARATOR_NAMES[sep]}{more}")
        sample = _split_decimal(cells) if sep == "," else None
        msg += f"; {_fix_hint(sample)}" if sample else "; expected one cell per header column"
        problems.append(msg)

    example = _example(dimensions)
    names: list[tuple[int, str, str, str]] = []  # (position, header cell, name, unit)
    seen: dict[str, str] = {}
    for j, cell in enumerate(header[:ncols]):
        if not cell.strip():
            if (body.iloc[:, j].str.strip() == "").all():
                continue  # an empty column (e.g. a trailing separator)
            cell = f"Unnamed: {j}"
        try:
            name, unit = split_header(cell, example)
        except InputError as exc:
            problems.append(f"{p}: {exc}")
            continue
        if name in seen:
            if name in dimensions or name in required:
                problems.append(f"{p}: columns {token(seen[name], MAX_HEADER)} and {token(cell, MAX_HEADER)} are both {token(name)}; "
                                "expected each column once")
                continue
            k = 1
            while f"{name}.{k}" in seen:
                k += 1
            name = f"{name}.{k}"  # a repeated free column, numbered as pandas numbers it
        seen[name] = cell
        names.append((j, cell, name, unit))
    if problems:
        raise InputError(problems=problems)

    columns: dict = {}
    units: dict = {}
    notes: list[str] = []
    present = [name for _, _, name, _ in names]  # found in the header, even with a problem
    for j, cell, name, unit in names:
        series = body.iloc[:, j].str.strip()
        if name in text_columns:
            columns[name] = series.to_numpy(dtype=object)
            units[name] = ""
            continue
        dim = dimensions.get(name)
        if dim and dim != "dimensionless" and not unit:
            problems.append(
                f"{p}: column {token(cell, MAX_HEADER)} has no unit; write it in brackets, e.g. "
                f"'{name if len(name) <= MAX_TOKEN else 'name'} [unit]'"
            )
            continue
        numbers = np.full(len(series), np.nan)
        bad: list[tuple[int, str]] = []
        comma: list[tuple[int, str]] = []
        infinite: list[tuple[int, str]] = []
        for i, cell_text in enumerate(series):
            if cell_text == "":
                continue
            if sep != "," and _DECIMAL_COMMA.match(cell_text):
                cell_text = cell_text.replace(",", ".")
            try:
                numbers[i] = float(cell_text)
            except ValueError:
                (comma if _DECIMAL_COMMA.match(cell_text) else bad).append((i, cell_text))
                continue
            if not np.isfinite(numbers[i]):  # 'nan', 'inf', '1e999': a number but not a value
                numbers[i] = np.nan
                infinite.append((i, cell_text))
        if comma:
            i, cell_text = comma[0]
            count = f" ({len(comma)} cells)" if len(comma) > 1 else ""
            problems.append(f"{p}: column {token(cell, MAX_HEADER)}, from row {i + 2}{count}: {_fix_hint(cell_text)}")
        for i, cell_text in bad[:_LISTED]:
            problems.append(f"{p}: row {i + 2}, column {token(cell, MAX_HEADER)}: {token(cell_text)} is not a number")
        if len(bad) > _LISTED:
            problems.append(f"{p}: column {token(cell, MAX_HEADER)}: ... and {len(bad) - _LISTED} more in this "
                            f"column (up to row {bad[-1][0] + 2}) that are not numbers")
        for i, cell_text in infinite[:_LISTED]:
            problems.append(f"{p}: row {i + 2}, column {token(cell, MAX_HEADER)}: {token(cell_text)} is not a "
                            "finite number; expected a measured value (leave the cell empty when there is none)")
        if len(infinite) > _LISTED:
            problems.append(f"{p}: column {token(cell, MAX_HEADER)}: ... and {len(infinite) - _LISTED} more "
                            "cells in this column that are not finite numbers")
        if comma or bad or infinite:
            continue
        values = numbers
        if dim == "dimensionless" and unit.strip() in ("-", "1"):  # 'fraction [-]': a plain number
            unit = ""
        if dim and unit:
            field = f"{p}: column {token(cell, MAX_HEADER)}"
            if len(unit) > MAX_TOKEN:
                problems.append(f"{field}: the unit text is {len(unit)} characters long; expected a "
                                "short unit such as 'mN/m' or 'um'")
                continue
            try:
                if dim == "temperature":  # offset units are affine: SI = t0 + x (t1 - t0), as a column
                    t0, t1 = parse(f"0 {unit}", field, dim), parse(f"1 {unit}", field, dim)
                    values = t0 + numbers * (t1 - t0)
                elif dim == "concentration":  # mol/m**3, or by mass (g/L) through the molar mass
                    values = numbers * _concentration_factor(unit, field, molar_mass, p)
                else:  # every other unit is a plain factor
                    values = numbers * parse(f"1 {unit}", field, dim)
            except InputError as exc:
                problems.append(str(exc))
                continue
            bad, odd = check_array(field, values, dim)
            problems += bad
            notes += odd
        columns[name] = values
        units[name] = unit
    missing = [c for c in required if c not in present]
    if missing:
        problems.append(
            f"{p}: missing column(s) {', '.join(missing)}; found {', '.join(c if len(c) <= MAX_TOKEN and c.isprintable() else token(c) for c in present) or 'none'}"
        )
    if problems:
        raise InputError(problems=problems)
    return LabTable(str(p), columns, units, tuple(notes))
