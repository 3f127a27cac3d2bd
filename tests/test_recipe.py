"""``[recipe] current_charge`` (issue 14 item 7): where the recipe's charge goes, beside the plan.

Checks: the current charge's split over water, oil, interface and micelles adds up to the charge
(the mass balance itself, rel 1e-12) and equals the equilibrium ``solve --dose`` gives at that
charge; the reserve is 1 - demand / current (arithmetic of the definition); a charge below the
demand says so; result.json, the terminal and the report carry it; bad values are named.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from sizing.case import loads_case
from sizing.errors import InputError
from sizing.model import solve_case, split_by_phase
from sizing.planning.plan import build_plan

ROOT = Path(__file__).resolve().parents[1]
LOTION = (ROOT / "cases_demo" / "lotion_o_w.toml").read_text()


def _case(extra):
    return loads_case(LOTION + "\n[recipe]\n" + extra + "\n", base_dir=ROOT / "cases_demo")


def test_where_the_recipe_charge_goes():
    case = _case('current_charge = "50 kg"')
    plan = build_plan(case)
    r = plan.recipe
    assert sum(r.split_mol.values()) == pytest.approx(r.mol, rel=1e-12)
    ref = solve_case(case, dose="15 kg")  # 50 kg of a 30 % product = 15 kg active
    assert r.coverage == pytest.approx(float(ref.state.coverage), rel=1e-12)
    for k, v in split_by_phase(ref).items():
        assert r.split_mol[k] == pytest.approx(float(v), rel=1e-12, abs=1e-15)
    demand = float(plan.solution.kg_product)
    assert r.reserve_share == pytest.approx(1 - demand / 50.0, rel=1e-12)
    assert r.times_recommended == pytest.approx(50.0 / plan.recommendation.kg_product_per_batch, rel=1e-12)


def test_active_basis_and_a_charge_below_the_demand():
    a = build_plan(_case('current_charge = "15 kg"\nbasis = "active"')).recipe
    assert a.kg_product == pytest.approx(50.0, rel=1e-12)
    low = build_plan(_case('current_charge = "2 kg"')).recipe
    assert low.reserve_share == 0.0 and low.kg_product < low.demand_kg_product


def test_every_channel_carries_it(tmp_path):
    p = tmp_path / "lotion.toml"
    p.write_text(LOTION + '\n[recipe]\ncurrent_charge = "50 kg"\n')
    for f in (ROOT / "cases_demo").glob("*.csv"):
        (tmp_path / f.name).write_bytes(f.read_bytes())
    r = subprocess.run([sys.executable, "-m", "sizing", "plan", str(p), "--out", str(tmp_path / "o")],
                       capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    assert "current recipe charge  50 kg product" in r.stdout and "reserve beyond" in r.stdout
    j = json.loads((tmp_path / "o" / "result.json").read_text())
    assert j["recipe"]["current_charge_kg_product"] == pytest.approx(50.0)
    assert 0 < j["recipe"]["reserve_share"] < 1
    assert "The current recipe charge" in (tmp_path / "o" / "report.html").read_text()


def test_bad_recipe_values_are_named():
    with pytest.raises(InputError, match="recipe.current_charge"):
        _case('current_charge = "0 kg"')
    with pytest.raises(InputError, match="recipe"):
        _case('current_charge = "5 kg"\nlevel = 3')
    assert "recipe.current_charge" not in _case('current_charge = "5 kg"').quantities()
