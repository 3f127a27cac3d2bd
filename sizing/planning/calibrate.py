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
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from .. import model
from ..case import read_size_table
from ..errors import InputError
from ..files import inside
from ..labcsv import read_lab_csv
from ..physics.distribution import table_stats
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
    tension_sd: np.ndarray | None = None  # [N/m] per row ('serum tension sd [mN/m]')
    volume: np.ndarray | None = None  # [m**3] per row where the trial batch differs from the case
    mass: np.ndarray | None = None  # [kg] per row, for a case that gives its batch by mass
    temperature: np.ndarray | None = None  # [K] per row
    d32_source: tuple = ()  # per row: 'measured', 'size table FILE' or ''


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
    warnings: tuple = ()


_YES = {"yes", "y", "1", "true", "stable", "pass", "ok"}
_NO = {"no", "n", "0", "false", "unstable", "fail"}


def read_trials(path) -> TrialRows:
    """Read a trials CSV: ``batch``, ``charge [kg]`` and any of ``d32 [um]`` (or ``size table``: a
    size-table CSV per row, named relative to the trials file's folder), ``serum concentration
    [mM]``, ``serum tension [mN/m]``, ``stable`` (yes/no), the measurement errors ``d32 sd [%]``,
    ``serum sd [%]``, ``serum tension sd [mN/m]``, and where a trial batch differs from the case
    ``volume [m**3]`` (or ``mass [kg]``) and ``temperature [degC]``.  Empty cells are missing
    measurements, not zeros."""
    dims = {"charge": "mass", "d32": "length", "serum_concentration": "concentration",
            "serum_tension": "tension", "serum_tension_sd": "tension", "volume": "volume", "mass": "mass",
            "temperature": "temperature"}
    t = read_lab_csv(path, dims, required=("charge",),
                     text_columns=("batch", "stable", "notes", "note", "size_table"))
    n = len(t)
    col = t.columns

    def num(name, default=math.nan):
        return np.asarray(col[name], dtype=float) if name in col else np.full(n, default)

    charge = num("charge")
    for i, c in enumerate(charge):
        if not (math.isfinite(c) and c > 0):
            raise InputError(f"{path}: row {i + 2}, column charge: expected a charge > 0 kg of product, got {float(c):g} kg")
    for name in ("volume", "mass"):
        for i, v in enumerate(num(name)):
            if math.isfinite(v) and v <= 0:
                raise InputError(f"{path}: row {i + 2}, column {name}: expected a batch {name} > 0, got {v:g} (SI)")
    if "volume" in col and "mass" in col:
        raise InputError(f"{path}: columns volume and mass: expected one way of giving the trial batch size, not both")
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
    d32 = num("d32")
    source = ["measured" if math.isfinite(x) else "" for x in d32]
    if "size_table" in col:
        base = Path(path).resolve().parent
        for i, v in enumerate(col["size_table"]):
            name = "" if v is None else str(v).strip()
            if name in ("", "nan"):
                continue
            if math.isfinite(d32[i]):
                raise InputError(f"{path}: row {i + 2}, columns d32 and size table: expected one of them per "
                                 "row (the d32 follows from the size table)")
            where = f"{path}: row {i + 2}, column size table"
            file = inside(name, base, where)
            try:
                d32[i] = float(table_stats(read_size_table(file)).d32)
            except InputError as exc:
                raise InputError(problems=[f"{where}: {line}" for line in exc.problems]) from None
            source[i] = f"size table {name[:40]}"
    seen = {}
    key_cols = [charge, d32, num("serum_concentration"), num("serum_tension")]
    for i in range(n):
        key = (batch[i],) + tuple(repr(float(k[i])) for k in key_cols)  # repr: nan equals nan here
        if key in seen:
            raise InputError(f"{path}: row {i + 2} repeats row {seen[key] + 2} (same batch and values); "
                             "expected each trial batch once")
        seen[key] = i
    d32_sd = num("d32_sd", 100 * D32_REL_SD) / 100.0  # 'd32 sd [%]'
    serum_sd = num("serum_sd", 100 * SERUM_REL_SD) / 100.0
    for name, arr in (("d32 sd", d32_sd), ("serum sd", serum_sd), ("serum tension sd", num("serum_tension_sd", 1.0))):
        for i in np.flatnonzero(~(np.isfinite(arr) & (arr > 0))):
            raise InputError(f"{path}: row {i + 2}, column {name}: expected a measurement error > 0, got {arr[i]:g}")
    tension_sd = num("serum_tension_sd", TENSION_SD)
    return TrialRows(path=str(path), batch=batch, charge_kg=charge, d32=d32,
                     serum_concentration=num("serum_concentration"), serum_tension=num("serum_tension"),
                     stable=stable, d32_rel_sd=d32_sd, serum_rel_sd=serum_sd,
                     tension_sd=np.where(np.isfinite(tension_sd), tension_sd, TENSION_SD),
                     volume=num("volume") if "volume" in col else None,
                     mass=num("mass") if "mass" in col else None,
                     temperature=num("temperature") if "temperature" in col else None,
                     d32_source=tuple(source))


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
    """Fit P(stable) = expit(a + b x) by maximum likelihood (scipy); None when rows cannot separate.

    The coverage for a 90 % chance of a stable batch, x90 = (ln 9 - a) / b, gets a 95 %
    profile-likelihood interval: x90 held on a grid, a = ln 9 - b x90, the likelihood maximised
    over b, the points within chi2(1, 0.95) / 2 of the maximum kept (one array call over both grids).
    """
    from scipy.optimize import minimize  # deferred: only stability fits need it
    from scipy.special import chdtri, expit  # deferred with minimize: only stability fits need it

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
    ln9 = math.log(9.0)
    x90 = (ln9 - a) / b
    span = max(float(np.ptp(x)), 1e-3)
    gx = np.linspace(min(x.min(), x90) - 2 * span, max(x.max(), x90) + 2 * span, 241)
    gb = b * np.geomspace(1e-2, 1e2, 801)
    z = ln9 + gb[None, :, None] * (x[None, None, :] - gx[:, None, None])
    prof = np.min(np.sum(np.logaddexp(0.0, z) - y * z, axis=-1), axis=1)
    excess = prof - min(res.fun, prof.min()) - chdtri(1, 1 - 0.95) / 2  # <= 0 inside the interval
    inside_ = np.flatnonzero(excess <= 0)

    def edge(i, j):  # linear interpolation of the crossing between grid points i (inside) and j
        return float(gx[i] + (gx[j] - gx[i]) * excess[i] / (excess[i] - excess[j]))
    lo = edge(inside_[0], inside_[0] - 1) if inside_[0] > 0 else None
    hi = edge(inside_[-1], inside_[-1] + 1) if inside_[-1] < gx.size - 1 else None
    return {"intercept": float(a), "slope": float(b), "coverage_for_90_percent": float(x90),
            "coverage_for_90_percent_interval": [lo, hi], "interval_method": "profile likelihood, 95 %",
            "rows": int(x.size), "stable_rows": int(np.sum(y == 1)),
            "probability_at_rows": [float(v) for v in expit(a + b * x)]}, None


