"""Throughput benchmark of the vectorised balance against a plain per-case scalar loop.

Random but physical cases (drop sizes 0.2-50 um, phase fractions 0.02-0.7, Gamma_inf 1-6
umol/m**2, K 0.1-10^4 m**3/mol, CMC 0.01-50 mM, partition coefficients 10^-3-10^3, doses from
a tenth to ten times what the interface holds at the CMC) are solved dose -> state by
:func:`sizing.balance.state_for_dose` in one call, and a sample of them by a plain Python loop
of :func:`scipy.optimize.brentq` on the coverage, in the same run.  The ratio is the vectorised
throughput over the loop's; the loop's answers check the vectorised ones.
"""

from __future__ import annotations

import math
import time
import tracemalloc

import numpy as np
from scipy.optimize import brentq

from .physics.balance import state_for_dose
from .physics.isotherm import theta_of_c
from .planning import uncertainty

MODELS = ("langmuir", "frumkin", "volmer")


def random_cases(n: int, model: str, seed: int = 7) -> dict:
    """Return ``n`` random physical cases as arrays (keywords of ``state_for_dose`` + dose)."""
    rng = np.random.default_rng(seed)
    volume = 10 ** rng.uniform(-3, 1, n)
    phi = rng.uniform(0.02, 0.7, n)
    d32 = 10 ** rng.uniform(np.log10(0.2e-6), np.log10(50e-6), n)
    area = 6 * phi * volume / d32
    gi = rng.uniform(1e-6, 6e-6, n)
    k = 10 ** rng.uniform(-1, 4, n)
    cmc = 10 ** rng.uniform(-2, np.log10(50), n)
    uptake = np.where(rng.random(n) < 0.3, 0.0, 10 ** rng.uniform(-3, 3, n))
    beta = rng.uniform(-2, 2, n) if model == "frumkin" else np.zeros(n)
    vc, vd = volume * (1 - phi), volume * phi
    th_cmc = theta_of_c(cmc, k, model, beta)
    n_cmc = (vc + uptake * vd) * cmc + gi * area * th_cmc
    dose = n_cmc * 10 ** rng.uniform(-2, 0.5, n)
    return dict(dose_mol=dose, continuous_volume=vc, dispersed_volume=vd, uptake=uptake,
                max_surface_excess=gi, area=area, adsorption_constant=k, beta=beta, cmc=cmc)


def _c_of_theta_scalar(theta: float, k: float, model: str, beta: float) -> float:
    u = theta / (1.0 - theta)
    if model == "langmuir":
        return u / k
    if model == "frumkin":
        return u * math.exp(-2.0 * beta * theta) / k
    return u * math.exp(u) / k


def _theta_of_c_scalar(c: float, k: float, model: str, beta: float) -> float:
    if model == "langmuir":
        return k * c / (1 + k * c)
    lnkc = math.log(k * c)

    def f(t):  # ln(K c(theta)) - ln(K c), increasing in theta
        u = t / (1.0 - t)
        extra = -2.0 * beta * t if model == "frumkin" else u
        return math.log(u) + extra - lnkc

    return brentq(f, 1e-300, 1.0 - 1e-16, xtol=1e-300, rtol=1e-15, maxiter=500)


def loop_solve(case: dict, model: str) -> np.ndarray:
    """Solve each case with a scalar Python loop of brentq; return the free concentrations."""
    n = len(case["dose_mol"])
    out = np.empty(n)
    for i in range(n):
        dose = float(case["dose_mol"][i])
        veff = float(case["continuous_volume"][i] + case["uptake"][i] * case["dispersed_volume"][i])
        s = float(case["max_surface_excess"][i] * case["area"][i])
        k, beta, cmc = float(case["adsorption_constant"][i]), float(case["beta"][i]), float(case["cmc"][i])
        th_cmc = _theta_of_c_scalar(cmc, k, model, beta)
        if dose >= veff * cmc + s * th_cmc:
            out[i] = cmc
            continue

        def g(t):
            return veff * _c_of_theta_scalar(t, k, model, beta) + s * t - dose

        t = brentq(g, 0.0, th_cmc, xtol=1e-300, rtol=1e-15, maxiter=500)
        out[i] = _c_of_theta_scalar(t, k, model, beta)
    return out


def run(n: int = 1_000_000, loop_n: int = 2000, seed: int = 7, monte_carlo: bool = True) -> dict:
    """Run the benchmark; return the ``sizing bench --json`` object."""
    ratio, cps, loop_cps, vec_s, diffs, peaks = {}, {}, {}, {}, {}, {}
    for model in MODELS:
        case = random_cases(n, model, seed)
        kw = {k: v for k, v in case.items() if k != "dose_mol"}
        state_for_dose(case["dose_mol"][:1000], model=model, **{k: v[:1000] for k, v in kw.items()})  # warm-up
        tracemalloc.start()
        t0 = time.perf_counter()
        state = state_for_dose(case["dose_mol"], model=model, **kw)
        t_vec = time.perf_counter() - t0
        peaks[model] = tracemalloc.get_traced_memory()[1] / 1e6
        tracemalloc.stop()
        sample = {k: v[:loop_n] for k, v in case.items()}
        t0 = time.perf_counter()
        c_loop = loop_solve(sample, model)
        t_loop = time.perf_counter() - t0
        c_vec = state.free_concentration[:loop_n]
        diffs[model] = float(np.max(np.abs(c_vec - c_loop) / np.abs(c_loop)))
        cps[model] = n / t_vec
        loop_cps[model] = loop_n / t_loop
        ratio[model] = cps[model] / loop_cps[model]
        vec_s[model] = t_vec
        cons = np.abs(state.total_mol - case["dose_mol"]) / case["dose_mol"]
        diffs[model + "_mass_balance"] = float(np.max(cons))
    out = {
        "cases": n,
        "loop_cases": loop_n,
        "ratio_vs_loop": ratio,
        "cases_per_s": cps,
        "loop_cases_per_s": loop_cps,
        "vectorised_seconds": vec_s,
        "max_rel_diff": max(diffs[m] for m in MODELS),
        "max_rel_diff_by_model": {m: diffs[m] for m in MODELS},
        "max_mass_balance_error": max(diffs[m + "_mass_balance"] for m in MODELS),
        "peak_memory_mb": peaks,
        "targets": {"ratio_vs_loop": {"langmuir": 30, "frumkin": 5, "volmer": 5},
                    "max_rel_diff": 1e-9, "peak_memory_mb": 1000, "monte_carlo_1e5_s": 0.5},
    }
    if monte_carlo:
        out["monte_carlo"] = uncertainty.bench_monte_carlo()
    return out
