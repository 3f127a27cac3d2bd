"""Surfactant-limited drop size and the knee dose (sizing.planning.achievable, `sizing achievable`)."""

import json
from pathlib import Path

import numpy as np
import pytest

from sizing.case import case_with, load_case
from sizing.cli import main
from sizing.model import case_inputs, solve
from sizing.outputs.result_json import achievable_json
from sizing.planning.achievable import achievable, achievable_curve, surfactant_limited_d32

ROOT = Path(__file__).resolve().parents[1]
LOTION = ROOT / "cases_demo" / "lotion_o_w.toml"
HPH = ROOT / "cases_demo" / "miniemulsion_hph.toml"


def tcholakova_case(d32="0.5 um"):
    """phi = 0.2 in 1 m**3, Gamma* = Gamma_inf theta_min = 2.5 mg/m**2 * 0.8 = 2 mg/m**2, no losses.

    No partitioning (P = 0) and a very large K (c_min = 0.8/(0.2 K) = 4e-9 mol/m**3) make the
    bulk losses vanish, the condition of the Tcholakova relation.
    """
    return case_with(load_case(LOTION), {
        "batch.volume": "1 m**3", "batch.dispersed_fraction": 0.2, "drops.d32": d32,
        "surfactant.max_surface_excess": "2.5 mg/m**2", "surfactant.adsorption_constant": "1e9 m**3/mol",
        "surfactant.partition_coefficient": 0.0, "surfactant.active_fraction": 1.0,
        "target.coverage": 0.8,
    })


def test_tcholakova_example():
    # Tcholakova, Denkov, Sidzhakova, Ivanov and Campbell, Langmuir 19 (2003) 5640 [formula from
    # memory], evaluated exactly: Gamma* = 2 mg/m**2, phi = 0.2, d32 = 1 um needs 3.00 kg/m**3 of
    # continuous phase.  Here 0.8 m**3 of water: 2.4 kg of active.  Tolerance 1e-6 relative (the
    # residual bulk loss is about 3e-9 mol against 8.3 mol).
    case = tcholakova_case()
    out = achievable_json(case, "2.4 kg")
    assert out["d32_m"] == pytest.approx(1.0e-6, rel=1e-6)
    assert out["limited_by"] == "surfactant"
    # the knee for a 0.5 um homogeniser: twice the dose, 6.00 kg/m**3 of continuous phase [D]
    assert out["knee_dose_kg_active"] / 0.8 == pytest.approx(6.0, rel=1e-6)


def test_tcholakova_formula_scalar_and_array():
    # d32 = 6 Gamma* phi / ((1 - phi) C_ini) (Tcholakova et al. 2003 [M formula]) in its own units
    gamma_star, phi = 2e-6, 0.2  # kg/m**2 and [-]: molar mass 1 kg/mol makes mol = kg
    c_ini = np.array([1.5, 3.0, 6.0])  # kg/m**3 of continuous phase
    d = surfactant_limited_d32(c_ini * 0.8, dispersed_volume=0.2, continuous_volume=0.8, uptake=0.0,
                               max_surface_excess=gamma_star, min_coverage=1.0, min_concentration=0.0)
    np.testing.assert_allclose(d, 6 * gamma_star * phi / ((1 - phi) * c_ini), rtol=1e-14)
    np.testing.assert_allclose(d, [2e-6, 1e-6, 0.5e-6], rtol=1e-14)


def test_knee_dose_by_hand():
    # lotion demo: V = 2.1 m**3, phi = 0.25, K = 1.2 m**3/mol, theta = 0.85, P = 0.01,
    # Gamma_inf = 3.3 umol/m**2, d32 = 2 um (hand calculation, exact arithmetic)
    vc, vd = 2.1 * 0.75, 2.1 * 0.25
    c_min = 0.85 / (1.2 * 0.15)                     # Langmuir c = theta / (K (1 - theta))
    loss = c_min * (vc + 0.01 * vd)                  # water and oil at c_min
    interface = 3.3e-6 * 0.85 * 6 * vd / 2.0e-6      # Gamma_inf theta A
    out = achievable_json(load_case(LOTION), "20 mol")
    assert out["bulk_loss_mol"] == pytest.approx(loss, rel=1e-12)
    assert out["knee_dose_mol"] == pytest.approx(loss + interface, rel=1e-12)
    assert out["knee_dose_mol"] == pytest.approx(11.8801666667, rel=1e-10)
    # the knee is the case's own target dose without margin
    assert out["knee_dose_mol"] == pytest.approx(float(solve(case_inputs(load_case(LOTION))).dose_mol), rel=1e-12)
    assert out["limited_by"] == "homogeniser" and out["d32_m"] == pytest.approx(2.0e-6, rel=1e-12)


def test_forward_balance_confirms_the_achievable_size():
    # cross-check with the forward mass balance: at the achievable d32, the same dose leaves
    # exactly the coverage needed (theta_min), 1e-9
    case = load_case(LOTION)
    inputs = case_inputs(case)
    doses = np.array([8.0, 9.5, 11.0])
    a = achievable(inputs, doses)
    assert np.all(a.limited_by == "surfactant")
    sol = solve(case_inputs(case, {"drops.d32": a.d32}), dose_mol=doses)
    np.testing.assert_allclose(sol.state.coverage, 0.85, rtol=1e-9)


def test_monotone_and_limited_by_switches_at_knee():
    inputs = case_inputs(load_case(HPH))
    curve = achievable_curve(inputs, n_points=200)
    d = np.asarray(curve["d32_m"])
    finite = np.isfinite(d)
    assert np.all(np.diff(d[finite]) <= 0)  # more surfactant never makes larger drops
    doses = np.asarray(curve["dose_mol"])
    lim = np.asarray(curve["limited_by"])
    assert np.all(lim[doses > curve["knee_dose_mol"] * 1.0001] == "homogeniser")
    assert np.all(lim[doses < curve["knee_dose_mol"] * 0.9999] == "surfactant")
    assert np.all(d[doses >= curve["knee_dose_mol"]] == pytest.approx(curve["knee_d32_m"], rel=1e-12))


def test_below_bulk_losses_and_unreachable():
    out = achievable_json(load_case(LOTION), "2 mol")  # bulk takes 7.46 mol
    assert out["d32_m"] is None and out["limited_by"] == "surfactant" and "no stable interface" in out["note"]
    hard = case_with(load_case(LOTION), {"target.coverage": 0.95})  # theta at the CMC is 0.908
    out = achievable_json(hard, "20 mol")
    assert out["feasible"] is False and out["knee_dose_mol"] is None


def test_cli_contract(capsys):
    rc = main(["achievable", str(HPH), "--dose", "40 kg", "--json"])
    out = json.loads(capsys.readouterr().out)
    assert rc == 0
    assert {"d32_m", "limited_by", "knee_dose_mol"} <= set(out)
    assert out["limited_by"] in ("surfactant", "homogeniser")
    assert main(["achievable", str(HPH), "--dose", "40 kg"]) == 0
    assert "KNEE" in capsys.readouterr().out
    assert main(["achievable", str(HPH), "--dose", "-3 kg"]) == 2
    assert "--dose" in capsys.readouterr().err
    assert main(["achievable", str(HPH), "--dose", "3 m"]) == 2
    assert "--dose: expected the active amount" in capsys.readouterr().err
