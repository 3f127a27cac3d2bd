"""Case files: the TOML schema (pydantic v2), reading, writing and the flat table of SI values.

A case is validated once, at the boundary: every quantity is a unit string (``"2.4 um"``),
checked for its dimension and range and converted to SI.  A numeric value may instead carry a
spread for the Monte Carlo, ``{ value = "2.4 um", rel_sd = 0.15 }`` (log-normal with that
coefficient of variation) or ``{ value = "2.4 um", low = "2 um", high = "3 um" }`` (uniform).

Every problem is reported at once, one line each, naming the TOML path::

    - drops.d32: Input should be greater than 0 (got '-2.0 um')
    - surfactant.cmx: unknown key; did you mean 'cmc'?

:meth:`Case.values` flattens the case into ``{"drops.d32": 2.4e-6, ...}`` (SI floats).  The
orchestrating layer (:mod:`sizing.model`) builds the engine inputs from such a table, so a sweep
or a Monte Carlo run only replaces some entries by arrays.
"""

from __future__ import annotations

import copy
import dataclasses
import difflib
import math
import re
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Annotated, Any, Literal

import numpy as np
import tomli_w
from pydantic import BaseModel, BeforeValidator, ConfigDict, Field, ValidationError, model_validator

from . import plausible
from .constants import AVOGADRO, SHAPE_FACTORS
from .errors import InputError
from .files import inside, read_regular, token
from .labcsv import read_lab_csv
from .physics import distribution
from .physics.dropsize import RULES, VARIABLES
from .physics.isotherm import MODELS
from .texts import ADSORPTION_CONSTANT_HINT
from .units import DIMENSIONS, parse_value

# ---------------------------------------------------------------------------------------------
# quantities with units and optional spreads


@dataclass(frozen=True)
class Value:
    """A validated quantity: ``si`` in SI units, ``raw`` as written, an optional spread.

    ``spread`` is None, ``("lognormal", rel_sd)`` or ``("uniform", low_si, high_si)``.
    """

    si: float
    raw: Any
    dimension: str
    spread: tuple | None = None

    def __float__(self) -> float:
        return self.si


def _check_range(x: float, gt=None, ge=None, lt=None, le=None) -> str | None:
    if gt is not None and not x > gt:
        return f"greater than {gt:g}"
    if ge is not None and not x >= ge:
        return f"at least {ge:g}"
    if lt is not None and not x < lt:
        return f"less than {lt:g}"
    if le is not None and not x <= le:
        return f"at most {le:g}"
    return None


def _quantity(dimensions: tuple[str, ...], gt=None, ge=None, lt=None, le=None, si_scale=None):
    """Build a before-validator for a quantity of one of ``dimensions``."""

    def bounds_text() -> str:
        parts = []
        if gt is not None:
            parts.append(f"> {gt:g}")
        if ge is not None:
            parts.append(f">= {ge:g}")
        if lt is not None:
            parts.append(f"< {lt:g}")
        if le is not None:
            parts.append(f"<= {le:g}")
        return " and ".join(parts)

    def one(text) -> tuple[float, str]:
        errors = []
        for dim in dimensions:
            try:
                return parse_value(text, dim), dim
            except ValueError as exc:
                errors.append(str(exc))
        if len(dimensions) > 1:
            names = " or ".join(d.replace("_", " ") for d in dimensions)
            examples = " or ".join(DIMENSIONS[d][2] for d in dimensions)
            raise ValueError(f"expected a {names} such as {examples}, got {text!r}")
        raise ValueError(errors[0])

    def check(si: float, text, dim) -> None:
        unit_si = DIMENSIONS[dim][1]
        problem = _check_range(si, gt, ge, lt, le)
        if problem:
            shown = f" ({si:g} {unit_si})" if unit_si and not isinstance(text, (int, float)) else ""
            raise ValueError(f"expected a value {bounds_text()}{' ' + unit_si if unit_si else ''}, "
                             f"got {text!r}{shown}")
        if dim not in ("surface_excess", "area"):  # _check_packing names these slips better
            try:  # plausibility (sizing.plausible): the same ranges as the lab files and fits
                plausible.check("\x00", si, dim)
            except InputError as exc:
                raise ValueError(str(exc).replace("\x00: ", "", 1)) from None

    def validate(v):
        if isinstance(v, Value):
            return v
        if isinstance(v, dict):
            keys = set(v)
            if "value" not in keys:
                raise ValueError(
                    f"a table value needs 'value' and either 'rel_sd' or 'low' and 'high', got {v!r}"
                )
            unknown = keys - {"value", "rel_sd", "low", "high"}
            if unknown:
                raise ValueError(
                    f"unknown spread key(s) {', '.join(sorted(unknown))}; expected rel_sd, or low and high"
                )
            si, dim = one(v["value"])
            check(si, v["value"], dim)
            if "rel_sd" in keys:
                if keys & {"low", "high"}:
                    raise ValueError("give either rel_sd or low and high, not both")
                rel = v["rel_sd"]
                if isinstance(rel, bool) or not isinstance(rel, (int, float)) or not (0 <= rel <= 3):
                    raise ValueError(f"rel_sd: expected a number from 0 to 3 (a coefficient of variation), got {rel!r}")
                return Value(si, v, dim, ("lognormal", float(rel)))
            if not {"low", "high"} <= keys:
                raise ValueError(f"a uniform spread needs both 'low' and 'high', got {v!r}")
            lo, dlo = one(v["low"])
            hi, dhi = one(v["high"])
            if dlo != dim or dhi != dim:
                raise ValueError("low, value and high must have the same kind of unit")
            check(lo, v["low"], dim)
            check(hi, v["high"], dim)
            if not lo <= si <= hi or not lo < hi:
                raise ValueError(f"expected low < high with value between them, got low={v['low']!r}, "
                                 f"value={v['value']!r}, high={v['high']!r}")
            return Value(si, v, dim, ("uniform", lo, hi))
        si, dim = one(v)
        check(si, v, dim)
        return Value(si, v, dim)

    return BeforeValidator(validate)


def Q(*dimensions: str, **bounds):  # noqa: N802 - reads like a type
    """Annotated type of a quantity field (``Q("length", gt=0)``)."""
    return Annotated[Value, _quantity(dimensions, **bounds)]


Length = Q("length", gt=0)
Fraction01 = Q("dimensionless", gt=0, lt=1)
PositiveNumber = Q("dimensionless", gt=0)


def _shape_factor(v):
    if isinstance(v, str) and v.strip().lower() in SHAPE_FACTORS:
        return Value(SHAPE_FACTORS[v.strip().lower()], v, "dimensionless")
    if isinstance(v, str):
        try:
            float(v)
        except ValueError:
            raise ValueError(
                f"expected a number >= 1 or one of {', '.join(SHAPE_FACTORS)}, got {v!r}"
            ) from None
    return v


# before-validators run last-first: the name lookup must come after (so run before) the number check
ShapeFactor = Annotated[Value, _quantity(("dimensionless",), ge=1, le=2), BeforeValidator(_shape_factor)]


# ---------------------------------------------------------------------------------------------
# the [scaleup] section's rules (called by Scaleup)


