"""Uncertainty in the recommendation: Monte Carlo through the vectorised balance, and sensitivity.

Each case value with a spread is sampled once per draw:

- ``{ value = v, rel_sd = cv }``: log-normal with MEAN ``v`` and coefficient of variation ``cv``,
  ``sigma_ln = sqrt(ln(1 + cv**2))``, ``mu_ln = ln v - sigma_ln**2/2`` (so the median is
  ``v exp(-sigma_ln**2/2)``, slightly below v).  The value must be > 0.
- ``{ value = v, low = a, high = b }``: uniform on [a, b].

With a ``[scaleup]`` section whose plant d32 has a band, the plant d32 is sampled as well:
log-normal with median the prediction and the band as its 95 % range
(``sigma_ln = ln(hi/lo) / (2 * 1.95996)``), path ``scaleup.plant_d32``.

All draws go through :func:`sizing.model.solve` in ONE call.  The dose needed by each draw is
compared with the recommended charge: the probability that the target is met is the share of
draws that need no more than the charge (a draw whose target lies above the CMC never does).

Sensitivity: one-at-a-time swings of the dose when each input moves to its own P10 and P90
(low and high for a uniform spread) while the others stay at their values (a tornado), and the
elasticity ``d ln dose / d ln x`` at the values; all in one more solve call.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from scipy.special import ndtri  # the normal quantile (scipy.stats.norm.ppf), without scipy.stats

from ..case import case_with, load_case
from ..errors import InputError
from ..model import case_inputs, solve
from .scaleup import scaleup_case

Z975 = float(ndtri(0.975))
Z90 = float(ndtri(0.9))

# model bounds of values that a sample may cross (the schema checks only the central value)
BOUNDS = {
    "batch.dispersed_fraction": (0.0, 1.0, "between 0 and 1 (exclusive)"),
    "target.coverage": (0.0, 1.0, "between 0 and 1 (exclusive)"),
    "surfactant.active_fraction": (0.0, 1.0 + 1e-12, "between 0 and 1"),
    "drops.gsd": (1.0, math.inf, "above 1"),
    "drops.spread": (1.0, math.inf, "above 1"),
    "drops.shape_factor": (1.0 - 1e-12, 2.0 + 1e-12, "from 1 to 2"),
    "surfactant.interaction": (-math.inf, 2.0 + 1e-12, "at most 2"),
    "surfactant.gibbs_prefactor": (1.0 - 1e-12, 3.0 + 1e-12, "from 1 to 3"),
}
# quantities outside the dose: a spread on them cannot move the recommendation
NOT_IN_DOSE = {
    "surfactant.diffusivity": "it enters only the adsorption-speed check",
    "process.residence_time": "it enters only the adsorption-speed check",
    "recommendation.increment": "it only rounds the charge",
}


def sample_spread(value, n: int, rng: np.random.Generator, path: str = "value") -> np.ndarray:
    """Draw ``n`` samples of a :class:`sizing.case.Value` with a spread [SI].

    Raises
    ------
    InputError
        A log-normal spread on a value that is not > 0.

    Examples
    --------
    >>> from sizing.case import Value
    >>> x = sample_spread(Value(2.0, {}, "length", ("lognormal", 0.1)), 200000, np.random.default_rng(1))
    >>> bool(abs(x.mean() / 2.0 - 1) < 2e-3), bool(abs(x.std() / x.mean() / 0.1 - 1) < 2e-2)
    (True, True)
    """
    kind = value.spread[0]
    if kind == "lognormal":
        cv = value.spread[1]
        if not value.si > 0:
            raise InputError(
                f"{path}: a log-normal spread (rel_sd) needs a value > 0, got {value.raw!r}; "
                "give low and high for a uniform spread instead"
            )
        s = math.sqrt(math.log1p(cv * cv))
        return value.si * np.exp(s * rng.standard_normal(n) - 0.5 * s * s)
    if kind == "uniform":
        return rng.uniform(value.spread[1], value.spread[2], n)
    raise InputError(f"{path}: unknown spread {kind!r}; expected rel_sd, or low and high")


def spread_quantiles(value, q) -> np.ndarray:
    """Return the quantiles ``q`` (0..1) of a spread's distribution [SI]."""
    q = np.asarray(q, dtype=float)
    if value.spread[0] == "lognormal":
        s = math.sqrt(math.log1p(value.spread[1] ** 2))
        return value.si * np.exp(s * ndtri(q) - 0.5 * s * s)
    lo, hi = value.spread[1], value.spread[2]
    return lo + q * (hi - lo)


