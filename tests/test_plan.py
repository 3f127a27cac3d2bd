"""The recommendation, the trial matrix and `sizing plan` outputs (sizing.planning.plan, sizing.cli.plan)."""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import numpy as np
import pytest

from sizing import model
from sizing.case import case_with, load_case, loads_case
from sizing.cli import main
from sizing.outputs.result_json import plan_json
from sizing.outputs.solve_json import solution_json
from sizing.planning.plan import build_plan, charge_for_dose

ROOT = Path(__file__).resolve().parents[1]
LOTION = ROOT / "cases_demo" / "lotion_o_w.toml"


@pytest.fixture(scope="module")
def lotion():
    case = load_case(LOTION)
    return case, build_plan(case, LOTION)


def test_charge_rule_and_engine_agreement(lotion):
    case, plan = lotion
    sol = model.solve_case(case)
    r = plan.recommendation
    # charge = increment * ceil(dose (1 + margin) / increment), dose from a direct engine call
    expected = 0.5 * math.ceil(float(sol.kg_product) * 1.15 / 0.5)
    assert r.kg_product_per_batch == pytest.approx(expected, rel=1e-12)
    assert r.base_kg_product == pytest.approx(float(sol.kg_product), rel=1e-12)
    assert r.kg_active_per_batch == pytest.approx(expected * 0.30, rel=1e-12)
    # the state at the charge is the forward solve of that dose
    fwd = model.solve_case(case, dose=r.mol_per_batch)
    assert r.coverage_at_charge == pytest.approx(float(fwd.state.coverage), rel=1e-12)
    assert r.free_concentration_at_charge == pytest.approx(float(fwd.state.free_concentration), rel=1e-12)
    assert r.wt_percent == pytest.approx(float(fwd.wt_percent), rel=1e-12)
    assert r.cost_per_batch == pytest.approx(expected * 1.8, rel=1e-12)
    assert r.coverage_at_charge > plan.target_coverage


def test_charge_for_dose_arrays_and_float_noise():
    got = charge_for_dose(np.array([10.0, 10.0000001, 0.0]), 0.15, 0.5)
    assert got.tolist() == [11.5, 12.0, 0.5]


def test_trial_levels_are_forward_solves_with_micelles_above_cmc(lotion):
    case, plan = lotion
    assert [t.level for t in plan.trial] == case.trial.levels
    for t in plan.trial:
        fwd = model.solve_case(case, dose=t.mol)
        assert t.coverage == pytest.approx(float(fwd.state.coverage), rel=1e-12)
        assert t.kg_product == pytest.approx(float(fwd.kg_product), rel=1e-12)
        # mass conservation of the solved state, 1e-9 relative (DESIGN.md quality bar)
        assert float(fwd.state.total_mol) == pytest.approx(t.mol, rel=1e-9)
        assert t.measure and any("drop size" in m for m in t.measure)
    top = plan.trial[-1]
    assert top.micelle_share > 0
    assert top.free_concentration == pytest.approx(8.2, rel=1e-12)  # capped at the CMC


def test_reference_surfactant_poor_example():
    # surfactant-poor regime, d32 = 6 Gamma* phi / ((1 - phi) C_ini) (Tcholakova, Denkov, Sidzhakova,
    # Ivanov and Campbell, Langmuir 19 (2003) 5640 [formula from memory]; Walstra's form): Gamma* = 2 mg/m2,
    # phi = 0.2, d32 = 1 um needs 3.00 kg/m3 of continuous phase.  Zero bulk loss: K huge, no CMC,
    # P = 0; Gamma_inf 4 mg/m2 at coverage 0.5 gives Gamma* = 2 mg/m2.  Tolerance 1e-9 relative.
    text = """
[case]
title = "surfactant-poor check"
system = "emulsion"
[batch]
volume = "1 m**3"
dispersed_fraction = 0.2
continuous_density = "1000 kg/m**3"
dispersed_density = "900 kg/m**3"
[drops]
d32 = "1 um"
[surfactant]
molar_mass = "1 kg/mol"
max_surface_excess = "4 mg/m**2"
adsorption_constant = "1e15 m**3/mol"
[target]
coverage = 0.5
margin = 0.0
[recommendation]
increment = "0.001 kg"
"""
    plan = build_plan(loads_case(text))
    j = solution_json(plan.solution, plan.case)
    # area identity 6 phi / d32 per m3 of dispersion (definition of the Sauter mean, ISO 9276-2): 1.2e6 m2/m3
    assert j["interfacial_area_m2"] == pytest.approx(1.2e6, rel=1e-12)
    assert j["dose"]["kg_active"] / 0.8 == pytest.approx(3.00, rel=1e-9)
    assert plan.recommendation.kg_active_per_batch == pytest.approx(2.4, rel=1e-9)