def point_x(point, variable: str, where: str) -> float:
    """Return the process variable of a lab point [SI]."""
    if variable == "tip_speed":
        if point.tip_speed is not None:
            if point.speed is not None:
                raise ValueError(f"{where}: give tip_speed or speed with diameter, not both")
            return point.tip_speed.si
        if point.speed is None or point.diameter is None:
            raise ValueError(f"{where}: variable = 'tip_speed' needs tip_speed (e.g. '12 m/s') or speed "
                             "(e.g. '3000 rpm') with diameter (e.g. '5 cm')")
        return math.pi * point.speed.si * point.diameter.si
    v = getattr(point, variable)
    if v is None:
        raise ValueError(f"{where}: variable = {variable!r} needs {variable} in every lab point")
    return v.si


def check_section(s) -> None:
    """Check that a ``[scaleup]`` section is complete for its method (raises ValueError)."""
    if s.method == "power_law":
        stray = [k for k in ("rule", "lab_diameter", "lab_speed", "plant_speed") if getattr(s, k) is not None]
        if stray:
            raise ValueError(f"method = 'power_law' does not use {', '.join(stray)} (stirred_tank keys)")
        if s.variable is None:
            raise ValueError(f"method = 'power_law' needs variable, one of {', '.join(VARIABLES)}")
        if not s.points:
            raise ValueError("method = 'power_law' needs points, e.g. points = [{ pressure = '300 bar', "
                             "d32 = '1.8 um' }, ...] (one or more lab homogenisations)")
        xs = [point_x(p, s.variable, f"points[{i}]") for i, p in enumerate(s.points)]
        for i, p in enumerate(s.points):
            others = [k for k in VARIABLES if k != s.variable and getattr(p, k) is not None]
            if s.variable != "tip_speed" and (p.speed is not None or p.diameter is not None):
                others += [k for k in ("speed", "diameter") if getattr(p, k) is not None]
            if others:
                raise ValueError(f"points[{i}]: variable = {s.variable!r}; remove {', '.join(others)}")
        if len(s.points) >= 2 and len(set(xs)) < 2 and s.exponent is None:
            raise ValueError(f"points: all lab points have the same {s.variable}; a fit of the exponent "
                             "needs two different values (or give exponent)")
        if s.plant is None:
            raise ValueError(f"method = 'power_law' needs plant, the plant's {s.variable} "
                             f"(e.g. {_example(s.variable)})")
        want = {"pressure": ("pressure",), "energy_density": ("pressure",), "tip_speed": ("speed", "frequency")}
        if s.plant.dimension not in want[s.variable]:
            raise ValueError(f"plant: expected the plant's {s.variable} such as {_example(s.variable)}, "
                             f"got {s.plant.raw!r}")
        if s.plant.dimension == "frequency" and s.plant_diameter is None:
            raise ValueError("plant: a stirrer or rotor speed needs plant_diameter (e.g. '0.3 m') to give "
                             "the tip speed pi N D")
        if s.plant.dimension != "frequency" and s.plant_diameter is not None:
            raise ValueError("plant_diameter: only used when plant is a speed in rpm or 1/s")
        return
    stray = [k for k in ("variable", "plant", "exponent") if getattr(s, k) is not None]
    if s.points:
        stray.append("points")
    if stray:
        raise ValueError(f"method = 'stirred_tank' does not use {', '.join(stray)} (power_law keys)")
    missing = [k for k in ("lab_diameter", "lab_speed", "plant_diameter", "rule") if getattr(s, k) is None]
    if missing:
        raise ValueError(f"method = 'stirred_tank' needs {', '.join(missing)} (impeller diameters, the lab "
                         f"speed and a rule, one of {', '.join(RULES)})")
    if (s.rule == "given_speed") != (s.plant_speed is not None):
        raise ValueError("plant_speed is needed with rule = 'given_speed' and only then")


def _example(variable: str) -> str:
    return {"pressure": "'600 bar'", "energy_density": "'6e7 J/m**3'",
            "tip_speed": "'20 m/s' or plant = '1500 rpm' with plant_diameter"}[variable]


class Section(BaseModel):
    model_config = ConfigDict(extra="forbid", arbitrary_types_allowed=True, frozen=True,
                              populate_by_name=True)


# ---------------------------------------------------------------------------------------------
# sections


class CaseInfo(Section):
    title: str = Field(min_length=1)
    system: Literal["emulsion", "foam"]
    continuous: Literal["water", "oil"] = "water"
    notes: str | None = None

    @model_validator(mode="after")
    def _foam_water(self):
        if self.system == "foam" and self.continuous != "water":
            raise ValueError("a foam's continuous phase is always water; remove case.continuous or set 'water'")
        return self


class Batch(Section):
    volume: Q("volume", gt=0) | None = None
    mass: Q("mass", gt=0) | None = None
    dispersed_fraction: Fraction01 | None = None  # the VOLUME fraction phi of drops or bubbles
    dispersed_mass_fraction: Fraction01 | None = None  # a recipe's share by mass, turned into phi
    temperature: Q("temperature", gt=0) = Field(default_factory=lambda: Value(298.15, "25 degC", "temperature"))
    continuous_density: Q("density", gt=0) | None = None
    dispersed_density: Q("density", gt=0) | None = None
    salt: Q("concentration", ge=0) = Field(default_factory=lambda: Value(0.0, "0 mM", "concentration"))
    storage_temperature: Q("temperature", gt=0) | None = None

    @model_validator(mode="after")
    def _size(self):
        if (self.volume is None) == (self.mass is None):
            raise ValueError("give the batch size as exactly one of volume (e.g. '2 m**3') or mass (e.g. '2000 kg')")
        if self.mass is not None and (self.continuous_density is None or self.dispersed_density is None):
            raise ValueError("a batch given by mass needs continuous_density and dispersed_density")
        given = [k for k in ("dispersed_fraction", "dispersed_mass_fraction") if getattr(self, k) is not None]
        if len(given) != 1:
            raise ValueError(_FRACTION_CHOICE.format(given=", ".join(given) if given else "none"))
        w = self.dispersed_mass_fraction
        if w is not None:
            example = {"dispersed_density": "dispersed_density (e.g. '850 kg/m**3' for an oil)",
                       "continuous_density": "continuous_density (e.g. '997 kg/m**3' for water)"}
            missing = [example[k] for k in example if getattr(self, k) is None]
            if missing:
                raise ValueError(f"dispersed_mass_fraction: {w.raw!r} is a mass fraction; turning it into the "
                                 f"volume fraction phi needs {' and '.join(missing)}")
            if w.spread is not None:
                raise ValueError(f"dispersed_mass_fraction: a spread is not converted to the volume fraction; "
                                 f"give the spread on dispersed_fraction (the volume fraction phi), got {w.raw!r}")
            phi = volume_fraction(w.si, self.dispersed_density.si, self.continuous_density.si)
            object.__setattr__(self, "dispersed_fraction", Value(phi, w.raw, "dimensionless"))
        return self


_FRACTION_CHOICE = ("give the share of the dispersed phase as exactly one of dispersed_fraction (the VOLUME "
                    "fraction phi of drops or bubbles, e.g. 0.2) or dispersed_mass_fraction (the mass fraction "
                    "of a recipe, e.g. 0.3, with continuous_density and dispersed_density); got {given}")


def volume_fraction(mass_fraction: float, dispersed_density: float, continuous_density: float) -> float:
    """Return the volume fraction phi of a dispersed phase given by mass (ideal mixing of the phases).

    phi = (w / rho_d) / (w / rho_d + (1 - w) / rho_c): 30 % oil by mass at 850 kg/m**3 in water at
    1000 kg/m**3 is 33.5 % by volume.

    >>> round(volume_fraction(0.3, 850.0, 1000.0), 4)
    0.3352
    """
    vd = mass_fraction / dispersed_density
    return vd / (vd + (1.0 - mass_fraction) / continuous_density)


