"""Units at the boundary: one pint registry, unit strings to SI floats and back.

The engine works in SI floats (m, m**2, m**3, mol, mol/m**3, mol/m**2, K, N/m, kg, s).
Case files, CSV headers, CLI options and UI fields carry units as text; this module is the
only place that parses them.  Offset temperatures (``"25 degC"``) are handled by splitting
the number from the unit before building the quantity.  A decimal comma is read where it can
mean nothing else (``"2,1 m**3"``); a number a thousands separator could have written
(``"1,234 kg"``, ``"1,234.5 kg"``, ``"1 234 kg"``) is refused, and so is a text longer than
:data:`MAX_TEXT` characters, before pint sees it.
"""

from __future__ import annotations

import math
import re
from functools import lru_cache

import pint

from .errors import InputError

# Dimension name -> (pint dimensionality string, SI unit, an accepted spelling for messages)
DIMENSIONS: dict[str, tuple[str, str, str]] = {
    "length": ("[length]", "m", "'2.4 um'"),
    "area": ("[length] ** 2", "m**2", "'0.5 nm**2'"),
    "volume": ("[length] ** 3", "m**3", "'2 m**3' or '500 L'"),
    "mass": ("[mass]", "kg", "'12 kg'"),
    "amount": ("[substance]", "mol", "'40 mol'"),
    "concentration": ("[substance] / [length] ** 3", "mol/m**3", "'8.2 mM' or '8.2 mol/m**3'"),
    "surface_excess": ("[substance] / [length] ** 2", "mol/m**2", "'3.3 umol/m**2'"),
    "surface_load": ("[mass] / [length] ** 2", "kg/m**2", "'2 mg/m**2'"),
    "molar_mass": ("[mass] / [substance]", "kg/mol", "'288.4 g/mol'"),
    "density": ("[mass] / [length] ** 3", "kg/m**3", "'997 kg/m**3'"),
    "temperature": ("[temperature]", "K", "'25 degC' or '298.15 K'"),
    "tension": ("[mass] / [time] ** 2", "N/m", "'52 mN/m'"),
    "adsorption_constant": ("[length] ** 3 / [substance]", "m**3/mol", "'0.85 m**3/mol' or '850 L/mol'"),
    "time": ("[time]", "s", "'0.5 s'"),
    "pressure": ("[mass] / [length] / [time] ** 2", "Pa", "'50 MPa' or '500 bar'"),
    "energy_density": ("[mass] / [length] / [time] ** 2", "J/m**3", "'5e7 J/m**3'"),
    "speed": ("[length] / [time]", "m/s", "'12 m/s'"),
    "frequency": ("1 / [time]", "1/s", "'300 rpm' or '5 1/s'"),
    "power_per_volume": ("[mass] / [length] / [time] ** 3", "W/m**3", "'2 kW/m**3'"),
    "diffusivity": ("[length] ** 2 / [time]", "m**2/s", "'5e-10 m**2/s'"),
    "price": ("1 / [mass]", "1/kg", "'3.2 1/kg' (currency per kg)"),
    "molar_energy": ("[mass] * [length] ** 2 / [time] ** 2 / [substance]", "J/mol", "'12 kJ/mol'"),
    "dimensionless": ("", "", "a plain number"),
}

# A number (with a decimal point, or one decimal comma between digits) and the unit after it.
# Group 1 is the number as written, group 2 the unit; ``views`` reads group 2 as the unit.
_NUMBER = re.compile(
    r"^\s*([-+]?(?:\d+,\d+|\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$"
)

#: Longest value text read (number and unit); longer text is refused before pint sees it.
MAX_TEXT = 200

# A comma number that a thousands separator could have written ("1,234", "12,500"): refused.
_THOUSANDS_LIKE = re.compile(r"^[-+]?[1-9]\d{0,2},\d{3}(?:[eE]|$)")
# What may follow the number but is a separator, not a unit: ",5", ".567", "_234", "'234", "234 kg"
_SEPARATOR_AFTER = re.compile(r"^(?:[,.'\u2019_]\s*\d|(?!\d+\s*/)\d)")
_POINT_HINT = "use a decimal point, e.g. 2.1, and no thousands separators, e.g. 1234"


