"""Scale-up: power-law calibration, stirred-tank rules, the [scaleup] section and `sizing scaleup`."""

import json
import math
from pathlib import Path

import numpy as np
import pytest
from scipy import stats

from sizing.case import case_with, load_case
from sizing.cli import main
from sizing.errors import InputError
from sizing.model import solve_case
from sizing.outputs.result_json import scaleup_json
from sizing.outputs.solve_json import solution_json
from sizing.physics.dropsize import (
    DEFAULT_EXPONENTS,
    fit_power_law,
    predict_power_law,
    stirred_tank_ratio,
    stirred_tank_speed,
)
from sizing.planning.scaleup import scaleup_case

ROOT = Path(__file__).resolve().parents[1]
LOTION = ROOT / "cases_demo" / "lotion_o_w.toml"
HPH = ROOT / "cases_demo" / "miniemulsion_hph.toml"


def with_scaleup(**keys):
    return case_with(load_case(LOTION), {f"scaleup.{k}": v for k, v in keys.items()})


# ---------------------------------------------------------------------------------------------
# stirred tanks: identities of d32/D = C1 (1 + C2 phi) We**-0.6 (Chen and Middleman, AIChE J. 13
# (1967) 989 [from memory]); the consequences follow exactly from We = rho N**2 D**3 / sigma
# and P/V ~ N**3 D**2 (derived here, common practice for geometrically similar tanks)


@pytest.mark.parametrize("scale", [2.0, 5.0, 10.0, 37.5])
def test_constant_power_per_volume_keeps_d32(scale):
    # derived from Chen and Middleman (1967): d32 does not change at constant power per volume; exact, 1e-12
    n_p = stirred_tank_speed(0.1, 10.0, 0.1 * scale, "constant_power_per_volume")
    assert float(stirred_tank_ratio(0.1, 10.0, 0.1 * scale, n_p)) == pytest.approx(1.0, rel=1e-12)
    # and P/V ~ N**3 D**2 is kept (common practice, turbulent regime)
    assert float(n_p) ** 3 * (0.1 * scale) ** 2 == pytest.approx(10.0 ** 3 * 0.1 ** 2, rel=1e-12)


@pytest.mark.parametrize("scale", [2.0, 5.0, 10.0])
def test_constant_tip_speed_gives_d32_as_d_to_0_4(scale):
    # derived from Chen and Middleman (1967): d32 grows as D**0.4 at constant tip speed; exact, 1e-12
    n_p = stirred_tank_speed(0.2, 5.0, 0.2 * scale, "constant_tip_speed")
    assert float(stirred_tank_ratio(0.2, 5.0, 0.2 * scale, n_p)) == pytest.approx(scale ** 0.4, rel=1e-12)


def test_constant_speed_and_arrays():
    # derived from the same correlation: We ~ D**3 at fixed N, so d32 ~ D**(1 - 1.8) = D**-0.8 [D]
    scales = np.array([1.0, 2.0, 4.0, 8.0])
    n_p = stirred_tank_speed(0.1, 8.0, 0.1 * scales, "constant_speed")
    np.testing.assert_allclose(stirred_tank_ratio(0.1, 8.0, 0.1 * scales, n_p), scales ** -0.8, rtol=1e-12)
    with pytest.raises(InputError, match="unknown rule 'constant_torque'.*constant_power_per_volume"):
        stirred_tank_speed(0.1, 8.0, 0.8, "constant_torque")


def test_stirred_tank_case_and_json():
    case = with_scaleup(method="stirred_tank", rule="constant_tip_speed", lab_diameter="5 cm",
                        lab_speed="600 rpm", plant_diameter="1.25 m")
    r = scaleup_case(case)
    assert r.lab_d32 == pytest.approx(2.0e-6, rel=1e-12)
    assert r.plant_d32 == pytest.approx(2.0e-6 * 25 ** 0.4, rel=1e-12)  # [D] D**0.4
    assert r.band[0] < r.plant_d32 < r.band[1]
    assert r.details["plant_tip_speed_m_s"] == pytest.approx(r.details["lab_tip_speed_m_s"], rel=1e-12)
    out = solution_json(solve_case(case), case)
    assert out["d32_m"] == pytest.approx(r.plant_d32, rel=1e-12)
    assert out["lab_d32_m"] == pytest.approx(2.0e-6, rel=1e-12)


