"""Monte Carlo through the vectorised balance, sensitivity, and bad spreads (sizing.planning.uncertainty)."""

import json
import math
from pathlib import Path

import numpy as np
import pytest
from scipy import stats

import sizing.model
import sizing.planning.uncertainty
from sizing.case import Value, case_with, load_case
from sizing.errors import InputError
from sizing.model import solve_case
from sizing.outputs.result_json import uncertainty_json
from sizing.planning.uncertainty import (
    bench_monte_carlo,
    covering_charge,
    histogram,
    monte_carlo,
    sample_spread,
    sensitivity,
    spread_quantiles,
)

ROOT = Path(__file__).resolve().parents[1]
LOTION = ROOT / "cases_demo" / "lotion_o_w.toml"
HPH = ROOT / "cases_demo" / "miniemulsion_hph.toml"
N = 20_000  # samples in tests (the default is 100000)


def lotion_with(**spreads):
    return case_with(load_case(LOTION), {k.replace("__", "."): v for k, v in spreads.items()})


def test_lognormal_parameterisation_matches_scipy():
    # mean = value and CV = rel_sd: scipy.stats.lognorm(s=sigma_ln, scale=exp(mu_ln)) has exactly
    # that mean and standard deviation (1e-12), and the samples agree with it (KS test, p > 0.01)
    v, cv = 2.4e-6, 0.15
    s = math.sqrt(math.log1p(cv * cv))
    dist = stats.lognorm(s=s, scale=math.exp(math.log(v) - s * s / 2))
    assert dist.mean() == pytest.approx(v, rel=1e-12)
    assert dist.std() / dist.mean() == pytest.approx(cv, rel=1e-12)
    value = Value(v, {}, "length", ("lognormal", cv))
    x = sample_spread(value, N, np.random.default_rng(5))
    assert stats.kstest(x, dist.cdf).pvalue > 0.01
    np.testing.assert_allclose(spread_quantiles(value, [0.1, 0.5, 0.9]), dist.ppf([0.1, 0.5, 0.9]), rtol=1e-12)


def test_uniform_matches_scipy():
    value = Value(0.25, {}, "dimensionless", ("uniform", 0.2, 0.3))
    x = sample_spread(value, N, np.random.default_rng(2))
    dist = stats.uniform(loc=0.2, scale=0.1)
    assert x.min() >= 0.2 and x.max() <= 0.3
    assert stats.kstest(x, dist.cdf).pvalue > 0.01


def test_spreads_shrinking_to_zero_tend_to_the_deterministic_dose():
    det = float(solve_case(load_case(LOTION)).kg_product)
    for cv in (1e-2, 1e-4, 1e-6):
        case = lotion_with(drops__d32={"value": "2.0 um", "rel_sd": cv},
                           batch__dispersed_fraction={"value": 0.25, "rel_sd": cv})
        mc = monte_carlo(case, samples=N, seed=3)
        p10, p50, p90 = mc.quantile_kg_product([10, 50, 90])
        # the band is about 2.6 cv wide in relative terms (elasticities near 1): tolerance 3 cv
        assert p10 <= p50 <= p90
        assert p50 == pytest.approx(det, rel=3 * cv)
        assert (p90 - p10) / det < 4 * cv
    assert mc.deterministic_kg_product == pytest.approx(det, rel=1e-12)


def test_percentiles_stable_across_seeds():
    # quantile standard error for 20000 draws is about 0.15 % of the dose here; tolerance 1 %
    case = lotion_with(drops__d32={"value": "2.0 um", "rel_sd": 0.15},
                       surfactant__adsorption_constant={"value": "1.2 m**3/mol", "low": "0.9 m**3/mol",
                                                        "high": "1.5 m**3/mol"})
    runs = [monte_carlo(case, samples=N, seed=s).quantile_kg_product([10, 50, 90]) for s in (1, 2, 3)]
    for q in range(3):
        vals = [r[q] for r in runs]
        assert max(vals) / min(vals) - 1 < 0.01


