"""Issue 14 item 6: one list of warnings in every channel (stdout, result.json, the report's top box).

The monomer pre-emulsion demo runs a Monte Carlo, its residence time is shorter than the
adsorption time, and its Monte Carlo charge puts the 1 x and 1.15 x levels at the CMC ceiling:
both verdicts must reach the terminal, result.json ``warnings`` and the first box of the report.
"""

from __future__ import annotations

import json
import subprocess
import sys
from html import escape as html_escape
from pathlib import Path

import pytest

from sizing.case import load_case
from sizing.outputs.htmlbits import unit_text
from sizing.outputs.report import render
from sizing.outputs.result_json import plan_json
from sizing.planning.plan import build_plan, plan_warnings

ROOT = Path(__file__).resolve().parents[1]
MINI = ROOT / "cases_demo" / "miniemulsion_hph.toml"


@pytest.fixture(scope="module")
def mini():
    plan = build_plan(load_case(MINI), MINI)
    return plan, render(plan)


def _top_box(html: str) -> str:
    start = html.index('<section id="recommendation">')
    return html[start:html.index("</section>", start)]


def test_adsorption_verdict_is_a_plan_warning(mini):
    plan, html = mini
    assert plan.adsorption is not None and plan.adsorption.optimistic
    ws = plan_warnings(plan)
    assert plan.adsorption.message in ws
    assert plan.adsorption.message in plan_json(plan)["warnings"]
    assert "OPTIMISTIC" in _top_box(html)


def test_ceiling_warning_kept_under_monte_carlo(mini):
    plan, html = mini
    assert plan.uncertainty is not None
    at_ceiling = [t for t in plan.trial if t.micelle_share > 1e-9]
    assert len(at_ceiling) >= 2 and len(plan.trial) - len(at_ceiling) >= 2
    ws = [w for w in plan_warnings(plan) if "sit at the CMC ceiling" in w]
    assert len(ws) == 1 and "1 x, 1.15 x" in ws[0]
    assert "sit at the CMC ceiling" in _top_box(html)


def test_every_warning_on_stdout_and_in_result_json(mini, tmp_path):
    plan, html = mini
    out = tmp_path / "p"
    r = subprocess.run([sys.executable, "-m", "sizing", "plan", str(MINI), "--out", str(out)],
                       capture_output=True, text=True, timeout=120)
    assert r.returncode == 0, r.stderr
    stdout_warnings = [line[len("warning: "):] for line in r.stdout.splitlines() if line.startswith("warning: ")]
    saved = json.loads((out / "result.json").read_text(encoding="utf-8"))["warnings"]
    assert stdout_warnings == saved == plan_warnings(plan)
    box = _top_box((out / "report.html").read_text(encoding="utf-8"))
    for w in saved:
        assert html_escape(unit_text(w), quote=True) in box
