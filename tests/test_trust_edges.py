"""Answers that hold at the edges (issue 14): a tension target the equation of state cannot reach,
fitted constants used at another temperature.

A protein foam without a CMC and a 50 mN/m target: the Langmuir/Szyszkowski pressure
n R T Gamma_inf ln(1/(1 - theta)) (Rosen and Kunjappu, Surfactants and Interfacial Phenomena, 4th
ed. (2012), ch. 5 [from memory]) with a protein's small Gamma_inf in mol/m**2 reaches it only at
theta = 1 within rounding: no finite concentration, so the target is unreachable, said plainly.
"""

from __future__ import annotations

import json
import subprocess
import sys
import warnings
from pathlib import Path

import pytest

from sizing import model
from sizing.case import loads_case
from sizing.errors import InputError
from sizing.outputs.solve_json import solution_json
from sizing.planning.plan import build_plan

ROOT = Path(__file__).resolve().parents[1]


def _protein_case(tmp_path):
    text = (ROOT / "cases_demo" / "food_foam_protein.toml").read_text(encoding="utf-8")
    text = text.replace("coverage = 0.95", 'tension = "50 mN/m"')
    assert 'tension = "50 mN/m"' in text
    p = tmp_path / "protein_tension.toml"
    p.write_text(text, encoding="utf-8")
    return p


def test_a_tension_target_beyond_the_equation_of_state_is_unreachable(tmp_path):
    p = _protein_case(tmp_path)
    case = loads_case(p.read_text(encoding="utf-8"), tmp_path)
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no numpy warning on the way
        j = solution_json(model.solve_case(case), case)
    assert j["feasible"] is False and j["dose"] is None
    assert "equation of state cannot lower the tension" in j["unreachable"]
    with pytest.raises(InputError, match="target.tension: the target is not reachable"):
        build_plan(case)


def test_the_cli_says_it_in_one_line(tmp_path):
    p = _protein_case(tmp_path)
    out = subprocess.run([sys.executable, "-m", "sizing", "solve", str(p), "--json"], capture_output=True,
                         text=True, timeout=120)
    assert out.returncode == 0 and json.loads(out.stdout)["feasible"] is False
    assert "Warning" not in out.stderr
    out = subprocess.run([sys.executable, "-m", "sizing", "plan", str(p), "--out", str(tmp_path / "o")],
                         capture_output=True, text=True, timeout=120)
    assert out.returncode == 2
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: target.tension") and "--dose" not in lines[0]


def test_fitted_constants_used_at_another_temperature_warn_with_both(tmp_path):
    text = (ROOT / "cases_demo" / "agro_ew_fitted.toml").read_text(encoding="utf-8")
    case = loads_case(text.replace('temperature = "25 degC"', 'temperature = "70 degC"'), ROOT / "cases_demo")
    w = solution_json(model.solve_case(case), case)["warnings"]
    assert any("hold at 25 degC and are used at the batch temperature 70 degC" in x for x in w), w