def test_one_vectorised_solve_for_all_draws(monkeypatch):
    calls = []
    real = sizing.model.solve

    def counting(inputs, dose_mol=None):
        sol = real(inputs, dose_mol)
        calls.append(np.size(sol.dose_mol))
        return sol

    monkeypatch.setattr(sizing.planning.uncertainty, "solve", counting)
    monte_carlo(load_case(HPH), samples=N, seed=1)
    assert calls.count(N) == 1


def test_probability_met_and_recommendation_covers_the_percentile():
    case = load_case(HPH)
    mc = monte_carlo(case, samples=N, seed=4)
    p90 = float(mc.quantile_kg_product(90))
    # by definition of the percentile (inverted CDF): at least 90 % of draws need no more
    assert mc.probability_met(p90) == pytest.approx(0.90, abs=1.0 / N + 1e-12)
    charge = covering_charge(case, mc)  # P90 (1 + margin), rounded up to 5 kg
    assert charge >= p90 * 1.10 and charge % 5 == pytest.approx(0, abs=1e-9)
    block = uncertainty_json(case, mc)
    assert {"samples", "dose_kg_product", "probability_target_met"} <= set(block)
    assert set(block["dose_kg_product"]) >= {"p10", "p50", "p90"}
    assert block["samples"] == N
    assert block["probability_target_met"] == pytest.approx(mc.probability_met(charge))
    assert block["dose_kg_product"]["p10"] < block["dose_kg_product"]["p50"] < block["dose_kg_product"]["p90"]
    h = histogram(mc)
    assert sum(h["counts"]) == np.isfinite(mc.dose_kg_product).sum()


def test_sensitivity_signs():
    # smaller drops and a larger dispersed fraction raise the dose (area = 6 phi V / d32)
    case = lotion_with(drops__d32={"value": "2.0 um", "rel_sd": 0.15},
                       batch__dispersed_fraction={"value": 0.25, "low": 0.22, "high": 0.28},
                       surfactant__max_surface_excess={"value": "3.3 umol/m**2", "rel_sd": 0.1})
    sens = {e["path"]: e for e in sensitivity(case)}
    assert sens["drops.d32"]["elasticity"] < 0
    assert sens["drops.d32"]["dose_low_kg"] > sens["drops.d32"]["dose_high_kg"]
    assert sens["batch.dispersed_fraction"]["elasticity"] > 0
    assert sens["surfactant.max_surface_excess"]["elasticity"] > 0
    # elasticity against an independent central difference of two solves (1e-6)
    d = [float(solve_case(load_case(LOTION), overrides={"drops.d32": 2e-6 * f}).kg_product) for f in (0.999, 1.001)]
    assert sens["drops.d32"]["elasticity"] == pytest.approx(math.log(d[1] / d[0]) / math.log(1.001 / 0.999),
                                                            rel=1e-5)
    swings = [e["swing_kg"] for e in sensitivity(case)]
    assert swings == sorted(swings, reverse=True)


def test_scaleup_band_is_sampled_and_in_the_tornado():
    case = load_case(HPH)
    mc = monte_carlo(case, samples=N, seed=9)
    assert "scaleup.plant_d32" in mc.paths and "scaleup.plant" in mc.paths
    sens = {e["path"]: e for e in sensitivity(case)}
    assert sens["scaleup.plant_d32"]["elasticity"] < 0
    assert sens["scaleup.plant"]["elasticity"] > 0  # higher pressure, smaller drops, more surfactant


