"""Constants measured in one phase used in a case continuous in the other (issue 14 item 2).

A tension series is made up in water; a W/O case's balance counts concentrations in the oil.  At
partition equilibrium c_oil = P c_water (the definition of the partition coefficient), so
theta = K_w c_w = (K_w / P) c_oil and the water's CMC is reached at c_oil = P CMC_w.  Checks: a
fitted block recording ``measured_in = "water"`` in the issue's W/O case (1 m**3, phi 0.3, d32 3 um,
P 35.3, coverage 0.9) gives exactly the dose of the same case with K / P and P x CMC typed in
(rel 1e-12: the conversion is that and nothing else), and about 10 % more than using the water's
values unconverted, as the issue measured; a missing partition coefficient is refused by name;
old blocks without the key are taken as water and say so.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest

from sizing.case import loads_case
from sizing.errors import InputError
from sizing.fitting.block import fit_tension, write_fitted_block
from sizing.model import solution_warnings, solve_case
from sizing.units import parse

LAB = Path(__file__).resolve().parents[1] / "cases_demo" / "lab"

W_O = """
[case]
title = "W/O check"
system = "emulsion"
continuous = "oil"
[batch]
volume = "1 m**3"
dispersed_fraction = 0.3
temperature = "25 degC"
continuous_density = "850 kg/m**3"
dispersed_density = "1000 kg/m**3"
[drops]
d32 = "3 um"
[surfactant]
{surf}
[target]
coverage = 0.9
"""


@pytest.fixture(scope="module")
def block(tmp_path_factory):
    d = tmp_path_factory.mktemp("fits")
    fit = fit_tension(LAB / "nonionic_tension.csv", model="langmuir")
    toml_path, _ = write_fitted_block(fit, d, name="ne6")
    return d, toml_path, fit


def _case(d, surf):
    return loads_case(W_O.format(surf=surf), base_dir=d)


def test_a_water_fit_in_an_oil_continuous_case_converts_through_p(block):
    d, path, fit = block
    assert 'measured_in = "water"' in path.read_text()
    p = 35.3
    conv = solve_case(_case(d, f'from = "{path.name}"\nmolar_mass = "400 g/mol"\npartition_coefficient = {p}'))
    text = path.read_text()

    s = tomllib.loads(text)["surfactant"]

    k = parse(s["adsorption_constant"], "k", "adsorption_constant")
    cmc = parse(s["cmc"], "cmc", "concentration")
    typed = (f'molar_mass = "400 g/mol"\npartition_coefficient = {p}\nisotherm = "langmuir"\n'
             f'max_surface_excess = "{s["max_surface_excess"]}"\nclean_tension = "{s["clean_tension"]}"\n'
             f'adsorption_constant = "{k / p!r} m**3/mol"\ncmc = "{cmc * p!r} mol/m**3"')
    ref = solve_case(_case(d, typed))
    assert float(conv.dose_mol) == pytest.approx(float(ref.dose_mol), rel=1e-12)
    raw = (f'molar_mass = "400 g/mol"\npartition_coefficient = {p}\nisotherm = "langmuir"\n'
           f'max_surface_excess = "{s["max_surface_excess"]}"\nclean_tension = "{s["clean_tension"]}"\n'
           f'adsorption_constant = "{s["adsorption_constant"]}"\ncmc = "{s["cmc"]}"')
    unconverted = solve_case(_case(d, raw))
    low = 1 - float(unconverted.dose_mol) / float(conv.dose_mol)
    assert 0.03 < low < 0.3  # the issue: "dose 10 % low" without the conversion
    assert any("measured in the water and are converted" in w for w in solution_warnings(conv))


def test_no_partition_coefficient_is_refused_by_name(block):
    d, path, _ = block
    with pytest.raises(InputError, match=r"surfactant.measured_in: .*measured in the water.*partition coefficient"):
        _case(d, f'from = "{path.name}"\nmolar_mass = "400 g/mol"')


def test_oil_in_a_foam_is_refused():
    text = W_O.replace('continuous = "oil"', "").replace('system = "emulsion"', 'system = "foam"').replace(
        'dispersed_density = "1000 kg/m**3"', "").replace('continuous_density = "850 kg/m**3"',
                                                          'continuous_density = "1000 kg/m**3"')
    surf = ('molar_mass = "400 g/mol"\ncmc = "0.1 mM"\nmax_surface_excess = "3 umol/m**2"\n'
            'adsorption_constant = "1000 m**3/mol"\nmeasured_in = "oil"\npartition_coefficient = 10')
    with pytest.raises(InputError, match="measured_in: 'oil' in a foam"):
        loads_case(text.format(surf=surf))


def test_an_old_block_without_the_key_is_taken_as_water_and_says_so(block):
    d, path, _ = block
    old = d / "old.toml"
    old.write_text(path.read_text().replace('measured_in = "water"\n', ""))
    sol = solve_case(_case(d, 'from = "old.toml"\nmolar_mass = "400 g/mol"\npartition_coefficient = 35.3'))
    assert any("does not record its phase" in w for w in solution_warnings(sol))


def test_same_phase_changes_nothing(block):
    d, path, _ = block
    text = W_O.replace('continuous = "oil"', 'continuous = "water"')
    a = solve_case(loads_case(text.format(surf=f'from = "{path.name}"\nmolar_mass = "400 g/mol"\n'
                                               'partition_coefficient = 35.3'), base_dir=d))
    b = solve_case(loads_case(text.format(surf=f'from = "{path.name}"\nmolar_mass = "400 g/mol"\n'
                                               'partition_coefficient = 35.3\nmeasured_in = "water"'), base_dir=d))
    assert float(a.dose_mol) == float(b.dose_mol)
    assert not any("converted" in w for w in solution_warnings(a))
