"""Throughput benchmark of the vectorised balance, honest about what it compares.

Random but physical cases (drop sizes 0.2-50 um, phase fractions 0.02-0.7, Gamma_inf 1-6
umol/m**2, K 0.1-10^4 m**3/mol, CMC 0.01-50 mM, partition coefficients 10^-3-10^3, doses from
a tenth to ten times what the interface holds at the CMC) are solved dose -> state.  For each
entry of :data:`ENTRIES` three sides are timed, several times and interleaved (so a busy machine
slows them alike), and the minimum and median are reported:

* ``vectorised``: :func:`sizing.physics.balance.state_for_dose` on all cases in one call;
* ``same_per_case``: the same function called once per case on a sample (vectorisation gain);
* ``scipy_loop``: a plain Python loop of :func:`scipy.optimize.brentq` per case on the sample
  (algorithm and vectorisation gain together); its answers check the vectorised ones;
* ``reference``: the best other vectorised way on all cases, so that the algorithm's own gain
  shows: for Langmuir the closed form written by hand in numpy (:func:`closed_form_langmuir`,
  goal: the engine within 1.2x of it), for Frumkin and Volmer scipy's vectorised bracketing
  root finder :func:`scipy.optimize.elementwise.find_root` (:func:`elementwise_solve`, goal: the
  engine at least 2x faster).  Its answers are compared with the engine's on every case.

Adding an entry is one function returning :class:`Sides` and one line in :data:`ENTRIES`.
"""

from __future__ import annotations

import math
import statistics
import time
import tracemalloc
from dataclasses import dataclass
from typing import Callable

import numpy as np
from scipy.optimize import brentq, elementwise

from . import bench_blend
from .physics import blend as blend_physics
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


def closed_form_langmuir(case: dict) -> np.ndarray:
    """Langmuir dose -> state written by hand in numpy, the whole state; return the free concentrations.

    The quadratic ``V K c**2 + (V + S K - N K) c - N = 0`` in its cancellation-free form, capped
    at the CMC (the quadratic's root passes the CMC exactly where the dose passes the micelle
    threshold), and the four places of the dose, as one would write it without the engine.
    """
    n, k, cmc = case["dose_mol"], case["adsorption_constant"], case["cmc"]
    vc, vd, u = case["continuous_volume"], case["dispersed_volume"], case["uptake"]
    veff = vc + u * vd
    s = case["max_surface_excess"] * case["area"]
    kcmc = k * cmc
    n_cmc = veff * cmc + s * (kcmc / (1.0 + kcmc))
    b = veff + s * k - n * k
    root = np.sqrt(b * b + 4.0 * veff * k * n)
    c = np.minimum(np.where(b >= 0, 2.0 * n / (b + root), (root - b) / (2.0 * veff * k)), cmc)
    theta = k * c / (1.0 + k * c)
    _state = (c * vc, u * c * vd, s * theta, np.maximum(n - n_cmc, 0.0))  # the rest of the state
    return c


def elementwise_solve(case: dict, model: str) -> np.ndarray:
    """Frumkin or Volmer dose -> free concentration by :func:`scipy.optimize.elementwise.find_root`.

    Written as one would with scipy's vectorised bracketing solver (Chandrupatla's method) and
    no engine code, in ``y = ln(theta / (1 - theta))`` where ``ln(K c)`` is explicit (in theta
    itself the float spacing near theta = 1 costs 1e-9 in c): y at the CMC as the root of
    ``ln(K c(y)) - ln(K CMC)`` on ``[-750, 40]``, then below the micelle threshold the root of
    ``(V c(y) + S theta(y) - N) / N`` on ``[-750, y_CMC]``; default tolerances (4 eps relative).
    """
    n, k, cmc, beta = case["dose_mol"], case["adsorption_constant"], case["cmc"], case["beta"]
    veff = case["continuous_volume"] + case["uptake"] * case["dispersed_volume"]
    s = case["max_surface_excess"] * case["area"]

    def lnkc(y, b):
        return y - 2.0 * b / (1.0 + np.exp(-y)) if model == "frumkin" else y + np.exp(y)

    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        y_cmc = elementwise.find_root(lambda y, b, target: lnkc(y, b) - target, (-750.0, 40.0),
                                      args=(beta, np.log(k * cmc))).x
        n_cmc = veff * cmc + s / (1.0 + np.exp(-y_cmc))
        out = cmc.copy()
        sub = n < n_cmc
        N, V, S, K, B = n[sub], veff[sub], s[sub], k[sub], beta[sub]
        y = elementwise.find_root(
            lambda y, N, V, S, K, B: (V * np.exp(lnkc(y, B)) / K + S / (1.0 + np.exp(-y)) - N) / N,
            (-750.0, y_cmc[sub]), args=(N, V, S, K, B)).x
        out[sub] = np.exp(lnkc(y, B)) / K
    return out