# ---------------------------------------------------------------------------------------------
# power law d32 = C X**b


def test_power_law_returns_known_c_and_b():
    # points made from known C and b (exact data): the fit must return them to 1e-10
    c_true, b_true = 3.2e-2, -0.72
    x = np.array([1e7, 3e7, 6e7, 1e8])
    f = fit_power_law(x, c_true * x ** b_true)
    assert f.exponent == pytest.approx(b_true, rel=1e-10)
    assert f.prefactor == pytest.approx(c_true, rel=1e-8)
    assert not f.exponent_is_default and f.dof == 2
    lo, hi = f.exponent_interval
    assert lo == pytest.approx(b_true, abs=1e-8) and hi == pytest.approx(b_true, abs=1e-8)  # no scatter


def test_power_law_matches_scipy_and_numpy_with_noise():
    # cross-check against numpy.polyfit (slope, intercept) and scipy.stats.t for the interval
    rng = np.random.default_rng(3)
    x = np.geomspace(1e7, 1e8, 6)
    d = 5e-2 * x ** -0.65 * np.exp(0.05 * rng.standard_normal(x.size))
    f = fit_power_law(x, d)
    slope, intercept = np.polyfit(np.log(x), np.log(d), 1)
    assert f.exponent == pytest.approx(slope, rel=1e-10)
    assert math.log(f.prefactor) == pytest.approx(intercept, rel=1e-10)
    lx, ld = np.log(x), np.log(d)
    resid = ld - (intercept + slope * lx)
    s = math.sqrt(resid @ resid / (x.size - 2))
    se_b = s / math.sqrt(((lx - lx.mean()) ** 2).sum())
    half = stats.t.ppf(0.975, x.size - 2) * se_b
    assert f.exponent_interval[0] == pytest.approx(slope - half, rel=1e-9)
    assert f.exponent_interval[1] == pytest.approx(slope + half, rel=1e-9)


def test_power_law_interval_coverage():
    # the 95 % interval of b covers the true b in about 95 % of noisy fits (binomial sd for 2000
    # fits is 0.5 %; tolerance 1.5 %), scipy.stats.linregress behind it
    rng = np.random.default_rng(11)
    x = np.geomspace(2e7, 8e7, 5)
    hits = 0
    n = 2000
    for _ in range(n):
        d = 1e-2 * x ** -0.6 * np.exp(0.08 * rng.standard_normal(x.size))
        lo, hi = fit_power_law(x, d).exponent_interval
        hits += lo <= -0.6 <= hi
    assert hits / n == pytest.approx(0.95, abs=0.015)


def test_prediction_band_contains_prediction_and_widens_outside():
    x = np.array([2e7, 4e7, 6e7, 8e7])
    d = np.array([4.2e-7, 2.8e-7, 2.15e-7, 1.9e-7])
    f = fit_power_law(x, d)
    mid, lo, hi, how = predict_power_law(f, np.array([5e7, 2e8]))
    assert np.all(lo < mid) and np.all(mid < hi)
    assert (hi[1] / lo[1]) > (hi[0] / lo[0])  # extrapolation is less certain
    assert "prediction interval" in how


def test_one_point_uses_default_exponent_marked_default():
    # high-pressure homogenisers, turbulent-inertial regime: d32 ~ p**-0.6 [from memory]
    case = with_scaleup(method="power_law", variable="pressure",
                        points=[{"pressure": "300 bar", "d32": "2.0 um"}], plant="600 bar")
    r = scaleup_case(case)
    assert DEFAULT_EXPONENTS["pressure"][0] == -0.6
    assert r.exponent == -0.6 and r.exponent_is_default
    assert r.plant_d32 == pytest.approx(2.0e-6 * 2 ** -0.6, rel=1e-12)
    assert r.band[0] < r.plant_d32 <= r.band[1] * (1 + 1e-12)
    # window -0.6 to -0.9 around the point [from memory]: lower end is 2**-0.9
    assert r.band[0] == pytest.approx(2.0e-6 * 2 ** -0.9, rel=1e-12)
    assert any("DEFAULT" in w for w in r.warnings)
    assert any("outside the lab range" in w for w in r.warnings)
    out = scaleup_json(case)
    assert out["exponent_is_default"] is True and out["plant_d32_m"] == pytest.approx(r.plant_d32)