def test_unreachable_target_plan(lotion):
    case, _ = lotion
    hard = case_with(case, {"target.coverage": 0.95})  # CMC allows 0.9077
    plan = build_plan(hard)
    assert not plan.feasible
    j = plan_json(plan)
    assert j["feasible"] is False and j["dose"] is None
    r = j["recommendation"]
    assert r["basis"] == "cmc_ceiling" and r["reaches_target"] is False
    assert r["base_kg_product"] == pytest.approx(plan.curves.ceiling_kg_product, rel=1e-12)
    assert r["kg_product_per_batch"] >= r["base_kg_product"] * 1.15 * (1 - 1e-12)
    assert r["coverage_at_charge"] == pytest.approx(j["max_coverage"], rel=1e-12)
    assert any("Accept a lower coverage" in o for o in j["options"])
    assert any("another surfactant" in o for o in j["options"])
    assert any("larger drops" in o for o in j["options"])
    assert len(j["trial"]) == 3


def test_result_json_keys(lotion):
    _, plan = lotion
    j = json.loads(json.dumps(plan_json(plan)))
    for key in ("feasible", "max_coverage", "d32_m", "interfacial_area_m2", "dose", "state", "split_mol",
                "recommendation", "trial", "cautions", "assumptions"):
        assert key in j
    for key in ("kg_product_per_batch", "kg_active_per_batch", "mol_per_batch", "wt_percent",
                "percent_on_dispersed", "cost_per_batch", "currency", "margin", "increment_kg",
                "coverage_at_charge"):
        assert key in j["recommendation"]
    for t in j["trial"]:
        for key in ("level", "kg_product", "kg_active", "coverage", "free_concentration_mol_m3",
                    "tension_N_m", "micelle_share", "measure"):
            assert key in t
    assert any("safety data sheet" in c for c in j["cautions"])
    assert any("local codes" in c for c in j["cautions"])


def test_plan_parts_are_typed_and_frozen(lotion):
    import dataclasses

    _, plan = lotion
    assert plan.uncertainty is None and plan.scaleup is None and plan.adsorption is None  # no spreads
    assert plan.achievable is not None and len(plan.achievable.levels) == len(plan.trial)
    with pytest.raises(dataclasses.FrozenInstanceError):
        plan.uncertainty = None
    j = plan_json(plan)
    assert "uncertainty" not in j and "scaleup" not in j
    assert [lv["limited_by"] for lv in j["trial_levels"]] == [lv.limited_by for lv in plan.achievable.levels]


def test_unreachable_advice_follows_the_physics(lotion):
    """The coverage ceiling is theta(K x CMC): it rises with a HIGHER CMC (or K), not a lower one.

    Langmuir: theta_max = K CMC / (1 + K CMC) (the definition of the isotherm; common practice).
    """
    case, _ = lotion
    hard = case_with(case, {"target.coverage": 0.95})
    base = build_plan(hard)
    cmc = hard.surfactant.cmc.si
    higher = build_plan(case_with(hard, {"surfactant.cmc": f"{2 * cmc} mol/m**3"}))
    lower = build_plan(case_with(hard, {"surfactant.cmc": f"{0.5 * cmc} mol/m**3"}))
    m0 = float(base.solution.max_coverage)
    assert float(higher.solution.max_coverage) > m0 > float(lower.solution.max_coverage)
    text = " ".join(base.options)
    assert "larger product K x CMC" in text and "higher CMC" in text
    assert "lower CMC alone lowers it" in text