class NumberFormatError(InputError):
    """The number in a value's text is written so that it cannot be read safely.

    A decimal comma a thousands separator could have written, digit groups, or a comma in the
    unit.  A caller that tries several dimensions in turn re-raises this one unchanged, so the
    user sees the hint to use a decimal point.
    """


@lru_cache(maxsize=1)
def registry():
    """Return the package's pint registry (built once, set as the application registry)."""
    try:
        ureg = pint.UnitRegistry(cache_folder=":auto:")
    except Exception:  # pragma: no cover - cache folder not writable
        ureg = pint.UnitRegistry()
    ureg.define("molar_mM = millimole / liter = mM")  # mM as millimolar, not megamolar
    ureg.define("micromolar = micromole / liter = uM")
    ureg.define("rev_per_min = 1 / minute = rpm")  # a stirrer speed in revolutions, not radians
    pint.set_application_registry(ureg)
    return ureg


def _clean(unit: str) -> str:
    u = unit.strip().replace("^", "**").replace("µ", "u").replace("μ", "u")
    # common shorthand that pint reads differently
    u = re.sub(r"\bm2\b", "m**2", u)
    u = re.sub(r"\bm3\b", "m**3", u)
    u = re.sub(r"\b(\w*m)2\b", r"\1**2", u)
    u = re.sub(r"\b(\w*m)3\b", r"\1**3", u)
    return u


# What may follow "**": a plain number ("3", "-2", "0.5") or one in brackets ("(1/2)"), and no
# further "**".  A tower such as "m**9**9**9" would have pint build a huge integer (a hang).
_EXPONENT = re.compile(r"\s*(?:[-+]?\d+(?:\.\d*)?|\(\s*[-+]?\d+(?:\.\d*)?(?:\s*/\s*\d+)?\s*\))(?!\s*\*\*)")


def _plain_exponents(unit: str) -> bool:
    """Return True when every ``**`` in the (cleaned) unit is followed by a plain number."""
    return all(_EXPONENT.match(unit, m.end()) for m in re.finditer(r"\*\*", unit))


