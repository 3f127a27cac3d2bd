"""The three files of ``sizing plan``: report.html, result.json and trial_plan.csv.

:func:`build_outputs` computes all three in memory; :func:`write_outputs` writes them through a
temporary folder beside the output folder, so a failed run leaves an earlier plan untouched.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path

from ..planning.plan import build_plan
from . import report
from .jsonify import dumps
from .result_json import plan_json
from .trial_csv import trial_csv

OUTPUTS = ("report.html", "result.json", "trial_plan.csv")


def build_outputs(case, source) -> tuple[object, dict[str, str]]:
    """Return ``(plan, {file name: text})`` for a validated case (nothing written)."""
    plan = build_plan(case, source)
    files = {
        "report.html": report.render(plan),
        "result.json": dumps(plan_json(plan)) + "\n",
        "trial_plan.csv": trial_csv(plan),
    }
    return plan, files


def write_outputs(out_dir: Path, files: dict[str, str]) -> list[Path]:
    """Write the files through a temporary folder beside ``out_dir``, then move them in."""
    out_dir = Path(out_dir)
    out_dir.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(dir=out_dir.parent, prefix=f".{out_dir.name}.", suffix=".tmp"))
    try:
        for name, text in files.items():
            with open(tmp / name, "w", encoding="utf-8", newline="") as fh:
                fh.write(text)
        out_dir.mkdir(parents=True, exist_ok=True)
        written = []
        for name in files:
            os.replace(tmp / name, out_dir / name)
            written.append(out_dir / name)
        return written
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