class Drops(Section):
    d32: Length | None = None
    distribution: Literal["lognormal", "rrsb", "table"] | None = None
    median: Length | None = None
    gsd: Q("dimensionless", gt=1, lt=10) | None = None
    basis: Literal["number", "volume"] = "number"
    characteristic_size: Length | None = None
    spread: Q("dimensionless", gt=1, lt=20) | None = None
    file: str | None = None
    shape_factor: ShapeFactor = Field(default_factory=lambda: Value(1.0, 1.0, "dimensionless"))

    @model_validator(mode="after")
    def _one_description(self):
        given = "d32" if self.d32 is not None else None
        if self.distribution is None:
            if given is None:
                raise ValueError(
                    "give exactly one size description: d32 = '2.4 um', or distribution = "
                    "'lognormal' | 'rrsb' | 'table' with its parameters"
                )
            stray = [k for k in ("median", "gsd", "characteristic_size", "spread", "file") if getattr(self, k) is not None]
            if stray:
                raise ValueError(f"d32 is given directly; remove {', '.join(stray)} or set distribution")
            return self
        if given:
            raise ValueError(f"give exactly one size description: both d32 and distribution = {self.distribution!r} are given")
        need = {"lognormal": ("median", "gsd"), "rrsb": ("characteristic_size", "spread"), "table": ("file",)}[self.distribution]
        missing = [k for k in need if getattr(self, k) is None]
        if missing:
            raise ValueError(f"distribution = {self.distribution!r} needs {', '.join(missing)}")
        other = {"median", "gsd", "characteristic_size", "spread", "file"} - set(need)
        stray = [k for k in sorted(other) if getattr(self, k) is not None]
        if stray:
            raise ValueError(f"distribution = {self.distribution!r} does not use {', '.join(stray)}")
        return self


# ---------------------------------------------------------------------------------------------
# a CMC as a datasheet gives it: mol/m**3 (mM), or by mass (g/L, wt%, ppm), turned into mol/m**3
# by the case (:func:`_cmc_to_molar`) with the molar mass and, for a mass fraction, the density
# of the continuous phase

_MASS_FRACTION_UNITS = {"wt%": 1e-2, "wt.%": 1e-2, "%w/w": 1e-2, "%(w/w)": 1e-2, "ppm": 1e-6, "ppmw": 1e-6,
                        "ppmw/w": 1e-6, "ppm(w/w)": 1e-6, "mg/kg": 1e-6, "g/kg": 1e-3}
_UNIT_TAIL = re.compile(r"^\s*(\S+?)\s*((?:wt\.?\s*%|%\s*\(?w/w\)?|ppm\s*\(?w?/?w?\)?|mg/kg|g/kg))\s*$",
                        re.IGNORECASE)
CMC_UNITS_TEXT = ("a concentration such as '8.2 mM' or '8.2 mol/m**3', a mass concentration such as "
                  "'2.4 g/L', or a mass fraction of the solution such as '0.24 wt%' or '2400 ppm'")


def _mass_basis_one(text) -> tuple[float, str] | None:
    """``"0.24 wt%"`` -> ``(0.0024, "mass_fraction")``, ``"2.4 g/L"`` -> ``(2.4, "mass_concentration")``."""
    if not isinstance(text, str):
        return None
    m = _UNIT_TAIL.match(text)
    if m:
        unit = re.sub(r"\s+", "", m.group(2)).lower()
        if unit not in _MASS_FRACTION_UNITS:
            raise ValueError(f"expected {CMC_UNITS_TEXT}, got {text!r}")
        return parse_value(m.group(1), "dimensionless") * _MASS_FRACTION_UNITS[unit], "mass_fraction"
    try:
        parse_value(text, "concentration")
        return None  # a molar concentration: the usual path
    except ValueError:
        pass
    try:
        return parse_value(text, "density"), "mass_concentration"  # kg/m**3 = g/L
    except ValueError:
        return None


def _datasheet_cmc(v):
    """Keep a CMC given by mass as a ``Value`` of dimension ``mass_fraction`` or ``mass_concentration``."""
    if isinstance(v, Value):
        return v
    if isinstance(v, str) and v.strip().endswith("%") and _UNIT_TAIL.match(v) is None:
        raise ValueError(f"'%' alone does not say the basis; write wt% (mass of surfactant per mass of "
                         f"solution) or give {CMC_UNITS_TEXT}, got {v!r}")
    texts = [v] if not isinstance(v, dict) else [v.get(k) for k in ("value", "low", "high") if k in v]
    read = [_mass_basis_one(t) for t in texts]
    if not read or all(r is None for r in read):
        return v  # the usual molar path (or its error)
    if any(r is None for r in read) or len({r[1] for r in read}) > 1:
        raise ValueError(f"value, low and high must have the same kind of unit, got {v!r}")
    if any(not r[0] > 0 for r in read):
        raise ValueError(f"expected a value > 0, got {v!r}")
    dim = read[0][1]
    if not isinstance(v, dict):
        return Value(read[0][0], v, dim)
    if "rel_sd" in v:
        rel = v["rel_sd"]
        if isinstance(rel, bool) or not isinstance(rel, (int, float)) or not (0 <= rel <= 3):
            raise ValueError(f"rel_sd: expected a number from 0 to 3 (a coefficient of variation), got {rel!r}")
        return Value(read[0][0], v, dim, ("lognormal", float(rel)))
    if len(read) != 3 or not read[1][0] <= read[0][0] <= read[2][0] or not read[1][0] < read[2][0]:
        raise ValueError(f"expected low < high with value between them, or rel_sd, got {v!r}")
    return Value(read[0][0], v, dim, ("uniform", read[1][0], read[2][0]))


# before-validators run last-first: the mass-basis reading runs before the molar one
CMC = Annotated[Value, _quantity(("concentration",), gt=0), BeforeValidator(_datasheet_cmc)]


def _cmc_to_molar(section, where: str, continuous_density: Value | None) -> None:
    """Turn a CMC given by mass into mol/m**3 in place (a section's ``cmc``; raises ValueError).

    A mass concentration rho_s (g/L = kg/m**3) gives c = rho_s / M; a mass fraction w of the
    solution (wt%, ppm: mass of surfactant per mass of solution) gives c = w rho / M, with rho the
    density of the continuous phase (a solution at CMC levels is the solvent's density).  Both are
    of the active surfactant, not of the product as delivered.
    """
    v = section.cmc
    if v is None or v.dimension == "concentration":
        return
    m = section.molar_mass.si
    if v.dimension == "mass_fraction":
        if continuous_density is None:
            raise ValueError(f"{where}.cmc: {_describe(v)} is a mass fraction (mass of surfactant per "
                             "mass of solution); turning it into mol/m**3 needs batch.continuous_density, the "
                             "density of the continuous phase (e.g. '997 kg/m**3' for water)")
        factor = continuous_density.si / m
    else:
        factor = 1.0 / m
    spread = v.spread
    if spread is not None and spread[0] == "uniform":
        spread = ("uniform", spread[1] * factor, spread[2] * factor)
    si = v.si * factor
    try:
        plausible.check(f"{where}.cmc", si, "concentration")
    except InputError as exc:
        raise ValueError(f"{exc} (from {_describe(v)} with molar_mass {section.molar_mass.raw!r})") from None
    object.__setattr__(section, "cmc", Value(si, v.raw, "concentration", spread))


