"""``sizing compare A.toml B.toml ... [--out DIR] [--json]``: cases side by side.

Prints one table (the quantities down, the cases across, ``*`` where a value differs from the
first case's) and, with ``--out``, writes ``compare.html`` there (the table and one
dose-against-coverage chart; written atomically, a failed run keeps the old page).
"""

from __future__ import annotations

from pathlib import Path

from ..case import load_case
from ..errors import InputError
from ..files import write_atomic
from ..outputs.compare_html import render, text_table
from ..outputs.report import report_date
from ..texts import CLI_CAUTION
from ..views import compare_view
from .common import clean, numeric_guard, print_json

HTML_NAME = "compare.html"


def register(sub) -> None:
    p = sub.add_parser("compare", help="several cases side by side: dose, coverage, d32, area",
                       description="Compare two or more case files: the dose (kg of product per batch), "
                                   "the coverage, the d32 and area the dose uses and where the surfactant "
                                   "goes, side by side with the differences from the first case marked.")
    p.add_argument("cases", nargs="*", metavar="CASE", help="case files (TOML), two or more")
    p.add_argument("--out", metavar="DIR", help=f"write {HTML_NAME} (side by side, with a chart) into DIR")
    p.add_argument("--json", action="store_true", help="print the comparison as one JSON object")
    p.set_defaults(func=run)


def _labels(paths: list[str]) -> list[str]:
    """Short names for the columns: the file stems, the paths where two stems are the same."""
    stems = [Path(p).stem for p in paths]
    return [s if stems.count(s) == 1 else p for s, p in zip(stems, paths)]


def load_cases(paths: list[str]) -> list:
    """Read and validate every case; each problem line names its file (all files are checked)."""
    if len(paths) < 2:
        raise InputError(f"compare: give at least two case files to compare; got {len(paths)}"
                         + (f" ({clean(paths[0])})" if paths else ""))
    cases, problems = [], []
    for p in paths:
        try:
            cases.append(load_case(p))
        except InputError as exc:
            for line in exc.problems:
                problems.append(line if line.startswith(str(p)) else f"{p}: {line}")
    if problems:
        raise InputError(problems=problems)
    return cases


def run(args) -> int:
    cases = load_cases(list(args.cases))
    labels = _labels(list(args.cases))
    with numeric_guard(args):  # an overflow is one error naming the input, before any output
        view = compare_view(list(zip(labels, cases)))
        page = render(view, list(args.cases), report_date()) if args.out else None
    if args.out:
        folder = Path(args.out)
        folder.mkdir(parents=True, exist_ok=True)
        write_atomic(folder / HTML_NAME, page)
    if args.json:
        print_json({"cases": list(args.cases), **view})
        return 0
    print(clean(text_table(view)))
    for r in view["rows"]:
        for w in r["warnings"]:
            print(clean(f"warning ({r['scenario']}): {w}"))
        if not r["feasible"]:
            print(clean(f"note ({r['scenario']}): the target is not reachable at equilibrium; no dose"))
    if args.out:
        print(f"wrote {clean(Path(args.out) / HTML_NAME)}")
    tail = " (see the cautions in report.html)."
    print(CLI_CAUTION.replace("report.html", HTML_NAME) if args.out else CLI_CAUTION.replace(tail, "."))
    return 0
