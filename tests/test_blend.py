"""Blends: reference values of mixed micelles and competitive adsorption, identities with the single
surfactant, mass conservation, forward/backward agreement, a per-case scipy solve, the case schema.

Sources of the check values (tolerances beside each check):
- Clint, J. H., J. Chem. Soc. Faraday Trans. 1, 71 (1975) 1327: 1/C_12 = sum alpha_i / C_i.
- Rubingh, D. N., Solution Chemistry of Surfactants vol. 3 (1979) 337, equations as in Holland and
  Rubingh, ACS Symp. Ser. 501 (1992) ch. 1.  The values below are computed from these published
  equations (worked by hand from them) with C_1 = 8.2 mM (SDS) and C_2 = 0.11 mM
  (C12E8), common literature CMCs [from memory].
- Competitive Langmuir with equal Gamma_inf equals the ideal adsorbed solution (Myers and
  Prausnitz, AIChE J. 11 (1965) 121) [from memory]: Pi = n R T Gamma_inf ln(1 + sum K c).
- Ben Ghoulam et al., Langmuir 20 (2004) 2584: pseudo-phase model of an ethoxylate spread over
  oil and water; apparent CMC 1/C_app = sum z_i / (CMC_i (1 + K_i r)).
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import fsolve

from sizing import model
from sizing.case import loads_case
from sizing.errors import InputError
from sizing.physics import balance
from sizing.physics import blend as B

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases_demo" / "cream_blend_pair.toml"


# --------------------------------------------------------------------------------------------
# published check values


@pytest.mark.parametrize("alpha1, micelles, beta, c12, x1", [
    (0.5, "ideal", 0.0, 0.21709, 0.0132),     # Clint 1975 (computed [C]), 5 digits
    (0.5, "regular", -2.0, 0.20267, 0.0698),  # Rubingh 1979 (computed [C])
    (0.5, "regular", -4.1, 0.16274, 0.1687),  # Rubingh 1979 (computed [C])
    (0.9, "ideal", 0.0, 0.98150, None),       # Clint 1975 (computed [C])
    (0.9, "regular", -4.1, 0.47345, None),    # Rubingh 1979 (computed [C])
])
def test_mixed_cmc_matches_clint_and_rubingh(alpha1, micelles, beta, c12, x1):
    got, x = B.mixed_cmc([alpha1, 1 - alpha1], [8.2, 0.11], micelles, beta)
    assert float(got) == pytest.approx(c12, rel=3e-5)  # the reference gives 5 significant digits
    if x1 is not None:
        assert float(x[0]) == pytest.approx(x1, abs=6e-5)  # 4 decimals in the reference


def test_regular_with_zero_beta_is_clint():
    a = B.mixed_cmc([0.3, 0.7], [8.2, 0.11], "ideal")[0]
    r = B.mixed_cmc([0.3, 0.7], [8.2, 0.11], "regular", 0.0)[0]
    assert float(r) == pytest.approx(float(a), rel=1e-12)
    # Clint closed form (the published equation itself)
    assert float(a) == pytest.approx(1.0 / (0.3 / 8.2 + 0.7 / 0.11), rel=1e-12)


def test_competitive_langmuir_and_ideal_adsorbed_solution_pressure():
    # n = 1, Gamma_inf = 3.3 umol/m**2, K = 2000 and 500 m**3/mol, c = 1e-3 mol/m**3 each, 25 C:
    # Gamma = 1.8857 and 0.47143 umol/m**2, Pi = 10.248 mN/m (computed [C] from the equations)
    n1, n2 = 1e-3 + 3.3e-6 * 2.0 / 3.5, 1e-3 + 3.3e-6 * 0.5 / 3.5
    bl = B.Blend([n1 / (n1 + n2), n2 / (n1 + n2)], [np.inf, np.inf], [3.3e-6, 3.3e-6], [2000.0, 500.0],
                 [0.0, 0.0])
    s = B.state_for_dose(n1 + n2, bl, continuous_volume=1.0, dispersed_volume=0.0, area=1.0)
    np.testing.assert_allclose(s.free_concentration, [1e-3, 1e-3], rtol=1e-12)
    np.testing.assert_allclose(s.interface_mol, [1.8857e-6, 0.47143e-6], rtol=5e-5)  # 5 digits
    assert float(B.surface_pressure(s, 3.3e-6, 298.15)) == pytest.approx(10.248e-3, rel=5e-5)


def test_apparent_cmc_against_oil_water_ratio_ben_ghoulam():
    # z = 0.5/0.5, CMC = 0.02/0.1 mM, K = 500/1: C_app = 0.0333, 0.2382, 0.3922 mM at r = 0, 0.25, 1
    bl = B.Blend([0.5, 0.5], [0.02, 0.1], [3e-6, 3e-6], [1.0, 1.0], [500.0, 1.0])
    got = B.apparent_cmc(bl, np.array([0.0, 0.25, 1.0]))
    np.testing.assert_allclose(got, [0.0333, 0.2382, 0.3922], rtol=2e-3)  # 3-4 digits in the reference
    ref = 1.0 / (0.5 / (0.02 * (1 + 500 * np.array([0, 0.25, 1]))) + 0.5 / (0.1 * (1 + np.array([0, 0.25, 1]))))
    np.testing.assert_allclose(got, ref, rtol=1e-12)  # the published closed form itself


# --------------------------------------------------------------------------------------------
# identities with the single surfactant


GEO = dict(continuous_volume=0.7, dispersed_volume=0.3, area=2e5)


@pytest.mark.parametrize("fractions", [[1.0], [0.3, 0.7], [0.2, 0.5, 0.3]])
@pytest.mark.parametrize("uptake", [0.0, 3.0])
def test_identical_components_equal_the_plain_surfactant(fractions, uptake):
    n = np.logspace(-3, 2, 31)
    plain = balance.state_for_dose(n, uptake=uptake, max_surface_excess=3e-6, adsorption_constant=50.0, cmc=2.0,
                                   **GEO)
    m = len(fractions)
    bl = B.Blend(fractions, [2.0] * m, [3e-6] * m, [50.0] * m, [uptake] * m)
    s = B.state_for_dose(n, bl, **GEO)
    np.testing.assert_allclose(s.coverage.sum(-1), plain.coverage, rtol=1e-9, atol=1e-15)
    np.testing.assert_allclose(s.micelle_mol.sum(-1), plain.micelle_mol, rtol=1e-9, atol=1e-12 * n.max())
    np.testing.assert_allclose(s.free_concentration.sum(-1), plain.free_concentration, rtol=1e-9)
    np.testing.assert_allclose(B.onset_dose(bl, **GEO), 2.0 * (0.7 + uptake * 0.3) + 3e-6 * 2e5 * 100 / 101,
                               rtol=1e-12)


def test_a_vanishing_component_leaves_the_other_alone():
    n = np.logspace(-2, 2, 21)
    plain = balance.state_for_dose(n, uptake=1.0, max_surface_excess=3e-6, adsorption_constant=50.0, cmc=2.0, **GEO)
    for micelles, beta in (("ideal", 0.0), ("regular", -3.0)):
        bl = B.Blend([1 - 1e-12, 1e-12], [2.0, 0.1], [3e-6, 2e-6], [50.0, 900.0], [1.0, 10.0], micelles, beta)
        s = B.state_for_dose(n, bl, **GEO)
        np.testing.assert_allclose(s.coverage.sum(-1), plain.coverage, rtol=1e-8, atol=1e-12)
        np.testing.assert_allclose(s.micelle_mol.sum(-1), plain.micelle_mol, rtol=1e-7, atol=1e-9)


def test_beta_zero_regular_equals_ideal():
    n = np.logspace(-2, 2, 21)
    args = ([0.6, 0.4], [2.4, 0.11], [2.9e-6, 4e-6], [3.1, 900.0], [0.0, 20.0])
    a = B.state_for_dose(n, B.Blend(*args, "ideal"), **GEO)
    r = B.state_for_dose(n, B.Blend(*args, "regular", 0.0), **GEO)
    np.testing.assert_allclose(r.free_concentration, a.free_concentration, rtol=1e-10)
    np.testing.assert_allclose(r.micelle_mol, a.micelle_mol, rtol=1e-9, atol=1e-12)


def _case_text(active: str, target: str = "coverage = 0.8") -> str:
    return f"""