def _price_text(v):
    """A price written with its currency (``"1.2 EUR/kg"``) as a ``Value`` of dimension ``price``."""
    if isinstance(v, str) and len(v) <= 40 and _PRICE_TEXT.match(v):
        return _price(v)
    if isinstance(v, str) and "/" in v:
        raise ValueError(f"expected a price per kg of the product as delivered with its currency, e.g. "
                         f"'1.8 EUR/kg' (or a number with currency = 'EUR'), got {v!r}")
    return v


def _check_conditions(s) -> None:
    """Temperature keys of a surfactant or blend component that do not belong together."""
    raw = getattr(s, "model_fields_set", set())
    for key in ("micellisation_enthalpy", "adsorption_enthalpy"):
        if key in raw and getattr(s, key).si != 0 and s.reference_temperature is None:
            raise ValueError(f"{key}: an enthalpy moves the CMC or K away from the temperature they were "
                             "measured at; give reference_temperature (e.g. '25 degC') with it")
    if s.krafft_point is not None and s.cloud_point is not None and s.krafft_point.si >= s.cloud_point.si:
        raise ValueError(f"krafft_point: {s.krafft_point.raw!r} is not below cloud_point {s.cloud_point.raw!r}; "
                         "expected a Krafft point below the cloud point (between them the surfactant forms micelles)")


def _check_measured_in(s, info) -> None:
    """Constants measured in the other phase convert through P = c_oil/c_water, which must be known."""
    where = s.measured_in
    continuous = "water" if info.system == "foam" else info.continuous
    if where is None or where == continuous:
        return
    if info.system == "foam":
        raise ValueError("surfactant.measured_in: 'oil' in a foam, which has no oil phase; expected 'water' "
                         "(or leave it out)")
    if not s.partition_coefficient.si > 0:
        raise ValueError(f"surfactant.measured_in: the CMC and adsorption constant were measured in the {where} "
                         f"but the continuous phase is the {continuous}, and surfactant.partition_coefficient is "
                         f"{s.partition_coefficient.si:g}: they cannot be converted; give the partition "
                         "coefficient (sizing fit partition) or constants measured in the "
                         f"{continuous}")


class _Conditions(Section):
    """The keys a ``[surfactant]`` and a ``[[blend.component]]`` share: how the CMC and K move with
    the process conditions (``sizing.physics.conditions``), the ion's charge, the Krafft and cloud
    points, and the monomer's diffusivity (the adsorption-speed check)."""

    diffusivity: Q("diffusivity", gt=0) | None = None  # of the monomer, for the adsorption-speed check
    reference_temperature: Q("temperature", gt=0) | None = None
    micellisation_enthalpy: Q("molar_energy", ge=-2e5, le=2e5) = Field(
        default_factory=lambda: Value(0.0, 0.0, "molar_energy"))
    adsorption_enthalpy: Q("molar_energy", ge=-2e5, le=2e5) = Field(
        default_factory=lambda: Value(0.0, 0.0, "molar_energy"))
    counterion_binding: Q("dimensionless", ge=0, le=1) = Field(default_factory=lambda: Value(0.0, 0.0, "dimensionless"))
    charge: Literal["nonionic", "anionic", "cationic", "amphoteric"] | None = None  # of the surface-active ion
    krafft_point: Q("temperature", gt=0) | None = None
    cloud_point: Q("temperature", gt=0) | None = None


class Surfactant(_Conditions):
    name: str = "surfactant"
    from_: str | None = Field(default=None, alias="from")
    molar_mass: Q("molar_mass", gt=0)
    active_fraction: Q("dimensionless", gt=0, le=1) = Field(default_factory=lambda: Value(1.0, 1.0, "dimensionless"))
    cmc: CMC | None = None
    isotherm: str = "langmuir"
    max_surface_excess: Q("surface_excess", "surface_load", gt=0) | None = None
    area_per_molecule: Q("area", gt=0) | None = None
    adsorption_constant: Q("adsorption_constant", gt=0)
    interaction: Q("dimensionless", ge=-20, le=20) = Field(default_factory=lambda: Value(0.0, 0.0, "dimensionless"))
    gibbs_prefactor: Q("dimensionless", ge=1, le=3) = Field(default_factory=lambda: Value(1.0, 1.0, "dimensionless"))
    partition_coefficient: Q("dimensionless", ge=0) = Field(default_factory=lambda: Value(0.0, 0.0, "dimensionless"))
    clean_tension: Q("tension", gt=0) | None = None
    price_per_kg: Annotated[Value, _quantity(("dimensionless",), ge=0), BeforeValidator(_price_text)] | None = None
    currency: str = ""
    # the phase the cmc and adsorption_constant concentrations were measured in (a fitted block
    # says so); when it is not the continuous phase the model converts them through the partition
    # coefficient (default: the continuous phase, nothing converted)
    measured_in: Literal["water", "oil"] | None = None
    # a protein or polymer: the tension of its interface measured at full coverage (the
    # small-molecule equation of state does not give it)
    plateau_tension: Q("tension", gt=0) | None = None

    @model_validator(mode="after")
    def _excess(self):
        _check_conditions(self)
        if self.isotherm.strip().lower() not in MODELS:
            raise ValueError(f"isotherm: unknown isotherm {self.isotherm!r}; expected one of {', '.join(MODELS)}")
        if (self.max_surface_excess is None) == (self.area_per_molecule is None):
            raise ValueError(
                "give exactly one of max_surface_excess (e.g. '3.3 umol/m**2' or '2 mg/m**2') "
                "or area_per_molecule (e.g. '0.50 nm**2')"
            )
        if self.interaction.si > 2:
            raise ValueError(
                f"interaction: {self.interaction.raw!r} is above 2; a Frumkin interaction beta > 2 "
                "means a two-dimensional phase transition on the interface, where coverage is not a "
                "single-valued function of concentration; expected beta <= 2"
            )
        if self.isotherm.strip().lower() != "frumkin" and self.interaction.si != 0:
            raise ValueError("interaction (Frumkin beta) is only used with isotherm = 'frumkin'")
        self._check_packing()
        if self.price_per_kg is not None and self.price_per_kg.dimension == "price":
            cur = price_currency(self.price_per_kg)
            if self.currency.strip() and self.currency.strip() != cur:
                raise ValueError(f"currency: {self.currency!r} differs from the currency of price_per_kg "
                                 f"{self.price_per_kg.raw!r}; give one currency (or leave currency out)")
            object.__setattr__(self, "currency", cur)
        if self.price_per_kg is not None and not self.currency.strip():
            raise ValueError("currency: give the currency of price_per_kg, e.g. currency = 'EUR', or write "
                             "the price with it, e.g. price_per_kg = '1.8 EUR/kg'")
        return self

    def _check_packing(self) -> None:
        """Refuse a saturation surface excess no molecule can reach (a unit slip, usually).

        An adsorbed molecule needs at least the cross-section of an alkyl chain, about 0.2 nm**2
        (common practice); below 0.1 nm**2 per molecule (Gamma_inf above 16.6 umol/m**2) the
        value is taken as a mistake, e.g. 'umol/um**2' written for 'umol/m**2'.
        """
        if self.max_surface_excess is None:
            field, v = "area_per_molecule", self.area_per_molecule
            gi = 1.0 / (AVOGADRO * v.si)
        else:
            field, v = "max_surface_excess", self.max_surface_excess
            gi = v.si if v.dimension == "surface_excess" else v.si / self.molar_mass.si
        if gi > 1.0 / (AVOGADRO * 0.1e-18):
            raise ValueError(
                f"{field}: {v.raw!r} means {gi * 1e6:.4g} umol/m**2, an area of "
                f"{1e18 / (AVOGADRO * gi):.3g} nm**2 per molecule; no surfactant packs tighter than about "
                "0.2 nm**2 (an alkyl chain's cross-section), so expected at most 16.6 umol/m**2 "
                "(typical 1-6 umol/m**2; check the unit, e.g. 'umol/m**2', not 'umol/um**2')"
            )


