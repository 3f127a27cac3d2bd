"""Benchmark of ``fit tension`` against the number of rows (a script, not a test; never asserted).

Run: ``.venv/bin/python tests/bench_fit_tension.py [--quick]``.

Goals (issue 16): 1,000 rows within 3x the time of 100 rows; 1e5 rows (20 concentrations x
5,000 repeats) under 10 s.  Each size is timed several times, interleaved, and the minimum and
median are printed.  The series are invented (a Langmuir truth plus seeded Gaussian noise of
0.3 mN/m): they only set the work, not a check of the answers.

Rows above the lab-CSV cap (10,000 data rows, :data:`sizing.labcsv.MAX_ROWS`) are fitted through
the API (:class:`sizing.fitting.tension.TensionData`); the CSV rows through the whole command
(``sizing fit tension FILE --json``, in this process).
"""

from __future__ import annotations

import contextlib
import io
import math
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from sizing.cli import main
from sizing.fitting.tension import TensionData, fit_tension, model_tension

T25 = 298.15
TRUTH = (52e-3, 3.3e-6, 850.0, 0.065)  # clean tension [N/m], Gamma_inf, K, CMC [mol/m**3]


def series(n_conc: int, repeats: int, seed: int = 0):
    """Return (c, tension) of ``n_conc`` log-spaced concentrations, each measured ``repeats`` times."""
    rng = np.random.default_rng(seed)
    u = np.logspace(math.log10(TRUTH[3]) - 3, math.log10(TRUTH[3]) + 1, n_conc)
    c = np.repeat(u, repeats)
    g = model_tension(c, "langmuir", *TRUTH[:3], TRUTH[3], T25) + rng.normal(0.0, 0.3e-3, c.size)
    return c, g


def write_csv(folder: Path, n_conc: int, repeats: int) -> Path:
    c, g = series(n_conc, repeats)
    p = folder / f"bench_{n_conc}x{repeats}_tension.csv"
    rep = np.tile(np.arange(1, repeats + 1), n_conc)
    head = "concentration [mM],tension [mN/m],temperature [degC]" + (",replicate" if repeats > 1 else "")
    rows = [f"{a:.8g},{b * 1e3:.4f},25.0" + (f",{r}" if repeats > 1 else "") for a, b, r in zip(c, g, rep)]
    p.write_text("\n".join([head] + rows) + "\n")
    return p


def run_cli(path: Path) -> None:
    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        rc = main(["fit", "tension", str(path), "--json"])
    if rc != 0:
        raise SystemExit(f"fit tension failed on {path}")


def run_api(n_conc: int, repeats: int) -> None:
    c, g = series(n_conc, repeats)
    fit_tension(TensionData("bench.csv", c, g, T25, {}, ()))


def main_bench(quick: bool) -> None:
    folder = Path(tempfile.mkdtemp())
    cases = {"CLI 100 rows (100 concentrations)": lambda p=write_csv(folder, 100, 1): run_cli(p),
             "CLI 1,000 rows (1,000 concentrations)": lambda p=write_csv(folder, 1000, 1): run_cli(p),
             "CLI 1,000 rows (20 conc. x 50 replicates)": lambda p=write_csv(folder, 20, 50): run_cli(p),
             "API 1e5 rows (20 conc. x 5,000 repeats)": lambda: run_api(20, 5000)}
    if not quick:
        cases["CLI 10,000 rows (10,000 concentrations)"] = lambda p=write_csv(folder, 10000, 1): run_cli(p)
    times = {k: [] for k in cases}
    for _ in range(1 if quick else 3):  # interleaved: every size once per round
        for k, f in cases.items():
            t0 = time.perf_counter()
            f()
            times[k].append(time.perf_counter() - t0)
    ref = min(times["CLI 100 rows (100 concentrations)"])
    print(f"{'case':<46}{'min [s]':>10}{'median [s]':>12}{'min / 100 rows':>16}")
    for k, v in times.items():
        print(f"{k:<46}{min(v):>10.3f}{statistics.median(v):>12.3f}{min(v) / ref:>16.2f}")


if __name__ == "__main__":
    main_bench("--quick" in sys.argv)
