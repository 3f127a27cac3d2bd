"""Plausibility ranges (sizing.plausible) and their use by the lab readers and fits (issue 13).

The ranges are deliberately wide; the reference facts behind them: water freezes at 0 degC and
boils at 100 degC at 1 atm; the density of hydrogen gas is about 0.08 kg/m**3 and of osmium
22,590 kg/m**3; mercury's surface tension is about 485 mN/m (CRC Handbook of Chemistry and
Physics, 97th ed. [from memory]).  Common practice: emulsions are made between about -20 and
150 degC; surfactant molar masses run from about 150 g/mol to polymers of 10**6 g/mol.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from sizing.cli import main
from sizing.errors import InputError
from sizing.fitting.depletion import fit_depletion
from sizing.fitting.tension import read_tension_csv
from sizing.plausible import RANGES, check, check_array, model_warnings

ROOT = Path(__file__).resolve().parents[1]
DEPLETION_HEAD = ("dose [umol],continuous_volume [mL],dispersed_volume [mL],area [m**2],"
                  "continuous_concentration [mM]\n")


# ---------------------------------------------------------------- the ranges themselves
def test_ranges_hold_the_handbook_extremes_and_refuse_slips():
    assert check("t", 273.15, "temperature") is None  # water freezes (0 degC)
    assert check("t", 373.15, "temperature") is None  # water boils at 1 atm (100 degC)
    assert check("rho", 0.08, "density") is None  # hydrogen gas: accepted (a foam's gas)
    assert check("rho", 22590.0, "density")  # osmium: accepted, with a warning
    assert check("g", 0.485, "tension")  # mercury: accepted, with a warning
    assert check("M", 0.288, "molar_mass") is None  # an alkyl sulfate, common practice
    for quantity, r in RANGES.items():
        lo, hi = r.accepted
        assert lo < r.usual[0] < r.usual[1] < hi, quantity


def test_25_kelvin_is_refused_with_the_likely_slip_named():
    with pytest.raises(InputError, match=r"^batch\.temperature: 25 K \(-248\.15 degC\) is outside the "
                                         r"accepted range .*did you mean '25 degC'\?$"):
        check("batch.temperature", 25.0, "temperature")


def test_1e308_degc_and_non_finite_values_are_refused():
    with pytest.raises(InputError, match=r"^--temperature: 1e\+308 K .* outside the accepted range"):
        check("--temperature", 1e308 + 273.15, "temperature")
    with pytest.raises(InputError, match=r"^x: inf is not a finite number"):
        check("x", float("inf"), "density")


@pytest.mark.parametrize("quantity", ["density", "volume", "molar_mass", "mass", "concentration",
                                      "tension", "surface_excess", "drop_size", "length", "amount"])
@pytest.mark.parametrize("value", [1e308, 1e-308])
def test_extreme_magnitudes_are_refused_naming_the_field(quantity, value):
    with pytest.raises(InputError, match=rf"^field\.{quantity}: .*outside the accepted range for a "):
        check(f"field.{quantity}", value, quantity)


def test_zero_and_sign_are_left_to_the_caller():
    assert check("c", 0.0, "concentration") is None
    assert check("c", -1.0, "concentration") is None  # the caller's own "negative" message
    with pytest.raises(InputError):
        check("t", 0.0, "temperature")  # absolute


def test_check_array_names_rows_lists_three_then_counts():
    bad, warn = check_array("f.csv: column 'c [mM]'", [1.0, 1e308, 1e308, 1e308, 1e308, 5e4, 0.0],
                            "concentration")
    assert [b.split(":")[1].strip() for b in bad[:3]] == ["row 3, column 'c [mM]'", "row 4, column 'c [mM]'",
                                                         "row 5, column 'c [mM]'"]
    assert "1 more row(s)" in bad[3] and len(bad) == 4
    assert len(warn) == 1 and warn[0].startswith("f.csv: row 7, column 'c [mM]': 5e+04 mM is outside the usual")


# ---------------------------------------------------------------- lab files and fits
def test_lab_temperature_column_in_kelvin_slip_is_refused(tmp_path):
    p = tmp_path / "t.csv"
    p.write_text("concentration [mM],tension [mN/m],temperature [K]\n0.01,50,25\n0.02,48,25\n")
    with pytest.raises(InputError, match=r"row 2, column 'temperature \[K\]': 25 K .*did you mean '25 degC'"):
        read_tension_csv(p)


def test_lab_temperature_1e308_degc_is_refused(tmp_path):
    p = tmp_path / "t.csv"
    p.write_text("concentration [mM],tension [mN/m],temperature [degC]\n0.01,50,1e308\n0.02,48,25\n")
    with pytest.raises(InputError, match=r"row 2, column 'temperature \[degC\]'.*accepted range"):
        read_tension_csv(p)


def test_depletion_volume_and_dose_extremes_are_refused_by_row(tmp_path):
    p = tmp_path / "runs.csv"
    p.write_text(DEPLETION_HEAD + "10,100,20,2,0.02\n1e-308,1e308,20,2,0.02\n")
    with pytest.raises(InputError) as exc:
        fit_depletion(p)
    text = str(exc.value)
    assert "row 3, column 'dose [umol]'" in text and "row 3, column 'continuous_volume [mL]'" in text


def test_depletion_unusual_volume_is_a_note_not_an_error(tmp_path):
    p = tmp_path / "runs.csv"
    p.write_text(DEPLETION_HEAD + "10,100,20,2,0.02\n10,0.05,0.01,2,0.02\n")
    res = fit_depletion(p)
    assert any("column 'continuous_volume [mL]'" in n and "usual range" in n for n in res.notes)


def test_cli_fit_reports_an_implausible_cell_in_one_line(tmp_path, capsys):
    p = tmp_path / "pairs.csv"
    p.write_text("water_concentration [mM],oil_concentration [mM]\n0.01,0.2\n0.02,1e-300\n0.04,0.8\n")
    assert main(["fit", "partition", str(p)]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err and "row 3, column 'oil_concentration [mM]'" in err


def test_demo_cases_hold_no_unusual_value():
    from sizing.case import load_case

    for f in sorted((ROOT / "cases_demo").glob("*.toml")):
        assert model_warnings(load_case(f)) == [], f.name


# ---------------------------------------------------------------- cases (wired in case.py)
CASE = """
[case]
title = "t"
system = "emulsion"
[batch]
volume = "{volume}"
temperature = "{temperature}"
dispersed_fraction = 0.3
[drops]
d32 = "2 um"
[surfactant]
molar_mass = "{molar_mass}"
max_surface_excess = "3 umol/m**2"
adsorption_constant = "1 m**3/mol"
[target]
coverage = 0.8
"""
@pytest.mark.parametrize("field, kw", [
    ("batch.temperature", {"temperature": "25 K"}),
    ("batch.temperature", {"temperature": "1e308 degC"}),
    ("batch.volume", {"volume": "1e-308 m**3"}),
    ("surfactant.molar_mass", {"molar_mass": "1e308 g/mol"}),
])
def test_case_refuses_implausible_values_naming_the_field(field, kw):
    from sizing.case import loads_case

    values = {"volume": "2 m**3", "temperature": "25 degC", "molar_mass": "288 g/mol", **kw}
    with pytest.raises(InputError) as exc:
        loads_case(CASE.format(**values))
    assert any(line.startswith(field) and "accepted range" in line for line in exc.value.problems)
