"""Proteins and polymers (issue 14 item 4): no model tension, a surface-load target, a measured plateau.

The small-molecule equation of state gives a caseinate-covered surface about 0.7 mN/m of lowering
where about 20 mN/m is measured (from memory, as the issue says): the tool must not print such
tensions, nor ask the lab to measure against them.  Checks: the demo protein foam shows no model
tension in any output (solve JSON, plan result.json, trial_plan.csv) and says why; a surface-load
target of L mg/m**2 is the coverage L / (M Gamma_inf) (the definition of coverage, arithmetic
written out here, rel 1e-12); 2.0 mg/m**2 sits inside the caseinate window of 1.4-3.7 mg/m**2
(Srinivasan, Singh and Munro, J. Agric. Food Chem. 44 (1996) 3807); bad targets are refused by name.
"""

from __future__ import annotations

import csv
import json
import re
import subprocess
import sys
from pathlib import Path

import pytest

from sizing.case import load_case, loads_case
from sizing.errors import InputError
from sizing.model import solution_warnings, solve_case

ROOT = Path(__file__).resolve().parents[1]
FOAM = ROOT / "cases_demo" / "food_foam_protein.toml"


def _run(*args):
    return subprocess.run([sys.executable, "-m", "sizing", *map(str, args)], capture_output=True, text=True)


def test_no_model_tension_for_a_protein_in_any_output(tmp_path):
    r = _run("solve", FOAM, "--json")
    assert r.returncode == 0, r.stderr
    j = json.loads(r.stdout)
    assert j["state"]["tension_N_m"] is None
    assert j["state"]["plateau_tension_N_m"] == pytest.approx(0.050)
    assert any("tensions are not estimated" in w for w in j["warnings"])
    r = _run("plan", FOAM, "--out", tmp_path / "p")
    assert r.returncode == 0, r.stderr
    res = json.loads((tmp_path / "p" / "result.json").read_text())
    assert all(t["tension_N_m"] is None for t in res["trial"])
    assert any("tensions are not estimated" in w for w in res["warnings"])
    rows = list(csv.DictReader((tmp_path / "p" / "trial_plan.csv").open()))
    assert all(row["tension [mN/m]"] == "" for row in rows)
    assert "tensions are not estimated" in (tmp_path / "p" / "report.html").read_text()


def _with_target(target: str):
    text = FOAM.read_text().replace("coverage = 0.95", target)
    return loads_case(text, base_dir=FOAM.parent)


def test_a_surface_load_target_is_a_coverage_of_the_saturation_load():
    load_mg = 2.0  # mg/m**2, inside 1.4-3.7 mg/m**2 for caseinate (Srinivasan et al. 1996)
    by_load = solve_case(_with_target(f'surface_load = "{load_mg} mg/m**2"'))
    coverage = load_mg / 2.5  # Gamma / Gamma_inf with both in mg/m**2 (the demo's 2.5 mg/m**2)
    by_cov = solve_case(_with_target(f"coverage = {coverage!r}"))
    assert float(by_load.dose_mol) == pytest.approx(float(by_cov.dose_mol), rel=1e-12)
    assert float(by_load.state.coverage) == pytest.approx(coverage, rel=1e-12)


def test_surface_load_in_umol_per_m2_for_a_small_surfactant():
    text = (ROOT / "cases_demo" / "lotion_o_w.toml").read_text()
    case = loads_case(text, base_dir=ROOT / "cases_demo")
    gi = float(solve_case(case).inputs.max_surface_excess)
    text2 = re.sub(r"(?m)^coverage = .*$", f'surface_load = "{0.5 * gi * 1e6!r} umol/m**2"', text)
    a = solve_case(loads_case(text2, base_dir=ROOT / "cases_demo"))
    text3 = re.sub(r"(?m)^coverage = .*$", "coverage = 0.5", text)
    b = solve_case(loads_case(text3, base_dir=ROOT / "cases_demo"))
    assert float(a.dose_mol) == pytest.approx(float(b.dose_mol), rel=1e-12)


def test_bad_protein_targets_are_refused_by_name():
    with pytest.raises(InputError, match=r"target.surface_load: .*at or above the saturation load"):
        solve_case(_with_target('surface_load = "3 mg/m**2"'))
    sol = solve_case(_with_target('tension = "73 mN/m"'))  # even one the model would "reach": not read off it
    assert not bool(sol.feasible)
    with pytest.raises(InputError, match="exactly one target"):
        _with_target('coverage = 0.9\nsurface_load = "2 mg/m**2"')


def test_the_warning_says_what_to_measure():
    sol = solve_case(load_case(FOAM))
    w = [x for x in solution_warnings(sol) if "protein or polymer" in x]
    assert w and "50 mN/m" in w[0] and "mg/m**2" in w[0]
