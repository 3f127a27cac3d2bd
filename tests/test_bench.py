"""`sizing bench --json` contract (DESIGN.md): keys and agreement with the loop; no time asserted."""

import json

import numpy as np

from sizing import bench
from sizing.cli import main
from sizing.physics.balance import state_for_dose


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


def test_bench_compares_each_isotherm_with_the_best_other_vectorised_way(capsys):
    # Langmuir against its closed form written by hand in numpy, Frumkin and Volmer against
    # scipy.optimize.elementwise.find_root (scipy's vectorised Chandrupatla root finder), all cases
    # in one run; the answers agree to 1e-9 (the JSON's max_rel_diff includes these comparisons)
    assert main(["bench", "--json", "--cases", "3000", "--loop-cases", "20", "--repeats", "2"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(out["ratio_vs_reference"]) == {"langmuir", "frumkin", "volmer"}
    assert out["reference"]["frumkin"] == "scipy.optimize.elementwise.find_root"
    assert out["reference"]["langmuir"] == "closed form by hand in numpy"
    for m in ("langmuir", "frumkin", "volmer"):
        assert out["ratio_vs_reference"][m] > 0 and out["timing"][m]["reference"]["runs"] == 2
        assert out["max_rel_diff_by_model"][m] < 1e-9
    assert set(out["targets"]["ratio_vs_reference"]) == {"langmuir", "frumkin", "volmer"}


def test_references_equal_the_engine_directly():
    # each reference is written without engine code; on its own it agrees with the engine to 1e-9
    for m in ("langmuir", "frumkin", "volmer"):
        case = bench.random_cases(5000, m, seed=3)
        kw = {k: v for k, v in case.items() if k != "dose_mol"}
        eng = state_for_dose(case["dose_mol"], model=m, **kw).free_concentration
        ref = bench.closed_form_langmuir(case) if m == "langmuir" else bench.elementwise_solve(case, m)
        np.testing.assert_allclose(ref, eng, rtol=1e-9, atol=0)


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


def test_lotion_plan_imports_no_matplotlib(tmp_path):
    # start-up (issue 16): the demo plan's charts are simple and drawn by hand as SVG, so the plan
    # never imports matplotlib (a test of imports, not of time; tests/bench_startup.py times it)
    import subprocess
    import sys
    from pathlib import Path

    lotion = Path(__file__).resolve().parents[1] / "cases_demo" / "lotion_o_w.toml"
    code = ("import sys; from sizing.cli import main; "
            f"rc = main(['plan', {str(lotion)!r}, '--out', {str(tmp_path / 'p')!r}]); "
            "print(rc, 'matplotlib' in sys.modules)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.strip().splitlines()[-1] == "0 False"
    assert (tmp_path / "p" / "report.html").read_text(encoding="utf-8").count("<svg") >= 4