@dataclass(frozen=True)
class Sides:
    """The three timed sides of one bench entry; each returns the free concentrations it solved.

    ``vectorised`` solves all ``n`` cases; ``same_per_case`` and ``scipy_loop`` the first
    ``loop_n`` of them, one case at a time.  ``mass_balance_error(answer)`` returns the largest
    relative error of the vectorised answer's mass balance (or None where it does not apply).
    ``reference`` (optional) solves all ``n`` cases the best other vectorised way, named by
    ``reference_name``.
    """

    n: int
    loop_n: int
    vectorised: Callable[[], np.ndarray]
    same_per_case: Callable[[], np.ndarray]
    scipy_loop: Callable[[], np.ndarray]
    mass_balance_error: Callable[[], float] | None = None
    reference: Callable[[], np.ndarray] | None = None
    reference_name: str | None = None


def isotherm_entry(model: str) -> Callable[[int, int, int], Sides]:
    """Return the bench entry of one isotherm: random cases solved dose -> state."""

    def make(n: int, loop_n: int, seed: int) -> Sides:
        case = random_cases(n, model, seed)
        kw = {k: v for k, v in case.items() if k != "dose_mol"}
        sample = {k: v[:loop_n] for k, v in case.items()}
        last = {}

        def vectorised():
            last["state"] = state_for_dose(case["dose_mol"], model=model, **kw)
            return last["state"].free_concentration

        def same_per_case():
            out = np.empty(loop_n)
            for i in range(loop_n):
                one = {k: v[i:i + 1] for k, v in sample.items()}
                out[i] = state_for_dose(one.pop("dose_mol"), model=model, **one).free_concentration[0]
            return out

        def mass_balance_error():
            st = last.get("state") or state_for_dose(case["dose_mol"], model=model, **kw)
            return float(np.max(np.abs(st.total_mol - case["dose_mol"]) / case["dose_mol"]))

        if model == "langmuir":
            reference, name = (lambda: closed_form_langmuir(case)), "closed form by hand in numpy"
        else:
            reference, name = (lambda: elementwise_solve(case, model)), "scipy.optimize.elementwise.find_root"
        return Sides(n=n, loop_n=loop_n, vectorised=vectorised, same_per_case=same_per_case,
                     scipy_loop=lambda: loop_solve(sample, model), mass_balance_error=mass_balance_error,
                     reference=reference, reference_name=name)

    return make


def blend_entry(n: int, loop_n: int, seed: int) -> Sides:
    """Two-component regular-solution blends with micelles (:mod:`sizing.bench_blend`), dose -> state.

    At most 200,000 cases: the blend solve is a root per case above the onset as well as the onset.
    """
    n = min(n, 200_000)
    c = bench_blend.random_blends(n, seed)
    onset = blend_physics.onset_dose(bench_blend._blend(c), continuous_volume=c["vc"],
                                     dispersed_volume=1 - c["vc"], area=c["area"])
    dose = onset * c["factor"]
    idx = np.arange(min(loop_n, n))

    def same_per_case():
        out = np.empty(idx.size)
        for i in idx:
            one = {k: v[i:i + 1] for k, v in c.items()}
            out[i] = bench_blend.vectorised(one, dose[i:i + 1])[0, 0]
        return out

    return Sides(n=n, loop_n=idx.size, vectorised=lambda: bench_blend.vectorised(c, dose)[:, 0],
                 same_per_case=same_per_case, scipy_loop=lambda: bench_blend.loop(c, dose, idx)[:, 0])


#: entry name -> function (n, loop_n, seed) -> Sides; the keys of ``ratio_vs_loop`` in the JSON
ENTRIES: dict[str, Callable[[int, int, int], Sides]] = {m: isotherm_entry(m) for m in MODELS}
ENTRIES["blend"] = blend_entry

SIDES = ("vectorised", "same_per_case", "scipy_loop")


def _stats(times: list[float]) -> dict:
    return {"min": min(times), "median": statistics.median(times), "runs": len(times)}


