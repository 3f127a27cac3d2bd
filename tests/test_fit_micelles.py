"""``sizing fit interaction``: the regular-solution beta of a mixed micelle from mixed CMCs.

Checks against the Rubingh (1979) equations (mixed CMCs computed from them, as in
worked by hand from Rubingh's equations: C_1 = 8.2 mM, C_2 = 0.11 mM, common literature values [from memory]),
beta = 0 giving Clint (1975), refusals, the CLI contract, and the coverage of the 95 % interval over
many seeds (synthetic data with a known beta: a statistical property, the data are invented for it).
"""

from __future__ import annotations

import json
import subprocess
import sys

import numpy as np
import pytest
from scipy.stats import binom

from sizing.errors import InputError
from sizing.fitting.micelles import fit_interaction, fit_interaction_arrays
from sizing.physics.blend import mixed_cmc

A = np.array([0.0, 0.1, 0.3, 0.5, 0.7, 0.9, 1.0])


def _cmcs(beta, a=A):
    return mixed_cmc(np.c_[a, 1 - a], [8.2, 0.11], "regular", beta)[0]


@pytest.mark.parametrize("beta", [-4.1, -2.0, -12.0, 0.0, 1.0])
def test_exact_mixed_cmcs_give_beta_back(beta):
    f = fit_interaction_arrays(A, _cmcs(beta))
    assert f.interaction == pytest.approx(beta, abs=1e-6)  # the nested grids stop at about 1e-7
    assert f.cmc_1 == pytest.approx(8.2, rel=1e-9) and f.cmc_2 == pytest.approx(0.11, rel=1e-9)
    assert f.rms_ln < 1e-6


def test_rubingh_reference_values_are_the_model():
    # Rubingh (1979) worked by hand: alpha_1 = 0.5: beta = -4.1 gives 0.16274 mM; alpha_1 = 0.9: 0.47345 mM (5 digits)
    np.testing.assert_allclose(_cmcs(-4.1, np.array([0.5, 0.9])), [0.16274, 0.47345], rtol=3e-5)


def test_clint_data_fit_beta_zero():
    a = A
    clint = 1.0 / (a / 8.2 + (1 - a) / 0.11)  # Clint 1975, the published closed form
    f = fit_interaction_arrays(a, clint)
    assert abs(f.interaction) < 1e-6 and not f.synergism


def test_synergism_flag_follows_rosen_and_hua():
    # |beta| > |ln(C_1/C_2)| = 4.31 is needed for a CMC below both pure ones (Rosen and Hua 1982)
    assert not fit_interaction_arrays(A, _cmcs(-4.1)).synergism
    assert fit_interaction_arrays(A, _cmcs(-8.0)).synergism


def test_the_95_percent_interval_covers_at_its_rate_over_seeds():
    beta, seeds, noise = -4.1, 50, 0.08
    c0 = _cmcs(beta)
    hits, widths = 0, []
    for seed in range(seeds):
        rng = np.random.default_rng(1000 + seed)
        f = fit_interaction_arrays(A, c0 * np.exp(rng.normal(0.0, noise, A.size)))
        lo, hi = f.interaction_interval
        hits += lo <= beta <= hi
        widths.append(hi - lo)
    # a true 95 % interval covers at least 42 of 50 with probability 0.99 (binomial)
    assert binom.cdf(41, seeds, 0.95) < 0.01
    assert hits >= 42, f"covered {hits} of {seeds}"
    assert np.median(widths) < 3.0  # and it is not covering by being useless


@pytest.mark.parametrize("a, c, expected", [
    ([0, 1, 0.5], [0.11, 8.2, 0.2], "at least 4"),
    ([0, 1, 0.5, 0.5], [0.11, 8.2, 0.2, 0.21], "distinct mixed composition"),
    ([0.05, 0.3, 0.5, 1.0], [0.11, 0.13, 0.2, 8.2], "rows at 0 and at 1"),
    ([0, 0.3, 0.5, 1.2], [0.11, 0.13, 0.2, 8.2], "from 0 to 1"),
    ([0, 0.3, 0.5, 1.0], [0.11, -0.13, 0.2, 8.2], "CMCs > 0"),
])
def test_data_that_cannot_support_a_fit_are_refused(a, c, expected):
    with pytest.raises(InputError, match=expected):
        fit_interaction_arrays(np.array(a, float), np.array(c, float))


def test_cli_json_and_the_csv_header_with_a_dash_unit(tmp_path):
    p = tmp_path / "mixed.csv"
    rows = "\n".join(f"{x:g},{y * 1e0:.6g}" for x, y in zip(A, _cmcs(-3.0)))
    p.write_text("fraction [-],cmc [mM]\n" + rows + "\n", encoding="utf-8")
    assert fit_interaction(p).interaction == pytest.approx(-3.0, abs=1e-4)  # 6 digits in the file
    out = subprocess.run([sys.executable, "-m", "sizing", "fit", "interaction", str(p), "--json"],
                         capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    j = json.loads(out.stdout)
    assert j["interaction"] == pytest.approx(-3.0, abs=1e-4)
    assert len(j["interaction_interval"]) == 2 and j["cmc_1_mol_m3"] == pytest.approx(8.2, rel=1e-5)