_PRICE_TEXT = re.compile(r"^\s*([0-9][0-9_]*(?:\.[0-9]*)?(?:[eE][-+]?[0-9]+)?)\s*([A-Za-z]{1,5}|[$\u20ac\u00a3\u00a5])\s*/\s*kg\s*$")


def _price(v):
    """``"1.8 EUR/kg"`` -> ``Value(1.8, raw, "price")`` with the currency kept in ``raw``."""
    if isinstance(v, Value):
        return v
    if isinstance(v, str) and len(v) <= 40:
        m = _PRICE_TEXT.match(v)
        if m:
            x = float(m.group(1).replace("_", ""))
            if math.isfinite(x):
                return Value(x, v, "price")
    raise ValueError(f"expected a price per kg of the product as delivered with its currency, "
                     f"e.g. '1.8 EUR/kg', got {v!r}")


def price_currency(v: Value) -> str:
    """The currency of a component price (``"1.8 EUR/kg"`` -> ``"EUR"``)."""
    m = _PRICE_TEXT.match(str(v.raw))
    return m.group(2) if m else ""


Price = Annotated[Value, BeforeValidator(_price)]


class BlendComponent(_Conditions):
    """One ``[[blend.component]]``: a surfactant charged as its own product, in a fixed share."""

    name: str = Field(min_length=1, max_length=80)
    fraction: Q("dimensionless", ge=0, le=1)
    molar_mass: Q("molar_mass", gt=0)
    active_fraction: Q("dimensionless", gt=0, le=1) = Field(default_factory=lambda: Value(1.0, 1.0, "dimensionless"))
    cmc: CMC | None = None
    isotherm: str = "langmuir"
    max_surface_excess: Q("surface_excess", "surface_load", gt=0) | None = None
    area_per_molecule: Q("area", gt=0) | None = None
    adsorption_constant: Q("adsorption_constant", gt=0)
    gibbs_prefactor: Q("dimensionless", ge=1, le=3) = Field(default_factory=lambda: Value(1.0, 1.0, "dimensionless"))
    partition_coefficient: Q("dimensionless", ge=0) = Field(default_factory=lambda: Value(0.0, 0.0, "dimensionless"))
    price: Price | None = None

    @model_validator(mode="after")
    def _excess(self):
        _check_conditions(self)
        if self.isotherm.strip().lower() != "langmuir":
            raise ValueError(f"isotherm: a blend component uses the competitive Langmuir isotherm; "
                             f"got {self.isotherm!r} (Frumkin and Volmer are for a single [surfactant])")
        if (self.max_surface_excess is None) == (self.area_per_molecule is None):
            raise ValueError(
                "give exactly one of max_surface_excess (e.g. '3.3 umol/m**2' or '2 mg/m**2') "
                "or area_per_molecule (e.g. '0.50 nm**2')"
            )
        Surfactant._check_packing(self)
        return self


class BlendRatio(Section):
    """``[blend.ratio]``: the range over which the plan looks for the cheapest blend ratio.

    ``component`` names the component whose fraction (on the blend's ``fractions`` basis) moves
    from ``low`` to ``high``; the others keep their proportions.
    """

    component: str = Field(min_length=1)
    low: float = Field(ge=0, le=1)
    high: float = Field(ge=0, le=1)
    points: int = Field(default=41, ge=3, le=401)

    @model_validator(mode="after")
    def _range(self):
        if not self.low < self.high:
            raise ValueError(f"expected low < high (fractions of the active blend), got low={self.low:g}, "
                             f"high={self.high:g}")
        return self


class BlendSection(Section):
    """``[blend]``: several surfactants charged together at a fixed composition."""

    name: str = "blend"
    fractions: Literal["mass", "mole"] = "mass"
    micelles: Literal["ideal", "regular"] = "ideal"
    interaction: Q("dimensionless", ge=-40, le=2) | None = None
    clean_tension: Q("tension", gt=0) | None = None
    component: list[BlendComponent] = Field(min_length=1, max_length=40)
    ratio: BlendRatio | None = None

    @model_validator(mode="after")
    def _consistent(self):
        names = [c.name.strip() for c in self.component]
        dup = sorted({n for n in names if names.count(n) > 1})
        if dup:
            raise ValueError(f"component: duplicate component name(s) {', '.join(repr(d) for d in dup)}; "
                             "expected each component named once")
        total = sum(c.fraction.si for c in self.component)
        if abs(total - 1.0) > 1e-6:
            raise ValueError(f"component: the fractions add up to {total:.6g}; expected 1 "
                             f"({self.fractions} fractions of the active blend)")
        if self.interaction is not None and self.micelles != "regular":
            raise ValueError("interaction: the mixed-micelle interaction beta is only used with "
                             "micelles = 'regular'; set micelles = 'regular' or remove interaction")
        if self.micelles == "regular":
            if len(self.component) != 2:
                raise ValueError(f"micelles: regular-solution micelles take exactly two components, got "
                                 f"{len(self.component)}; use micelles = 'ideal' for more")
            if any(c.cmc is None for c in self.component):
                raise ValueError("micelles: regular-solution micelles need a cmc for both components")
        if self.ratio is not None:
            if self.ratio.component.strip() not in names:
                raise ValueError(f"ratio: component {self.ratio.component!r} is not a component of the blend; "
                                 f"expected one of {', '.join(repr(n) for n in names)}")
            if len(self.component) < 2:
                raise ValueError("ratio: a blend ratio needs at least two components")
            if self.ratio.high >= 1.0 and len(self.component) > 1:
                raise ValueError(f"ratio.high: {self.ratio.high:g} leaves nothing for the other components; "
                                 "expected less than 1")
        prices = [c.price for c in self.component]
        if any(p is not None for p in prices):
            cur = {price_currency(p) for p in prices if p is not None}
            if len(cur) > 1:
                raise ValueError(f"component: prices in different currencies ({', '.join(sorted(cur))}); "
                                 "expected one currency for the whole blend")
        return self

    @property
    def beta(self) -> float:
        return 0.0 if self.interaction is None else self.interaction.si

    @property
    def currency(self) -> str:
        cur = [price_currency(c.price) for c in self.component if c.price is not None]
        return cur[0] if cur else ""

    def index(self, name: str) -> int:
        """The position of a component by name."""
        return [c.name.strip() for c in self.component].index(name.strip())

    @property
    def priced(self) -> bool:
        return all(c.price is not None for c in self.component)


TARGET_KINDS = ("coverage", "tension", "free_concentration", "surface_load")


class Target(Section):
    coverage: Fraction01 | None = None
    tension: Q("tension", gt=0) | None = None
    free_concentration: Q("concentration", gt=0) | None = None
    # the adsorbed amount per area a protein or polymer should reach (mg/m**2, or umol/m**2)
    surface_load: Q("surface_load", "surface_excess", gt=0) | None = None
    margin: Q("dimensionless", ge=0, le=5) = Field(default_factory=lambda: Value(0.15, 0.15, "dimensionless"))

    @model_validator(mode="after")
    def _one(self):
        given = [k for k in TARGET_KINDS if getattr(self, k) is not None]
        if len(given) != 1:
            raise ValueError(
                "give exactly one target: coverage (0..1), tension (e.g. '35 mN/m'), "
                f"free_concentration (e.g. '0.5 mM') or surface_load (e.g. '2 mg/m**2'); "
                f"got {', '.join(given) if given else 'none'}"
            )
        return self

    @property
    def kind(self) -> str:
        return next(k for k in TARGET_KINDS if getattr(self, k) is not None)


