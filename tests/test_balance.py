"""The mass balance: conservation, monotonicity, inverse consistency, micelle and oil caps."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from sizing.errors import InputError
from sizing.physics.balance import max_coverage, state_at_concentration, state_for_dose
from sizing.physics.isotherm import MODELS, c_of_theta, theta_of_c
from sizing.physics.phases import dispersed_uptake, phase_volumes

logf = st.floats  # readability below


def _kw(vc, vd, u, gi, area, k, beta, model):
    return dict(continuous_volume=vc, dispersed_volume=vd, uptake=u, max_surface_excess=gi,
                area=area, adsorption_constant=k, model=model, beta=beta)


case = st.fixed_dictionaries({
    "vc": logf(1e-4, 50), "vd": logf(1e-5, 50), "u": st.one_of(st.just(0.0), logf(1e-3, 1e3)),
    "gi": logf(0.5e-6, 8e-6), "area": logf(1.0, 1e9), "k": logf(1e-2, 1e5),
    "beta": logf(-5, 1.9), "model": st.sampled_from(MODELS), "lncmc": logf(np.log(1e-3), np.log(100)),
    "dose_factor": logf(1e-4, 30),
})


@settings(max_examples=300, deadline=None)
@given(case)
def test_mass_conservation(p):
    # Property (DESIGN.md quality bar): every solved state holds the dose to 1e-9 relative.
    beta = p["beta"] if p["model"] == "frumkin" else 0.0
    kw = _kw(p["vc"], p["vd"], p["u"], p["gi"], p["area"], p["k"], beta, p["model"])
    cmc = np.exp(p["lncmc"])
    n_cmc = state_at_concentration(cmc, **kw).total_mol
    dose = float(n_cmc) * p["dose_factor"]
    s = state_for_dose(dose, cmc=cmc, **kw)
    assert float(s.total_mol) == pytest.approx(dose, rel=1e-9)
    assert float(s.free_concentration) <= cmc * (1 + 1e-12)
    # micelles only at the CMC
    if float(s.micelle_mol) > 0:
        assert float(s.free_concentration) == pytest.approx(cmc, rel=1e-12)
    # the state is an equilibrium of the isotherm
    th = theta_of_c(s.free_concentration, p["k"], p["model"], beta)
    assert float(s.coverage) == pytest.approx(float(th), abs=1e-9)


@settings(max_examples=200, deadline=None)
@given(case, logf(0.01, 0.99))
def test_state_of_dose_of_target_returns_target(p, theta):
    # Inverse consistency: dose(theta) -> state -> theta (below the CMC ceiling).
    beta = p["beta"] if p["model"] == "frumkin" else 0.0
    kw = _kw(p["vc"], p["vd"], p["u"], p["gi"], p["area"], p["k"], beta, p["model"])
    c = float(c_of_theta(theta, p["k"], p["model"], beta))
    dose = state_at_concentration(c, **kw).total_mol
    s = state_for_dose(dose, cmc=np.inf, **kw)
    assert float(s.coverage) == pytest.approx(theta, rel=1e-8)
    assert float(s.free_concentration) == pytest.approx(c, rel=1e-7)


@settings(max_examples=100, deadline=None)
@given(case)
def test_dose_rises_with_coverage_and_inverse_d32(p):
    # Monotonic dose in the target coverage and in 1/d32 (area), DESIGN.md property.
    beta = p["beta"] if p["model"] == "frumkin" else 0.0
    theta = np.linspace(0.05, 0.95, 19)
    c = c_of_theta(theta, p["k"], p["model"], beta)
    kw = _kw(p["vc"], p["vd"], p["u"], p["gi"], p["area"], p["k"], beta, p["model"])
    dose = state_at_concentration(c, theta=theta, **kw).total_mol
    assert np.all(np.diff(dose) > 0)
    kw["area"] = p["area"] * np.array([0.5, 1.0, 2.0, 4.0])  # area ~ 1/d32
    dose_a = state_at_concentration(c[10], theta=theta[10], **kw).total_mol
    assert np.all(np.diff(dose_a) > 0)


def test_vectorised_equals_scalar_calls():
    rng = np.random.default_rng(3)
    n = 50
    kw = _kw(rng.uniform(0.1, 2, n), rng.uniform(0.1, 1, n), rng.uniform(0, 10, n),
             rng.uniform(1e-6, 5e-6, n), 10 ** rng.uniform(4, 7, n), 10 ** rng.uniform(-1, 3, n),
             rng.uniform(-1, 1.5, n), "frumkin")
    cmc = 10 ** rng.uniform(-1, 1, n)
    dose = 10 ** rng.uniform(-3, 1, n)
    vec = state_for_dose(dose, cmc=cmc, **kw)
    for i in range(0, n, 7):
        one = state_for_dose(dose[i], cmc=cmc[i], **{k: (v[i] if isinstance(v, np.ndarray) else v) for k, v in kw.items()})
        assert float(one.free_concentration) == pytest.approx(vec.free_concentration[i], rel=1e-12)


def test_micelles_take_the_excess_and_cap_the_oil():
    # Laven, Open Colloid Sci. J. 4 (2011) 37 (published): below the CMC a constant oil/water ratio
    # (about 2 for an octylphenol ethoxylate against sunflower oil); surfactant added past the
    # CMC stays in the water.  With P = 2 the oil holds 2 c V_o and stops growing at the CMC.
    kw = _kw(1.0, 0.25, 2.0, 3e-6, 1e5, 100.0, 0.0, "langmuir")
    cmc = 0.2
    n_cmc = float(state_at_concentration(cmc, **kw).total_mol)
    doses = n_cmc * np.array([0.5, 0.99, 1.5, 3.0])
    s = state_for_dose(doses, cmc=cmc, **kw)
    ratio = s.dispersed_mol / 0.25 / s.free_concentration
    np.testing.assert_allclose(ratio, 2.0, rtol=1e-12)
    np.testing.assert_allclose(s.dispersed_mol[2:], 2.0 * cmc * 0.25, rtol=1e-12)
    np.testing.assert_allclose(s.micelle_mol[:2], 0.0)
    np.testing.assert_allclose(s.micelle_mol[2:], doses[2:] - n_cmc, rtol=1e-12)


def test_no_cmc_means_no_micelles():
    kw = _kw(1.0, 0.2, 0.0, 3e-6, 1e6, 10.0, 0.0, "langmuir")
    s = state_for_dose(np.array([1e-3, 1.0, 1e3]), cmc=np.inf, **kw)
    np.testing.assert_allclose(s.micelle_mol, 0.0)
    assert np.all(np.diff(s.free_concentration) > 0)
    assert float(max_coverage(10.0, np.inf)) == 1.0


def test_surfactant_poor_example():
    # Tcholakova, Denkov, Sidzhakova, Ivanov and Campbell, Langmuir 19 (2003) 5640 (the concept
    # published, the formula d32 = 6 Gamma* phi / ((1 - phi) C_ini) from memory); derived from it:
    # Gamma* = 2 mg/m2, phi = 0.2, d32 = 1 um needs 3.00 kg/m3 of
    # continuous phase when the bulk keeps nothing.  Strong adsorption (K = 1e12 m3/mol) makes
    # the bulk share about 1e-6 of the dose; tolerance 1e-4 relative.
    molar_mass = 25.0  # kg/mol, a protein-like emulsifier
    gi = 2e-6 / molar_mass
    vc, vd = phase_volumes(1.0, 0.2)
    area = 6 * vd / 1e-6
    theta = 1 - 1e-7
    c = c_of_theta(theta, 1e12)
    dose = state_at_concentration(c, **_kw(vc, vd, 0.0, gi, area, 1e12, 0.0, "langmuir")).total_mol
    assert float(dose) * molar_mass / vc == pytest.approx(3.00, rel=1e-4)


def test_uptake_conventions():
    # P = c_oil/c_water for the monomer whatever the continuous phase (DESIGN.md).
    assert dispersed_uptake("emulsion", "water", 50.0) == 50.0
    assert dispersed_uptake("emulsion", "oil", 50.0) == pytest.approx(0.02)
    assert dispersed_uptake("foam", "water", 50.0) == 0.0
    with pytest.raises(InputError, match="does not dissolve in oil"):
        dispersed_uptake("emulsion", "oil", 0.0)
    with pytest.raises(InputError, match="partition_coefficient: expected a number >= 0"):
        dispersed_uptake("emulsion", "water", -1.0)
