"""Isotherms and equations of state: published example, Gibbs consistency, inverses, errors."""

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from sizing.constants import GAS_CONSTANT
from sizing.errors import InputError
from sizing.physics.isotherm import (
    MODELS,
    area_from_surface_excess,
    c_of_theta,
    check_model,
    pressure_of_theta,
    surface_excess_from_area,
    theta_of_c,
    theta_of_pressure,
)

T25 = 298.15


def test_langmuir_szyszkowski_example():
    # derived exactly from the Langmuir/Szyszkowski forms (McClements, Food Emulsions, 2nd ed.,
    # CRC Press 2005, ch. 5): Gamma_inf = 4 umol/m2, K = 100 m3/mol, n = 1, 25 C.
    # c = 0.01 mol/m3 -> Gamma = 2.000 umol/m2, pressure 6.8731 mN/m;
    # c = 1 mol/m3   -> Gamma = 3.9604 umol/m2, pressure 45.763 mN/m. Printed precision.
    for c, gamma, pi in [(0.01, 2.000, 6.8731), (1.0, 3.9604, 45.763)]:
        theta = theta_of_c(c, 100.0, "langmuir")
        assert 4.0 * theta == pytest.approx(gamma, abs=5e-5)
        assert pressure_of_theta(theta, 4e-6, T25, 1, "langmuir") * 1e3 == pytest.approx(pi, abs=6e-4)


@pytest.mark.parametrize("model, beta", [("langmuir", 0.0), ("frumkin", 1.5), ("frumkin", -1.0),
                                         ("frumkin", 2.0), ("volmer", 0.0)])
@pytest.mark.parametrize("n", [1.0, 2.0])
def test_gibbs_consistency(model, beta, n):
    # Gibbs adsorption equation Gamma = -(1/(n R T)) d gamma / d ln c (McClements 2005, ch. 5):
    # differentiate the equation of state numerically (central difference, step 1e-4 in ln c)
    # and recover Gamma_inf theta to 1e-6 relative.
    gi, k = 3.3e-6, 50.0
    lnc = np.linspace(np.log(1e-5), np.log(0.2), 25)
    h = 1e-4

    def pressure(x):
        return pressure_of_theta(theta_of_c(np.exp(x), k, model, beta), gi, T25, n, model, beta)

    dpi = (pressure(lnc + h) - pressure(lnc - h)) / (2 * h)
    gamma_gibbs = dpi / (n * GAS_CONSTANT * T25)
    gamma_iso = gi * theta_of_c(np.exp(lnc), k, model, beta)
    np.testing.assert_allclose(gamma_gibbs, gamma_iso, rtol=1e-6)


@settings(max_examples=200, deadline=None)
@given(theta=st.floats(1e-9, 1 - 1e-7), k=st.floats(1e-3, 1e6), beta=st.floats(-10, 1.9),
       model=st.sampled_from(MODELS))
def test_inverses_round_trip(theta, k, beta, model):
    # theta(c(theta)) = theta: the explicit direction against the root (Lambert W for Volmer,
    # bracketed Newton for Frumkin); common practice tolerance 1e-9 absolute.  At the critical
    # point beta = 2, theta = 1/2 the slope dtheta/dc is infinite and theta(c) is only good to
    # about 1e-5 in double precision, so beta stops at 1.9 here.
    b = beta if model == "frumkin" else 0.0
    c = c_of_theta(theta, k, model, b)
    assume(np.isfinite(c))
    assert float(theta_of_c(c, k, model, b)) == pytest.approx(theta, abs=1e-9)
    pi = pressure_of_theta(theta, 3e-6, T25, 1, model, b)
    assert float(theta_of_pressure(pi, 3e-6, T25, 1, model, b)) == pytest.approx(theta, abs=1e-9)


def test_theta_of_c_vectorised_and_monotone():
    c = np.logspace(-8, 3, 400)
    for model, beta in [("langmuir", 0), ("frumkin", 1.9), ("volmer", 0)]:
        th = theta_of_c(c, 10.0, model, beta)
        assert th.shape == c.shape
        assert np.all(np.diff(th) > 0)
        assert th[0] > 0 and th[-1] < 1
    assert float(theta_of_c(0.0, 10.0, "frumkin", 1.0)) == 0.0


def test_area_per_molecule():
    # a = 1/(N_A Gamma_inf): 0.50 nm2 is 3.321 umol/m2 (N_A exact, BIPM SI Brochure
    # 9th ed. 2019); printed precision.
    assert surface_excess_from_area(0.50e-18) * 1e6 == pytest.approx(3.321, abs=5e-4)
    assert area_from_surface_excess(surface_excess_from_area(0.5e-18)) == pytest.approx(0.5e-18, rel=1e-12)


def test_errors_name_the_choices():
    with pytest.raises(InputError, match="unknown isotherm 'henry'; expected one of langmuir, frumkin, volmer"):
        check_model("henry")
    # Frumkin beta > 2: two-dimensional phase transition (Frumkin, Z. Phys. Chem. 116
    # (1925) 466 [from memory]): refused with why
    with pytest.raises(InputError, match="phase transition"):
        theta_of_c(1.0, 1.0, "frumkin", 2.5)


def test_frumkin_sign_convention_fixed_point():
    # DESIGN.md convention K c = theta/(1 - theta) exp(-2 beta theta), beta > 0 attraction:
    # beta = 1, theta = 1/2 gives K c = exp(-1) and Pi/(n R T Gamma_inf) = ln 2 - 1/4 exactly
    # (derived by hand from the stated forms); tolerance 1e-12 relative.
    assert float(c_of_theta(0.5, 1.0, "frumkin", 1.0)) == pytest.approx(np.exp(-1.0), rel=1e-12)
    assert float(theta_of_c(np.exp(-1.0), 1.0, "frumkin", 1.0)) == pytest.approx(0.5, rel=1e-12)
    scale = GAS_CONSTANT * T25 * 3e-6
    pi = pressure_of_theta(0.5, 3e-6, T25, 1, "frumkin", 1.0)
    assert float(pi) / scale == pytest.approx(np.log(2) - 0.25, rel=1e-12)
    # attraction lowers the concentration needed for the same coverage
    assert float(c_of_theta(0.5, 1.0, "frumkin", 1.0)) < float(c_of_theta(0.5, 1.0, "langmuir"))


def test_frumkin_strong_repulsion_root_against_brentq():
    # Newton alone cycles around the inflection of y + 2|beta| expit(y) for strong repulsion;
    # the bracketed solver must still converge.  Cross-check: scipy.optimize.brentq on the
    # explicit K c(theta), tolerance 1e-12 in theta.
    from scipy.optimize import brentq

    betas = np.array([-10.0, -7.080632853660726, -4.0, -1.0])
    lnkc = np.array([3.83451029353612, 3.83451029353612, 2.0, -1.0])
    got = theta_of_c(np.exp(lnkc), 1.0, "frumkin", betas)
    for b, L, th in zip(betas, lnkc, got):
        want = brentq(lambda t: np.log(t / (1 - t)) - 2 * b * t - L, 1e-15, 1 - 1e-15, xtol=1e-15)
        assert th == pytest.approx(want, abs=1e-12), b