@pytest.mark.parametrize("spread, message", [
    ({"value": "2.0 um", "rel_sd": -0.1}, "rel_sd: expected a number from 0 to 3"),
    ({"value": "2.0 um", "low": "2.5 um", "high": "1.5 um"}, "expected low < high"),
    ({"value": "2.0 um", "rel_sdx": 0.1}, "unknown spread key"),
    ({"value": "2.0 um", "rel_sd": 0.1, "low": "1 um", "high": "3 um"}, "either rel_sd or low and high"),
    ({"value": "2.0 um", "low": "1 um"}, "needs both 'low' and 'high'"),
    ({"value": "2.0 um", "low": "1 mN/m", "high": "3 um"}, "drops.d32"),
])
def test_bad_spreads_in_the_case(spread, message):
    with pytest.raises(InputError, match=message):
        lotion_with(drops__d32=spread)


def test_spreads_the_model_cannot_use_are_refused():
    with pytest.raises(InputError, match="surfactant.partition_coefficient: a log-normal spread .* needs a value > 0"):
        monte_carlo(lotion_with(surfactant__partition_coefficient={"value": 0.0, "rel_sd": 0.2}), samples=1000)
    # a spread on a field that does not move the dose is a note, not an error (one uncertainty
    # spec can serve several cases)
    both = lotion_with(surfactant__diffusivity={"value": "6e-10 m**2/s", "rel_sd": 0.2},
                       surfactant__clean_tension={"value": "50 mN/m", "rel_sd": 0.1},
                       drops__d32={"value": "2 um", "rel_sd": 0.1})
    mc = monte_carlo(both, samples=1000)
    assert "surfactant.diffusivity" not in mc.paths
    notes = uncertainty_json(both, mc)["notes"]
    assert any(n.startswith("surfactant.diffusivity: carries a spread but does not change the dose") for n in notes)
    assert any(n.startswith("surfactant.clean_tension: carries a spread but does not change") for n in notes)
    with pytest.raises(InputError, match=r"batch.dispersed_fraction: the spread .* outside the allowed range"):
        monte_carlo(lotion_with(batch__dispersed_fraction={"value": 0.25, "rel_sd": 1.0}), samples=N)
    with pytest.raises(InputError, match="drops.d32: carries a spread, but with \\[scaleup\\]"):
        monte_carlo(case_with(load_case(HPH), {"drops.d32": {"value": "0.215 um", "rel_sd": 0.1}}), samples=1000)
    with pytest.raises(InputError, match="no input carries a spread"):
        monte_carlo(load_case(LOTION), samples=1000)


def test_bench_hook_returns_a_median():
    out = bench_monte_carlo(repeats=1, samples=2000)  # timing is reported, never asserted
    assert out["median_s"] > 0 and out["samples"] == 2000 and out["spreads"]


def test_plan_covers_the_percentile_and_reports_it():
    # result.json contract (DESIGN.md): uncertainty {samples, dose_kg_product {p10, p50, p90},
    # probability_target_met}; the charge covers P90 with the margin; the report says so
    from sizing.outputs.plan_files import build_outputs

    case = load_case(HPH)
    plan, files = build_outputs(case, HPH)
    j = json.loads(files["result.json"])
    u = j["uncertainty"]
    assert u["samples"] == 100_000 and set(u["dose_kg_product"]) >= {"p10", "p50", "p90"}
    assert 0.9 <= u["probability_target_met"] <= 1.0
    r = j["recommendation"]
    assert r["kg_product_per_batch"] >= u["dose_kg_product"]["p90"] * (1 + r["margin"])
    assert r["base_kg_product"] == pytest.approx(u["dose_kg_product_at_percentile"], rel=1e-12)
    assert all("achievable_d32_m" in t and t["limited_by"] in ("surfactant", "homogeniser") for t in j["trial"])
    assert j["scaleup"]["plant_d32_m"] == pytest.approx(j["d32_m"], rel=1e-12)
    assert j["adsorption"]["optimistic"] is True
    html = files["report.html"]
    for sid in ("scaleup", "achievable", "uncertainty", "adsorption"):
        assert f'<section id="{sid}">' in html
    assert "covers the 90th percentile" in html