def parse(text, field: str, dimension: str, *, allow_bare: bool = False) -> float:
    """Parse a quantity given as text (``"2.4 um"``) into a float in SI units.

    Parameters
    ----------
    text : str or float
        The value with its unit.  A bare number is accepted only for a dimensionless field or
        when ``allow_bare`` is true (it is then read as already in SI).  One comma between
        digits is a decimal comma (``"2,1 m**3"``) unless a thousands separator could have
        written it (one to three digits, a comma, exactly three digits: ``"1,234"``).
    field : str
        The field's name, used in error messages (e.g. ``"drops.d32"``).
    dimension : str
        A key of :data:`DIMENSIONS`.

    Returns
    -------
    float
        The value in the SI unit of that dimension.

    Raises
    ------
    InputError
        For an unknown unit, a wrong dimension, a bare number where a unit is needed, an
        ambiguous separator, a text longer than :data:`MAX_TEXT` or a value that overflows in SI.

    Examples
    --------
    >>> round(parse("8.2 mM", "surfactant.cmc", "concentration"), 12)
    8.2
    >>> round(parse("25 degC", "batch.temperature", "temperature"), 10)
    298.15
    """
    dim, si_unit, example = DIMENSIONS[dimension]
    what = dimension.replace("_", " ")
    if isinstance(text, bool):
        raise InputError(f"{field}: expected a {what} such as {example}, got {text!r}")
    if isinstance(text, (int, float)):
        if dimension == "dimensionless" or allow_bare:
            value = float(text)
            if not math.isfinite(value):
                raise InputError(f"{field}: expected a finite number, got {text!r}")
            return value
        raise InputError(
            f"{field}: a bare number {text!r} has no unit; expected a {what} such as {example}"
        )
    if not isinstance(text, str):
        raise InputError(f"{field}: expected a {what} such as {example}, got {text!r}")
    if len(text) > MAX_TEXT:
        raise InputError(
            f"{field}: a text of {len(text)} characters starting {text[:24]!r} is too long; "
            f"expected a {what} such as {example} (at most {MAX_TEXT} characters)"
        )
    m = _NUMBER.match(text)
    if not m:
        if "," in text:
            raise NumberFormatError(f"{field}: cannot read the number in {text!r}; {_POINT_HINT}")
        raise InputError(f"{field}: expected a number and a unit such as {example}, got {text!r}")
    number_text, unit = m.group(1), m.group(2)
    if _THOUSANDS_LIKE.match(number_text):
        raise NumberFormatError(
            f"{field}: {text!r} is ambiguous (a decimal comma or a thousands separator?); {_POINT_HINT}"
        )
    if _SEPARATOR_AFTER.match(unit):
        raise NumberFormatError(f"{field}: cannot read the number in {text!r}; {_POINT_HINT}")
    if "," in unit:  # pint would drop it ("m**3,5" -> m**35)
        raise NumberFormatError(f"{field}: a comma in the unit of {text!r}; {_POINT_HINT}")
    number = float(number_text.replace(",", "."))
    if not math.isfinite(number):
        raise InputError(f"{field}: expected a finite number, got {text!r}")
    if unit == "":
        if dimension == "dimensionless" or allow_bare:
            return number
        raise InputError(f"{field}: {text!r} has no unit; expected a {what} such as {example}")
    if dimension == "dimensionless" and unit == "%":
        return number / 100.0
    ureg = registry()
    cleaned = _clean(unit)
    if not _plain_exponents(cleaned):
        raise InputError(
            f"{field}: in {text!r} an exponent is not a plain number; write one power per unit, "
            f"e.g. 'm**3' or 'm**-2'; expected a {what} such as {example}"
        )
    try:
        unit_obj = ureg.parse_units(cleaned)
    except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError, ValueError,
            AttributeError, TypeError, AssertionError) as exc:
        raise InputError(
            f"{field}: unknown unit {unit!r} in {text!r}; expected a {what} such as {example}"
        ) from exc
    except Exception as exc:  # pint raises a few other kinds for odd text
        raise InputError(
            f"{field}: cannot read the unit {unit!r} in {text!r}; expected a {what} such as {example}"
        ) from exc
    q = ureg.Quantity(number, unit_obj)
    if dimension == "dimensionless":
        if not q.dimensionless:
            raise InputError(f"{field}: expected a plain number, got {text!r}")
        return _finite(q.to("dimensionless").magnitude, field, text, what)
    if q.dimensionality != ureg.get_dimensionality(dim):
        raise InputError(
            f"{field}: {text!r} is not a {what}; expected a {what} such as {example}"
        )
    return _finite(q.to(si_unit).magnitude, field, text, what)


def _finite(magnitude, field: str, text: str, what: str) -> float:
    """Return the converted magnitude as a float, refusing one that overflowed to inf or nan."""
    value = float(magnitude)
    if not math.isfinite(value):
        raise InputError(f"{field}: {text!r} is out of range as a {what} (not a finite number in SI)")
    return value


def parse_value(text, dimension: str, *, allow_bare: bool = False) -> float:
    """Parse like :func:`parse` but raise ``ValueError`` with a message that has no field name.

    For validators (pydantic adds the field's location itself).
    """
    try:
        return parse(text, "\x00", dimension, allow_bare=allow_bare)
    except InputError as exc:
        raise ValueError(str(exc).replace("\x00: ", "")) from None


def format_si(value: float, dimension: str, unit: str | None = None, digits: int = 4) -> str:
    """Format an SI float as text with a unit (``unit`` chosen by the caller or the SI one).

    >>> format_si(2.4e-6, "length", "um")
    '2.4 um'
    """
    _, si_unit, _ = DIMENSIONS[dimension]
    if unit is None or unit == si_unit:
        mag = value
        unit = si_unit
    elif dimension == "temperature" and unit == "degC":
        mag = value - 273.15
    else:
        ureg = registry()
        mag = ureg.Quantity(value, si_unit).to(unit).magnitude
    return f"{sig(mag, digits)} {unit}".strip()


def sig(x: float, digits: int = 4) -> str:
    """Return ``x`` as text with ``digits`` significant figures (no trailing zeros).

    >>> sig(0.000123456, 3)
    '0.000123'
    """
    if x is None:
        return "n/a"
    x = float(x)
    if x == 0 or not math.isfinite(x):
        return f"{x:g}"
    return f"{x:.{digits}g}"


def to_text(value: float, unit: str, dimension: str, digits: int = 12) -> str:
    """Write an SI value back as a unit string rounded to ``digits`` significant figures."""
    return format_si(value, dimension, unit, digits)
