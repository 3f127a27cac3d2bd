"""Adsorption speed: diffusion time against the residence time (sizing.planning.kinetics)."""

import math
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import brentq

from sizing.case import case_with, load_case
from sizing.errors import InputError
from sizing.model import solve_case
from sizing.planning.kinetics import FLAG_RATIO, adsorption_check, adsorption_speed, diffusion_time

ROOT = Path(__file__).resolve().parents[1]
LOTION = ROOT / "cases_demo" / "lotion_o_w.toml"
HPH = ROOT / "cases_demo" / "miniemulsion_hph.toml"


def test_ferri_stebe_example():
    # Ferri and Stebe, Adv. Colloid Interface Sci. 85 (2000) 61, tau_D = (Gamma/c)**2/D evaluated exactly:
    # Gamma = 3 umol/m**2, c = 0.05 mol/m**3, D = 6e-10 m**2/s gives h = 60 um, tau_D = 6.0 s
    # (printed to 2 significant figures; exact arithmetic here, 1e-12)
    h, tau = diffusion_time(3e-6, 0.05, 6e-10)
    assert float(h) == pytest.approx(60e-6, rel=1e-12)
    assert float(tau) == pytest.approx(6.0, rel=1e-12)


def test_ward_tordai_time_by_root_finding():
    # short-time Ward-Tordai, Gamma(t) = 2 c sqrt(D t / pi) (J. Chem. Phys. 14 (1946) 453)
    # [from memory]: the time to reach Gamma, found by scipy's brentq, is (pi/4) tau_D (1e-10)
    g, c, d = 3e-6, 0.05, 6e-10
    t = brentq(lambda t: 2 * c * math.sqrt(d * t / math.pi) - g, 1e-9, 1e3, xtol=1e-14, rtol=1e-14)
    a = adsorption_speed(g, c, d, residence_time=1.0)
    assert float(a.ward_tordai_time) == pytest.approx(t, rel=1e-10)


def test_flag_threshold_vectorised():
    # flagged when tau_D > 0.1 t_res: slow end of the 1-10 tau_D equilibration (Ferri and Stebe
    # 2000) beyond the residence time; scalar and array inputs
    t_res = np.array([100.0, 60.0, 59.0, 1.0])  # tau_D = 6 s
    a = adsorption_speed(3e-6, 0.05, 6e-10, residence_time=t_res)
    np.testing.assert_allclose(a.ratio, 6.0 / t_res, rtol=1e-12)
    assert a.optimistic.tolist() == [False, False, True, True]
    assert FLAG_RATIO == 0.1
    assert not bool(adsorption_speed(3e-6, 0.05, 6e-10).optimistic)  # no residence time: no flag


def test_case_check_on_the_demo():
    case = load_case(HPH)
    out = adsorption_check(case)
    sol = solve_case(case)
    c, g = float(sol.state.free_concentration), float(sol.surface_excess)
    assert out.diffusion_time_s == pytest.approx((g / c) ** 2 / 6e-10, rel=1e-12)
    assert out.residence_time_s == pytest.approx(5e-4, rel=1e-12)
    assert out.optimistic is True
    assert "OPTIMISTIC" in out.message and "s against a residence time of" in out.message


def test_case_check_needs_both_inputs_and_names_bad_ones():
    assert adsorption_check(load_case(LOTION)) is None  # no diffusivity, no residence time
    slow_enough = case_with(load_case(LOTION), {"surfactant.diffusivity": "6e-10 m**2/s",
                                                "process.residence_time": "10 s"})
    out = adsorption_check(slow_enough)
    assert out.optimistic is False and out.message.startswith("adsorption fast enough")
    with pytest.raises(InputError, match="process.residence_time"):
        case_with(load_case(LOTION), {"process.residence_time": "10 m"})
    with pytest.raises(InputError, match="process.residence_time"):
        case_with(load_case(LOTION), {"process.residence_time": "-1 s"})
