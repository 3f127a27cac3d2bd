"""``sizing sweep`` 1000 x 1000 with ``--csv``: wall seconds and peak memory (not a test).

Run: ``.venv/bin/python tests/bench_sweep.py [--repeats 3] [--n 1000]``

Each run is ``/usr/bin/time -v sizing sweep CASE --vary d32=1um..5um:N --vary
batch.dispersed_fraction=0.1..0.4:N --csv FILE``, interleaved with the reference
``python -c "import scipy.optimize"`` so a loaded machine shows in both.  Goals (issue 16):
under 3 s and under 500 MB for N = 1000.
"""

from __future__ import annotations

import argparse
import re
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def measure(cmd: list[str]) -> tuple[float, float]:
    """Return (wall seconds, peak resident MB) of ``cmd`` from ``/usr/bin/time -v``."""
    done = subprocess.run(["/usr/bin/time", "-v", *cmd], capture_output=True, text=True)
    if done.returncode != 0:
        raise SystemExit(done.stderr[-2000:])
    wall = re.search(r"Elapsed \(wall clock\) time \(h:mm:ss or m:ss\): (\S+)", done.stderr).group(1)
    parts = [float(p) for p in wall.split(":")]
    seconds = sum(p * 60 ** i for i, p in enumerate(reversed(parts)))
    kb = int(re.search(r"Maximum resident set size \(kbytes\): (\d+)", done.stderr).group(1))
    return seconds, kb / 1024


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--n", type=int, default=1000)
    ap.add_argument("--case", default=str(ROOT / "cases_demo" / "lotion_o_w.toml"))
    args = ap.parse_args(argv)
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "sweep.csv"
        sweep = [sys.executable, "-m", "sizing", "sweep", args.case, "--vary", f"d32=1um..5um:{args.n}",
                 "--vary", f"batch.dispersed_fraction=0.1..0.4:{args.n}", "--csv", str(out)]
        ref = [sys.executable, "-c", "import scipy.optimize"]
        runs = {"reference: import scipy.optimize": [], f"sweep {args.n} x {args.n} --csv": []}
        for _ in range(args.repeats):
            runs["reference: import scipy.optimize"].append(measure(ref))
            runs[f"sweep {args.n} x {args.n} --csv"].append(measure(sweep))
        size = out.stat().st_size / 1e6
    print(f"{args.repeats} interleaved runs; CSV {size:.0f} MB (goals: under 3 s, under 500 MB)")
    for k, r in runs.items():
        w, m = [a for a, _ in r], [b for _, b in r]
        print(f"  {k:<36} wall min {min(w):.2f} s, median {statistics.median(w):.2f} s; "
              f"peak memory median {statistics.median(m):.0f} MB")
    ref_w, (sweep_key, sweep_runs) = [a for a, _ in runs["reference: import scipy.optimize"]], list(runs.items())[1]
    w, m = statistics.median(a for a, _ in sweep_runs), statistics.median(b for _, b in sweep_runs)
    # the goal is in seconds on the machine of issue 16, where the reference took 0.70 s; the ratio
    # to the reference in the same run says how a loaded or slower machine compares
    print(f"  {sweep_key}: {w / statistics.median(ref_w):.2f}x the reference's median "
          f"(goal 3 s on a machine where the reference takes 0.70 s: {3 / 0.70:.2f}x); "
          f"{'met' if w / statistics.median(ref_w) <= 3 / 0.70 and m <= 500 else 'NOT met'} "
          f"(memory {m:.0f} MB, goal 500 MB)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