def test_fixed_exponent_and_tip_speed_from_speed_and_diameter():
    # tip speed = pi N D (common practice): 3000 rpm, 4 cm -> 2 pi m/s
    case = with_scaleup(method="power_law", variable="tip_speed", exponent=-1.0,
                        points=[{"speed": "3000 rpm", "diameter": "4 cm", "d32": "3 um"}],
                        plant="20 m/s")
    r = scaleup_case(case)
    assert not r.exponent_is_default and r.exponent == -1.0
    assert r.plant_d32 == pytest.approx(3e-6 * (20 / (2 * math.pi)) ** -1.0, rel=1e-12)
    case2 = with_scaleup(method="power_law", variable="tip_speed",
                         points=[{"tip_speed": "10 m/s", "d32": "3 um"}], plant="1500 rpm",
                         plant_diameter="0.2 m")
    assert scaleup_case(case2).details["plant_x"] == pytest.approx(math.pi * 25 * 0.2, rel=1e-12)


def test_demo_case_replaces_d32_and_cli_json(capsys):
    case = load_case(HPH)
    r = scaleup_case(case)
    assert r.details["n_points"] == 4 and not r.exponent_is_default
    rc = main(["scaleup", str(HPH), "--json"])
    out = json.loads(capsys.readouterr().out)
    assert rc == 0
    assert {"plant_d32_m", "plant_d32_band_m", "lab_d32_m", "rule", "exponent", "exponent_is_default",
            "dose"} <= set(out)
    assert out["plant_d32_m"] == pytest.approx(r.plant_d32, rel=1e-12)
    assert out["lab_d32_m"] == pytest.approx(0.215e-6, rel=1e-12)
    assert out["dose"]["kg_product"] == pytest.approx(float(solve_case(case).kg_product), rel=1e-12)
    lo, hi = out["plant_d32_band_m"]
    assert lo < out["plant_d32_m"] < hi
    assert out["dose_band_kg_product"][0] < out["dose"]["kg_product"] < out["dose_band_kg_product"][1]
    assert main(["scaleup", str(HPH)]) == 0
    assert "PLANT d32" in capsys.readouterr().out


@pytest.mark.parametrize("keys, message", [
    (dict(method="power_law", variable="pressure", points=[{"pressure": "300 bar", "d32": "2 um"}]),
     "needs plant"),
    (dict(method="power_law", points=[{"pressure": "300 bar", "d32": "2 um"}], plant="600 bar"),
     "needs variable"),
    (dict(method="power_law", variable="pressure", plant="600 bar"), "needs points"),
    (dict(method="power_law", variable="pressure", points=[{"tip_speed": "3 m/s", "d32": "2 um"}],
          plant="600 bar"), "needs pressure in every lab point"),
    (dict(method="power_law", variable="pressure", points=[{"pressure": "300 bar", "d32": "2 um"}],
          plant="12 m/s"), "expected the plant's pressure"),
    (dict(method="power_law", variable="pressure", points=[{"pressure": "300 bar", "d32": "2 um"}],
          plant="600 bar", rule="constant_speed"), "does not use rule"),
    (dict(method="stirred_tank", lab_diameter="5 cm", lab_speed="600 rpm", plant_diameter="1 m"),
     "needs rule"),
    (dict(method="stirred_tank", rule="given_speed", lab_diameter="5 cm", lab_speed="600 rpm",
          plant_diameter="1 m"), "plant_speed is needed"),
    (dict(method="mixer"), "scaleup.method"),
    (dict(method="power_law", variable="pressure", points=[{"pressure": "300 bar", "d32": "-2 um"}],
          plant="600 bar"), r"scaleup\.points\[0\]\.d32"),
])
def test_bad_scaleup_sections_are_named(keys, message):
    with pytest.raises(InputError, match=message):
        with_scaleup(**keys)


def test_cli_without_scaleup_is_a_clean_error(capsys):
    assert main(["scaleup", str(LOTION)]) == 2
    assert "no [scaleup] section" in capsys.readouterr().err
