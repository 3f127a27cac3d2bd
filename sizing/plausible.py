"""Plausibility ranges of the magnitudes a user types or a lab file holds, in one place.

Each quantity has two ranges in SI: outside the *accepted* range a value is refused (an
:class:`~sizing.errors.InputError` naming the field, the value and the range), outside the
*usual* range it is accepted with a warning text.  The ranges are wide on purpose: they catch
slips (``25 K`` typed for 25 degC, a unit prefix lost, ``1e308``) and leave any real emulsion,
foam or lab series alone.  Only magnitudes are judged: signs and zeros are the caller's own
checks (a size class may start at 0, an oil concentration may be 0), so zero passes here
except for a temperature, which is absolute.

Cases and fits call the same :func:`check` (one value) or :func:`check_array` (a column), so a
case and a lab file get the same message for the same value.

References
----------
1. CRC Handbook of Chemistry and Physics, 97th ed., CRC Press (2016): densities of gases
   (hydrogen 0.08 kg/m**3 at 1 atm) to the densest elements (osmium 22,590 kg/m**3); surface
   tension of liquids up to mercury, 0.485 N/m [from memory].
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .errors import InputError


@dataclass(frozen=True)
class Range:
    """Accepted and usual ranges of one quantity, in SI, with the unit shown in messages.

    Attributes
    ----------
    accepted : (float, float)
        Outside: an error [SI].
    usual : (float, float)
        Outside (but accepted): a warning [SI].
    unit : str
        Unit shown in messages; ``scale`` converts SI to it (temperatures shown in K and degC).
    scale : float
    reason : str
        Why the range is what it is (shown in the message).
    """

    accepted: tuple
    usual: tuple
    unit: str
    scale: float
    reason: str


#: quantity (a key of sizing.units.DIMENSIONS, or a case's own name) -> its ranges
RANGES: dict[str, Range] = {
    "temperature": Range((173.15, 673.15), (253.15, 423.15), "K", 1.0,
                         "emulsions and foams are made between about -20 and 150 degC"),
    "density": Range((0.01, 3.0e4), (0.05, 3.0e3), "kg/m**3", 1.0,
                     "from a light gas (about 0.1 kg/m**3) to the densest liquids"),
    "volume": Range((1e-12, 1e6), (1e-7, 1e4), "m**3", 1.0,
                    "from a drop of sample (1 uL = 1e-9 m**3) to the largest process tanks"),
    "mass": Range((1e-9, 1e9), (1e-4, 1e7), "kg", 1.0,
                  "from a lab sample to the largest process batches"),
    "molar_mass": Range((0.01, 1e4), (0.1, 1e3), "g/mol", 1e3,
                        "surfactants run from about 150 g/mol to polymers and proteins of about 10**6 g/mol"),
    "concentration": Range((1e-15, 1e5), (1e-9, 1e4), "mM", 1.0,
                           "an assay reads down to about 1e-9 mM; no solution holds more than about 1e4 mM "
                           "(pure water is 5.5e4 mM)"),
    "length": Range((1e-10, 1e4), (1e-9, 100.0), "m", 1.0,
                    "from molecular sizes to the largest process vessels"),
    "drop_size": Range((1e-9, 0.1), (1e-8, 1e-2), "um", 1e6,
                       "drops and bubbles run from about 10 nm to a few mm"),
    "tension": Range((1e-7, 1.0), (1e-5, 0.1), "mN/m", 1e3,
                     "interfacial tensions run from ultralow (1e-3 mN/m) to water against air "
                     "(72 mN/m); mercury, the highest liquid, is 485 mN/m"),
    "surface_excess": Range((1e-10, 1e-3), (1e-7, 2e-5), "umol/m**2", 1e6,
                            "a packed monolayer holds about 1 to 10 umol/m**2"),
    "amount": Range((1e-15, 1e9), (1e-12, 1e7), "mol", 1.0,
                    "from a lab dose to the largest process batches"),
    "area": Range((1e-12, 1e12), (1e-8, 1e10), "m**2", 1.0,
                  "interfacial areas of lab samples and plant batches"),
}


def _shown(value: float, r: Range, quantity: str) -> str:
    if quantity == "temperature":
        return f"{value:.6g} K ({value - 273.15:.6g} degC)"
    return f"{value * r.scale:.4g} {r.unit}"


def _range_text(lo: float, hi: float, r: Range, quantity: str) -> str:
    if quantity == "temperature":
        return f"{lo - 273.15:.4g} to {hi - 273.15:.4g} degC"
    return f"{lo * r.scale:.3g} to {hi * r.scale:.3g} {r.unit}"


def _hint(value: float, quantity: str) -> str:
    """A likely slip behind an implausible value (a temperature in K typed for degC and back)."""
    if quantity == "temperature":
        lo, hi = RANGES["temperature"].usual
        if value < lo and lo <= value + 273.15 <= hi:
            return f"; did you mean '{value:.6g} degC'?"
        if value > hi and lo <= value - 273.15 <= hi:
            return f"; did you mean '{value - 273.15:.6g} degC' (that is, '{value - 273.15:.6g} K' as written)?"
    return ""


def check(field: str, value_si: float, quantity: str) -> str | None:
    """Refuse a value outside the accepted range; return a warning text outside the usual one.

    Parameters
    ----------
    field : str
        Named in the message (a TOML path such as ``batch.temperature``, an option, or
        ``file: row 3, column 'tension [mN/m]'``).
    value_si : float
        The value in SI.
    quantity : str
        A key of :data:`RANGES` (a dimension of :data:`sizing.units.DIMENSIONS`, or
        ``drop_size`` for a drop or bubble diameter); other quantities pass unchecked.

    Returns
    -------
    str or None
        A warning text (starting with the field) or None.

    Raises
    ------
    InputError
        A non-finite value, or one outside the accepted range.

    Examples
    --------
    >>> check("batch.temperature", 298.15, "temperature") is None
    True
    >>> try:
    ...     check("batch.temperature", 25.0, "temperature")
    ... except InputError as e:
    ...     print(e)  # doctest: +ELLIPSIS
    batch.temperature: 25 K (-248.15 degC) is outside the accepted range ... did you mean '25 degC'?
    >>> check("batch.continuous_density", 13534.0, "density")  # doctest: +ELLIPSIS
    'batch.continuous_density: 1.353e+04 kg/m**3 is outside the usual range ...'
    """
    r = RANGES.get(quantity)
    v = float(value_si)
    if not math.isfinite(v):
        raise InputError(f"{field}: {v!r} is not a finite number; expected a measured value")
    if r is None or (v == 0 and quantity != "temperature"):
        return None
    mag = v if quantity == "temperature" else abs(v)
    lo, hi = r.accepted
    if not lo <= mag <= hi:
        raise InputError(f"{field}: {_shown(v, r, quantity)} is outside the accepted range for a "
                         f"{quantity.replace('_', ' ')}, {_range_text(lo, hi, r, quantity)} "
                         f"({r.reason}){_hint(v, quantity)}")
    lo, hi = r.usual
    if not lo <= mag <= hi:
        return (f"{field}: {_shown(v, r, quantity)} is outside the usual range for a "
                f"{quantity.replace('_', ' ')}, {_range_text(lo, hi, r, quantity)} "
                f"({r.reason}){_hint(v, quantity)}; check the value and its unit")
    return None


def check_array(field: str, values, quantity: str, *, row_offset: int = 2,
                listed: int = 3) -> tuple[list[str], list[str]]:
    """Judge a column at once: return ``(problems, warnings)`` naming the rows.

    Parameters
    ----------
    field : str
        The file and column, e.g. ``"runs.csv: column 'dose [umol]'"``; rows are added as
        ``"<file>: row 4, column ..."`` when ``field`` has the form ``"<file>: column ..."``.
    values : array_like
        SI values; NaN (an empty cell) and zeros pass.
    quantity : str
        A key of :data:`RANGES` (other quantities: nothing to judge).
    row_offset : int
        Added to the index to name a row (2: a CSV's first data row under its header).
    listed : int
        Rows listed one by one before a count.

    Returns
    -------
    (list of str, list of str)
        Errors (first ``listed`` rows outside the accepted range, then a count) and at most one
        warning for the rows outside the usual range.

    Examples
    --------
    >>> check_array("f.csv: column 'c [mM]'", [1.0, 1e308, 0.0], "concentration")[0]  # doctest: +ELLIPSIS
    ["f.csv: row 3, column 'c [mM]': 1e+308 mM is outside the accepted range ..."]
    """
    r = RANGES.get(quantity)
    v = np.asarray(values, dtype=float).ravel()
    if r is None or v.size == 0:
        return [], []
    mag = v if quantity == "temperature" else np.abs(v)
    judged = np.isfinite(v) & ((v != 0) | (quantity == "temperature"))
    head, sep, col = field.partition(": column ")

    def at(i):
        return f"{head}: row {i + row_offset}, column {col}" if sep else f"{field}, row {i + row_offset}"

    problems: list[str] = []
    bad = np.flatnonzero(judged & ((mag < r.accepted[0]) | (mag > r.accepted[1])))
    for i in bad[:listed]:
        try:
            check(at(int(i)), float(v[i]), quantity)
        except InputError as exc:
            problems.append(str(exc))
    if bad.size > listed:
        problems.append(f"{field}: ... and {bad.size - listed} more row(s) outside the accepted range")
    warnings: list[str] = []
    odd = np.flatnonzero(judged & ((mag < r.usual[0]) | (mag > r.usual[1]))
                         & (mag >= r.accepted[0]) & (mag <= r.accepted[1]))
    if odd.size:
        first = check(at(int(odd[0])), float(v[odd[0]]), quantity) or ""
        more = f" (and {odd.size - 1} more row(s))" if odd.size > 1 else ""
        warnings.append(first.replace("; check the value", f"{more}; check the value", 1))
    return problems, warnings


def _values(obj, path: str):
    """Yield ``(path, value)`` for every quantity (an object with ``si`` and ``dimension``) in a
    nested model of sections, lists and dicts (a validated case; nothing here knows its schema)."""
    if hasattr(obj, "si") and hasattr(obj, "dimension"):
        yield path, obj
        return
    if isinstance(obj, (list, tuple)):
        for i, item in enumerate(obj):
            yield from _values(item, f"{path}[{i}]")
        return
    if isinstance(obj, dict):
        for k, item in obj.items():
            yield from _values(item, f"{path}.{k}" if path else str(k))
        return
    fields = getattr(type(obj), "model_fields", None)  # a pydantic section
    if fields:
        for name in fields:
            yield from _values(getattr(obj, name, None), f"{path}.{name}" if path else name)


#: field names (the last part of a case's path) that hold a drop or bubble diameter
DROP_FIELDS = frozenset({"d32", "d10", "d43", "dv10", "dv50", "dv90", "median", "characteristic_size"})


def quantity_of(path: str, dimension: str) -> str:
    """Return the quantity judged for a field: ``drop_size`` for a drop diameter, else its dimension.

    >>> quantity_of("drops.d32", "length"), quantity_of("scaleup.plant_diameter", "length")
    ('drop_size', 'length')
    """
    last = path.rsplit(".", 1)[-1].split("[", 1)[0]
    return "drop_size" if dimension == "length" and last in DROP_FIELDS else dimension


def values_of(model):
    """Yield ``(path, quantity)`` for every quantity in a validated case (see :func:`model_warnings`)."""
    yield from _values(model, "")


def model_warnings(model) -> list[str]:
    """Return the warning of every quantity in ``model`` outside its usual range (one per field).

    ``model`` is a validated case (or any section): quantities are found by their ``si`` and
    ``dimension`` attributes, named by their path (``batch.temperature``).  A drop diameter is
    judged as a ``drop_size`` (:func:`quantity_of`): one that passed the validator's range for a
    length but not the accepted range of a drop is reported here too.

    Examples
    --------
    >>> from types import SimpleNamespace as V
    >>> model_warnings({"batch": {"continuous_density": V(si=13534.0, dimension="density")}})  # doctest: +ELLIPSIS
    ['batch.continuous_density: 1.353e+04 kg/m**3 is outside the usual range ...']
    """
    out = []
    for path, v in _values(model, ""):
        try:
            w = check(path, v.si, quantity_of(path, v.dimension))
        except InputError as exc:  # passed its dimension's range, not the field's: say so
            w = str(exc)
        if w:
            out.append(w)
    return out
