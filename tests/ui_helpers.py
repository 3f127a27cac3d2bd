"""Shared setup of the workbench's AppTest tests: a page seeded with a case file, a checked run, a tile."""

from __future__ import annotations

import os
import tempfile
import tomllib
from pathlib import Path

from streamlit.testing.v1 import AppTest

# the workbench saves each session's case on disk: keep the tests' saves out of the home folder
os.environ.setdefault("SIZING_WORKSPACES", tempfile.mkdtemp(prefix="sizing-ws-test-"))

ROOT = Path(__file__).resolve().parents[1]
PAGES = ROOT / "ui" / "screens"
DEMOS = ROOT / "cases_demo"


def seeded(page_file: Path, case_file: Path | None, timeout: float = 90) -> AppTest:
    """Return an AppTest of one page, its session seeded with a case file (None: the page's default)."""
    at = AppTest.from_file(str(page_file), default_timeout=timeout)
    if case_file is not None:
        at.session_state["case_dict"] = tomllib.loads(case_file.read_text(encoding="utf-8"))
        at.session_state["case_base_dir"] = str(case_file.parent)
    return at


def run(at: AppTest) -> AppTest:
    at.run()
    assert not at.exception, [e.value for e in at.exception]
    return at


def metric(at: AppTest, label: str) -> str:
    found = [m.value for m in at.metric if m.label == label]
    assert found, f"no metric {label!r}; have {[m.label for m in at.metric]}"
    return found[0]
