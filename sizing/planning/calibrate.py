"""Learn from plant trials: importance-weight the case's Monte Carlo draws by the trial measurements.

The prior is the case's own spreads (every input with a spread; the others are held).  Each draw
is solved forward at every trial's charge in one vectorised call; the likelihood of the measured
drop size, serum (free monomer) concentration and serum tension under stated measurement errors
weights the draw (importance sampling with the prior as the proposal).  The posterior percentiles,
the effective sample size ``(sum w)**2 / sum w**2`` and the next charge (the posterior percentile
dose for the target, with the case's margin and rounding) follow from the weights.

Pass/fail rows give a logistic model of stability against the coverage at the charge.

References
----------
1. Kong, A., Liu, J. S. and Wong, W. H., J. Am. Stat. Assoc. 89 (1994) 278 (effective sample size
   of importance weights) [from memory].
2. Gelman, A. et al., Bayesian Data Analysis, 3rd ed., CRC Press (2013), ch. 10 (importance
   sampling) and ch. 16 (logistic regression) [from memory].
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .. import model
from ..errors import InputError
from ..labcsv import read_lab_csv
from . import uncertainty
from .plan import auto_increment, charge_for_dose

#: default measurement errors (common practice for plant laboratories; overridable per column)
D32_REL_SD = 0.10          # laser diffraction d32 of a plant sample, relative (log-normal)
SERUM_REL_SD = 0.15        # serum surfactant analysis (titration, HPLC), relative (log-normal)
TENSION_SD = 1.0e-3        # serum tension [N/m]
MIN_ESS = 30.0             # below this the weights have collapsed onto a few draws: refuse


@dataclass(frozen=True)
class TrialRows:
    """Trial measurements in SI (nan where not measured), one entry per row."""

    path: str
    batch: tuple
    charge_kg: np.ndarray
    d32: np.ndarray
    serum_concentration: np.ndarray
    serum_tension: np.ndarray
    stable: np.ndarray  # 1 stable, 0 not, nan not tested
    d32_rel_sd: np.ndarray
    serum_rel_sd: np.ndarray


@dataclass(frozen=True)
class Calibration:
    """The result of :func:`calibrate` (all SI; kg of product as delivered)."""

    trials: TrialRows
    learned: tuple
    prior: dict
    posterior: dict
    effective_sample_size: float
    samples: int
    next_dose_kg_product: float
    next_charge_kg: float
    percentile: float
    probability_before: float
    probability_after: float
    prior_charge_kg: float
    predicted: dict
    stability: dict | None
    notes: tuple


_YES = {"yes", "y", "1", "true", "stable", "pass", "ok"}
_NO = {"no", "n", "0", "false", "unstable", "fail"}


def read_trials(path) -> TrialRows:
    """Read a trials CSV: ``batch``, ``charge [kg]`` and any of ``d32 [um]``, ``serum concentration
    [mM]``, ``serum tension [mN/m]``, ``stable`` (yes/no), ``d32 sd [%]``, ``serum sd [%]``."""
    dims = {"charge": "mass", "d32": "length", "serum_concentration": "concentration",
            "serum_tension": "tension"}
    t = read_lab_csv(path, dims, required=("charge",), text_columns=("batch", "stable", "notes", "note"))
    n = len(t)
    col = t.columns

    def num(name, default=math.nan):
        return np.asarray(col[name], dtype=float) if name in col else np.full(n, default)

    charge = num("charge")
    for i, c in enumerate(charge):
        if not (math.isfinite(c) and c > 0):
            raise InputError(f"{path}: row {i + 2}, column charge: expected a charge > 0 kg of product, got {c!r}")
    stable = np.full(n, np.nan)
    if "stable" in col:
        for i, v in enumerate(col["stable"]):
            s = str(v).strip().lower() if v is not None else ""
            if s in _YES:
                stable[i] = 1.0
            elif s in _NO:
                stable[i] = 0.0
            elif s not in ("", "nan"):
                raise InputError(f"{path}: row {i + 2}, column stable: expected yes or no, got {str(v)[:20]!r}")
    batch = tuple(str(b) for b in col["batch"]) if "batch" in col else tuple(str(i + 1) for i in range(n))
    seen = {}
    key_cols = [charge, num("d32"), num("serum_concentration"), num("serum_tension")]
    for i in range(n):
        key = (batch[i],) + tuple(repr(float(k[i])) for k in key_cols)  # repr: nan equals nan here
        if key in seen:
            raise InputError(f"{path}: row {i + 2} repeats row {seen[key] + 2} (same batch and values); "
                             "expected each trial batch once")
        seen[key] = i
    d32_sd = num("d32_sd", 100 * D32_REL_SD) / 100.0  # 'd32 sd [%]'
    serum_sd = num("serum_sd", 100 * SERUM_REL_SD) / 100.0
    return TrialRows(path=str(path), batch=batch, charge_kg=charge, d32=num("d32"),
                     serum_concentration=num("serum_concentration"), serum_tension=num("serum_tension"),
                     stable=stable, d32_rel_sd=d32_sd, serum_rel_sd=serum_sd)


def _wquantile(x, w, q):
    order = np.argsort(x)
    xs, ws = x[order], w[order]
    cw = np.cumsum(ws) / np.sum(ws)
    return np.interp(np.asarray(q, dtype=float), cw, xs)


def _bands(draws: dict, w) -> dict:
    return {p: dict(zip(("p10", "p50", "p90"), (float(v) for v in _wquantile(np.asarray(x, dtype=float), w,
                                                                             [0.1, 0.5, 0.9]))))
            for p, x in draws.items()}


def _logistic(x, y):
    """Fit P(stable) = expit(a + b x) by maximum likelihood (scipy); None when rows cannot separate."""
    from scipy.optimize import minimize  # deferred: only stability fits need it
    from scipy.special import expit  # deferred with minimize: only stability fits need it

    ok = np.isfinite(x) & np.isfinite(y)
    x, y = x[ok], y[ok]
    if x.size < 4 or np.all(y == 1) or np.all(y == 0):
        return None, (f"{int(x.size)} pass/fail row(s), {int(np.sum(y == 1))} stable: the rows cannot separate "
                      "stable from unstable; no stability model (trial levels on both sides of failure are needed)")
    lo_fail, hi_pass = np.max(np.where(y == 0, x, -np.inf)), np.min(np.where(y == 1, x, np.inf))
    if lo_fail < hi_pass:  # perfectly separated: the maximum likelihood slope is infinite
        return None, (f"the rows separate perfectly (every unstable batch at coverage {lo_fail:.3g} or below, "
                      f"every stable one at {hi_pass:.3g} or above): the 90 % point lies between them; more "
                      "batches in that range are needed for a model")

    def nll(p):
        z = p[0] + p[1] * x
        return float(np.sum(np.logaddexp(0.0, z) - y * z))

    res = minimize(nll, np.array([0.0, 1.0]), method="Nelder-Mead", options={"xatol": 1e-10, "fatol": 1e-12})
    a, b = res.x
    if not b > 0:
        return None, "stability does not rise with coverage in these rows: no stability model"
    x90 = (math.log(9.0) - a) / b
    return {"intercept": float(a), "slope": float(b), "coverage_for_90_percent": float(x90),
            "rows": int(x.size), "stable_rows": int(np.sum(y == 1)),
            "probability_at_rows": [float(v) for v in expit(a + b * x)]}, None


def calibrate(case, trials: TrialRows, samples: int | None = None, seed: int | None = None) -> Calibration:
    """Update the case's spreads from trial measurements and set the next charge.

    Raises
    ------
    InputError
        No spreads in the case, no informative measurement, weights that collapse (effective sample
        size below :data:`MIN_ESS`), a serum concentration above the CMC.
    """
    u = case.uncertainty
    n = int(samples if samples is not None else min(u.samples if u else 20_000, 50_000))
    mc = uncertainty.monte_carlo(case, samples=n, seed=seed)
    draws = {p: np.asarray(x, dtype=float) for p, x in mc.draws.items()}
    inputs = model.case_inputs(case, {p: x[:, None] for p, x in draws.items()})
    kg_per_mol = np.asarray(inputs.molar_mass, dtype=float) / np.asarray(inputs.active_fraction, dtype=float)
    mol = trials.charge_kg[None, :] / np.broadcast_to(kg_per_mol, (n, 1))
    sol = model.solve(inputs, dose_mol=mol)
    logw = np.zeros(n)
    used = []
    d32_pred = np.broadcast_to(np.asarray(sol.d32, dtype=float), mol.shape)
    c_pred = np.broadcast_to(np.asarray(sol.state.free_concentration, dtype=float), mol.shape)
    t_pred = np.broadcast_to(np.asarray(sol.tension, dtype=float), mol.shape)
    cov_pred = np.broadcast_to(np.asarray(sol.state.coverage, dtype=float), mol.shape)
    for j in range(trials.charge_kg.size):
        if math.isfinite(trials.d32[j]):
            s = math.sqrt(math.log1p(trials.d32_rel_sd[j] ** 2))
            logw += -0.5 * ((np.log(trials.d32[j]) - np.log(d32_pred[:, j])) / s) ** 2
            used.append("d32")
        if math.isfinite(trials.serum_concentration[j]):
            cmc = float(np.nanmax(np.asarray(inputs.cmc, dtype=float)))
            if math.isfinite(cmc) and trials.serum_concentration[j] > 1.5 * cmc:
                raise InputError(f"{trials.path}: row {j + 2}, column serum concentration: "
                                 f"{trials.serum_concentration[j]:.4g} mol/m**3 is well above the CMC "
                                 f"({cmc:.4g} mol/m**3); free monomer cannot exceed the CMC: check the unit "
                                 "(mM = mol/m**3) or whether micelles were counted")
            s = math.sqrt(math.log1p(trials.serum_rel_sd[j] ** 2))
            with np.errstate(divide="ignore"):
                logw += -0.5 * ((np.log(trials.serum_concentration[j]) - np.log(c_pred[:, j])) / s) ** 2
            used.append("serum concentration")
        if math.isfinite(trials.serum_tension[j]):
            logw += -0.5 * ((trials.serum_tension[j] - t_pred[:, j]) / TENSION_SD) ** 2
            used.append("serum tension")
    notes = []
    logw = np.where(np.isfinite(logw), logw, -np.inf)
    if not used:
        notes.append("no row measures d32, serum concentration or serum tension: the posterior is the prior")
    if not np.any(np.isfinite(logw)):
        raise InputError(f"{trials.path}: no Monte Carlo draw can explain the measurements; check the units and "
                         "the batch the trials were made on")
    w = np.exp(logw - np.max(logw))
    w /= np.sum(w)
    ess = float(1.0 / np.sum(w * w))
    if ess < MIN_ESS:
        raise InputError(f"{trials.path}: the trials and the case's spreads disagree (effective sample size "
                         f"{ess:.3g} of {n} draws): widen the spreads of the inputs the trials inform, or check "
                         "the trial units and the batch size")
    learned = tuple(draws)
    flat = np.ones(n) / n
    prior, post = _bands(draws, flat), _bands(draws, w)
    dose = np.asarray(mc.dose_kg_product, dtype=float)
    pct = mc.percentile
    fin = np.isfinite(dose)
    next_dose = float(_wquantile(np.where(fin, dose, np.nanmax(np.where(fin, dose, np.nan)) * 10), w, pct / 100))
    margin = float(case.target.margin.si)
    inc = case.recommendation.increment.si if case.recommendation.increment is not None else \
        float(auto_increment(next_dose * (1 + margin)))
    charge = float(charge_for_dose(next_dose, margin, inc))
    prior_dose = float(_wquantile(np.where(fin, dose, np.inf), flat, pct / 100)) if np.all(fin) else math.nan
    prior_charge = float(charge_for_dose(prior_dose, margin, inc)) if math.isfinite(prior_dose) else math.nan
    before = float(np.mean(dose <= prior_charge)) if math.isfinite(prior_charge) else math.nan
    after = float(np.sum(w * (dose <= charge)))
    predicted = {
        "d32_m": [float(v) for v in np.sum(w[:, None] * d32_pred, axis=0)],
        "free_concentration_mol_m3": [float(v) for v in np.sum(w[:, None] * c_pred, axis=0)],
        "coverage": [float(v) for v in np.sum(w[:, None] * cov_pred, axis=0)],
    }
    stability = None
    if np.any(np.isfinite(trials.stable)):
        stability, why = _logistic(np.asarray(predicted["coverage"]), trials.stable)
        if why:
            notes.append(why)
            stability = {"model": None, "note": why}
    failed = [(trials.batch[j], float(trials.charge_kg[j])) for j in range(trials.charge_kg.size)
              if trials.stable[j] == 0 and trials.charge_kg[j] >= charge]
    if failed:
        notes.insert(0, "WARNING: the next charge " + f"{charge:.4g} kg is at or below a trial charge that failed the "
                     "stability test (" + ", ".join(f"{b} at {c:.4g} kg" for b, c in failed) + "): the equilibrium "
                     "target may be set too low for this product; do not go below a failed level without a "
                     "supervised trial")
    not_learned = sorted(p for p in case.quantities() if p not in draws and case.quantities()[p].spread is None)
    notes.append(f"learned (inputs with a spread): {', '.join(learned)}; held as given: {len(not_learned)} inputs")
    notes.append("the prior is the case file as given (a second calibration with more rows starts from it again, "
                 "not from an updated case: no double counting)")
    return Calibration(trials=trials, learned=learned, prior=prior, posterior=post, effective_sample_size=ess,
                       samples=n, next_dose_kg_product=next_dose, next_charge_kg=charge, percentile=pct,
                       probability_before=before, probability_after=after, prior_charge_kg=prior_charge,
                       predicted=predicted, stability=stability, notes=tuple(notes))
