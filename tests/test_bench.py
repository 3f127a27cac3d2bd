"""`sizing bench --json` contract (DESIGN.md): keys and agreement with the loop; no time asserted."""

import json

from sizing.cli import main


def test_bench_json_contract_on_a_small_run(capsys):
    # A small run keeps the suite quick; the throughput ratios are reported, never asserted.
    assert main(["bench", "--json", "--cases", "2000", "--loop-cases", "50"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(out["ratio_vs_loop"]) == {"langmuir", "frumkin", "volmer"}
    assert set(out["cases_per_s"]) == {"langmuir", "frumkin", "volmer"}
    # the vectorised answers equal the per-case brentq loop's (scipy.optimize.brentq) to 1e-9
    assert out["max_rel_diff"] < 1e-9
    assert out["max_mass_balance_error"] < 1e-9
    assert out["monte_carlo"]["samples"] == 100_000


def test_bench_refuses_nonsense_sizes(capsys):
    assert main(["bench", "--cases", "10", "--loop-cases", "50"]) == 2
    assert "--cases/--loop-cases" in capsys.readouterr().err
