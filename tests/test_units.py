"""Unit parsing at the boundary: SI conversion, offset temperatures and the error messages."""

import json
from pathlib import Path

import pytest

from sizing.case import load_case
from sizing.cli import main
from sizing.errors import InputError
from sizing.units import MAX_TEXT, NumberFormatError, format_si, parse, parse_value, sig


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


# --- decimal comma, thousands separators, text length ---------------------------------------
# The decimal marker is either the point or the comma on the line; digits may be grouped in
# threes by a thin space, never by a point or a comma (SI Brochure, 9th ed. 2019, 5.4.4, and
# ISO 80000-1, 7.3.2 [from memory]).  A comma is therefore read as a decimal where nothing else
# could be meant; a number that a thousands separator (or digit grouping) could have written is
# refused: the point form of the same text is the reference, compared exactly.


@pytest.mark.parametrize(
    "text, dimension, si",
    [
        # each was read as the integer part alone before (2.0, 850.0, 333.15 K, 1.0)
        ("2,1 m**3", "volume", 2.1),
        ("850,1 kg/m**3", "density", 850.1),
        ("60,1 degC", "temperature", 333.25),  # offset unit: 60.1 + 273.15 (SI brochure, exact)
        ("1,1 mM", "concentration", 1.1),
        ("2,5 um", "length", 2.5e-6),  # refused as "unknown unit ',5 um'" before
        ("-2,5 degC", "temperature", 270.65),
        ("+0,5 degC", "temperature", 273.65),
        ("1,5e-6 m", "length", 1.5e-6),
        ("-1,25E+3 Pa", "pressure", -1250.0),
        ("0,125 kg", "mass", 0.125),  # a leading zero is never a thousands group
        ("1,2345 kg", "mass", 1.2345),  # four decimals: not a group of three
        ("1234,5 kg", "mass", 1234.5),
        ("30,5 %", "dimensionless", 0.305),
        ("  2,1   m**3  ", "volume", 2.1),
    ],
)
def test_decimal_comma_read_as_the_point_form(text, dimension, si):
    got = parse(text, "f", dimension)
    assert got == parse(text.replace(",", "."), "f", dimension)  # exactly the point form
    assert got == pytest.approx(si, rel=1e-12)


def test_decimal_comma_in_a_bare_number():
    assert parse("0,3", "batch.dispersed_fraction", "dimensionless") == pytest.approx(0.3, rel=1e-15)
    assert parse("2,5", "f", "length", allow_bare=True) == pytest.approx(2.5, rel=1e-15)


@pytest.mark.parametrize(
    "text",
    [
        "1,234 kg",  # 1234 kg or 1.234 kg: refused, never guessed
        "12,500 kg",
        "-1,234 degC",
        "1,500e3 Pa",
        "1,234.5 kg",
        "1,234,567 kg",
        "1.234,5 kg",
        "1.234.567 kg",
        "1 234 kg",
        "1\u00a0234 kg",  # no-break space
        "1\u202f234,5 kg",  # narrow no-break space
        "1'234 kg",
        "1\u2019234 kg",
        "1_234 kg",
        "2, 5 um",
        "2 ,5 um",
        ",5 um",
        "2,kg",
        "2 m**3,5",  # pint drops a comma: m**35
        "2,1,3 m**3",
    ],
)
def test_separators_refused_with_the_hint(text):
    with pytest.raises(NumberFormatError) as err:
        parse(text, "batch.volume", "mass")
    msg = str(err.value)
    assert msg.startswith("batch.volume: ")
    assert repr(text) in msg
    assert "use a decimal point, e.g. 2.1" in msg
    assert isinstance(err.value, InputError)


def test_parse_value_keeps_the_hint_without_the_field():
    with pytest.raises(ValueError, match=r"^'1,234\.5 kg' is ambiguous .*use a decimal point, e\.g\. 2\.1"):
        parse_value("1,234.5 kg", "mass")


def test_point_forms_and_reciprocal_units_still_read():
    assert parse("1.234 kg", "f", "mass") == pytest.approx(1.234, rel=1e-15)
    assert parse("5 1/s", "f", "frequency") == 5.0
    assert parse("3.2 1/kg", "f", "price") == pytest.approx(3.2, rel=1e-15)


