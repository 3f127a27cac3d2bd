"""Benchmark of the workbench (not a test): rerun time of the Dose balance page and first page load.

    python tests/ui_bench.py [--reruns N] [--no-browser]

1. AppTest (in process): the first run of the Dose balance page (imports and empty caches), then
   the median rerun after a widget change, (a) moving the what-if d32 slider and (b) editing the
   case (a new d32 each time, so every engine view is recomputed).
2. Real browser (when /usr/bin/chromium and Playwright are present): ``sizing app --headless``
   on a free port (it warms up before serving); the time from ``page.goto`` to the dose metric
   and the last chart being visible, in a fresh browser context (empty cache, new session):
   the first visit after the server starts, and the median of five more.
"""

from __future__ import annotations

import argparse
import json
import statistics
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(HERE))


def apptest(reruns: int) -> dict:
    from streamlit.testing.v1 import AppTest

    at = AppTest.from_file(str(ROOT / "ui" / "screens" / "dose.py"), default_timeout=60)
    t0 = time.perf_counter()
    at.run()
    first = time.perf_counter() - t0
    assert not at.exception, at.exception
    options = at.select_slider(key="whatif_d32").options
    slider = []
    for i in range(reruns):
        at.select_slider(key="whatif_d32").set_value(float(options[(3 * i) % len(options)]))
        t0 = time.perf_counter()
        at.run()
        slider.append(time.perf_counter() - t0)
        assert not at.exception, at.exception
    # edit the case: a fresh AppTest of the drops page would lose the session, so edit the dict
    edit = []
    base = at.session_state["case_dict"]
    for i in range(reruns):
        base["drops"] = {"d32": f"{1.5 + 0.01 * i:.2f} um"}
        at.session_state["case_dict"] = base
        t0 = time.perf_counter()
        at.run()
        edit.append(time.perf_counter() - t0)
        assert not at.exception, at.exception
    return {"first_run_s": first, "median_rerun_slider_s": statistics.median(slider),
            "median_rerun_case_edit_s": statistics.median(edit), "reruns": reruns}


def browser(loads: int = 6) -> dict | None:
    if not Path("/usr/bin/chromium").exists():
        return None
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        return None
    from test_browser import ARGS, CHROMIUM, free_port, start_app, stop_app

    port = free_port()
    proc = start_app(port)
    url = f"http://127.0.0.1:{port}/dose"
    out = {}
    try:
        with sync_playwright() as p:
            b = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
            times = []
            for _ in range(loads):
                ctx = b.new_context(viewport={"width": 1400, "height": 1500})  # a fresh browser cache
                page = ctx.new_page()
                t0 = time.perf_counter()
                page.goto(url)
                page.get_by_test_id("stMetric").filter(has_text="Product as delivered").first.wait_for()
                page.get_by_test_id("stVegaLiteChart").nth(2).wait_for()  # the third chart: dose against d32
                times.append(time.perf_counter() - t0)
                ctx.close()
            b.close()
        out = {"first_load_after_start_s": times[0], "median_first_load_s": statistics.median(times[1:]),
               "loads": loads - 1}
    finally:
        stop_app(proc)
    return out


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--reruns", type=int, default=30)
    ap.add_argument("--no-browser", action="store_true")
    args = ap.parse_args()
    result = {"apptest": apptest(args.reruns)}
    if not args.no_browser:
        result["browser"] = browser()
    print(json.dumps({k: ({kk: round(vv, 4) if isinstance(vv, float) else vv for kk, vv in v.items()}
                          if isinstance(v, dict) else v) for k, v in result.items()}, indent=2))
    return 0


if __name__ == "__main__":
    sys.exit(main())
