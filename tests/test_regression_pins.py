"""Regression pins: every demo plan's result.json still carries the numbers it carried before.

These are NOT reference checks. The pins in tests/data/demo_pins.json are our own earlier output
(every finite number, every true/false and recommendation.basis of each demo's result.json),
compared at rel 1e-12 (abs 1e-300 for zeros), so a refactor that moves a number is caught.
Regenerate them only on purpose, with ``python tests/make_demo_pins.py``, when a change of output
is intended. The reference checks against published values live in the other test files.
"""

from __future__ import annotations

import importlib.util
import json
from pathlib import Path

import pytest

from sizing.cli import main

HERE = Path(__file__).resolve().parent
# the one home of the flattening and the comparison is the script that writes the pins
_spec = importlib.util.spec_from_file_location("make_demo_pins", HERE / "make_demo_pins.py")
pins_tool = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(pins_tool)

DOC = json.loads(pins_tool.PINS.read_text(encoding="utf-8"))
PINS = DOC["cases"]
CASES = pins_tool.demo_cases()
NAMES = sorted(set(PINS) | set(CASES))


def test_pin_file_says_what_it_is():
    assert "regression pins of our own output" in DOC["_about"].lower()
    assert "not reference values" in DOC["_about"]
    assert (DOC["rel"], DOC["abs"]) == (pins_tool.REL, pins_tool.ABS) == (1e-12, 1e-300)


@pytest.mark.parametrize("name", NAMES)
def test_demo_plan_matches_its_pins(name, tmp_path, capsys):
    assert name in CASES, f"case {name}: pinned but no longer a demo case; {pins_tool.HINT}"
    assert name in PINS, f"case {name}: a demo case without pins; {pins_tool.HINT}"
    pinned = PINS[name]
    assert "feasible" in pinned and "recommendation.basis" in pinned
    case = CASES[name]
    argv = ["plan"] + ([str(case)] if case is not None else []) + ["--out", str(tmp_path)]
    rc = main(argv)
    assert rc == 0, f"case {name}: sizing {' '.join(argv)} exited {rc}: {capsys.readouterr().err}"
    result = json.loads((tmp_path / "result.json").read_text(encoding="utf-8"))
    moved = pins_tool.differences(name, pinned, result)
    assert not moved, (f"{len(moved)} of {len(pinned)} pinned values moved:\n  "
                       + "\n  ".join(moved) + f"\n{pins_tool.HINT}")