@pytest.mark.parametrize("n", [201, 16_000, 200_000])
def test_long_text_refused_before_pint(n):
    text = "1 " + "m*" * (n // 2)
    text = text[:n]
    with pytest.raises(InputError) as err:
        parse(text, "drops.d32", "length")
    msg = str(err.value)
    assert msg.startswith(f"drops.d32: a text of {n} characters")
    assert f"at most {MAX_TEXT} characters" in msg
    assert len(msg) < 200  # an excerpt, not the text


def test_text_at_the_length_limit_is_read():
    text = "2" + " " * (MAX_TEXT - 3) + "um"
    assert len(text) == MAX_TEXT
    assert parse(text, "f", "length") == pytest.approx(2e-6, rel=1e-15)


def test_overflow_in_si_refused():
    with pytest.raises(InputError, match=r"^drops\.d32: '1e308 km' is out of range as a length"):
        parse("1e308 km", "drops.d32", "length")


def test_case_file_and_cli_option_read_the_comma(tmp_path, capsys):
    """Case files and CLI options reach the same parser: the comma form gives the same plan."""
    demo = Path(__file__).resolve().parents[1] / "cases_demo" / "lotion_o_w.toml"
    text = demo.read_text(encoding="utf-8")
    assert 'volume = "2.1 m**3"' in text
    comma = tmp_path / "comma.toml"
    comma.write_text(text.replace('volume = "2.1 m**3"', 'volume = "2,1 m**3"'), encoding="utf-8")
    assert load_case(comma).quantities()["batch.volume"].si == load_case(demo).quantities()["batch.volume"].si

    def solve(*args):
        capsys.readouterr()
        rc = main(["solve", *map(str, args), "--json"])
        out = capsys.readouterr()
        return rc, out

    rc0, ref = solve(demo, "--dose", "2.5 kg")
    rc1, got = solve(comma, "--dose", "2,5 kg")
    assert rc0 == rc1 == 0
    a, b = json.loads(ref.out), json.loads(got.out)
    assert b.pop("dose_given") == "2,5 kg" and a.pop("dose_given") == "2.5 kg"
    basis_a, basis_b = a.pop("dose_basis"), b.pop("dose_basis")  # echoes the text as given
    assert {k: v for k, v in basis_a.items() if k not in ("text", "echo")} == \
        {k: v for k, v in basis_b.items() if k not in ("text", "echo")}
    assert a == b

    bad = tmp_path / "bad.toml"
    bad.write_text(text.replace('volume = "2.1 m**3"', 'volume = "2,100 m**3"'), encoding="utf-8")
    rc, out = solve(bad)
    assert rc == 2
    assert "batch.volume" in out.err and "'2,100 m**3'" in out.err and "use a decimal point" in out.err
    assert "Traceback" not in out.err

    rc, out = solve(demo, "--dose", "2,500 kg")
    assert rc == 2 and "--dose" in out.err and "'2,500 kg'" in out.err and "Traceback" not in out.err


@pytest.mark.parametrize("unit", ["m**9**9**9", "m**(9**9**9)", "m^9^9^9", "1/m**2**2**2**2**2**2",
                                  "m**(2)**(2)", "m***3", "m**"])
def test_power_towers_refused_before_pint(unit):
    # pint would build 9**(9**9) as an integer first (minutes of CPU from one field)
    with pytest.raises(InputError, match=r"^drops\.d32: in '1 .*' an exponent is not a plain number"):
        parse("1 " + unit, "drops.d32", "length")


@pytest.mark.parametrize("text, dimension, si", [
    ("3.3 umol/m^2", "surface_excess", 3.3e-6),
    ("1 m**(1/2)*m**0.5", "length", 1.0),
    ("2 m**-1*m**2", "length", 2.0),
    ("0.5 nm ** 2", "area", 0.5e-18),
    ("5e-10 m**2/s", "diffusivity", 5e-10),
])
def test_plain_exponents_still_read(text, dimension, si):
    # exact unit definitions (SI brochure, 9th ed., 2019): tolerance 1e-12 relative
    assert parse(text, "f", dimension) == pytest.approx(si, rel=1e-12)