class Recommendation(Section):
    increment: Q("mass", gt=0) | None = None  # round the charge up to this step


class Trial(Section):
    """``[trial]``: 3 to 5 dose levels, as multiples of the recommended charge, bracketing it."""

    levels: list[float] = Field(default_factory=lambda: [0.8, 1.0, 1.25])
    batches_per_level: int = Field(default=1, ge=1, le=100)

    @model_validator(mode="after")
    def _levels(self):
        lv = list(self.levels)
        if not 3 <= len(lv) <= 5:
            raise ValueError(f"levels: expected 3 to 5 levels (multiples of the recommended charge), "
                             f"got {len(lv)}: {lv}")
        if any((not math.isfinite(x)) or x <= 0 or x > 10 for x in lv):
            raise ValueError(f"levels: expected multiples of the recommended dose between 0 and 10, got {lv}")
        if sorted(set(lv)) != lv:
            raise ValueError(f"levels: expected distinct values in increasing order, got {lv}")
        if not (lv[0] < 1.0 < lv[-1]):
            raise ValueError(f"levels: expected levels that bracket the recommended charge (one below 1 and "
                             f"one above 1, e.g. [0.8, 1.0, 1.25]), got {lv}")
        return self


class Uncertainty(Section):
    samples: int = Field(default=100_000, ge=100, le=2_000_000)
    seed: int = Field(default=20261201, ge=0)
    percentile: float = Field(default=90.0, ge=50.0, le=99.9)


class LabPoint(Section):
    """One lab homogenisation: the process variable and the d32 it gave (see :mod:`sizing.scaleup`)."""

    d32: Length
    pressure: Q("pressure", gt=0) | None = None
    energy_density: Q("energy_density", gt=0) | None = None
    tip_speed: Q("speed", gt=0) | None = None
    speed: Q("frequency", gt=0) | None = None
    diameter: Length | None = None

    @model_validator(mode="after")
    def _no_spread(self):
        for key in type(self).model_fields:
            v = getattr(self, key)
            if isinstance(v, Value) and v.spread is not None:
                raise ValueError(f"{key}: a lab point takes no spread (the fit estimates the scatter); "
                                 f"got {v.raw!r}")
        return self


class Scaleup(Section):
    """``[scaleup]``: plant drop size from process conditions (see :mod:`sizing.scaleup`)."""

    method: Literal["power_law", "stirred_tank"] = "power_law"
    variable: Literal["pressure", "energy_density", "tip_speed"] | None = None
    points: list[LabPoint] = Field(default_factory=list)
    plant: Q("pressure", "speed", "frequency", gt=0) | None = None
    plant_diameter: Length | None = None
    exponent: Q("dimensionless", ge=-3, lt=0) | None = None
    rule: Literal["constant_power_per_volume", "constant_tip_speed", "constant_speed",
                  "given_speed"] | None = None
    lab_diameter: Length | None = None
    lab_speed: Q("frequency", gt=0) | None = None
    plant_speed: Q("frequency", gt=0) | None = None
    weber_exponent: Q("dimensionless", ge=-2, lt=0) = Field(
        default_factory=lambda: Value(-0.6, -0.6, "dimensionless"))

    @model_validator(mode="after")
    def _complete(self):
        check_section(self)
        return self


class Process(Section):
    """``[process]``: plant process facts outside the balance (residence time for the kinetics flag)."""

    residence_time: Q("time", gt=0) | None = None
    # what makes the drops or bubbles, in the words of the report (default: from the case's
    # system and [scaleup]; see sizing.texts.equipment_word)
    equipment: Literal["homogeniser", "high-pressure homogeniser", "rotor-stator mixer", "mixer",
                       "stirred tank", "aerator", "colloid mill"] | None = None


# keys read once into another quantity, left out of Case.quantities (a sweep or a Monte Carlo
# run varies the quantity the engine uses, batch.dispersed_fraction)
_INPUT_ONLY = frozenset({"batch.dispersed_mass_fraction", "recipe.current_charge"})


class Recipe(Section):
    """The charge the current recipe carries, to set beside the equilibrium demand."""

    current_charge: Q("mass", gt=0)  # per batch, of product as delivered (or active, see basis)
    basis: Literal["product", "active"] = "product"


class Case(Section):
    """A whole case file.  ``source`` is the file's folder, for relative paths."""

    case: CaseInfo
    batch: Batch
    drops: Drops
    surfactant: Surfactant | None = None
    blend: BlendSection | None = None
    target: Target
    recommendation: Recommendation = Field(default_factory=Recommendation)
    trial: Trial = Field(default_factory=Trial)
    uncertainty: Uncertainty | None = None
    scaleup: Scaleup | None = None
    process: Process | None = None
    recipe: Recipe | None = None

    # not part of the file: where it was read from, and the fitted block's provenance
    _base_dir: Path | None = None
    _provenance: dict | None = None
    _raw: dict | None = None

    @model_validator(mode="after")
    def _one_active(self):
        if (self.surfactant is None) == (self.blend is None):
            raise ValueError("give exactly one of [surfactant] (one surfactant) or [blend] (several "
                             "[[blend.component]]); got " + ("both" if self.surfactant else "neither"))
        if self.batch.salt.si > 0 and self.case.continuous == "oil":
            raise ValueError("batch.salt: the salt corrections act on the CMC in an aqueous continuous phase; "
                             "this batch is oil-continuous (W/O), where the CMC is the oil's; remove salt "
                             "(its effect on a W/O emulsion is not modelled)")
        rho_c = self.batch.continuous_density
        if self.surfactant is not None:
            _cmc_to_molar(self.surfactant, "surfactant", rho_c)
            _check_measured_in(self.surfactant, self.case)
        for i, comp in enumerate(self.blend.component if self.blend is not None else ()):
            _cmc_to_molar(comp, f"blend.component[{i}]", rho_c)
        return self

    @property
    def base_dir(self) -> Path | None:
        return self._base_dir

    @property
    def active_name(self) -> str:
        """The name of what is charged: the surfactant's or the blend's."""
        return self.blend.name if self.blend is not None else self.surfactant.name

    @property
    def currency(self) -> str:
        return self.blend.currency if self.blend is not None else self.surfactant.currency

    @property
    def provenance(self) -> dict | None:
        """The ``[provenance]`` table of a fitted block named by ``surfactant.from``."""
        return self._provenance

    def values(self) -> dict[str, float]:
        """Return every numeric value as ``{"section.key": SI float}``."""
        return {path: v.si for path, v in self.quantities().items()}

    def quantities(self) -> dict[str, Value]:
        """Return every quantity as ``{"section.key": Value}``."""
        out: dict[str, Value] = {}
        for section_name in type(self).model_fields:
            section = getattr(self, section_name)
            if not isinstance(section, BaseModel):
                continue
            for key in type(section).model_fields:
                v = getattr(section, key)
                if isinstance(v, Value) and f"{section_name}.{key}" not in _INPUT_ONLY:
                    out[f"{section_name}.{key}"] = v
        if self.blend is not None:
            for i, comp in enumerate(self.blend.component):
                for key in type(comp).model_fields:
                    v = getattr(comp, key)
                    if isinstance(v, Value):
                        out[f"blend.component[{i}].{key}"] = v
        return out

    def source_of(self, path: str) -> str:
        """Where a quantity's value comes from: ``"case file"``, ``"fitted block"``, ``"default"``
        or ``"derived from <path>"`` (a volume fraction from ``batch.dispersed_mass_fraction``).

        ``path`` is a key of :meth:`quantities` (``"blend.component[0].cmc"`` too).
        """
        if path == "batch.dispersed_fraction" and self.batch.dispersed_mass_fraction is not None:
            return "derived from batch.dispersed_mass_fraction"
        parts = re.findall(r"[^.\[\]]+|\[\d+\]", path)
        node: Any = self._raw
        if node is None:  # built without a file: what pydantic saw set
            section = getattr(self, parts[0], None)
            return "case file" if parts[-1] in getattr(section, "model_fields_set", ()) else "default"
        for part in parts:
            if part.startswith("[") and isinstance(node, list):
                i = int(part[1:-1])
                node = node[i] if i < len(node) else None
            elif isinstance(node, dict):
                node = node.get(part)
            else:
                node = None
            if node is None:
                break
        if node is not None:
            return "case file"
        prov = self._provenance or {}
        if parts[0] == "surfactant" and len(parts) == 2 and parts[1] in prov.get("keys_from_file", ()):
            return "fitted block"
        return "default"

    def spreads(self) -> dict[str, Value]:
        """Return the quantities that carry a spread."""
        return {p: v for p, v in self.quantities().items() if v.spread is not None}


