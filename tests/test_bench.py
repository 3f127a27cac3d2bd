"""`sizing bench --json` contract (DESIGN.md): keys and agreement with the loop; no time asserted."""

import json

import numpy as np

from sizing import bench
from sizing.cli import main


def test_bench_json_contract_on_a_small_run(capsys):
    # A small run keeps the suite quick; the throughput ratios are reported, never asserted.
    assert main(["bench", "--json", "--cases", "2000", "--loop-cases", "50"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(out["ratio_vs_loop"]) == {"langmuir", "frumkin", "volmer", "blend"}
    assert set(out["cases_per_s"]) == {"langmuir", "frumkin", "volmer", "blend"}
    # the vectorised answers equal the per-case brentq loop's (scipy.optimize.brentq) to 1e-9
    assert out["max_rel_diff"] < 1e-9
    assert out["max_mass_balance_error"] < 1e-9
    assert out["monte_carlo"]["samples"] == 100_000


def test_bench_refuses_nonsense_sizes(capsys):
    assert main(["bench", "--cases", "10", "--loop-cases", "50"]) == 2
    assert "--cases/--loop-cases" in capsys.readouterr().err


def test_bench_reports_min_and_median_of_each_side_interleaved(capsys):
    assert main(["bench", "--json", "--cases", "2000", "--loop-cases", "20", "--repeats", "3"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["repeats"] == 3
    for m in ("langmuir", "frumkin", "volmer"):
        for side in ("vectorised", "same_per_case", "scipy_loop"):
            t = out["timing"][m][side]
            assert t["runs"] == 3 and 0 < t["min"] <= t["median"]
        assert out["ratio_vs_same_per_case"][m] > 0


def test_an_entry_is_one_function_in_the_registry():
    # a new entry (a blend, later) is a function returning Sides plus one line in ENTRIES
    def twice(n, loop_n, seed):
        x = np.arange(1.0, n + 1)
        return bench.Sides(n=n, loop_n=loop_n, vectorised=lambda: 2 * x,
                           same_per_case=lambda: np.array([2 * v for v in x[:loop_n]]),
                           scipy_loop=lambda: np.array([2 * v for v in x[:loop_n]]))

    out = bench.run(1000, 10, monte_carlo=False, repeats=2, entries={**bench.ENTRIES, "twice": twice})
    assert set(out["ratio_vs_loop"]) == {"langmuir", "frumkin", "volmer", "blend", "twice"}
    assert out["max_rel_diff_by_model"]["twice"] == 0
