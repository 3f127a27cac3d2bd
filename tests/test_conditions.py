"""Process conditions: CMC and K against temperature, salt (Corrin-Harkins), storage, Krafft and
cloud points.

Sources (tolerances beside each check):
- van 't Hoff form of the pseudo-phase CMC, d ln CMC / d(1/T) = dH_mic / ((1 + b) R); the check
  values are computed from that equation by hand (e.g. Rosen and Kunjappu, Surfactants and Interfacial
  Phenomena, 4th ed. (2012), ch. 3, for the form [from memory]).
- Corrin and Harkins, J. Am. Chem. Soc. 69 (1947) 683: log CMC = const - b log(CMC + c_salt).
  SDS in 0.1 M NaCl has a CMC of about 1.4-1.6 mM at 25 degC [from memory, e.g. the tables in
  Rosen and Kunjappu, Surfactants and Interfacial Phenomena, 4th ed. (2012)].
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from sizing import model
from sizing.case import loads_case
from sizing.constants import GAS_CONSTANT
from sizing.errors import InputError
from sizing.outputs.solve_json import solution_json
from sizing.physics import conditions as C


@pytest.mark.parametrize("dh, b, ratio", [(15e3, 0.0, 0.7484), (-2e3, 0.0, 1.0394), (-2e3, 0.7, 1.0230)])
def test_cmc_against_temperature_van_t_hoff(dh, b, ratio):
    got = float(C.cmc_at_temperature(1.0, 313.15, 298.15, dh, b))
    assert got == pytest.approx(ratio, abs=6e-5)  # 4 decimals in the reference ([C])


def test_adsorption_constant_against_temperature():
    got = float(C.adsorption_constant_at_temperature(2.0, 313.15, 298.15, -25e3))
    assert got == pytest.approx(2.0 * math.exp(25e3 / GAS_CONSTANT * (1 / 313.15 - 1 / 298.15)), rel=1e-12)


def test_corrin_harkins_sds_in_salt():
    c = float(C.cmc_with_salt(8.2, 100.0, 0.67))
    assert 1.4 <= c <= 1.6  # SDS in 0.1 M NaCl, 1.4-1.6 mM [from memory]
    assert c * (c + 100.0) ** 0.67 == pytest.approx(8.2 ** 1.67, rel=1e-12)  # the relation itself
    assert float(C.cmc_with_salt(8.2, 0.0, 0.67)) == 8.2 and float(C.cmc_with_salt(0.07, 100.0, 0.0)) == 0.07


def test_gibbs_prefactor_with_salt():
    n = C.gibbs_prefactor_with_salt(2.0, np.array([8.0, 8.0, 8.0]), np.array([0.0, 8.0, 1e6]))
    np.testing.assert_allclose(n, [2.0, 1.5, 1.0], atol=1e-5)  # 2 alone, towards 1 in excess salt


CASE = """
[case]
title = "conditions"
system = "emulsion"
[batch]
volume = "2 m**3"
dispersed_fraction = 0.2
temperature = "{t}"
{batch}
[drops]
d32 = "3 um"
[surfactant]
molar_mass = "288 g/mol"
cmc = "8.2 mM"
max_surface_excess = "3 umol/m**2"
adsorption_constant = "1.5 m**3/mol"
gibbs_prefactor = 2
clean_tension = "40 mN/m"
{surf}
[target]
coverage = 0.5
"""

CONDS = """reference_temperature = "25 degC"
micellisation_enthalpy = "-2 kJ/mol"
adsorption_enthalpy = "-20 kJ/mol"
counterion_binding = 0.67"""


def test_defaults_change_nothing():
    plain = model.solve_case(loads_case(CASE.format(t="60 degC", batch="", surf="")))
    same = model.solve_case(loads_case(CASE.format(t="60 degC", batch="", surf='counterion_binding = 0.6')))
    assert float(plain.dose_mol) == float(same.dose_mol)
    assert float(plain.inputs.cmc) == pytest.approx(8.2, rel=1e-12) and float(plain.inputs.adsorption_constant) == 1.5


def test_hot_batch_with_salt_uses_the_corrected_values_and_storage_re_equilibrates():
    case = loads_case(CASE.format(t="75 degC", batch='salt = "50 mM"\nstorage_temperature = "25 degC"', surf=CONDS))
    sol = model.solve_case(case)
    cmc_t = float(C.cmc_at_temperature(8.2, 348.15, 298.15, -2e3, 0.67))
    cmc = float(C.cmc_with_salt(cmc_t, 50.0, 0.67))
    k = float(C.adsorption_constant_at_temperature(1.5, 348.15, 298.15, -20e3))
    j = solution_json(sol, case)
    assert j["at_batch"]["cmc_mol_m3"] == pytest.approx(cmc, rel=1e-12)
    assert j["at_batch"]["adsorption_constant_m3_mol"] == pytest.approx(k, rel=1e-12)
    assert j["at_batch"]["gibbs_prefactor"] == pytest.approx(1 + cmc / (cmc + 50.0), rel=1e-12)
    # independent: the dose for coverage 0.5 from the balance with those values (Langmuir, c = 1/K)
    c = 1.0 / k
    vc, area = 1.6, 6 * 0.4 / 3e-6  # P = 0: the drops hold no monomer
    assert float(sol.dose_mol) == pytest.approx(c * vc + 3e-6 * 0.5 * area, rel=1e-12)
    st = j["storage"]
    assert st["temperature_K"] == pytest.approx(298.15)
    k25, cmc25 = 1.5, float(C.cmc_with_salt(8.2, 50.0, 0.67))
    assert st["cmc_mol_m3"] == pytest.approx(cmc25, rel=1e-12)
    # storage: the same dose with K at 25 degC: c V + Gamma A K c/(1 + K c) = N
    n = float(sol.dose_mol)
    bq = vc + 3e-6 * area * k25 - n * k25
    c_s = (-bq + math.sqrt(bq * bq + 4 * vc * k25 * n)) / (2 * vc * k25)
    assert st["free_concentration_mol_m3"] == pytest.approx(c_s, rel=1e-9)
    assert st["coverage"] == pytest.approx(k25 * c_s / (1 + k25 * c_s), rel=1e-9)
    json.dumps(j)


@pytest.mark.parametrize("surf, batch, expected", [
    ('micellisation_enthalpy = "10 kJ/mol"', "", "reference_temperature"),
    ('counterion_binding = 1.5', "", "counterion_binding"),
    ('krafft_point = "40 degC"\ncloud_point = "30 degC"', "", "below the cloud point"),
])
def test_bad_condition_keys_are_named(surf, batch, expected):
    with pytest.raises(InputError, match=expected):
        loads_case(CASE.format(t="25 degC", batch=batch, surf=surf))


def test_salt_in_an_oil_continuous_batch_is_refused():
    text = CASE.format(t="25 degC", batch='salt = "50 mM"', surf="partition_coefficient = 10").replace(
        'system = "emulsion"', 'system = "emulsion"\ncontinuous = "oil"')
    with pytest.raises(InputError, match="batch.salt"):
        loads_case(text)


def test_krafft_and_cloud_points_warn_in_every_solve():
    case = loads_case(CASE.format(t="25 degC", batch='storage_temperature = "5 degC"', surf='krafft_point = "16 degC"'))
    w = solution_json(model.solve_case(case), case)["warnings"]
    assert any("Krafft point 16 degC is above the storage temperature 5 degC" in x for x in w)
    case = loads_case(CASE.format(t="70 degC", batch="", surf='cloud_point = "60 degC"'))
    w = solution_json(model.solve_case(case), case)["warnings"]
    assert any("cloud point 60 degC is below the batch temperature 70 degC" in x for x in w)


def test_the_plan_shows_the_charge_across_temperatures():
    from sizing.outputs.result_json import plan_json
    from sizing.planning.plan import build_plan

    case = loads_case(CASE.format(t="75 degC", batch='storage_temperature = "25 degC"', surf=CONDS))
    plan = build_plan(case)
    c = plan_json(plan)["conditions"]
    # the storage point equals a direct solve of the charge at 25 degC (same phases and area)
    stored = model.solve(model.case_inputs(case, {"batch.temperature": 298.15}),
                         dose_mol=plan.recommendation.mol_per_batch)
    assert c["storage_coverage"] == pytest.approx(float(stored.state.coverage), rel=1e-12)
    k = np.interp(348.15, c["temperature_K"], c["coverage"])
    assert k == pytest.approx(plan.recommendation.coverage_at_charge, rel=1e-3)  # the grid passes the batch
    assert "Process and storage" in __import__("sizing").render_report(plan)


def test_random_conditions_agree_with_an_independent_calculation():
    # 30 random batches (temperature, salt, enthalpies, binding, CMC, K, P): the dose for the
    # coverage target computed here by hand, the CMC through scipy.optimize.brentq on the
    # Corrin-Harkins relation CMC (CMC + c_s)**b = CMC_T**(1 + b), not through sizing.physics.conditions
    from scipy.optimize import brentq

    rng = np.random.default_rng(2026)
    for _ in range(30):
        t_c, salt, dh, dha = rng.uniform(5, 85), rng.uniform(0, 200), rng.uniform(-20e3, 20e3), rng.uniform(-40e3, 0)
        b, cmc0, k0, p, theta = rng.uniform(0, 0.9), rng.uniform(0.5, 20), rng.uniform(0.5, 50), rng.uniform(0, 5), \
            rng.uniform(0.3, 0.7)
        surf = (f'reference_temperature = "25 degC"\nmicellisation_enthalpy = "{dh!r} J/mol"\n'
                f'adsorption_enthalpy = "{dha!r} J/mol"\ncounterion_binding = {b!r}\npartition_coefficient = {p!r}')
        text = (CASE.format(t=f"{t_c!r} degC", batch=f'salt = "{salt!r} mM"', surf=surf)
                .replace('cmc = "8.2 mM"', f'cmc = "{cmc0!r} mM"')
                .replace('adsorption_constant = "1.5 m**3/mol"', f'adsorption_constant = "{k0!r} m**3/mol"')
                .replace("coverage = 0.5", f"coverage = {theta!r}"))
        sol = model.solve_case(loads_case(text))
        t, tr = t_c + 273.15, 298.15
        cmc_t = cmc0 * math.exp(dh / ((1 + b) * GAS_CONSTANT) * (1 / t - 1 / tr))
        cmc = brentq(lambda x: math.log(x) + b * math.log(x + salt) - (1 + b) * math.log(cmc_t), 1e-12, cmc_t + 1e-12,
                     xtol=1e-15, rtol=1e-14) if salt > 0 else cmc_t
        k = k0 * math.exp(-dha / GAS_CONSTANT * (1 / t - 1 / tr))
        c = theta / (k * (1 - theta))  # Langmuir
        vc, vd = 2 * 0.8, 2 * 0.2
        area = 6 * vd / 3e-6
        if c >= cmc:
            assert not bool(sol.feasible)
            continue
        assert float(sol.inputs.cmc) == pytest.approx(cmc, rel=1e-9)
        assert float(sol.dose_mol) == pytest.approx(c * vc + p * c * vd + 3e-6 * theta * area, rel=1e-9)
