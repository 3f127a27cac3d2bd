"""``sizing calibrate``: importance weighting of the case's Monte Carlo by plant-trial measurements.

Checks: a conjugate normal case in log space, where the posterior is known in closed form (Gelman et
al., Bayesian Data Analysis, 3rd ed. (2013) ch. 2, normal with known variance [from memory]); the
posterior equals the prior without an informative column; the 80 % band covers a known "plant
truth" at about its rate over many seeds (synthetic trials, invented for that statistical check);
bad trial files are named by row and column; the CLI JSON contract.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from scipy.stats import binom, norm

from sizing.case import loads_case
from sizing.errors import InputError
from sizing.planning.calibrate import calibrate, read_trials

ROOT = Path(__file__).resolve().parents[1]

CASE = """
[case]
title = "calibration check"
system = "emulsion"
[batch]
volume = "2 m**3"
dispersed_fraction = 0.3
continuous_density = "1000 kg/m**3"
dispersed_density = "900 kg/m**3"
[drops]
d32 = {{ value = "4 um", rel_sd = {cv} }}
[surfactant]
molar_mass = "400 g/mol"
cmc = "1 mM"
max_surface_excess = "3 umol/m**2"
adsorption_constant = "40 m**3/mol"
[target]
coverage = 0.8
[uncertainty]
samples = {n}
seed = {seed}
"""


def _trials(tmp_path, rows, head="batch,charge [kg],d32 [um],stable"):
    p = tmp_path / "trials.csv"
    p.write_text(head + "\n" + "\n".join(rows) + "\n", encoding="utf-8")
    return read_trials(p)


def test_conjugate_normal_in_log_space(tmp_path):
    cv, sd_m = 0.2, 0.1
    case = loads_case(CASE.format(cv=cv, n=60000, seed=5))
    ys = [4.6, 4.4, 4.9]
    trials = _trials(tmp_path, [f"T{i},3,{y},yes" for i, y in enumerate(ys)], "batch,charge [kg],d32 [um],stable")
    cal = calibrate(case, trials)
    s0 = math.sqrt(math.log1p(cv * cv))
    mu0 = math.log(4e-6) - 0.5 * s0 * s0  # the case's log-normal spread keeps the mean at the value
    sm = math.sqrt(math.log1p(sd_m * sd_m))
    prec = 1 / s0 ** 2 + len(ys) / sm ** 2
    mean = (mu0 / s0 ** 2 + sum(math.log(y * 1e-6) for y in ys) / sm ** 2) / prec
    sd = 1 / math.sqrt(prec)
    b = cal.posterior["drops.d32"]
    assert b["p50"] == pytest.approx(math.exp(mean), rel=0.01)  # importance-sampling noise, ESS in the thousands
    assert b["p10"] == pytest.approx(math.exp(mean + norm.ppf(0.1) * sd), rel=0.015)
    assert b["p90"] == pytest.approx(math.exp(mean + norm.ppf(0.9) * sd), rel=0.015)
    assert cal.effective_sample_size > 1000


def test_without_an_informative_column_the_posterior_is_the_prior(tmp_path):
    case = loads_case(CASE.format(cv=0.2, n=5000, seed=2))
    trials = _trials(tmp_path, ["T1,3,,yes", "T2,4,,no"])
    cal = calibrate(case, trials)
    assert cal.posterior == cal.prior
    assert cal.effective_sample_size == pytest.approx(5000)
    assert any("posterior is the prior" in n for n in cal.notes)


def test_the_80_percent_band_covers_a_plant_truth_at_its_rate(tmp_path):
    seeds, hits = 30, 0
    cv, sd_m = 0.25, 0.10
    s0, sm = math.sqrt(math.log1p(cv * cv)), math.sqrt(math.log1p(sd_m * sd_m))
    for seed in range(seeds):
        rng = np.random.default_rng(seed)
        truth = 4e-6 * math.exp(s0 * rng.standard_normal() - 0.5 * s0 * s0)  # drawn from the prior
        ys = truth * np.exp(sm * rng.standard_normal(2))
        case = loads_case(CASE.format(cv=cv, n=6000, seed=100 + seed))
        trials = _trials(tmp_path, [f"T{i},3,{y * 1e6:.6g}," for i, y in enumerate(ys)])
        b = calibrate(case, trials).posterior["drops.d32"]
        hits += b["p10"] <= truth <= b["p90"]
    # 30 seeds at a true 80 %: 18..28 holds with probability > 0.97 (binomial)
    assert binom.cdf(17, seeds, 0.8) + binom.sf(28, seeds, 0.8) < 0.03
    assert 18 <= hits <= 28, hits


@pytest.mark.parametrize("rows, expected", [
    (["T1,0,4,yes"], "row 2, column charge"),
    (["T1,3,4,yes", "T1,3,4,yes"], "row 3 repeats row 2"),
    (["T1,3,4,maybe"], "column stable"),
])
def test_bad_trial_files_name_the_row(tmp_path, rows, expected):
    with pytest.raises(InputError, match=expected):
        _trials(tmp_path, rows)


def test_a_serum_concentration_above_the_cmc_is_refused(tmp_path):
    case = loads_case(CASE.format(cv=0.2, n=2000, seed=1))
    trials = _trials(tmp_path, ["T1,3,4,,5"], "batch,charge [kg],d32 [um],stable,serum concentration [mM]")
    with pytest.raises(InputError, match="above the CMC"):
        calibrate(case, trials)


def test_cli_on_the_demo_trials(tmp_path):
    out = subprocess.run([sys.executable, "-m", "sizing", "calibrate", str(ROOT / "cases_demo/agro_ew_stirred_tank.toml"),
                          str(ROOT / "cases_demo/agro_ew_stirred_tank_trials.csv"), "--samples", "8000", "--json",
                          "--out", str(tmp_path / "cal")], capture_output=True, text=True, timeout=180)
    assert out.returncode == 0, out.stderr
    j = json.loads(out.stdout)
    assert set(j) >= {"trials", "posterior", "prior", "effective_sample_size", "next", "stability"}
    assert set(j["next"]) >= {"dose_kg_product", "kg_product_per_batch", "percentile", "probability_target_met"}
    assert set(j["posterior"]["drops.d32"]) == {"p10", "p50", "p90"}
    assert len(j["trials"]) == 4
    assert {p.name for p in (tmp_path / "cal").iterdir()} == {"result.json", "report.html", "updated_case.toml"}
    updated = (tmp_path / "cal" / "updated_case.toml").read_text(encoding="utf-8")
    loads_case(updated)  # the updated case is itself a valid case