def plant_d32_spread(case):
    """Return (median, sigma_ln) of the plant d32 from the scale-up band, or None."""
    if getattr(case, "scaleup", None) is None:
        return None

    r = scaleup_case(case)
    lo, hi = r.band
    if not (hi > lo > 0):
        return None
    return r.plant_d32, math.log(hi / lo) / (2 * Z975)


def _check_used(case, spreads: dict) -> None:
    problems = []
    for path, v in spreads.items():
        if v.spread[0] == "lognormal" and not v.si > 0:
            problems.append(f"{path}: a log-normal spread (rel_sd) needs a value > 0, got {v.raw!r}; "
                            "give low and high for a uniform spread instead")
        elif path == "drops.d32" and getattr(case, "scaleup", None) is not None \
                and case.scaleup.method == "power_law":
            problems.append("drops.d32: carries a spread, but with [scaleup] method = 'power_law' the plant d32 "
                            "comes from the lab points; the fit's band is sampled instead; remove the spread")
    if problems:
        raise InputError(problems=problems)


def _check_bounds(path: str, x: np.ndarray, value) -> None:
    if path not in BOUNDS:
        return
    lo, hi, text = BOUNDS[path]
    bad = (x <= lo) | (x >= hi) if path in ("batch.dispersed_fraction", "target.coverage", "drops.gsd",
                                             "drops.spread") else (x < lo) | (x > hi)
    if np.any(bad):
        raise InputError(
            f"{path}: the spread {value.raw!r} gives values outside the allowed range ({text}) in "
            f"{100 * bad.mean():.3g} % of the samples; expected a spread that stays inside it "
            "(a smaller rel_sd, or low and high inside the range)"
        )


@dataclass(frozen=True)
class MonteCarlo:
    """A Monte Carlo run of a case.

    Attributes
    ----------
    samples : number of draws; seed : the seed used; percentile : the percentile to cover [%]
    paths : the sampled inputs; draws : {path: samples [SI]}
    dose_kg_product : dose needed by each draw [kg of product] (inf: the target is above the CMC)
    dose_mol : the same in mol of active (inf where unreachable)
    deterministic_kg_product : the dose at the case's values [kg] (nan if unreachable)
    infeasible_fraction : share of draws whose target needs more than the CMC allows [-]
    """

    samples: int
    seed: int
    percentile: float
    paths: tuple
    draws: dict
    dose_kg_product: np.ndarray
    dose_mol: np.ndarray
    deterministic_kg_product: float
    infeasible_fraction: float
    notes: tuple = ()

    def quantile_kg_product(self, percent) -> np.ndarray:
        """Return dose percentiles [kg of product] (inf where more draws are unreachable)."""
        return np.percentile(self.dose_kg_product, percent, method="inverted_cdf")

    def probability_met(self, kg_product) -> float:
        """Return the share of draws whose needed dose is at most ``kg_product`` [-]."""
        return float(np.mean(self.dose_kg_product <= kg_product * (1 + 1e-12)))