def _row_overrides(case, trials, values: dict) -> dict:
    """The trial rows' own batch size and temperature (columns volume, mass, temperature): path ->
    a (1, rows) array, nan where the row takes the case's value."""
    over = {}
    for col, path in (("volume", "batch.volume"), ("mass", "batch.mass"), ("temperature", "batch.temperature")):
        arr = getattr(trials, col)
        if arr is None or not np.any(np.isfinite(arr)):
            continue
        if path not in values:
            has = "mass (batch.mass)" if col == "volume" else "volume (batch.volume)"
            want = "mass [kg]" if col == "volume" else "volume [m**3]"
            raise InputError(f"{trials.path}: column {col}: the case gives its batch by {has}; expected a "
                             f"'{want}' column for trial batches of another size")
        over[path] = np.asarray(arr, dtype=float)[None, :]
    return over


def _charge_for_coverage(case, draws, w, coverage, pct):
    """Weighted percentile dose [kg product] that reaches each coverage in ``coverage`` (nan if none)."""
    cov = np.asarray([np.nan if c is None else c for c in coverage], dtype=float)
    inputs = model.case_inputs(case, {p: x[:, None] for p, x in draws.items()})
    inputs = replace(inputs, target_kind="coverage", target_value=np.where(np.isfinite(cov), cov, 0.5)[None, :])
    sol = model.solve(inputs)
    kg = np.where(np.asarray(sol.feasible), np.asarray(sol.kg_product, dtype=float), np.inf)
    kg = np.broadcast_to(kg, (w.size, cov.size))
    out = []
    for j in range(cov.size):
        if not np.isfinite(cov[j]) or np.sum(w * np.isfinite(kg[:, j])) < 0.5:
            out.append(None)
            continue
        out.append(float(_wquantile(np.where(np.isfinite(kg[:, j]), kg[:, j], 1e300), w, pct / 100)))
    return out


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
    values = case.values()
    row_over = _row_overrides(case, trials, values)
    over = {p: x[:, None] for p, x in draws.items()}
    for path, arr in row_over.items():  # a trial batch of its own size or temperature
        base = over.get(path, np.asarray(values[path], dtype=float))
        over[path] = np.where(np.isfinite(arr), arr, base)
    inputs = model.case_inputs(case, over)
    kg_per_mol = np.asarray(inputs.molar_mass, dtype=float) / np.asarray(inputs.active_fraction, dtype=float)
    mol = trials.charge_kg[None, :] / np.broadcast_to(kg_per_mol, (n, 1))
    sol = model.solve(inputs, dose_mol=mol)
    logw = np.zeros(n)
    used = []
    warnings = []
    if "calibrated on" in (case.case.notes or ""):
        warnings.append("this case was itself written by a calibration (its notes say 'calibrated on ...'): trials it "
                        "already learned from would count twice; calibrate the original case with all the rows, "
                        "unless these trials are new")
    dose_prior = np.asarray(mc.dose_kg_product, dtype=float)
    fin_prior = dose_prior[np.isfinite(dose_prior)]
    own_size = np.ones(trials.charge_kg.size, dtype=bool)
    for path, arr in row_over.items():
        if path != "batch.temperature":
            own_size &= ~np.isfinite(arr[0])
    if fin_prior.size:
        p10, p50, p90 = np.quantile(fin_prior, [0.1, 0.5, 0.9])
        for j in np.flatnonzero(own_size):
            ratio = trials.charge_kg[j] / p50
            if ratio > 20 or ratio < 0.05:
                size = (f"{values['batch.volume']:.4g} m**3" if "batch.volume" in values else
                        f"{values['batch.mass']:.4g} kg")
                warnings.append(
                    f"{trials.path}: row {j + 2}, column charge: {trials.charge_kg[j]:.4g} kg is {ratio:.3g} times the "
                    f"equilibrium dose the case needs for its batch of {size} (P50 {p50:.4g} kg of product, "
                    f"P10-P90 {p10:.4g}-{p90:.4g} kg); if the trial batch had another size, give it in a "
                    "'volume [m**3]' (or 'mass [kg]') column")
    d32_pred = np.broadcast_to(np.asarray(sol.d32, dtype=float), mol.shape)
    c_pred = np.broadcast_to(np.asarray(sol.state.free_concentration, dtype=float), mol.shape)
    t_pred = np.broadcast_to(np.asarray(sol.tension, dtype=float), mol.shape)
    cov_pred = np.broadcast_to(np.asarray(sol.state.coverage, dtype=float), mol.shape)
    for j in range(trials.charge_kg.size):
        if math.isfinite(trials.d32[j]):
            mid = float(np.nanmedian(d32_pred[:, j]))
            if mid > 0 and not (1 / 20 < trials.d32[j] / mid < 20):
                src = trials.d32_source[j] if trials.d32_source else "measured"
                raise InputError(f"{trials.path}: row {j + 2}, column {'d32' if src == 'measured' else 'size table'}: "
                                 f"{trials.d32[j] * 1e6:.4g} um is {trials.d32[j] / mid:.3g} times the d32 the case "
                                 f"predicts for the plant ({mid * 1e6:.4g} um); check the unit in the header "
                                 "(e.g. 'd32 [um]') and that the row belongs to this case")
            s = math.sqrt(math.log1p(trials.d32_rel_sd[j] ** 2))
            logw += -0.5 * ((np.log(trials.d32[j]) - np.log(d32_pred[:, j])) / s) ** 2
            used.append("d32")
        if math.isfinite(trials.serum_concentration[j]):
            # the ceiling of free monomer: the CMC; for a blend the largest pure CMC (the monomer
            # left by the interface need not have the charged composition, so the mixed CMC is no bound)
            cmc = float(np.nanmax(np.asarray(inputs.cmc if inputs.blend is None else inputs.blend.cmc, dtype=float)))
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
            sd_t = TENSION_SD if trials.tension_sd is None else float(trials.tension_sd[j])
            logw += -0.5 * ((trials.serum_tension[j] - t_pred[:, j]) / sd_t) ** 2
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
    if 0 < len(used) < len(learned):
        warnings.append(f"{len(used)} measurement(s) for {len(learned)} learned inputs ({', '.join(learned)}): "
                        "the trials cannot pin them all; inputs they do not inform keep about their prior band")
    flat = np.ones(n) / n
    banded = dict(draws)
    if "scaleup.plant_d32" in draws:  # the lab-to-plant discrepancy: measured plant d32 / the correlation's
        rest = {p: x[:, None] for p, x in draws.items() if p != "scaleup.plant_d32"}
        nominal = np.asarray(model.case_inputs(case, rest).d32, dtype=float).reshape(-1)
        banded["scaleup.plant_d32_factor"] = draws["scaleup.plant_d32"] / np.broadcast_to(nominal, (n,))
    prior, post = _bands(banded, flat), _bands(banded, w)
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
        else:
            lo, hi = stability["coverage_for_90_percent_interval"]
            kg = _charge_for_coverage(case, draws, w, [stability["coverage_for_90_percent"], lo, hi], pct)
            kg = [None if v is None or v > 1e299 else v for v in kg]
            stability["model"] = "logistic"
            stability["dose_kg_product_for_90_percent"] = kg[0]
            stability["dose_kg_product_for_90_percent_interval"] = kg[1:]
            if kg[0] is None:
                notes.append(f"the coverage for a 90 % chance of a stable batch "
                             f"({stability['coverage_for_90_percent']:.3g}) is not reached below the CMC")
    failed = [(trials.batch[j], float(trials.charge_kg[j])) for j in range(trials.charge_kg.size)
              if trials.stable[j] == 0 and trials.charge_kg[j] >= charge]
    floor = None
    if failed:
        worst = max(trials.charge_kg[trials.stable == 0])
        passed = trials.charge_kg[(trials.stable == 1) & (trials.charge_kg > worst)]
        floor = float(np.min(passed)) if passed.size else None
        if floor is not None:
            notes.insert(0, f"WARNING: the equilibrium plan at the posterior gives {charge:.4g} kg, at or below a trial "
                         "charge that failed the stability test (" + ", ".join(f"{b} at {c:.4g} kg" for b, c in failed)
                         + f"): the next charge is raised to {floor:.4g} kg, the lowest charge that passed above every "
                         "failure; the equilibrium target may be set too low for this product")
            charge = floor
        else:
            notes.insert(0, "WARNING: the next charge " + f"{charge:.4g} kg is at or below a trial charge that failed "
                         "the stability test (" + ", ".join(f"{b} at {c:.4g} kg" for b, c in failed) + ") and no "
                         "charge above it has passed yet: do not go below a failed level without a supervised trial")
        after = float(np.sum(w * (dose <= charge)))
    not_learned = sorted(p for p in case.quantities() if p not in draws and case.quantities()[p].spread is None)
    notes.append(f"learned (inputs with a spread): {', '.join(learned)}; held as given: {len(not_learned)} inputs")
    notes.append("the prior is the case file as given (a second calibration with more rows starts from it again, "
                 "not from an updated case: no double counting)")
    return Calibration(trials=trials, learned=learned, prior=prior, posterior=post, effective_sample_size=ess,
                       samples=n, next_dose_kg_product=next_dose, next_charge_kg=charge, percentile=pct,
                       probability_before=before, probability_after=after, prior_charge_kg=prior_charge,
                       predicted=predicted, stability=stability, notes=tuple(notes),
                       warnings=tuple(warnings))
