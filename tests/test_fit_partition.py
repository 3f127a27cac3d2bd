"""Tests of sizing.fitting.partition and `sizing fit partition` on synthetic pairs.

Synthetic pairs follow the pseudo-phase picture (Laven, Open Colloid Sci. J. 4 (2011) 37: a
constant oil/water ratio below the CMC, surfactant added past it stays in the water) with
seeded log-normal assay noise; intervals are cross-checked against scipy.stats.t.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
from scipy import stats

from sizing.cli import main
from sizing.errors import InputError
from sizing.fitting.partition import fit_partition, log_ratio_estimate, origin_line_estimate

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases_demo" / "lab" / "nonionic_partition.csv"
HEADER = "water_concentration [mM],oil_concentration [mM]\n"


def pairs(seed, p=20.0, cmc=0.1, noise=0.04):
    rng = np.random.default_rng(seed)
    cw = np.array([0.005, 0.01, 0.02, 0.04, 0.06, 0.08, 0.2, 0.5, 1.0])
    co = p * np.minimum(cw, cmc) * np.exp(rng.normal(0, noise, cw.size))
    return cw, co


def write_pairs(tmp_path, cw, co, name="pairs.csv"):
    path = tmp_path / name
    path.write_text(HEADER + "\n".join(f"{a:.8g},{b:.8g}" for a, b in zip(cw, co)) + "\n")
    return path


def test_log_ratio_interval_matches_scipy_t_interval():
    y = np.log([2.1, 1.9, 2.05, 1.97])
    p, (lo, hi) = log_ratio_estimate(np.ones(4), np.exp(y))
    ref = stats.t.interval(0.95, len(y) - 1, loc=y.mean(), scale=stats.sem(y))  # scipy reference
    assert p == pytest.approx(np.exp(y.mean()), rel=1e-12)
    assert (lo, hi) == pytest.approx(tuple(np.exp(ref)), rel=1e-12)


def test_origin_line_for_zero_oil_concentrations():
    p, (lo, hi) = origin_line_estimate([1.0, 2.0, 3.0], [0.0, 0.0, 0.0])
    assert p == 0.0 and lo == 0.0 and hi == 0.0


def test_given_cmc_flags_points_above(tmp_path):
    cw, co = pairs(0)
    res = fit_partition(write_pairs(tmp_path, cw, co), cmc=0.1)
    assert [r["above_cmc"] for r in res.rows] == list(cw > 0.1)
    assert all(r["flag"] for r in res.rows if r["above_cmc"])
    assert res.cmc_source == "given"
    lo, hi = res.interval
    assert lo <= 20.0 <= hi


def test_fitted_breakpoint_and_coverage(tmp_path):
    # Tolerance: at least 16 of 20 seeds inside the 95 % interval (binomial, see test_fit_tension.py)
    hits = 0
    for seed in range(20):
        cw, co = pairs(seed)
        res = fit_partition(write_pairs(tmp_path, cw, co))
        assert res.cmc_source == "fitted"
        assert 0.08 <= res.cmc <= 0.2  # the breakpoint lies between the bracketing points
        lo, hi = res.interval
        hits += lo <= 20.0 <= hi
    assert hits >= 16


def test_constant_ratio_without_cmc_uses_all_points(tmp_path):
    cw = np.array([0.01, 0.02, 0.05, 0.1, 0.2, 0.5])
    res = fit_partition(write_pairs(tmp_path, cw, 3.0 * cw))
    assert res.cmc is None and not any(r["above_cmc"] for r in res.rows)
    assert res.partition_coefficient == pytest.approx(3.0, rel=1e-9)


def test_demo_file_and_cli_json(capsys):
    res = fit_partition(DEMO)
    lo, hi = res.interval
    assert lo <= 35.0 <= hi  # generating value in the file header (invented demo data)
    assert sum(r["above_cmc"] for r in res.rows) == 3
    assert main(["fit", "partition", str(DEMO), "--json"]) == 0
    j = json.loads(capsys.readouterr().out)
    assert j["partition_coefficient"] == pytest.approx(res.partition_coefficient)
    assert j["partition_coefficient_interval"] == pytest.approx(list(res.interval))


def test_cli_text_and_cmc_option(capsys):
    assert main(["fit", "partition", str(DEMO), "--cmc", "0.085 mM"]) == 0
    out = capsys.readouterr().out
    assert "0.085 mM (given)" in out and "above the CMC" in out


# ---------------------------------------------------------------- bad data
def test_non_positive_water_concentration(tmp_path):
    p = write_pairs(tmp_path, [0.0, 0.01, 0.02], [0.1, 0.2, 0.4])
    with pytest.raises(InputError, match=r"row 2, column 'water_concentration \[mM\]': 0 mol/m\*\*3 is not positive"):
        fit_partition(p)


def test_negative_oil_concentration(tmp_path):
    p = write_pairs(tmp_path, [0.005, 0.01, 0.02], [0.1, -0.2, 0.4])
    with pytest.raises(InputError, match=r"row 3, column 'oil_concentration \[mM\]'.*negative"):
        fit_partition(p)


def test_missing_column_and_unit(tmp_path):
    p = tmp_path / "bad.csv"
    p.write_text("water_concentration,oil [mM]\n0.01,0.2\n")
    with pytest.raises(InputError, match=r"has no unit") as e:
        fit_partition(p)
    assert any("missing column(s)" in x and "oil_concentration" in x for x in e.value.problems)


def test_too_few_points_below_given_cmc(tmp_path):
    p = write_pairs(tmp_path, [0.01, 0.2, 0.5], [0.2, 2.0, 2.0])
    with pytest.raises(InputError, match=r"1 point\(s\) below the CMC .* expected at least 2"):
        fit_partition(p, cmc=0.1)


# ---------------------------------------------------------------- data that cannot support a fit
def test_one_row_is_refused_with_the_reason(tmp_path):
    p = write_pairs(tmp_path, [0.01], [0.2])
    with pytest.raises(InputError, match=r"1 data row\(s\); expected at least 2 pairs"):
        fit_partition(p)
    assert main(["fit", "partition", str(p)]) == 2


def test_one_row_repeated_is_refused(tmp_path):
    p = write_pairs(tmp_path, [0.01] * 6, [0.2] * 6)
    with pytest.raises(InputError, match=r"one water concentration .*repeated rows cannot show"):
        fit_partition(p)


def test_pure_noise_is_refused_not_given_a_tight_interval(tmp_path):
    # c_oil drawn independently of c_water: the slope of ln c_oil on ln c_water has a 95 %
    # interval containing 0 in about 95 % of seeds; at least 17 of 20 refused (binomial, as in
    # test_fitted_breakpoint_and_coverage)
    refused = 0
    for seed in range(20):
        rng = np.random.default_rng(seed)
        cw = np.exp(rng.uniform(np.log(0.001), np.log(0.05), 12))
        co = np.exp(rng.normal(np.log(0.5), 0.3, 12))
        try:
            fit_partition(write_pairs(tmp_path, cw, co), cmc=0.1)
        except InputError as exc:
            assert "no correlation" in str(exc) and "slope" in str(exc)
            refused += 1
    assert refused >= 17


def test_array_fit_matches_the_csv_fit_and_skips_rows_on_request(tmp_path):
    from sizing.fitting.partition import fit_partition_arrays
    cw, co = pairs(3)
    a = fit_partition(write_pairs(tmp_path, cw, co))
    b = fit_partition_arrays(cw, co, with_rows=False)
    assert b.rows == [] and b.cmc_source == a.cmc_source
    assert b.partition_coefficient == pytest.approx(a.partition_coefficient, rel=1e-7)  # 8-digit CSV


def test_breakpoint_agrees_with_least_squares_started_in_each_gap():
    # reference: scipy.optimize.least_squares on the same broken line, started in every gap
    from scipy.optimize import least_squares

    from sizing.fitting.partition import fit_breakpoint
    cw, co = pairs(5)
    x, y = np.log(cw), np.log(co)
    best = None
    u = np.unique(x)
    for xb in 0.5 * (u[1:-1] + u[2:]):
        res = least_squares(lambda q: q[0] + np.minimum(x, q[1]) - y, [np.mean(y - x), xb],
                            bounds=([-50, u[0]], [50, u[-1]]))
        best = res if best is None or res.cost < best.cost else best
    p, cmc, _, _ = fit_breakpoint(cw, co)
    assert p == pytest.approx(np.exp(best.x[0]), rel=1e-5)  # least_squares' default tolerances
    assert cmc == pytest.approx(np.exp(best.x[1]), rel=1e-5)


def test_implausible_concentration_is_refused_by_row(tmp_path):
    p = tmp_path / "huge.csv"
    p.write_text(HEADER + "0.01,0.2\n1e308,0.4\n0.04,0.8\n")
    with pytest.raises(InputError, match=r"row 3, column 'water_concentration \[mM\]'.*accepted range"):
        fit_partition(p)


def test_implausible_cmc_option_is_refused(tmp_path, capsys):
    cw, co = pairs(0)
    p = write_pairs(tmp_path, cw, co)
    assert main(["fit", "partition", str(p), "--cmc", "1e300 mM"]) == 2
    assert "--cmc: 1e+300 mM is outside the accepted range" in capsys.readouterr().err