def monte_carlo(case, samples: int | None = None, seed: int | None = None) -> MonteCarlo:
    """Run the Monte Carlo of a case: sample every spread, one vectorised solve.

    Parameters
    ----------
    case : a validated :class:`sizing.case.Case` (with or without ``[uncertainty]``)
    samples, seed : override ``[uncertainty] samples`` (default 100000) and ``seed``

    Raises
    ------
    InputError
        No spreads at all; a spread on a field that does not enter the dose; a log-normal
        spread on a value <= 0; draws that leave a field's allowed range.

    Examples
    --------
    >>> from sizing.case import load_case
    >>> mc = monte_carlo(load_case(DEMO_CASE), samples=2000, seed=1)
    >>> mc.samples, mc.dose_kg_product.shape
    (2000, (2000,))
    """
    u = case.uncertainty
    n = int(samples if samples is not None else (u.samples if u else 100_000))
    seed = int(seed if seed is not None else (u.seed if u else 20261201))
    percentile = float(u.percentile if u else 90.0)
    if n < 1:
        raise InputError(f"uncertainty.samples: expected at least 1, got {n}")
    spreads = case.spreads()
    _check_used(case, spreads)
    plant = plant_d32_spread(case)
    notes = tuple(f"{path}: carries a spread but does not change the dose ({NOT_IN_DOSE[path]}); "
                  "it is left out of the Monte Carlo" for path in sorted(spreads) if path in NOT_IN_DOSE)
    spreads = {p: v for p, v in spreads.items() if p not in NOT_IN_DOSE}
    if not spreads and plant is None:
        raise InputError(
            "uncertainty: no input carries a spread; write e.g. d32 = { value = '2.4 um', rel_sd = 0.15 } "
            "or { value = '2.4 um', low = '2 um', high = '3 um' }"
        )
    rng = np.random.default_rng(seed)
    draws = {}
    for path in sorted(spreads):
        x = sample_spread(spreads[path], n, rng, path)
        _check_bounds(path, x, spreads[path])
        draws[path] = x
    if plant is not None:  # the scale-up band around the plant d32 of each draw's conditions
        _, s = plant
        d32 = np.asarray(case_inputs(case, draws).d32, dtype=float)
        draws["scaleup.plant_d32"] = d32 * np.exp(s * rng.standard_normal(n))
    sol = solve(case_inputs(case, draws))
    det = solve(case_inputs(case))
    feasible = np.asarray(sol.feasible)
    kg = np.where(feasible, np.asarray(sol.kg_product, dtype=float), np.inf)
    mol = np.where(feasible, np.asarray(sol.dose_mol, dtype=float), np.inf)
    det_kg = float(det.kg_product) if bool(np.all(det.feasible)) else math.nan
    return MonteCarlo(samples=n, seed=seed, percentile=percentile, paths=tuple(draws), draws=draws,
                      dose_kg_product=np.broadcast_to(kg, (n,)), dose_mol=np.broadcast_to(mol, (n,)),
                      deterministic_kg_product=det_kg, infeasible_fraction=float(np.mean(~feasible)),
                      notes=notes)


# ---------------------------------------------------------------------------------------------
# sensitivity


def sensitivity(case) -> list[dict]:
    """Return one-at-a-time swings and elasticities of the dose, largest swing first.

    Each entry: ``path``, ``low_si``, ``high_si`` (the input at its P10 and P90, or its low and
    high), ``dose_low_kg``, ``dose_high_kg`` (kg of product with the input there), ``swing_kg``
    (``|high - low|``), ``elasticity`` (d ln dose / d ln x at the value; nan for a value <= 0).
    One solve call for all inputs.

    An input whose swing changes nothing (e.g. the temperature under a coverage target, which
    enters only the tension) is kept with ``moves_dose = False``; :func:`uncertainty_json`
    turns it into a note rather than an error, so one uncertainty spec serves many cases.
    """
    spreads = {p: v for p, v in case.spreads().items() if p not in NOT_IN_DOSE}
    _check_used(case, spreads)
    base = case.values()
    entries = []
    for path, v in sorted(spreads.items()):
        if v.spread[0] == "uniform":
            lo, hi = v.spread[1], v.spread[2]
        else:
            lo, hi = (float(t) for t in spread_quantiles(v, [0.1, 0.9]))
        entries.append((path, base.get(path, v.si), lo, hi))
    plant = plant_d32_spread(case)
    if plant is not None:
        med, s = plant
        entries.append(("scaleup.plant_d32", med, med * math.exp(-Z90 * s), med * math.exp(Z90 * s)))
    if not entries:
        return []
    k = len(entries)
    m = 4 * k + 1  # per input: low, high, x(1-h), x(1+h); last: the base
    h = 1e-4
    overrides = {}
    for j, (path, x0, lo, hi) in enumerate(entries):
        if path == "scaleup.plant_d32":  # elsewhere: the plant d32 that the other inputs give
            arr = np.asarray(case_inputs(case, overrides).d32, dtype=float) + np.zeros(m)
        else:
            arr = np.full(m, x0, dtype=float)
        arr[4 * j:4 * j + 4] = [lo, hi, x0 * (1 - h), x0 * (1 + h)]
        overrides[path] = arr
    sol = solve(case_inputs(case, overrides))
    kg = np.broadcast_to(np.where(np.asarray(sol.feasible), np.asarray(sol.kg_product, dtype=float), np.nan), (m,))
    out, problems = [], []
    for j, (path, x0, lo, hi) in enumerate(entries):
        d_lo, d_hi, d_m, d_p = kg[4 * j:4 * j + 4]
        el = (math.log(d_p) - math.log(d_m)) / (math.log1p(h) - math.log1p(-h)) if x0 > 0 and d_m > 0 \
            and d_p > 0 else math.nan
        same = np.allclose([d_lo, d_hi], kg[-1], rtol=1e-12, atol=0) and path in spreads
        wt_changes = _other_output_changes(case, path, lo, hi) if same else True
        out.append({"path": path, "value_si": x0, "low_si": lo, "high_si": hi,
                    "moves_dose": not (same and not wt_changes),
                    "dose_low_kg": float(d_lo), "dose_high_kg": float(d_hi),
                    "swing_kg": float(abs(d_hi - d_lo)) if math.isfinite(d_hi - d_lo) else math.inf,
                    "elasticity": el})
    if problems:
        raise InputError(problems=problems)
    out.sort(key=lambda e: -e["swing_kg"] if math.isfinite(e["swing_kg"]) else -math.inf)
    return out


