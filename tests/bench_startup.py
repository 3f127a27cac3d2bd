"""Whole-process start-up of the command line against ``python -c "import scipy.optimize"`` (not a test).

Run: ``.venv/bin/python tests/bench_startup.py [--repeats 7] [--case cases_demo/lotion_o_w.toml]``

Each command runs as its own process, the commands interleaved round by round so drift on the
machine hits them alike; wall and CPU seconds (user + system of the child) are reported as minimum
and median, with each command's median over the reference's.  Goals (issue 16): ``sizing solve``
within 1.3x of the reference, ``sizing plan`` within 2.5x.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
#: command -> the largest ratio of its median to the reference's median (issue 16)
GOALS = {"sizing solve": 1.3, "sizing plan": 2.5}


def timed(cmd: list[str], cwd: Path) -> tuple[float, float]:
    """Return (wall seconds, CPU seconds of the child) of one run of ``cmd``."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    done = subprocess.run(cmd, cwd=cwd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if done.returncode != 0:
        raise SystemExit(f"{' '.join(cmd)} failed: {done.stderr.strip()}")
    return wall, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=7)
    ap.add_argument("--case", default=str(ROOT / "cases_demo" / "lotion_o_w.toml"))
    ap.add_argument("--json", action="store_true")
    args = ap.parse_args(argv)
    py = sys.executable
    sizing = [py, "-m", "sizing"]
    with tempfile.TemporaryDirectory() as tmp:
        cmds = {
            "reference: python -c 'import scipy.optimize'": [py, "-c", "import scipy.optimize"],
            "sizing --help": sizing + ["--help"],
            "sizing check": sizing + ["check", args.case],
            "sizing solve": sizing + ["solve", args.case],
            "sizing plan": sizing + ["plan", args.case, "--out", os.path.join(tmp, "plan")],
        }
        for cmd in cmds.values():  # warm the file cache (and matplotlib's font cache) once
            timed(cmd, Path(tmp))
        runs = {k: [] for k in cmds}
        for _ in range(args.repeats):
            for k, cmd in cmds.items():
                runs[k].append(timed(cmd, Path(tmp)))
    ref = list(cmds)[0]
    out = {}
    for k, r in runs.items():
        wall, cpu = [w for w, _ in r], [c for _, c in r]
        out[k] = {"wall_min_s": min(wall), "wall_median_s": statistics.median(wall),
                  "cpu_min_s": min(cpu), "cpu_median_s": statistics.median(cpu)}
    for k in out:
        out[k]["wall_ratio"] = out[k]["wall_median_s"] / out[ref]["wall_median_s"]
        out[k]["cpu_ratio"] = out[k]["cpu_median_s"] / out[ref]["cpu_median_s"]
    if args.json:
        out["goals"] = GOALS
        print(json.dumps(out, indent=1))
        return 0
    print(f"{args.repeats} interleaved runs each; ratio = median / reference median (goals: solve 1.3x, plan 2.5x)")
    print(f"{'command':<48}{'wall min':>10}{'wall med':>10}{'ratio':>7}{'cpu min':>10}{'cpu med':>10}{'ratio':>7}")
    for k, v in out.items():
        print(f"{k:<48}{v['wall_min_s']:>9.3f}s{v['wall_median_s']:>9.3f}s{v['wall_ratio']:>6.2f}x"
              f"{v['cpu_min_s']:>9.3f}s{v['cpu_median_s']:>9.3f}s{v['cpu_ratio']:>6.2f}x")
    for name, goal in GOALS.items():
        v = out[name]
        verdict = "met" if max(v["wall_ratio"], v["cpu_ratio"]) <= goal else "NOT met"
        print(f"{name}: {v['wall_ratio']:.2f}x wall, {v['cpu_ratio']:.2f}x CPU of the reference "
              f"(medians); goal {goal}x: {verdict}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