# ---------------------------------------------------------------------------------------------
# reading and writing


def _describe(v: Any) -> str:
    """A short, printable excerpt of a given value for an error line (never the whole text)."""
    raw = v.raw if isinstance(v, Value) else v
    return token(raw, 80) if isinstance(raw, str) else token(repr(raw), 80)


def _suggest(key: str, options) -> str:
    match = difflib.get_close_matches(key, list(options), n=1, cutoff=0.5)
    return f"; did you mean {match[0]!r}?" if match else f"; expected one of {', '.join(options)}"


def _model_for(loc: tuple) -> type[BaseModel] | None:
    model: Any = Case
    for part in loc[:-1]:
        if isinstance(part, int):  # a list item, e.g. blend.component[0]
            continue
        field = model.model_fields.get(part) if hasattr(model, "model_fields") else None
        if field is None:
            return None
        ann = field.annotation
        args = getattr(ann, "__args__", None)
        if args:
            ann = next((a for a in args if isinstance(a, type) and issubclass(a, BaseModel)), ann)
        model = ann
    return model if isinstance(model, type) and issubclass(model, BaseModel) else None


def _toml_path(loc: tuple) -> str:
    """``("blend", "component", 0, "cmc")`` -> ``"blend.component[0].cmc"``."""
    out = ""
    for p in loc:
        out += f"[{p}]" if isinstance(p, int) else (f".{p}" if out else str(p))
    return out or "case file"


_MISSING_HINTS = {"adsorption_constant": ADSORPTION_CONSTANT_HINT}
_DOTTED = re.compile(r"^[a-z_]+(?:\[\d+\])?(?:\.[a-z_]+(?:\[\d+\])?)+$")


def format_errors(exc: ValidationError) -> list[str]:
    """Turn a pydantic error into one line per problem, naming the TOML path."""
    lines = []
    for err in exc.errors(include_url=False):
        loc = tuple(p for p in err["loc"] if isinstance(p, str) or isinstance(p, int))
        path = _toml_path(loc)
        kind = err["type"]
        if kind == "extra_forbidden":
            model = _model_for(loc)
            options = []
            if model is not None:
                options = [f.alias or name for name, f in model.model_fields.items()]
            where = "section" if len(loc) == 1 else "key"
            lines.append(f"{path}: unknown {where}{_suggest(str(loc[-1]), options)}")
        elif kind == "missing":
            what = "section" if len(loc) == 1 else "key"
            hint = _MISSING_HINTS.get(str(loc[-1])) if len(loc) > 1 else None
            lines.append(f"{path}: missing {what}" + (f"; expected {hint}" if hint else ""))
        else:
            msg = err["msg"]
            for prefix in ("Value error, ", "Assertion failed, "):
                if msg.startswith(prefix):
                    msg = msg[len(prefix):]
            given = err.get("input")
            # a section-level check that names one of its keys first: "isotherm: ..." -> path.key
            head, sep, rest = msg.partition(": ")
            if sep and not loc and _DOTTED.match(head):  # a whole-case check naming its field
                path, msg = head, rest
            elif sep and head.isidentifier():
                model = _model_for(loc + ("x",))
                if model is not None and head in model.model_fields:
                    path, msg = f"{path}.{head}", rest
            if kind.startswith("value_error") and ("got" in msg or repr(given) in msg):
                lines.append(f"{path}: {msg}")
            elif isinstance(given, dict) and len(loc) <= 1:
                lines.append(f"{path}: {msg}")
            else:
                lines.append(f"{path}: {msg} (got {_describe(given)})")
    return lines


MAX_FITTED_BYTES = 1024 * 1024  # a fitted block is a few kB of TOML


def _merge_from(data: dict, base_dir: Path | None) -> dict | None:
    """Merge a fitted ``[surfactant]`` block named by ``surfactant.from``; return its provenance."""
    surf = data.get("surfactant")
    if not isinstance(surf, dict) or "from" not in surf:
        return None
    ref = surf["from"]
    if not isinstance(ref, str):
        raise InputError(f"surfactant.from: expected the file name of a fitted block (text), "
                         f"got {type(ref).__name__}")
    path = inside(ref, base_dir, "surfactant.from")
    raw = read_regular(path, "surfactant.from", MAX_FITTED_BYTES)
    try:
        fitted = tomllib.loads(raw.decode("utf-8-sig"))
    except UnicodeDecodeError:
        raise InputError(f"surfactant.from: {token(ref, 80)} is not UTF-8 text; expected a fitted "
                         "block written by 'sizing fit'") from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"surfactant.from: {token(ref, 80)} is not valid TOML ({exc})") from None
    block = fitted.get("surfactant")
    if not isinstance(block, dict):
        raise InputError(f"surfactant.from: {token(ref, 80)} has no [surfactant] table")
    merged = dict(block)
    merged.update(surf)  # the case's own keys win
    prov = fitted.get("provenance", {})
    prov = dict(prov) if isinstance(prov, dict) else {}
    if "measured_in" not in merged and prov.get("kind") == "tension series fit":
        # blocks written before the phase was recorded: a tension series is of an aqueous solution
        merged["measured_in"] = "water"
        prov["measured_in_assumed"] = True
    data["surfactant"] = merged
    # as the user named it (relative to where they work), never the resolved absolute path: a
    # result.json shared with colleagues should not carry this machine's folder layout
    prov["file"] = str(Path(base_dir) / ref) if base_dir is not None and not Path(ref).is_absolute() else ref
    prov["keys_from_file"] = sorted(k for k in block if k not in surf)
    return prov