def time_entry(sides: Sides, repeats: int) -> tuple[dict, dict]:
    """Time the sides ``repeats`` times, interleaved; return (seconds stats, answers).

    The three of :data:`SIDES`, and ``reference`` when the entry has one.
    """
    names = SIDES + (("reference",) if sides.reference is not None else ())
    answers = {k: getattr(sides, k)() for k in names}  # warm-up, and the answers compared
    times = {k: [] for k in names}
    for _ in range(repeats):
        for k in names:
            t0 = time.perf_counter()
            getattr(sides, k)()
            times[k].append(time.perf_counter() - t0)
    return {k: _stats(v) for k, v in times.items()}, answers


def run(n: int = 1_000_000, loop_n: int = 2000, seed: int = 7, monte_carlo: bool = True,
        repeats: int = 5, entries: dict | None = None) -> dict:
    """Run the benchmark; return the ``sizing bench --json`` object.

    Throughputs (``cases_per_s``, ``loop_cases_per_s``, ``same_per_case_cases_per_s``) are
    from the median time of each side; ``timing`` holds every side's min and median seconds.
    ``ratio_vs_loop`` is vectorised over the per-case scipy root loop, ``ratio_vs_same_per_case``
    vectorised over the same function called per case, ``ratio_vs_reference`` the reference's
    median time over the vectorised one on the same cases (entries with a reference;
    ``reference`` names it): above 1 the engine is faster.
    """
    entries = ENTRIES if entries is None else entries
    ratio, ratio_same, cps, loop_cps, same_cps, vec_s, diffs, mass, peaks, timing = ({} for _ in range(10))
    ratio_ref, ref_name = {}, {}
    for name, make in entries.items():
        sides = make(n, loop_n, seed)
        t, answers = time_entry(sides, repeats)
        timing[name] = {k: v for k, v in t.items()}
        vec = answers["vectorised"][:sides.loop_n]
        ref = answers["scipy_loop"]
        diffs[name] = float(np.max(np.abs(vec - ref) / np.abs(ref)))
        same_diff = float(np.max(np.abs(answers["same_per_case"] - vec) / np.abs(vec)))
        diffs[name] = max(diffs[name], same_diff)
        if sides.reference is not None:
            full = answers["vectorised"]
            ref_diff = float(np.max(np.abs(answers["reference"] - full) / np.abs(full)))
            diffs[name] = max(diffs[name], ref_diff)
            ratio_ref[name] = t["reference"]["median"] / t["vectorised"]["median"]
            ref_name[name] = sides.reference_name
        cps[name] = sides.n / t["vectorised"]["median"]
        loop_cps[name] = sides.loop_n / t["scipy_loop"]["median"]
        same_cps[name] = sides.loop_n / t["same_per_case"]["median"]
        ratio[name] = cps[name] / loop_cps[name]
        ratio_same[name] = cps[name] / same_cps[name]
        vec_s[name] = t["vectorised"]["median"]
        tracemalloc.start()  # one more run, untimed, for the peak memory
        sides.vectorised()
        peaks[name] = tracemalloc.get_traced_memory()[1] / 1e6
        tracemalloc.stop()
        if sides.mass_balance_error is not None:
            mass[name] = sides.mass_balance_error()
    out = {
        "cases": n,
        "loop_cases": loop_n,
        "repeats": repeats,
        "ratio_vs_loop": ratio,
        "ratio_vs_same_per_case": ratio_same,
        "ratio_vs_reference": ratio_ref,
        "reference": ref_name,
        "cases_per_s": cps,
        "loop_cases_per_s": loop_cps,
        "same_per_case_cases_per_s": same_cps,
        "vectorised_seconds": vec_s,
        "timing": timing,
        "max_rel_diff": max(diffs.values()),
        "max_rel_diff_by_model": diffs,
        "max_mass_balance_error": max(mass.values()) if mass else None,
        "peak_memory_mb": peaks,
        "targets": {"ratio_vs_loop": {"langmuir": 30, "frumkin": 5, "volmer": 5, "blend": 20},
                    "ratio_vs_reference": {"langmuir": 1 / 1.2, "frumkin": 2, "volmer": 2},
                    "max_rel_diff": 1e-9, "peak_memory_mb": 1000, "monte_carlo_1e5_s": 0.5},
    }
    if monte_carlo:
        out["monte_carlo"] = uncertainty.bench_monte_carlo()
    return out
