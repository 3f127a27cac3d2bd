"""Every engine input check gives a message that names the field and what is allowed."""

from pathlib import Path

import pytest

from sizing.case import loads_case
from sizing.errors import InputError

LOTION = (Path(__file__).resolve().parents[1] / "cases_demo" / "lotion_o_w.toml").read_text()


@pytest.mark.parametrize(
    "old, new, message",
    [
        ('d32 = "2.0 um"', 'd32 = "0 um"', r"drops\.d32: expected a value > 0 m, got '0 um'"),
        ('d32 = "2.0 um"', 'd32 = "-1 um"', r"drops\.d32: expected a value > 0 m, got '-1 um'"),
        ('d32 = "2.0 um"', 'd32 = "2.0 kg"', r"drops\.d32: '2\.0 kg' is not a length"),
        ('d32 = "2.0 um"', "d32 = 2.0", r"drops\.d32: a bare number 2\.0 has no unit"),
        ("dispersed_fraction = 0.25", "dispersed_fraction = 1.2", r"batch\.dispersed_fraction: expected a value > 0 and < 1, got 1\.2"),
        ("dispersed_fraction = 0.25", "dispersed_fraction = 0", r"batch\.dispersed_fraction: expected a value > 0 and < 1, got 0"),
        ("coverage = 0.85", "coverage = 1.0", r"target\.coverage: expected a value > 0 and < 1, got 1\.0"),
        ("coverage = 0.85", "coverage = -0.1", r"target\.coverage: expected a value > 0 and < 1"),
        ('cmc = "8.2 mM"', 'cmc = "0 mM"', r"surfactant\.cmc: expected a value > 0 mol/m\*\*3, got '0 mM'"),
        ('cmc = "8.2 mM"', 'cmc = "-8 mM"', r"surfactant\.cmc: expected a value > 0"),
        ('molar_mass = "288.4 g/mol"', 'molar_mass = "0 g/mol"', r"surfactant\.molar_mass: expected a value > 0 kg/mol"),
        ('molar_mass = "288.4 g/mol"', 'molar_mass = "288.4 g"', r"surfactant\.molar_mass: '288\.4 g' is not a molar mass; expected a molar mass such as '288\.4 g/mol'"),
        ('max_surface_excess = "3.3 umol/m**2"', 'max_surface_excess = "3.3 umol m-2"',
         r"surfactant\.max_surface_excess: expected a surface excess or surface load such as '3\.3 umol/m\*\*2' or '2 mg/m\*\*2'"),
        ('temperature = "60 degC"', 'temperature = "60 degK_x"', r"batch\.temperature: unknown unit 'degK_x'"),
        ('isotherm = "langmuir"', 'isotherm = "bet"', r"surfactant\.isotherm: unknown isotherm 'bet'; expected one of langmuir, frumkin, volmer"),
        ('isotherm = "langmuir"', 'isotherm = "frumkin"\ninteraction = 2.5', r"surfactant\.interaction: 2\.5 is above 2; a Frumkin interaction beta > 2 means a two-dimensional phase transition"),
        ("active_fraction = 0.30", "active_fraction = 1.3", r"surfactant\.active_fraction: expected a value > 0 and <= 1, got 1\.3"),
    ],
)
def test_message_names_field_value_and_allowed(old, new, message):
    assert old in LOTION
    with pytest.raises(InputError, match=message):
        loads_case(LOTION.replace(old, new))


@pytest.mark.parametrize(
    "levels, message",
    [
        ("[1.0]", r"trial\.levels: expected 3 to 5 levels"),
        ("[0.5, 0.8, 1.0, 1.2, 1.5, 2.0]", r"trial\.levels: expected 3 to 5 levels"),
        ("[1.0, 1.2, 1.5]", r"trial\.levels: expected levels that bracket the recommended charge"),
        ("[0.8, 1.2, 1.0]", r"trial\.levels: expected distinct values in increasing order"),
    ],
)
def test_trial_levels_bracket_the_charge(levels, message):
    # The trial matrix has 3 to 5 levels bracketing the recommendation (the plan's contract).
    with pytest.raises(InputError, match=message):
        loads_case(LOTION.replace("levels = [0.8, 1.0, 1.25]", f"levels = {levels}"))


def test_impossible_packing_is_refused():
    # A molecule needs at least an alkyl chain's cross-section, about 0.2 nm**2 (common
    # practice): 2 umol/um**2 (= 2e6 umol/m**2, a unit slip) must not pass as valid.
    with pytest.raises(InputError, match=r"surfactant\.max_surface_excess: '2\.0 umol/um\*\*2' means .* no surfactant packs tighter"):
        loads_case(LOTION.replace('max_surface_excess = "3.3 umol/m**2"', 'max_surface_excess = "2.0 umol/um**2"'))
    with pytest.raises(InputError, match=r"surfactant\.area_per_molecule: .* no surfactant packs tighter"):
        loads_case(LOTION.replace('max_surface_excess = "3.3 umol/m**2"', 'area_per_molecule = "0.05 nm**2"'))
    loads_case(LOTION.replace('max_surface_excess = "3.3 umol/m**2"', 'area_per_molecule = "0.25 nm**2"'))


def test_price_needs_its_currency():
    with pytest.raises(InputError, match=r"surfactant\.currency: give the currency of price_per_kg"):
        loads_case(LOTION.replace('currency = "EUR"', ""))
    loads_case(LOTION.replace('currency = "EUR"', "").replace("price_per_kg = 1.8", ""))