def _other_output_changes(case, path, lo, hi) -> bool:
    """Return True if wt%, cost or the tension move when ``path`` goes from lo to hi."""
    sol = solve(case_inputs(case, {path: np.array([lo, hi])}))
    for arr in (sol.wt_percent, sol.cost, sol.percent_on_dispersed):
        a = np.broadcast_to(np.asarray(arr, dtype=float), (2,))
        if np.all(np.isfinite(a)) and not np.isclose(a[0], a[1], rtol=1e-12, atol=0):
            return True
    return False


# ---------------------------------------------------------------------------------------------
# the recommendation and the JSON block


def round_up(kg, increment) -> float:
    """Round a charge up to a multiple of ``increment`` [kg] (no rounding when None)."""
    if increment is None or not math.isfinite(kg):
        return kg
    return math.ceil(kg / increment * (1 - 1e-12)) * increment


def covering_charge(case, mc: MonteCarlo) -> float:
    """Return the charge [kg of product] that covers the chosen percentile, with the margin.

    ``charge = P_percentile(dose) (1 + margin)``, rounded up to ``[recommendation] increment``.
    Infinite when more draws than ``100 - percentile`` % cannot reach the target.
    """
    q = float(mc.quantile_kg_product(mc.percentile))
    inc = case.recommendation.increment.si if case.recommendation.increment is not None else None
    return round_up(q * (1 + case.target.margin.si), inc)


def uncertainty_notes(mc: MonteCarlo, sensitivity_rows=()) -> list[str]:
    """Return the notes of a Monte Carlo: its own, and each spread that does not move the dose."""
    notes = list(mc.notes)
    notes += [f"{e['path']}: carries a spread but does not change the dose or any dose output in this "
              "case (in this model it enters only the tension or other outputs); its spread has no "
              "effect" for e in sensitivity_rows if not e.get("moves_dose", True)]
    return notes


def histogram(mc: MonteCarlo, bins: int = 40) -> dict:
    """Return ``{edges_kg, counts, p10, p50, p90}`` of the finite draws, for a chart."""
    kg = mc.dose_kg_product[np.isfinite(mc.dose_kg_product)]
    counts, edges = np.histogram(kg, bins=bins)
    p10, p50, p90 = (float(v) for v in mc.quantile_kg_product([10, 50, 90]))
    return {"edges_kg": edges, "counts": counts, "p10": p10, "p50": p50, "p90": p90}


# ---------------------------------------------------------------------------------------------
# benchmark hook (called by ``sizing bench``)

DEMO_CASE = Path(__file__).resolve().parents[2] / "cases_demo" / "miniemulsion_hph.toml"


def _bench_case():
    if DEMO_CASE.exists():  # a source checkout
        return load_case(DEMO_CASE), DEMO_CASE.name
    # an installed package without cases_demo/: the built-in demo with spreads
    lotion = load_case(Path(__file__).resolve().parents[1] / "data" / "demo.toml")
    return case_with(lotion, {
        "drops.d32": {"value": "2.0 um", "rel_sd": 0.15},
        "batch.dispersed_fraction": {"value": 0.25, "low": 0.23, "high": 0.27},
        "surfactant.adsorption_constant": {"value": "1.2 m**3/mol", "rel_sd": 0.3},
    }), "built-in demo with spreads"


def bench_monte_carlo(repeats: int = 5, samples: int = 100_000) -> dict:
    """Time the Monte Carlo of a demo case with spreads; return the median seconds.

    Returns ``{median_s, times_s, samples, repeats, case, spreads}``.  Timing only; no test
    asserts it.
    """
    case, name = _bench_case()
    monte_carlo(case, samples=1000)  # warm-up (imports, caches)
    times = []
    for i in range(repeats):
        t0 = time.perf_counter()
        monte_carlo(case, samples=samples, seed=1000 + i)
        times.append(time.perf_counter() - t0)
    return {"median_s": float(np.median(times)), "times_s": times, "samples": samples, "repeats": repeats,
            "case": name, "spreads": sorted(case.spreads())}
