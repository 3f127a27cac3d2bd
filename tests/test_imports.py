"""Start-up: which heavy libraries each command-line module pulls in (a test of imports, not of time).

Each module is imported in a fresh interpreter and ``sys.modules`` is read there.  A verb loads
only its own module (``sizing.cli.VERBS`` lists them for ``--help``), and the engine behind the
quick verbs imports neither ``scipy.stats`` (the normal and Student quantiles come from
``scipy.special``) nor matplotlib, pandas or Streamlit: those are imported where they are used.
Common practice: keep a command line quick to start by importing heavy modules only where used.
"""

from __future__ import annotations

import argparse
import importlib
import json
import subprocess
import sys
from pathlib import Path

import pytest

from sizing.cli import VERBS, build_parser

ROOT = Path(__file__).resolve().parents[1]
HEAVY = ("scipy.stats", "matplotlib", "pandas", "streamlit", "altair", "pyarrow")
QUICK = ("scipy.stats", "matplotlib", "pandas", "streamlit", "altair", "pyarrow")

#: module -> heavy modules that importing it must not load
ABSENT = {
    "sizing.cli": HEAVY + ("numpy", "scipy", "pint", "pydantic"),  # `sizing --help`
    "sizing": HEAVY + ("numpy", "scipy", "pint", "pydantic"),  # the public API loads on first use
    "sizing.cli.solve": QUICK + ("scipy.special",),  # 0.2 s of start-up: physics.special has the sigmoid
    "sizing.cli.check": QUICK + ("scipy.special",),
    "sizing.cli.sweep": QUICK,  # pandas/pyarrow only when the table is built
    "sizing.cli.scaleup": QUICK,
    "sizing.cli.achievable": QUICK,
    "sizing.cli.plan": QUICK,  # matplotlib only when the report draws its charts
    "sizing.cli.fit": QUICK,  # pandas only when a lab CSV is read, matplotlib for the plot
    "sizing.cli.bench": QUICK,
    "sizing.cli.app": QUICK + ("numpy", "scipy"),  # the workbench runs in its own process
}
for _verb in VERBS:  # a verb added later is checked too (none of the heavy libraries at import)
    ABSENT.setdefault(f"sizing.cli.{_verb}", QUICK)


def loaded_after_import(module: str) -> set[str]:
    code = (f"import sys, json; import {module}; "
            f"print(json.dumps(sorted(m for m in sys.modules if m.split('.')[0] in {{'numpy', 'scipy', 'pint', "
            f"'pydantic', 'matplotlib', 'pandas', 'streamlit', 'altair', 'pyarrow'}})))")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    return set(json.loads(out.stdout))


@pytest.mark.parametrize("module", sorted(ABSENT))
def test_heavy_modules_are_not_imported(module):
    loaded = loaded_after_import(module)
    found = sorted(h for h in ABSENT[module] if h in loaded)
    assert not found, f"importing {module} loads {found}"


def test_every_verb_has_a_module_and_one_help_text():
    # the --help line of each verb comes from VERBS without importing it; it is the module's own
    for verb, help_text in VERBS.items():
        module = importlib.import_module(f"sizing.cli.{verb}")
        sub = argparse.ArgumentParser().add_subparsers()
        module.register(sub)
        assert sub._choices_actions[0].help == help_text, verb


def test_help_lists_every_verb_and_a_verb_keeps_its_arguments(capsys):
    lazy = build_parser()
    assert set(lazy._subparsers._group_actions[0].choices) == set(VERBS)
    full = build_parser("solve")
    args = full.parse_args(["solve", "case.toml", "--json"])
    assert args.case == "case.toml" and args.json and callable(args.func)


def test_sizing_help_runs_without_the_engine():
    code = ("import sys; from sizing.cli import main\n"
            "try:\n    main(['--help'])\nexcept SystemExit:\n    pass\n"
            "print('ENGINE' if 'sizing.model' in sys.modules or 'numpy' in sys.modules else 'LIGHT')")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip().endswith("LIGHT")
    assert all(v in out.stdout for v in VERBS)
