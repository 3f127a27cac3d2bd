"""Unit parsing at the boundary: SI conversion, offset temperatures and the error messages."""

import pytest

from sizing.errors import InputError
from sizing.units import format_si, parse, sig


@pytest.mark.parametrize(
    "text, dimension, si",
    [
        # exact unit definitions (SI brochure, 9th ed., 2019): tolerance 1e-12 relative
        ("2.4 um", "length", 2.4e-6),
        ("8.2 mM", "concentration", 8.2),
        ("8.2 mol/m**3", "concentration", 8.2),
        ("3.3 umol/m**2", "surface_excess", 3.3e-6),
        ("3.3 umol/m^2", "surface_excess", 3.3e-6),
        ("2 mg/m**2", "surface_load", 2e-6),
        ("0.50 nm**2", "area", 0.5e-18),
        ("500 L", "volume", 0.5),
        ("52 mN/m", "tension", 0.052),
        ("850 L/mol", "adsorption_constant", 0.85),
        ("288.4 g/mol", "molar_mass", 0.2884),
        ("25 degC", "temperature", 298.15),
        ("77 degF", "temperature", 298.15),
        ("300 rpm", "frequency", 5.0),  # revolutions, not radians, per minute
        ("500 bar", "pressure", 5e7),
    ],
)
def test_parse_to_si(text, dimension, si):
    assert parse(text, "f", dimension) == pytest.approx(si, rel=1e-12)


def test_bare_number_needs_unit():
    with pytest.raises(InputError, match=r"drops\.d32: a bare number 2\.4 has no unit; expected a length such as '2\.4 um'"):
        parse(2.4, "drops.d32", "length")
    with pytest.raises(InputError, match=r"drops\.d32: '2\.4' has no unit"):
        parse("2.4", "drops.d32", "length")


def test_wrong_dimension_and_unknown_unit():
    with pytest.raises(InputError, match=r"surfactant\.cmc: '8\.2 kg' is not a concentration; expected a concentration such as '8\.2 mM'"):
        parse("8.2 kg", "surfactant.cmc", "concentration")
    with pytest.raises(InputError, match=r"unknown unit 'furlongs_x'"):
        parse("3 furlongs_x", "drops.d32", "length")
    with pytest.raises(InputError, match="expected a number and a unit"):
        parse("about two microns", "drops.d32", "length")


def test_dimensionless_and_percent():
    assert parse(0.3, "batch.dispersed_fraction", "dimensionless") == 0.3
    assert parse("30 %", "batch.dispersed_fraction", "dimensionless") == pytest.approx(0.3)


def test_format_and_sig():
    assert format_si(2.4e-6, "length", "um") == "2.4 um"
    assert format_si(298.15, "temperature", "degC") == "25 degC"
    assert sig(123456.0, 3) == "1.23e+05"