def test_cli_plan_writes_three_files(tmp_path, capsys):
    out = tmp_path / "lotion"
    assert main(["plan", str(LOTION), "--out", str(out)]) == 0
    text = capsys.readouterr().out
    assert "recommended charge     13.5 kg" in text and "wrote" in text
    j = json.loads((out / "result.json").read_text())
    rows = list(csv.reader((out / "trial_plan.csv").open()))
    assert len(rows) == 1 + len(j["trial"])
    assert rows[0][1] == "product [kg/batch]"
    assert [float(r[1]) for r in rows[1:]] == pytest.approx([t["kg_product"] for t in j["trial"]], rel=1e-6)
    assert (out / "report.html").read_text().startswith("<!DOCTYPE html>")


def test_cli_plan_without_case_plans_the_builtin_demo(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    assert main(["plan"]) == 0
    assert (tmp_path / "demo_plan" / "report.html").is_file()
    j = json.loads((tmp_path / "demo_plan" / "result.json").read_text())
    assert j["recommendation"]["kg_product_per_batch"] > 0


def test_failed_plan_leaves_the_previous_report_byte_identical(tmp_path, monkeypatch, capsys):
    out = tmp_path / "p"
    assert main(["plan", str(LOTION), "--out", str(out)]) == 0
    before = {n: (out / n).read_bytes() for n in ("report.html", "result.json", "trial_plan.csv")}
    bad = tmp_path / "bad.toml"
    bad.write_text(LOTION.read_text().replace("coverage = 0.85", "coverage = 1.85"))
    assert main(["plan", str(bad), "--out", str(out)]) == 2
    import sizing.outputs.report

    def boom(plan, sections=None):
        raise RuntimeError("report writer failed")

    monkeypatch.setattr(sizing.outputs.report, "render", boom)
    with pytest.raises(RuntimeError):
        main(["plan", str(LOTION), "--out", str(out)])
    after = {n: (out / n).read_bytes() for n in before}
    assert after == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["bad.toml", "p"]  # no temp folder left


def test_trial_csv_carries_the_achievable_d32(tmp_path, capsys):
    # The surfactant-limited d32 of each level (sizing.planning.achievable) is in the CSV as in result.json.
    out = tmp_path / "lotion"
    assert main(["plan", str(LOTION), "--out", str(out)]) == 0
    j = json.loads((out / "result.json").read_text())
    rows = list(csv.DictReader((out / "trial_plan.csv").open()))
    for row, level in zip(rows, j["trial"]):
        assert float(row["achievable d32 [um]"]) == pytest.approx(level["achievable_d32_m"] * 1e6, rel=1e-5)
        assert row["drop size limited by"] == level["limited_by"]


def test_plan_warns_when_the_percentile_cannot_be_covered():
    # Uniform target coverage 0.85..0.92 against a CMC ceiling of 0.9077 (Langmuir, K cmc =
    # 9.84): about (0.92 - 0.9077)/0.07 = 18 % of draws are unreachable, more than the 10 % a
    # P90 charge may leave out, so the plan must say so (regression of the plan's own logic).
    from sizing.case import case_with

    case = case_with(load_case(LOTION), {"target.coverage": {"value": 0.89, "low": 0.85, "high": 0.92},
                                         "uncertainty.samples": 20000})
    j = plan_json(build_plan(case))
    assert j["uncertainty"]["infeasible_fraction"] == pytest.approx((0.92 - 9.84 / 10.84) / 0.07, abs=0.02)
    assert any("does not cover the chosen percentile" in w for w in j["warnings"])


def test_cli_plan_json_prints_only_json(tmp_path, capsys):
    assert main(["plan", str(LOTION), "--out", str(tmp_path / "p"), "--json"]) == 0
    j = json.loads(capsys.readouterr().out)  # the whole stdout is one JSON object
    assert j == json.loads((tmp_path / "p" / "result.json").read_text())


def test_plan_warns_when_levels_saturate_at_the_cmc():
    # Coverage 0.90 against a ceiling of 0.9077 (Langmuir, K cmc = 9.84): the 1 x and 1.25 x
    # levels both reach the CMC, so the trial could not tell them apart.

    case = case_with(load_case(LOTION), {"target.coverage": 0.90})
    j = plan_json(build_plan(case))
    assert any("sit at the CMC ceiling" in w for w in j["warnings"])
    assert not any("sit at the CMC ceiling" in w for w in plan_json(build_plan(load_case(LOTION)))["warnings"])
