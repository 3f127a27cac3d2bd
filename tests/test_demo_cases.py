"""Every demo case plans, its report holds every section, and its numbers equal engine calls."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from sizing import model
from sizing.case import load_case
from sizing.cli import main
from sizing.outputs.plan_files import build_outputs
from sizing.planning.plan import charge_for_dose

ROOT = Path(__file__).resolve().parents[1]
DEMOS = sorted((ROOT / "cases_demo").glob("*.toml"))
SECTION_IDS = ("recommendation", "case", "split", "coverage", "d32", "trial", "assumptions", "cautions")


def test_there_are_enough_demo_cases():
    assert len(DEMOS) >= 4
    systems = {(load_case(p).case.system, load_case(p).case.continuous) for p in DEMOS}
    assert {("emulsion", "water"), ("emulsion", "oil"), ("foam", "water")} <= systems
    assert any(load_case(p).drops.distribution == "table" for p in DEMOS)


@pytest.mark.parametrize("path", DEMOS, ids=[p.stem for p in DEMOS])
def test_demo_plans(path):
    case = load_case(path)
    plan, files = build_outputs(case, path)
    html = files["report.html"]
    for sid in SECTION_IDS:
        assert f'<section id="{sid}">' in html, sid
    assert ('<section id="unreachable">' in html) == (not plan.feasible)
    j = json.loads(files["result.json"])
    sol = model.solve_case(case)
    assert j["feasible"] == bool(sol.feasible)
    assert j["interfacial_area_m2"] == pytest.approx(float(sol.area), rel=1e-12)
    r = j["recommendation"]
    if plan.feasible:
        assert j["dose"]["kg_product"] == pytest.approx(float(sol.kg_product), rel=1e-12)
        # with spreads the charge is built on the covered percentile of the Monte Carlo
        base = j["uncertainty"]["dose_kg_product_at_percentile"] if "uncertainty" in j else float(sol.kg_product)
        assert r["kg_product_per_batch"] == pytest.approx(
            float(charge_for_dose(base, r["margin"], r["increment_kg"])), rel=1e-12)
    fwd = model.solve_case(case, dose=r["mol_per_batch"])
    assert r["coverage_at_charge"] == pytest.approx(float(fwd.state.coverage), rel=1e-12)
    assert 3 <= len(j["trial"]) <= 7
    assert len(files["trial_plan.csv"].splitlines()) == 1 + len(j["trial"])
    assert plan.case_notes, "each demo case tells its story in a header comment"


@pytest.mark.parametrize("path", DEMOS[:2], ids=[p.stem for p in DEMOS[:2]])
def test_check_command(path, capsys):
    assert main(["check", str(path), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    d = out["derived"]
    assert d["interfacial_area_m2"] == pytest.approx(float(model.solve_case(load_case(path)).area), rel=1e-12)
    assert d["continuous_volume_m3"] + d["dispersed_volume_m3"] == pytest.approx(d["batch_volume_m3"], rel=1e-12)
