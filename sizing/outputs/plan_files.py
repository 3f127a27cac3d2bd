"""The three files of ``sizing plan``: report.html, result.json and trial_plan.csv.

:func:`build_outputs` computes all three in memory; :func:`write_outputs` writes them into a
new folder that replaces the output folder in one rename, so a failed run leaves an earlier plan whole.
"""

from __future__ import annotations

from pathlib import Path

from ..files import write_folder
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
    """Write the files as the content of ``out_dir`` (see :func:`sizing.files.write_folder`).

    A new folder beside ``out_dir`` is filled and takes the old one's place in one rename, so a
    failed or killed run leaves the earlier plan whole (never a mix of old and new files) and no
    temporary folder.  When ``out_dir`` also holds other files, each of the three is replaced
    atomically on its own and the other files are left alone.
    """
    return write_folder(Path(out_dir), files)