[case]
title = "blend check"
system = "emulsion"
[batch]
volume = "2 m**3"
dispersed_fraction = 0.3
continuous_density = "1000 kg/m**3"
dispersed_density = "900 kg/m**3"
[drops]
d32 = "3 um"
{active}
[target]
{target}
"""


SURF = """[surfactant]
molar_mass = "400 g/mol"
active_fraction = 0.5
cmc = "1 mM"
max_surface_excess = "3 umol/m**2"
adsorption_constant = "40 m**3/mol"
partition_coefficient = 4.0
clean_tension = "30 mN/m"
"""

COMP = """[[blend.component]]
name = "{name}"
fraction = {fraction}
molar_mass = "400 g/mol"
active_fraction = 0.5
cmc = "1 mM"
max_surface_excess = "3 umol/m**2"
adsorption_constant = "40 m**3/mol"
partition_coefficient = 4.0
"""


@pytest.mark.parametrize("target", ["coverage = 0.8", "tension = '20 mN/m'", "free_concentration = '0.2 mM'"])
@pytest.mark.parametrize("parts", [1, 2])
def test_one_component_blend_case_gives_the_surfactant_answer(target, parts):
    plain = model.solve_case(loads_case(_case_text(SURF, target)))
    comps = "".join(COMP.format(name=f"c{i}", fraction=1.0 / parts) for i in range(parts))
    blend = model.solve_case(loads_case(_case_text("[blend]\nclean_tension = '30 mN/m'\n" + comps, target)))
    assert float(blend.dose_mol) == pytest.approx(float(plain.dose_mol), rel=1e-9)
    assert float(blend.kg_product) == pytest.approx(float(plain.kg_product), rel=1e-9)
    assert float(blend.state.coverage) == pytest.approx(float(plain.state.coverage), rel=1e-9)
    assert float(blend.tension) == pytest.approx(float(plain.tension), rel=1e-9)
    for dose in ("3 kg", "40 mol"):
        p = model.solve_case(loads_case(_case_text(SURF, target)), dose=dose)
        b = model.solve_case(loads_case(_case_text("[blend]\nclean_tension = '30 mN/m'\n" + comps, target)),
                             dose=dose)
        assert float(b.state.coverage) == pytest.approx(float(p.state.coverage), rel=1e-9)
        assert float(b.state.micelle_mol) == pytest.approx(float(p.state.micelle_mol), rel=1e-9, abs=1e-12)


# --------------------------------------------------------------------------------------------
# conservation, a per-case scipy solve, forward/backward


@settings(max_examples=60, deadline=None)
@given(
    a1=st.floats(0.001, 0.999), c1=st.floats(0.01, 50.0), c2=st.floats(1e-3, 5.0),
    k1=st.floats(0.1, 1e4), k2=st.floats(0.1, 1e4), p1=st.floats(0.0, 100.0), p2=st.floats(0.0, 100.0),
    beta=st.floats(-15.0, 1.5), phi=st.floats(0.01, 0.7), area=st.floats(0.0, 1e7),
    scale=st.floats(-3.0, 3.0), regular=st.booleans(), third=st.booleans(),
)
def test_mass_is_conserved_per_component(a1, c1, c2, k1, k2, p1, p2, beta, phi, area, scale, regular, third):
    if third and not regular:
        bl = B.Blend([a1 * 0.7, (1 - a1) * 0.7, 0.3], [c1, c2, np.inf], [3e-6, 2e-6, 4e-6], [k1, k2, 5.0],
                     [p1, p2, 1.0])
    else:
        bl = B.Blend([a1, 1 - a1], [c1, c2], [3e-6, 2e-6], [k1, k2], [p1, p2],
                     "regular" if regular else "ideal", beta if regular else 0.0)
    geo = dict(continuous_volume=1 - phi, dispersed_volume=phi, area=area)
    on = B.onset_dose(bl, **geo)
    n = (on if np.isfinite(on) else 1.0) * np.logspace(-2, 2, 9) * 10.0 ** scale
    s = B.state_for_dose(n, bl, **geo)
    alpha = np.asarray(bl.fractions)
    np.testing.assert_allclose(s.total_mol, alpha * n[:, None], rtol=1e-9, atol=1e-300)  # DESIGN: 1e-9
    assert np.all(np.isfinite(s.free_concentration)) and np.all(s.free_concentration >= 0)
    assert np.all(s.micelle_mol >= 0)
    mic = s.micelle_mol.sum(-1)
    assert np.all(mic[n < on] == 0)
    assert np.all(mic[n > on * 1.01] > 0)


def test_micellar_state_agrees_with_a_per_case_scipy_solve():
    """scipy.optimize.fsolve on the full system (c_1, c_2, x_1, N_mic), one case at a time."""
    c_m, g, k, u = np.array([2.4, 0.11]), np.array([2.9e-6, 4e-6]), np.array([3.1, 900.0]), np.array([0.0, 20.0])
    alpha, beta = np.array([0.7, 0.3]), -3.0
    vc, vd, area = 0.7, 0.3, 3e5
    bl = B.Blend(alpha, c_m, g, k, u, "regular", beta)
    on = float(B.onset_dose(bl, continuous_volume=vc, dispersed_volume=vd, area=area))
    for n in on * np.array([1.5, 4.0, 30.0, 1e3]):
        s = B.state_for_dose(n, bl, continuous_volume=vc, dispersed_volume=vd, area=area)

        def eqs(z):
            c = np.exp(z[:2])
            x1, mm = 1 / (1 + np.exp(-z[2])), np.exp(z[3])
            x = np.array([x1, 1 - x1])
            f = np.exp(beta * (1 - x) ** 2)
            d = 1 + np.sum(k * c)
            bal = (c * (vc + u * vd) + g * area * k * c / d + x * mm) / (alpha * n) - 1
            return np.r_[bal, c / (x * f * c_m) - 1]

        x0 = s.micelle_fraction
        z0 = np.r_[np.log(s.free_concentration * 1.05), np.log(x0[0] / x0[1]) + 0.05,
                   np.log(s.micelle_mol.sum() * 0.95)]
        z = fsolve(eqs, z0, xtol=1e-13)
        assert np.max(np.abs(eqs(z))) < 1e-10
        np.testing.assert_allclose(np.exp(z[:2]), s.free_concentration, rtol=1e-8)
        assert np.exp(z[3]) == pytest.approx(s.micelle_mol.sum(), rel=1e-8)


@pytest.mark.parametrize("micelles, beta", [("ideal", 0.0), ("regular", -4.1), ("regular", -12.0)])
def test_dose_for_a_target_solved_forward_gives_the_target(micelles, beta):
    bl = B.Blend([0.7, 0.3], [2.4, 0.11], [2.9e-6, 4e-6], [3.1, 900.0], [0.0, 20.0], micelles, beta)
    geo = dict(continuous_volume=np.full(5, 0.7), dispersed_volume=0.3, area=3e5)
    targets = np.array([0.1, 0.3, 0.5, 0.6, 0.64])
    dose, ok, best, _ = B.dose_for_target("coverage", targets, bl, **geo)
    s = B.state_for_dose(np.where(ok, dose, 0.0), bl, **geo)
    np.testing.assert_allclose(s.coverage.sum(-1)[ok], targets[ok], rtol=1e-9)
    # the smallest dose: a slightly smaller dose stays below the target (scan on a fine grid)
    for j in np.flatnonzero(ok):
        grid = np.linspace(0.0, dose[j] * (1 - 1e-6), 400)[1:]
        cov = B.state_for_dose(grid, bl, continuous_volume=0.7, dispersed_volume=0.3, area=3e5).coverage.sum(-1)
        assert np.all(cov < targets[j])
    assert np.all(best[~ok] < targets[~ok])


def test_coverage_can_fall_above_the_onset_and_the_smallest_dose_is_found():
    # strong synergism: the surface-active nonionic leaves the monomer for the micelles
    bl = B.Blend([0.7, 0.3], [2.4, 0.11], [2.9e-6, 4e-6], [3.1, 900.0], [0.0, 20.0], "regular", -12.0)
    geo = dict(continuous_volume=0.7, dispersed_volume=0.3, area=3e5)
    on = float(B.onset_dose(bl, **geo))
    cov = B.state_for_dose(on * np.array([1.0, 1.5, 3.0]), bl, **geo).coverage.sum(-1)
    assert not np.all(np.diff(cov) >= 0) or cov[-1] > cov[0]  # it moves with the dose above the onset
    dose, ok, best, best_dose = B.dose_for_target("coverage", 0.999, bl, **geo)
    assert not bool(ok) and 0 < float(best) < 0.999 and np.isfinite(best_dose)


# --------------------------------------------------------------------------------------------
# the case file


BLEND_OK = """[blend]
micelles = "regular"
interaction = -3.0
clean_tension = "30 mN/m"
[[blend.component]]
name = "A"
fraction = 0.6
molar_mass = "288 g/mol"
cmc = "8 mM"
max_surface_excess = "3 umol/m**2"
adsorption_constant = "1 m**3/mol"
[[blend.component]]
name = "B"
fraction = 0.4
molar_mass = "540 g/mol"
cmc = "0.1 mM"
area_per_molecule = "0.6 nm**2"
adsorption_constant = "200 m**3/mol"
partition_coefficient = 5
"""


@pytest.mark.parametrize("change, expected", [
    (("fraction = 0.4", "fraction = 0.5"), "add up to 1.1"),
    (('name = "B"', 'name = "A"'), "duplicate component name"),
    (('adsorption_constant = "200 m**3/mol"\n', ""), "blend.component[1].adsorption_constant: missing"),
    (('micelles = "regular"', 'micelles = "ideal"'), "interaction"),
    (('adsorption_constant = "1 m**3/mol"', 'adsorption_constant = "1 m**3/mol"\nisotherm = "frumkin"'),
     "competitive Langmuir"),
])
def test_bad_blends_are_named(change, expected):
    text = _case_text(BLEND_OK.replace(*change))
    with pytest.raises(InputError) as e:
        loads_case(text)
    assert expected in str(e.value)


def test_regular_micelles_take_two_components_and_one_active_section():
    three = BLEND_OK.replace("fraction = 0.4", "fraction = 0.3") + COMP.format(name="C", fraction=0.1)
    with pytest.raises(InputError, match="exactly two components"):
        loads_case(_case_text(three))
    with pytest.raises(InputError, match=r"\[surfactant\].*\[blend\]"):
        loads_case(_case_text(SURF + BLEND_OK))
    with pytest.raises(InputError, match="exactly one of"):
        loads_case(_case_text(""))


def test_mass_fractions_become_mole_fractions_and_a_fraction_override_keeps_proportions():
    case = loads_case(_case_text(BLEND_OK))
    i = model.case_inputs(case)
    w = np.array([0.6, 0.4]) / np.array([0.288, 0.540])
    np.testing.assert_allclose(i.blend.mole_fractions, w / w.sum(), rtol=1e-12)
    assert float(i.molar_mass) == pytest.approx(float(np.sum(w / w.sum() * [0.288, 0.540])), rel=1e-12)
    swept = model.case_inputs(case, {"blend.component[0].fraction": np.array([0.2, 0.5, 0.8])})
    w = np.c_[[0.2, 0.5, 0.8], [0.8, 0.5, 0.2]] / np.array([0.288, 0.540])
    np.testing.assert_allclose(swept.blend.mole_fractions, w / w.sum(-1, keepdims=True), rtol=1e-12)
    sol = model.solve(swept)
    assert sol.dose_mol.shape == (3,)


def test_solve_json_of_a_blend_keeps_the_totals_and_adds_components():
    out = subprocess.run([sys.executable, "-m", "sizing", "solve", str(DEMO), "--json"], capture_output=True,
                         text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    j = json.loads(out.stdout)
    comps = j["components"]
    assert [c["name"] for c in comps] == ["anionic A", "nonionic B"]
    assert sum(c["kg_product"] for c in comps) == pytest.approx(j["dose"]["kg_product"], rel=1e-12)
    assert sum(c["dose_mol"] for c in comps) == pytest.approx(j["dose"]["mol"], rel=1e-12)
    assert sum(c["coverage"] for c in comps) == pytest.approx(j["state"]["coverage"], rel=1e-12)
    for k in ("water", "oil", "interface", "micelles"):
        assert sum(c["split_mol"][k] for c in comps) == pytest.approx(j["split_mol"][k], rel=1e-12, abs=1e-15)
    assert set(j["blend"]) >= {"mixed_cmc_mol_m3", "micelles", "interaction", "onset_dose_mol"}
    assert j["blend"]["micelles"] == "regular" and j["blend"]["interaction"] == -4.1
    out = subprocess.run([sys.executable, "-m", "sizing", "solve", str(DEMO), "--dose", "2 kg", "--json"],
                         capture_output=True, text=True, timeout=120)
    j = json.loads(out.stdout)
    assert j["dose"]["kg_active"] == pytest.approx(2.0, rel=1e-12)


def test_monte_carlo_over_a_blend_with_a_spread_on_a_fraction():
    from sizing.planning.uncertainty import monte_carlo

    text = _case_text(BLEND_OK.replace("fraction = 0.6", "fraction = { value = 0.6, low = 0.5, high = 0.7 }")
                      + "", "coverage = 0.5") + "\n[uncertainty]\nsamples = 400\nseed = 3\n"
    case = loads_case(text)
    mc = monte_carlo(case)
    kg = np.asarray(mc.dose_kg_product, dtype=float)
    assert kg.size == 400 and mc.infeasible_fraction == 0 and np.all(np.isfinite(kg))
    # each draw equals a deterministic solve at that fraction, the other component taking the rest
    j = 7
    f0 = float(np.asarray(mc.draws["blend.component[0].fraction"])[j])
    one = model.solve(model.case_inputs(case, {"blend.component[0].fraction": f0}))
    assert float(one.kg_product) == pytest.approx(kg[j], rel=1e-9)