# "exactly one of" rules of a section; pydantic skips a section's own check when one of its
# fields already failed, so these are checked again on the raw table to report every problem
_CHOICES = (
    ("target", (("coverage", "tension", "free_concentration", "surface_load"),
               "give exactly one target: coverage (0..1), tension (e.g. '35 mN/m'), "
               "free_concentration (e.g. '0.5 mM') or surface_load (e.g. '2 mg/m**2'); got {given}")),
    ("batch", (("volume", "mass"),
               "give the batch size as exactly one of volume (e.g. '2 m**3') or mass (e.g. '2000 kg'); "
               "got {given}")),
    ("batch", (("dispersed_fraction", "dispersed_mass_fraction"), _FRACTION_CHOICE)),
    ("surfactant", (("max_surface_excess", "area_per_molecule"),
                    "give exactly one of max_surface_excess (e.g. '3.3 umol/m**2' or '2 mg/m**2') "
                    "or area_per_molecule (e.g. '0.50 nm**2'); got {given}")),
)


def _with_choice_problems(lines: list[str], data: dict) -> list[str]:
    """Add the "exactly one of" problems that pydantic did not get to (see ``_CHOICES``)."""
    out = list(lines)
    for section, (keys, text) in _CHOICES:
        table = data.get(section)
        line = f"{section}: " + text.format(given="")[:40]
        if not isinstance(table, dict) or any(x.startswith(line) for x in out):
            continue
        given = [k for k in keys if k in table]
        if len(given) != 1:
            out.append(f"{section}: " + text.format(given=", ".join(given) if given else "none"))
    return out


def parse_case(data: dict, base_dir: Path | str | None = None) -> Case:
    """Validate a case given as a dict (parsed TOML).

    Raises
    ------
    InputError
        With one line per problem.
    """
    base = Path(base_dir) if base_dir is not None else None
    raw = copy.deepcopy(data)
    work = copy.deepcopy(data)
    provenance = _merge_from(work, base)
    try:
        case = Case.model_validate(work)
    except ValidationError as exc:
        raise InputError(problems=_with_choice_problems(format_errors(exc), work)) from None
    case._base_dir = base
    case._provenance = provenance
    case._raw = raw
    return case


def loads_case(text: str, base_dir: Path | str | None = None, name: str = "case file") -> Case:
    """Validate a case given as TOML text."""
    if text.startswith("\ufeff"):  # a byte-order mark, as some editors on Windows save it
        text = text[1:]
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{name}: not valid TOML ({exc})") from None
    except RecursionError:
        raise InputError(f"{name}: nested too deeply to be a case file (tables or arrays inside "
                         "each other hundreds of levels deep); expected the sections of a case") from None
    return parse_case(data, base_dir)


def load_case(path: Path | str) -> Case:
    """Read and validate a case file.

    Raises
    ------
    InputError
        A missing or unreadable file, bad TOML, or any schema problem (one line each).
    """
    p = Path(path)
    if not p.exists():
        raise InputError(f"{p}: case file not found")
    if p.is_dir():
        raise InputError(f"{p}: is a folder; expected a case file (.toml)")
    try:
        text = p.read_text(encoding="utf-8-sig")
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"{p}: cannot read the case file ({exc})") from None
    return loads_case(text, p.parent, name=str(p))


def case_to_dict(case: Case) -> dict:
    """Return the case as the dict it was written from (user's unit strings kept)."""
    if case._raw is not None:
        return copy.deepcopy(case._raw)
    return _dump_model(case)


def _dump_model(model: BaseModel) -> dict:
    out: dict = {}
    for name, field in type(model).model_fields.items():
        v = getattr(model, name)
        key = field.alias or name
        if v is None:
            continue
        if isinstance(v, Value):
            out[key] = v.raw
        elif isinstance(v, BaseModel):
            out[key] = _dump_model(v)
        else:
            out[key] = v
    return out


def dumps_case(case: Case | dict) -> str:
    """Write a case as TOML text (the user's unit strings, no None values)."""
    data = case if isinstance(case, dict) else case_to_dict(case)
    return tomli_w.dumps(data)


def case_with(case: Case, updates: dict[str, Any]) -> Case:
    """Return a new validated case with some ``"section.key"`` entries replaced (raw values)."""
    data = case_to_dict(case)
    for path, value in updates.items():
        section, _, key = path.partition(".")
        data.setdefault(section, {})
        if value is None:
            data[section].pop(key, None)
        else:
            data[section][key] = value
    return parse_case(data, case.base_dir)


# ---------------------------------------------------------------------------------------------
# files a case names


def table_path(file: str, base: Path | None) -> Path:
    """Resolve a size-table path inside the case file's folder (symlinks resolved).

    Raises
    ------
    InputError
        ``drops.file`` is empty or points outside the case file's folder.
    """
    return inside(file, base, "drops.file")


def read_size_table(path) -> distribution.SizeTable:
    """Read a measured size table CSV (units in the header, e.g. ``upper [um],volume [%]``).

    Coarse classes add a note (a warning of every output): see :func:`class_bias`.
    """
    dims = {"lower": "length", "upper": "length", "size": "length"}
    table = read_lab_csv(path, dims)
    t = distribution.table_from_columns(table.columns, str(path))
    note = coarse_class_note(t)
    return dataclasses.replace(t, notes=tuple(t.notes) + (note,)) if note else t


COARSE_CLASS_BIAS = 0.01  # warn from a 1 % bias of d32 (a class ratio of about 1.42 upward)


def class_bias(ratio: float, basis: str = "volume") -> float:
    """Relative error of the d32 integrated inside size classes of width ``ratio`` (upper/lower).

    A table takes the density as uniform in ln d inside each class.  For a distribution smooth
    on the scale of a class (averaged over where the class limits fall), a number moment M_k
    comes out times S(k h / 2), S(y) = (sinh y / y)**2, h = ln(ratio).  A volume table's
    d32 = M3/M2 uses M3 as given and M2 from <1/d>, so it is low by the factor 1/S(h/2); a count
    table's is high by S(3h/2)/S(h).  For ratio 1.6: -1.8 % (volume, the area and the dose come
    out as much high: conservative), +9.4 % (count: the area low).  tests/test_hardening_14b.py
    checks both against the scipy integration of a log-normal.

    >>> round(100 * class_bias(1.6), 2), round(100 * class_bias(1.6, "count"), 2)
    (-1.82, 9.41)
    """
    h = math.log(ratio)

    def s(y):
        return (math.sinh(y) / y) ** 2 if y else 1.0

    return (s(1.5 * h) / s(h) if basis == "count" else 1.0 / s(h / 2)) - 1.0


def coarse_class_note(t: distribution.SizeTable) -> str | None:
    """The warning of a size table whose classes are coarse enough to move d32 by 1 % or more."""
    w = t.volume_fraction if t.basis != "count" else t.number_fraction
    used = (w > 0) & (t.lower > 0)
    if not used.any():
        return None
    ratio = float(np.exp(np.median(np.log(t.upper[used] / t.lower[used]))))
    bias = class_bias(ratio, t.basis)
    if abs(bias) < COARSE_CLASS_BIAS:
        return None
    area = 1.0 / (1.0 + bias) - 1.0
    name = Path(t.source).name if t.source else "the size table"
    if bias < 0:
        return (f"{name}: size classes about {ratio:.3g} wide (upper/lower); integrating inside the classes puts "
                f"the d32 about {100 * -bias:.1f} % low and the area and the dose about {100 * area:.1f} % high "
                "(conservative side); classes of ratio 1.2 or finer keep it below 0.3 %")
    return (f"{name}: size classes about {ratio:.3g} wide (upper/lower) on a count basis; integrating inside the "
            f"classes puts the d32 about {100 * bias:.1f} % HIGH and the area and the dose about {100 * -area:.1f} % "
            "LOW (not conservative): use a volume table or classes of ratio 1.2 or finer")
