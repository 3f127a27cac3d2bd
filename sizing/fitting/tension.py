"""Fit a tension series: the CMC as a fitted breakpoint and an isotherm below it.

The model of the whole series is one equation of state below the CMC and a constant plateau
above it (pseudo-phase model: the monomer concentration stops at the CMC)::

    gamma(c) = gamma0 - Pi(min(c, cmc))
    Pi(c)    = pressure_of_theta(theta_of_c(c, K, model, beta), Gamma_inf, T, n, model, beta)

The parameters ``gamma0`` (unless given), ``ln Gamma_inf``, ``ln K``, the Frumkin ``beta`` and
``log10 cmc`` are fitted together by least squares on the distinct concentrations, replicates
weighted by their count (the same problem as on every row, so the cost grows with the distinct
concentrations, not the rows).  At most :data:`MAX_STARTS` breakpoint starts spread over the gaps
run as one batched Levenberg-Marquardt fit; the best are polished by
``scipy.optimize.least_squares`` with the analytic Jacobian.  Standard errors come from
``cov = s**2 (J^T J)^-1``; the 95 % intervals of the model used are profile-likelihood intervals
(Student's t with ``n - p`` degrees of freedom), which keep their coverage where the data bound
the parameters loosely and the linearised ones do not (those are kept too).  A residual
bootstrap (all resamples in one batched fit) is available where the data are few.

Models are compared by AICc: Langmuir is kept unless another model lowers AICc by more than 4
(:func:`select_model`).  The surface excess at the CMC, the Gibbs slope just below it, depends
little on the model (:func:`surface_excess_at_cmc`); a coverage target means Gamma/Gamma_inf of
the chosen model.

References
----------
1. Burnham, K. P. and Anderson, D. R., Model Selection and Multimodel Inference, 2nd ed.,
   Springer (2002): AICc and the "within 2 units" rule of thumb [from memory].
2. McClements, D. J., Food Emulsions, 2nd ed. (2005), ch. 5: Gibbs equation and prefactor n.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np
from scipy.optimize import least_squares
from scipy.special import stdtrit  # Student t quantile, stdtrit(dof, q) = scipy.stats.t.ppf(q, dof)

from .. import plausible
from ..constants import GAS_CONSTANT
from ..errors import CalculationError, InputError
from ..labcsv import read_lab_csv
from ..physics.isotherm import MODELS, check_model, pressure_of_theta, theta_of_c

MIN_BELOW = 4  # points needed below the CMC
MIN_ABOVE = 2  # points needed on the plateau
CONFIDENCE = 0.95
AICC_MARGIN = 2.0  # the window of AICc units among the models that beat Langmuir
CHALLENGE_MARGIN = 4.0  # another model must lower AICc by more than this against Langmuir
MAX_STARTS = 24  # breakpoint starts per model, spread over the gaps (one batched fit)
SCREEN_POINTS = 100  # the breakpoint search runs on at most this many merged concentrations
POLISHED = 2  # best distinct starts polished by least_squares
RIVAL = 1.5  # a further start is polished only if its batched sum of squares is within this factor
# number of fitted EOS parameters per model, the clean tension and the CMC excluded
_EXTRA = {"langmuir": 0, "volmer": 0, "frumkin": 1}
_BOUNDS = {  # on the fitted scale
    "clean_tension": (0.0, 200.0),  # mN/m
    "ln_gamma": (math.log(1e-8), math.log(1e-4)),  # ln(mol/m**2)
    "ln_k": (math.log(1e-8), math.log(1e14)),  # ln(m**3/mol)
    "interaction": (-10.0, 2.0),  # Frumkin beta; above 2 a 2-D phase transition
}
PARAMS = ("clean_tension", "max_surface_excess", "adsorption_constant", "interaction", "cmc")


@dataclass(frozen=True)
class TensionData:
    """Hold a validated tension series in SI.

    Attributes
    ----------
    path : str
        The file read, for messages.
    concentration : ndarray
        Surfactant concentrations, > 0, sorted [mol/m**3].
    tension : ndarray
        Measured tensions [N/m].
    temperature : float or None
        Mean of the file's temperature column [K], None without one.
    labels : dict
        Column headers as written, for messages.
    notes : tuple of str
        Things the reader noticed (``"warning: ..."`` for warnings).

    Examples
    --------
    >>> d = TensionData("s.csv", np.array([0.01, 0.1]), np.array([0.05, 0.04]), 298.15, {}, ())
    >>> d.concentration.size
    2
    """

    path: str
    concentration: np.ndarray
    tension: np.ndarray
    temperature: float | None
    labels: dict
    notes: tuple = ()


@dataclass(frozen=True)
class ModelFit:
    """Hold one equation of state fitted to the whole series (SI values; intervals are 95 %).

    Attributes
    ----------
    model : str
        Isotherm name.
    params : dict
        ``clean_tension`` [N/m], ``max_surface_excess`` [mol/m**2], ``adsorption_constant``
        [m**3/mol], ``interaction`` [-] (0 unless Frumkin), ``cmc`` [mol/m**3].
    standard_errors : dict
        Same keys, standard errors in the same units (nan where not fitted).
    intervals : dict
        Same keys, (low, high) 95 % intervals.
    fitted : tuple of str
        Names of the fitted parameters on the fitted (log) scale.
    rss : float
        Residual sum of squares [N**2/m**2].
    aic, aicc : float
        Akaike criteria [-] (residual variance counted as a parameter).
    residuals : ndarray
        Measured minus fitted tension [N/m].
    x : ndarray
        The solution on the fitted scale (internal).
    at_bound : tuple of str
        Parameters that ended at the edge of their allowed range.
    cov : ndarray
        ``s**2 (J^T J)^-1`` on the fitted scale (internal).
    linearised : dict
        Same keys as ``intervals``: the linearised (Wald, Student's t) 95 % intervals.
    interval_method : str
        ``"profile likelihood"`` for the model used, ``"linearised"`` for the others.

    Examples
    --------

    >>> import numpy as np
    >>> c = np.logspace(-3, 0, 12)  # mol/m**3, noise-free Langmuir series with a CMC of 0.065
    >>> g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, 298.15)
    >>> fit = fit_tension(TensionData("s.csv", c, g, 298.15, {}, ()), model="langmuir")
    >>> round(fit.best.params["cmc"], 9)
    0.065

    References
    ----------
    1. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 (the equation of state) [from memory].
    2. Bates, D. M. and Watts, D. G., Nonlinear Regression Analysis and Its Applications, Wiley
       (1988), ch. 2 (covariance ``s**2 (J^T J)^-1``, t-intervals) [from memory].
    3. Burnham, K. P. and Anderson, D. R., Model Selection and Multimodel Inference, 2nd ed.,
       Springer (2002): AICc and the "within 2 units" rule of thumb [from memory].
    4. Muggeo, V. M. R., "Estimating regression models with unknown break-points", Stat. Med. 22
       (2003) 3055-3071, doi:10.1002/sim.1545 [from memory].
    5. Efron, B. and Tibshirani, R. J., An Introduction to the Bootstrap, Chapman and Hall (1993),
       ch. 9 (residual bootstrap) [from memory].
    """

    model: str
    params: dict  # name -> value [SI]; interaction 0 unless frumkin
    standard_errors: dict  # name -> standard error [SI] (nan when not fitted)
    intervals: dict  # name -> (low, high) [SI]
    fitted: tuple  # names of the fitted parameters
    rss: float  # [N**2/m**2]
    aic: float
    aicc: float
    residuals: np.ndarray  # measured - fitted [N/m]
    x: np.ndarray  # the solution on the fitted scale (internal)
    at_bound: tuple = ()
    cov: np.ndarray | None = None  # covariance on the fitted scale (internal)
    linearised: dict | None = None  # name -> (low, high) linearised 95 % interval [SI]
    interval_method: str = "linearised"  # how ``intervals`` were found


@dataclass(frozen=True)
class TensionFit:
    """Hold the result of :func:`fit_tension`: every model, the chosen one and what was noticed.

    Attributes
    ----------
    data : TensionData
    temperature : float
        [K].
    gibbs_prefactor : float
        n [-].
    clean_tension_fixed : float or None
        gamma0 [N/m] when it was held fixed, None when fitted.
    fits : dict
        model -> :class:`ModelFit`.
    model : str
        The model used; ``selection`` says why.
    n_below, n_above : int
        Points below and above the fitted CMC.
    bootstrap : dict or None
        name -> (low, high) 95 % percentile interval [SI].
    notes, warnings : tuple of str
    forced : bool
        True when the model was given rather than chosen.

    Notes
    -----
    ``best`` is the :class:`ModelFit` of the model used.

    Examples
    --------

    >>> import numpy as np
    >>> c = np.logspace(-3, 0, 12)  # mol/m**3, noise-free Langmuir series with a CMC of 0.065
    >>> g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, 298.15)
    >>> fit = fit_tension(TensionData("s.csv", c, g, 298.15, {}, ()), model="langmuir")
    >>> fit.model, fit.n_below, fit.n_above
    ('langmuir', 7, 5)

    References
    ----------
    1. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 (the equation of state) [from memory].
    2. Bates, D. M. and Watts, D. G., Nonlinear Regression Analysis and Its Applications, Wiley
       (1988), ch. 2 (covariance ``s**2 (J^T J)^-1``, t-intervals) [from memory].
    3. Burnham, K. P. and Anderson, D. R., Model Selection and Multimodel Inference, 2nd ed.,
       Springer (2002): AICc and the "within 2 units" rule of thumb [from memory].
    4. Muggeo, V. M. R., "Estimating regression models with unknown break-points", Stat. Med. 22
       (2003) 3055-3071, doi:10.1002/sim.1545 [from memory].
    5. Efron, B. and Tibshirani, R. J., An Introduction to the Bootstrap, Chapman and Hall (1993),
       ch. 9 (residual bootstrap) [from memory].
    """

    data: TensionData
    temperature: float  # [K]
    gibbs_prefactor: float  # [-]
    clean_tension_fixed: float | None  # [N/m] when given, else None (fitted)
    fits: dict  # model -> ModelFit
    model: str  # the model used
    selection: str  # why that model
    n_below: int
    n_above: int
    bootstrap: dict | None = None  # name -> (low, high) percentile interval [SI]
    notes: tuple = ()
    warnings: tuple = ()
    forced: bool = field(default=False)

    @property
    def best(self) -> ModelFit:
        """Return the fit of the model used."""
        return self.fits[self.model]


def read_tension_csv(path, *, electrolyte: bool = False) -> TensionData:
    """Read and check a tension series ``concentration [unit], tension [unit]``.

    Parameters
    ----------
    path : str or Path
        CSV with a header naming each column with its unit in brackets; optional columns
        ``temperature [unit]``, ``replicate``, ``notes``.
    electrolyte : bool
        The series of a salt (:mod:`sizing.fitting.electrolyte`): a salt-free row at
        concentration 0 is accepted and four rows are enough.

    Returns
    -------
    TensionData
        Concentrations [mol/m**3] and tensions [N/m] sorted by concentration.

    Raises
    ------
    InputError
        A missing unit or column, a non-numeric or empty cell (row and column named), a
        non-positive concentration or tension, duplicated concentrations without a
        ``replicate`` column, fewer than six points.

    Notes
    -----
    Units are converted once at reading (:mod:`sizing.labcsv`); a temperature column spanning
    more than 1 K is averaged with a warning.  Six points is the floor: four below the CMC
    for the isotherm and two on the plateau (common practice).

    Examples
    --------
    >>> import pathlib, tempfile
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "t.csv"
    >>> rows = [f"{c},{50 - i}" for i, c in enumerate([1, 3, 10, 30, 100, 300])]
    >>> _ = p.write_text(chr(10).join(["concentration [uM],tension [mN/m]"] + rows))
    >>> d = read_tension_csv(p)
    >>> [round(float(v), 12) for v in d.concentration[:2]], round(float(d.tension[0]), 12)
    ([0.001, 0.003], 0.05)

    References
    ----------
    1. ISO 80000-1:2009, Quantities and units - Part 1: General (a quantity is a number times a
       unit) [from memory].
    """
    table = read_lab_csv(
        path,
        {"concentration": "concentration", "tension": "tension", "temperature": "temperature"},
        required=("concentration", "tension"),
    )
    p = table.path
    labels = {k: (f"{k} [{u}]" if u else k) for k, u in table.units.items()}
    c = np.asarray(table.columns["concentration"], dtype=float)
    g = np.asarray(table.columns["tension"], dtype=float)
    problems = []
    for name, arr in (("concentration", c), ("tension", g)):
        for i in np.flatnonzero(~np.isfinite(arr)):
            problems.append(f"{p}: row {i + 2}, column {labels[name]!r}: the cell is empty; "
                            f"expected a number")
    for i in np.flatnonzero(np.isfinite(c) & ((c < 0) if electrolyte else (c <= 0))):
        if electrolyte:
            problems.append(f"{p}: row {i + 2}, column {labels['concentration']!r}: {c[i]:g} mol/m**3 "
                            "is negative; expected a concentration >= 0")
            continue
        problems.append(
            f"{p}: row {i + 2}, column {labels['concentration']!r}: {c[i]:g} mol/m**3 is not "
            "positive; expected a concentration > 0 (the series is fitted against log "
            "concentration; give the clean-interface tension with --clean-tension instead)")
    for i in np.flatnonzero(np.isfinite(g) & (g <= 0)):
        problems.append(f"{p}: row {i + 2}, column {labels['tension']!r}: {g[i] * 1e3:g} mN/m is "
                        "not positive; expected a tension > 0")
    if "replicate" not in table.columns:
        ok = np.flatnonzero(np.isfinite(c))
        _, first, inv, counts = np.unique(c[ok], return_index=True, return_inverse=True,
                                          return_counts=True)
        repeats = np.flatnonzero(counts[inv] > 1)
        repeats = repeats[repeats != first[inv[repeats]]]  # rows after the first of their value
        if repeats.size:  # one message for the whole file, however many rows repeat
            i = ok[repeats[0]]
            j = ok[first[inv[repeats[0]]]]
            more = (f" ({repeats.size} rows repeat an earlier concentration)" if repeats.size > 1
                    else "")
            problems.append(
                f"{p}: rows {j + 2} and {i + 2} have the same concentration ({c[i]:g} mol/m**3)"
                f"{more} and the file has no 'replicate' column; expected distinct "
                "concentrations, or a 'replicate' column numbering repeated measurements")
    if problems:
        raise InputError(problems=problems)
    if electrolyte and len(c) < 4:
        raise InputError(f"{p}: {len(c)} data rows; expected at least 4 for a tension increment "
                         "with an interval (three concentrations and one degree of freedom)")
    if not electrolyte and len(c) < MIN_BELOW + MIN_ABOVE:
        raise InputError(f"{p}: {len(c)} data rows; expected at least {MIN_BELOW + MIN_ABOVE} "
                         f"({MIN_BELOW} below the CMC and {MIN_ABOVE} above it)")
    notes = [f"warning: {w}" for w in getattr(table, "warnings", ())]  # values outside their usual range
    temperature = None
    if "temperature" in table.columns:
        t = np.asarray(table.columns["temperature"], dtype=float)
        t = t[np.isfinite(t)]
        if t.size:
            temperature = float(np.mean(t))
            if np.ptp(t) > 1.0:
                notes.append(f"warning: the temperature column spans {np.ptp(t):.3g} K; the fit uses "
                             f"the mean {temperature - 273.15:.4g} degC")
    order = np.argsort(c, kind="stable")
    return TensionData(p, c[order], g[order], temperature, labels, tuple(notes))


# ---------------------------------------------------------------------------- the model
def _names(model: str, fixed_gamma0: bool) -> tuple:
    names = () if fixed_gamma0 else ("clean_tension",)
    names += ("ln_gamma", "ln_k")
    if model == "frumkin":
        names += ("interaction",)
    return names + ("log10_cmc",)


def _unpack(x, names, gamma0_fixed_mn):
    d = dict(zip(names, x))
    g0 = d.get("clean_tension", gamma0_fixed_mn)
    return g0, math.exp(d["ln_gamma"]), math.exp(d["ln_k"]), d.get("interaction", 0.0), d["log10_cmc"]


def model_tension(c, model, gamma0, max_surface_excess, adsorption_constant, cmc, temperature,
                  gibbs_prefactor=1.0, beta=0.0):
    """Return the tension [N/m] of the segmented model: an isotherm below ``cmc``, flat above.

    Parameters
    ----------
    c : float or ndarray
        Concentration [mol/m**3].
    model : str
        Isotherm name.
    gamma0 : float
        Clean tension [N/m].
    max_surface_excess : float
        Gamma_inf [mol/m**2].
    adsorption_constant : float
        K [m**3/mol].
    cmc : float
        [mol/m**3]; inf for no plateau.
    temperature : float
        T [K].
    gibbs_prefactor : float
        n [-].
    beta : float
        Frumkin interaction [-].

    Returns
    -------
    ndarray
        gamma [N/m].

    Raises
    ------
    InputError
        For an unknown isotherm or a Frumkin beta above 2.

    Notes
    -----
    ``gamma(c) = gamma0 - Pi(theta(min(c, cmc)))`` with the equation of state of the isotherm
    (:func:`sizing.physics.isotherm.pressure_of_theta`); the pseudo-phase model keeps the
    monomer at the CMC above it, so the tension is flat there.

    Examples
    --------
    >>> # Langmuir: 4 umol/m2, K = 100 m3/mol, 25 C, c = 0.01 mol/m3 -> Pi = 6.873128303066 mN/m
    >>> round(float(72e-3 - model_tension(0.01, "langmuir", 72e-3, 4e-6, 100.0, 1.0, 298.15)) * 1e3, 12)
    6.873128303066
    >>> round(float(model_tension(0.1, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, 298.15)) * 1e3, 9)
    19.033937156

    References
    ----------
    1. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 [from memory].
    2. Rosen, M. J. and Kunjappu, J. T., Surfactants and Interfacial Phenomena, 4th ed., Wiley
       (2012), ch. 2 (the CMC as the break of tension against log c) [from memory].
    """
    c = np.minimum(np.asarray(c, dtype=float), cmc)
    theta = theta_of_c(c, adsorption_constant, model, beta)
    return gamma0 - pressure_of_theta(theta, max_surface_excess, temperature, gibbs_prefactor,
                                      model, beta)


# ---------------------------------------------------------------------------- the fitting problem
@dataclass(frozen=True)
class _Series:
    """A series on its distinct concentrations: replicates become one weighted point.

    ``sum_i (y_i - f(c_i))**2 = sum_j w_j (ybar_j - f(u_j))**2 + pure`` exactly, so the fit on
    ``m`` distinct concentrations with weights ``w_j`` equals the fit on every row.
    """

    u: np.ndarray  # distinct concentrations [mol/m**3], sorted
    w: np.ndarray  # rows per concentration [-]
    ybar: np.ndarray  # mean tension per concentration [mN/m]
    pure: float  # pure-error sum of squares, sum (y_i - ybar_j)**2 [mN**2/m**2]
    inverse: np.ndarray  # row -> index into u
    rows: int

    @property
    def sw(self):
        return np.sqrt(self.w)


def _series(data) -> _Series:
    u, inv, w = np.unique(data.concentration, return_inverse=True, return_counts=True)
    y = data.tension * 1e3
    ybar = np.bincount(inv, weights=y, minlength=len(u)) / w
    pure = float(np.sum((y - ybar[inv]) ** 2))
    return _Series(u, w.astype(float), ybar, pure, inv, len(y))


def _coarse(series, points=None):
    """Return the series merged into at most ``points`` (:data:`SCREEN_POINTS`) runs of
    neighbouring concentrations (weighted means in log c and tension), for the breakpoint search
    only: the starts it ranks are then polished on the full series."""
    points = SCREEN_POINTS if points is None else points
    if len(series.u) <= points:
        return series
    groups = np.array_split(np.arange(len(series.u)), points)
    idx = np.repeat(np.arange(points), [len(g) for g in groups])
    w = np.bincount(idx, weights=series.w)
    logu = np.bincount(idx, weights=series.w * np.log10(series.u)) / w
    ybar = np.bincount(idx, weights=series.w * series.ybar) / w
    return _Series(10.0 ** logu, w, ybar, 0.0, np.arange(points), int(w.sum()))


def _split(X, names, g0_fixed):
    """Return the model parameters as columns (B, 1) of a batch of solutions X (B, p)."""
    col = {nm: X[:, i:i + 1] for i, nm in enumerate(names)}
    g0 = col.get("clean_tension", g0_fixed)
    lcmc = col.get("log10_cmc")
    cmc = np.inf if lcmc is None else 10.0 ** lcmc
    return g0, np.exp(col["ln_gamma"]), np.exp(col["ln_k"]), col.get("interaction", 0.0), cmc


def _evaluate(u, model, names, X, g0_fixed, temperature, n, jac=True):
    """Return the model tension [mN/m] (B, m) at ``u`` for a batch X (B, p), and its Jacobian.

    The Gibbs equation gives the derivatives in ``ln K`` and ``log10 cmc``
    (``dPi/dln(K c) = n R T Gamma_inf theta``); ``dPi/dln Gamma_inf = Pi``; for Frumkin,
    ``dPi/dbeta = n R T Gamma_inf theta**2`` at fixed ``c`` (implicit differentiation of the
    isotherm cancels every term in ``dtheta/dbeta``).  Jacobian shape (B, m, p).
    """
    g0, ginf, k, beta, cmc = _split(X, names, g0_fixed)
    ce = np.minimum(u[None, :], cmc)
    theta = theta_of_c(ce, k, model, beta)
    pi = pressure_of_theta(theta, ginf, temperature, n, model, beta) * 1e3
    pred = g0 - pi
    if not jac:
        return pred, None
    scale = n * GAS_CONSTANT * temperature * ginf * 1e3  # [mN/m]
    cols = {"clean_tension": np.ones_like(pred), "ln_gamma": -pi, "ln_k": -scale * theta,
            "interaction": -scale * theta**2,
            "log10_cmc": np.where(u[None, :] > cmc, -scale * theta * math.log(10.0), 0.0)}
    return pred, np.stack([np.broadcast_to(cols[nm], pred.shape) for nm in names], axis=-1)


class _Residuals:
    """Row residuals ``model - measured`` [mN/m] as a function of the fitted vector, with its
    analytic Jacobian as ``.jac`` (what :func:`_solve` hands to ``least_squares``)."""

    def __init__(self, u, sw, target, model, names, g0_fixed, temperature, n):
        self.u, self.sw, self.target = u, sw, target
        self.args = (model, names, g0_fixed, temperature, n)

    def _at(self, x):
        x = np.array(x, dtype=float)
        if getattr(self, "_x", None) is None or not np.array_equal(self._x, x):
            model, names, g0, t, n = self.args  # residual and Jacobian from one evaluation
            pred, J = _evaluate(self.u, model, names, x[None, :], g0, t, n)
            self._x, self._r, self._J = x, self.sw * (pred[0] - self.target), self.sw[:, None] * J[0]
        return self._r, self._J

    def __call__(self, x):
        return self._at(x)[0].copy()

    def jac(self, x):
        return self._at(x)[1].copy()


def _residuals_fn(c, y_mn, model, names, g0_fixed, temperature, n):
    """Return the unweighted residual function of every row (with ``.jac``)."""
    c = np.asarray(c, dtype=float)
    return _Residuals(c, np.ones_like(c), np.asarray(y_mn, dtype=float), model, names, g0_fixed,
                      temperature, n)


def _jacobian(c, model, names, x, g0_fixed, temperature, n):
    """Return d(residual [mN/m]) / d(fitted parameter), analytic, one row per point (see
    :func:`_evaluate`)."""
    _, J = _evaluate(np.asarray(c, dtype=float), model, names, np.asarray(x, float)[None, :],
                     g0_fixed, temperature, n)
    return J[0]


def _lm(problem, X0, lo, hi, target=None, free=None, iterations=60):
    """Levenberg-Marquardt on a batch of independent problems at once (one array call per step).

    Parameters
    ----------
    problem : callable
        ``problem(X, target) -> (r (B, m), J (B, m, p))``, weighted residuals and Jacobian.
    X0 : ndarray (B, p)
        Starts, clipped into ``[lo, hi]``.
    target : ndarray (B, m) or None
        Passed to ``problem`` (bootstrap resamples).
    free : ndarray (B, p) of bool or None
        False for a parameter held at its start (a profile).

    Returns
    -------
    (X, cost)
        Solutions (B, p) and ``sum r**2`` (B,) (inf where the residual is not finite).

    Notes
    -----
    Marquardt's scaling ``J^T J + lambda diag(J^T J)``; bounds by projection with the bound
    parameters that the step pushes outward held for that step [1].

    References
    ----------
    1. Nocedal, J. and Wright, S. J., Numerical Optimization, 2nd ed., Springer (2006), sec. 10.3
       (Levenberg-Marquardt) and 16.7 (projected steps) [from memory].
    """
    X = np.clip(np.array(X0, dtype=float), lo, hi)
    B, p = X.shape
    free = np.ones((B, p), bool) if free is None else free
    eye = np.eye(p)

    def cost_of(x, idx):
        with np.errstate(all="ignore"):
            r, J = problem(x, None if target is None else target[idx])
        c = np.einsum("bm,bm->b", r, r)
        c = np.where(np.isfinite(c) & np.all(np.isfinite(J), axis=(1, 2)), c, np.inf)
        return r, J, c

    r, J, cost = cost_of(X, slice(None))
    lam = np.full(B, 1e-3)
    active = np.isfinite(cost)
    for _ in range(iterations):
        a = np.flatnonzero(active)
        if not len(a):
            break
        Xa, Ja, ra = X[a], J[a] * free[a][:, None, :], r[a]
        A = np.einsum("bmi,bmj->bij", Ja, Ja)
        g = np.einsum("bmi,bm->bi", Ja, ra)
        d = np.einsum("bii->bi", A)
        d = np.maximum(d, 1e-12 * np.max(d, axis=1, keepdims=True) + 1e-300)
        hold = ~free[a]
        for _pass in range(2):  # the second pass holds parameters pushed out of their bounds
            M = A + (lam[a][:, None] * d)[:, :, None] * eye + hold[:, :, None] * eye
            with np.errstate(all="ignore"):
                step = -np.linalg.solve(M, np.where(hold, 0.0, g)[:, :, None])[:, :, 0]
            step = np.where(hold | ~np.isfinite(step), 0.0, step)
            push = ((Xa <= lo) & (step < 0)) | ((Xa >= hi) & (step > 0))
            if not push.any():
                break
            hold = hold | push
        Xn = np.clip(Xa + step, lo, hi)
        rn, Jn, cn = cost_of(Xn, a)
        better = cn < cost[a]
        gain = cost[a] - cn
        idx = a[better]
        X[idx], r[idx], J[idx], cost[idx] = Xn[better], rn[better], Jn[better], cn[better]
        lam[a] = np.clip(np.where(better, lam[a] * 0.3, lam[a] * 10.0), 1e-12, 1e12)
        small = np.all(np.abs(step) <= 1e-10 * (1.0 + np.abs(Xa)), axis=1)
        done = (better & (gain <= 1e-14 * cost[a] + 1e-30)) | small | (lam[a] >= 1e12)
        active[a[done]] = False
    return X, cost


def _batch_problem(series, model, names, g0_fixed, temperature, n):
    """Return ``problem(X, target)`` for :func:`_lm` on the distinct concentrations."""
    sw = series.sw

    def problem(X, target):
        pred, J = _evaluate(series.u, model, names, X, g0_fixed, temperature, n)
        t = series.ybar if target is None else target
        return sw * (pred - t), sw[None, :, None] * J

    return problem


def _initial(logc, y_mn, xb, model, names, g0_fixed, temperature, n):
    below = logc < xb
    idx = np.flatnonzero(below)[-3:]
    slope = -5.0
    if len(idx) >= 2:  # least-squares slope of the last points below the break
        dx = logc[idx] - logc[idx].mean()
        if np.dot(dx, dx) > 0:
            slope = float(np.dot(dx, y_mn[idx] - y_mn[idx].mean()) / np.dot(dx, dx))
    scale_t = n * GAS_CONSTANT * temperature
    gam = min(max(-slope * 1e-3 / (math.log(10.0) * scale_t), 5e-7), 2e-5) / 0.95
    g0 = g0_fixed if g0_fixed is not None else max(float(np.max(y_mn)) + 0.5, 1.0)
    plateau = float(np.mean(y_mn[~below]))
    pi = max(g0 - plateau, 0.05) * 1e-3
    theta = min(max(-math.expm1(-pi / (scale_t * gam)), 1e-3), 0.999)  # Langmuir inverse
    if model == "volmer":
        u = pi / (scale_t * gam)
        theta = min(u / (1 + u), 0.999)
        k_c = theta / (1 - theta) * math.exp(theta / (1 - theta))
    else:
        k_c = theta / (1 - theta)
    k = k_c / 10.0 ** xb
    x0 = {"clean_tension": g0, "ln_gamma": math.log(gam), "ln_k": math.log(k), "interaction": 0.0,
          "log10_cmc": xb}
    return np.array([x0[nm] for nm in names])


def _bounds(names, logc, y_mn):
    lo, hi = [], []
    for nm in names:
        if nm == "log10_cmc":
            b = (float(logc[0]), float(logc[-1]))
        elif nm == "clean_tension":
            b = (float(np.min(y_mn)), _BOUNDS[nm][1])
        else:
            b = _BOUNDS[nm]
        lo.append(b[0])
        hi.append(b[1])
    return np.array(lo), np.array(hi)


def _candidates(logc):
    """Breakpoint starts: gaps leaving 2 points below and 1 above, at most :data:`MAX_STARTS`
    spread evenly over the gaps (the counts are checked after the fit, so that too few points
    give an error rather than a forced break)."""
    u = np.unique(logc)
    if len(u) < 4:
        return []
    mids = 0.5 * (u[:-1] + u[1:])[1:]
    if len(mids) > MAX_STARTS:
        mids = mids[np.unique(np.round(np.linspace(0, len(mids) - 1, MAX_STARTS)).astype(int))]
    return list(mids)


def _solve(fun, x0, lo, hi):
    x0 = np.clip(x0, lo + 1e-9 * (hi - lo), hi - 1e-9 * (hi - lo))
    return least_squares(fun, x0, jac=getattr(fun, "jac", "2-point"), bounds=(lo, hi),
                         x_scale="jac", method="trf", ftol=1e-12, xtol=1e-12, gtol=1e-12,
                         max_nfev=2000)


def _fit_model(data, model, temperature, n, g0_fixed_mn, starts=None, series=None):
    """Fit one model: a batched search from every breakpoint start (one array call per step),
    then ``least_squares`` polishing the best few; returns ``(best, names, lo, hi, fun)`` with
    ``fun`` the residuals of every row (``best.fun`` holds the weighted distinct-point ones)."""
    s = _series(data) if series is None else series
    c = data.concentration
    logu = np.log10(s.u)
    names = _names(model, g0_fixed_mn is not None)
    lo, hi = _bounds(names, logu, s.ybar)
    weighted = _Residuals(s.u, s.sw, s.ybar, model, names, g0_fixed_mn, temperature, n)
    if starts is None:
        gaps = _candidates(logu)
        if not gaps:
            raise InputError(f"{data.path}: {len(s.u)} distinct concentrations; expected at "
                             f"least 4 (the CMC is a breakpoint between measured concentrations)")
        starts = [_initial(logu, s.ybar, xb, model, names, g0_fixed_mn, temperature, n) for xb in gaps]
    X0 = np.array(starts, dtype=float)
    X, cost = _lm(_batch_problem(_coarse(s), model, names, g0_fixed_mn, temperature, n), X0, lo, hi,
                  iterations=30)
    order = [i for i in np.argsort(cost) if np.isfinite(cost[i])]
    picks, seen = [], []
    for i in order:  # the best few distinct breakpoints, each a real competitor of the best
        if picks and cost[i] > RIVAL * cost[order[0]]:
            break
        if all(abs(X[i, -1] - v) > 1e-3 for v in seen):
            picks.append(X[i])
            seen.append(X[i, -1])
        if len(picks) == POLISHED:
            break
    if not picks:
        picks = list(X0[:POLISHED])
    best = None
    for x0 in picks:
        with np.errstate(all="ignore"):
            res = _solve(weighted, x0, lo, hi)
        if np.all(np.isfinite(res.fun)) and (best is None or res.cost < best.cost):
            best = res
    if best is None:
        raise CalculationError(f"{data.path}: the {model} fit did not converge on this series "
                               "(no start gave a finite residual); check the data, or force another "
                               "model with --model")
    return best, names, lo, hi, _residuals_fn(c, data.tension * 1e3, model, names, g0_fixed_mn,
                                              temperature, n)


def _frumkin_starts(data, series, langmuir, temperature, n, g0_fixed_mn):
    """Frumkin starts: the Langmuir solution with beta = 0 and +-1, and a few gap starts."""
    names = _names("frumkin", g0_fixed_mn is not None)
    logu = np.log10(series.u)
    gaps = _candidates(logu)
    gaps = [gaps[i] for i in sorted(set(np.linspace(0, len(gaps) - 1, min(6, len(gaps))).round().astype(int)))]
    starts = [_initial(logu, series.ybar, xb, "frumkin", names, g0_fixed_mn, temperature, n) for xb in gaps]
    at = names.index("interaction")
    for beta in (0.0, 1.0, -1.0):
        starts.append(np.insert(np.asarray(langmuir.x, dtype=float), at, beta))
    return starts


def _aicc(rss_mn, npts, m_par):
    aic = npts * math.log(max(rss_mn, 1e-300) * 1e-6 / npts) + 2 * m_par
    return aic, aic + (2 * m_par * (m_par + 1) / (npts - m_par - 1) if npts - m_par - 1 > 0 else math.inf)


_TRANS = {"clean_tension": ("clean_tension", lambda v: v * 1e-3, lambda v, s: s * 1e-3),
          "ln_gamma": ("max_surface_excess", math.exp, lambda v, s: math.exp(v) * s),
          "ln_k": ("adsorption_constant", math.exp, lambda v, s: math.exp(v) * s),
          "interaction": ("interaction", lambda v: v, lambda v, s: s),
          "log10_cmc": ("cmc", lambda v: 10.0 ** v, lambda v, s: 10.0 ** v * math.log(10) * s)}


def _to_si(names, bounds_fitted):
    """Return {parameter: (low, high)} in SI from intervals on the fitted scale."""
    out = {}
    for nm, (a, b) in zip(names, bounds_fitted):
        pname, f, _ = _TRANS[nm]
        if nm == "interaction":
            b = min(b, 2.0)
        with np.errstate(over="ignore"):
            out[pname] = (float(f(min(a, 700.0))), float(f(min(b, 700.0))))
    return out


def _summarise(data, model, best, names, lo, hi, fun, temperature, n, g0_fixed_mn, series=None):
    s = _series(data) if series is None else series
    x = best.x
    npts, k = s.rows, len(x)
    rss_mn = float(best.fun @ best.fun) + s.pure
    dof = max(npts - k, 1)
    s2 = rss_mn / dof
    jac = s.sw[:, None] * _jacobian(s.u, model, names, x, g0_fixed_mn, temperature, n)
    try:
        cov = s2 * np.linalg.pinv(jac.T @ jac)
        se = np.sqrt(np.clip(np.diag(cov), 0, None))
    except np.linalg.LinAlgError:  # pragma: no cover
        cov = np.full((k, k), np.inf)
        se = np.full(k, np.inf)
    tq = _t_quantile(dof)
    g0, ginf, kk, beta, lcmc = _unpack(x, names, g0_fixed_mn)
    params = {"clean_tension": float(g0) * 1e-3, "max_surface_excess": float(ginf),
              "adsorption_constant": float(kk), "interaction": float(beta), "cmc": 10.0 ** float(lcmc)}
    fixed = {"clean_tension": (g0 * 1e-3, g0 * 1e-3), "interaction": (0.0, 0.0)}
    ses = {p: float("nan") for p in PARAMS}
    intervals = dict(fixed)
    intervals.update(_to_si(names, [(x[i] - tq * se[i], x[i] + tq * se[i]) for i in range(k)]))
    at_bound = []
    for i, nm in enumerate(names):
        pname, _, dse = _TRANS[nm]
        ses[pname] = float(dse(x[i], se[i]))
        if min(x[i] - lo[i], hi[i] - x[i]) < 1e-6 * (hi[i] - lo[i]):
            at_bound.append(pname)
    aic, aicc = _aicc(rss_mn, npts, k + 1)  # + the residual variance
    pred, _ = _evaluate(s.u, model, names, x[None, :], g0_fixed_mn, temperature, n, jac=False)
    residuals = data.tension - pred[0][s.inverse] * 1e-3
    return ModelFit(model, params, ses, intervals, tuple(names), rss_mn * 1e-6, aic, aicc,
                    residuals, x, tuple(at_bound), cov=cov, linearised=dict(intervals),
                    interval_method="linearised")


def _t_quantile(dof):
    """Student's t quantile at (1 + CONFIDENCE)/2; ``scipy.special.stdtrit`` (no scipy.stats)."""
    return float(stdtrit(dof, 0.5 + CONFIDENCE / 2))


# the profile grid, in linearised standard errors from the estimate (each side)
_GRID = np.array([0.5, 1.0, 1.5, 1.75, 2.0, 2.25, 2.5, 3.0, 3.5, 4.5, 6.0, 8.0, 12.0, 20.0])


def _profile(series, fit, lo, hi, temperature, n, g0_fixed_mn):
    """Return profile-likelihood 95 % intervals {parameter: (low, high)} in SI and the names of
    the parameters whose profile does not close inside their allowed range.

    ``tau(v) = sign(v - x_hat) sqrt(S(v) - S_min) / s`` with ``S(v)`` the residual sum of squares
    minimised over the other parameters at ``x_k = v``; the interval is ``|tau| <= t(n - p)`` [1].
    Every grid point of every parameter is one problem of a single batched fit (:func:`_lm`).

    References
    ----------
    1. Bates, D. M. and Watts, D. G., Nonlinear Regression Analysis and Its Applications, Wiley
       (1988), sec. 6.1 (profile t) [from memory].
    """
    names, x, cov = fit.fitted, fit.x, fit.cov
    k, g = len(names), len(_GRID)
    se = np.sqrt(np.clip(np.diag(cov), 0, None))
    rss_mn = fit.rss * 1e6
    dof = max(series.rows - k, 1)
    s2, tq = rss_mn / dof, _t_quantile(dof)
    signs = np.concatenate([-_GRID, _GRID])
    X0 = np.repeat(x[None, :], k * 2 * g, axis=0)
    free = np.ones_like(X0, dtype=bool)
    ok_se = np.isfinite(se) & (se > 0)
    for i in range(k):
        rows = slice(i * 2 * g, (i + 1) * 2 * g)
        step = signs * (se[i] if ok_se[i] else 0.0)
        v = np.clip(x[i] + step, lo[i], hi[i])
        slope = cov[:, i] / cov[i, i] if ok_se[i] else np.zeros(k)
        X0[rows] = x[None, :] + np.outer(v - x[i], np.nan_to_num(slope))
        X0[rows, i] = v
        free[rows, i] = False
    X, cost = _lm(_batch_problem(series, fit.model, names, g0_fixed_mn, temperature, n), X0, lo, hi,
                  free=free, iterations=40)
    tau = np.sqrt(np.clip(cost + series.pure - rss_mn, 0.0, None) / s2)  # inf where it failed
    out, open_ends = [], []
    for i in range(k):
        ends = []
        for side in (-1, 1):
            if not ok_se[i]:
                ends.append(lo[i] if side < 0 else hi[i])
                open_ends.append(_TRANS[names[i]][0])
                continue
            idx = i * 2 * g + g + np.arange(g) if side > 0 else i * 2 * g + np.arange(g)
            vals = X[idx, i]
            t_side = np.maximum.accumulate(tau[idx])  # the profile is taken as monotone outward
            prev_v, prev_t, end = x[i], 0.0, None
            for v, t in zip(vals, t_side):
                if t >= tq:
                    frac = (tq - prev_t) / (t - prev_t) if np.isfinite(t) and t > prev_t else 0.0
                    end = prev_v + frac * (v - prev_v)
                    break
                prev_v, prev_t = v, t
            if end is None:
                end = vals[-1]
                open_ends.append(_TRANS[names[i]][0])
            ends.append(float(end))
        out.append((min(ends), max(ends)))
    return _to_si(names, out), tuple(dict.fromkeys(open_ends))


def surface_excess_at_cmc(fit: ModelFit, temperature: float, gibbs_prefactor: float):
    """Return the surface excess at the CMC [mol/m**2] of a fitted model and its 95 % interval.

    ``Gamma(cmc) = Gamma_inf theta(K cmc)`` is the Gibbs slope of the fitted curve just below the
    CMC, ``-(1/(n R T)) dgamma/dln c``, so it depends on the data near the CMC much more than on
    the model; the interval is the delta method on ``ln Gamma(cmc)`` with Student's t.

    Examples
    --------
    >>> import numpy as np
    >>> c = np.logspace(-3, 0, 12)  # mol/m**3, noise-free Langmuir series with a CMC of 0.065
    >>> g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, 298.15)
    >>> fit = fit_tension(TensionData("s.csv", c, g, 298.15, {}, ()), model="langmuir")
    >>> v, _ = surface_excess_at_cmc(fit.best, 298.15, 1.0)
    >>> round(v / 3.3e-6, 9)  # theta = K cmc / (1 + K cmc), K cmc = 55.25
    0.982222222
    """
    names, x = fit.fitted, np.asarray(fit.x, dtype=float)

    def ln_excess(xx):
        _, ginf, k, beta, cmc = _split(np.atleast_2d(xx), names, 0.0)
        return np.log(ginf[:, 0]) + np.log(theta_of_c(cmc[:, 0], k[:, 0], fit.model, beta if np.ndim(beta) == 0 else beta[:, 0]))

    h = 1e-6 * (1.0 + np.abs(x))
    pts = np.vstack([x + np.diag(h), x - np.diag(h)])
    vals = ln_excess(pts)
    grad = (vals[: len(x)] - vals[len(x):]) / (2 * h)
    v = float(ln_excess(x)[0])
    dof = max(len(fit.residuals) - len(x), 1)
    var = float(grad @ fit.cov @ grad) if fit.cov is not None else math.inf
    half = _t_quantile(dof) * math.sqrt(max(var, 0.0))
    with np.errstate(over="ignore"):
        return math.exp(v), (math.exp(v - half), math.exp(min(v + half, 700.0)))


def select_model(fits: dict) -> tuple[str, str]:
    """Return the model the AICc rule picks and a sentence saying why.

    Parameters
    ----------
    fits : dict
        model -> fit with ``aicc`` [-] and ``fitted`` (the fitted parameter names).

    Returns
    -------
    (str, str)
        The model and the reason.

    Raises
    ------
    ValueError
        For an empty ``fits``.

    Notes
    -----
    Langmuir, the simplest and most common isotherm, is kept unless another model lowers AICc
    by more than :data:`CHALLENGE_MARGIN` (4) below Langmuir's.  On Langmuir data (18 points
    over four decades, noise 0.3 mN/m, 120 seeds) Volmer, with as many parameters, came out
    lower by more than 2 in 12 % of the seeds and by more than 4 in 2.5 %: a 2-unit window is
    noise between these two models, 4 is "considerably less support" [1].  When several models
    beat Langmuir by that much, the one with the fewest parameters within :data:`AICC_MARGIN`
    (2) of the lowest is taken,
    among those with as many parameters the lowest AICc.  Without a Langmuir fit, the same rule
    on all models.  ``AICc = n ln(RSS/n) + 2m + 2m(m + 1)/(n - m - 1)``, m counting the
    residual variance.

    Examples
    --------
    >>> class F:  # stand-ins with just what the rule reads
    ...     def __init__(self, aicc, k): self.aicc, self.fitted = aicc, tuple(range(k))
    >>> select_model({"langmuir": F(-100.0, 4), "frumkin": F(-101.5, 5)})[0]
    'langmuir'
    >>> select_model({"langmuir": F(-100.0, 4), "frumkin": F(-104.5, 5)})[0]
    'frumkin'
    >>> select_model({"langmuir": F(-100.0, 4), "volmer": F(-103.9, 4)})[0]
    'langmuir'
    >>> select_model({"langmuir": F(-100.0, 4), "volmer": F(-104.5, 4)})[0]
    'volmer'

    References
    ----------
    1. Burnham, K. P. and Anderson, D. R., Model Selection and Multimodel Inference, 2nd ed.,
       Springer (2002), sec. 2.4 and 2.6 (AICc; models within about 2 units, 4 to 7 units
       "considerably less support") [from memory].
    """
    if not fits:
        raise ValueError("select_model: no fits")
    pool = fits
    if "langmuir" in fits:
        ref = fits["langmuir"].aicc
        clear = {m: f for m, f in fits.items() if m != "langmuir" and f.aicc < ref - CHALLENGE_MARGIN}
        pool = clear or {"langmuir": fits["langmuir"]}
    low = min(f.aicc for f in pool.values())
    near = [m for m, f in pool.items() if f.aicc <= low + AICC_MARGIN]
    pick = min(near, key=lambda m: (len(fits[m].fitted), fits[m].aicc))
    others = ", ".join(f"{m} {fits[m].aicc - fits[pick].aicc:+.2f}" for m in fits if m != pick)
    if pick == "langmuir" and len(fits) > 1:
        why = (f"langmuir: the simplest and most common isotherm, kept because no other model "
               f"lowers AICc by more than {CHALLENGE_MARGIN:g} (AICc differences against it: {others})")
    elif "langmuir" in fits and pick != "langmuir":
        why = (f"{pick}: lowers AICc by more than {CHALLENGE_MARGIN:g} against langmuir and is the "
               f"simplest such model within {AICC_MARGIN:g} of the lowest (AICc differences "
               f"against it: {others})")
    else:
        why = (f"{pick}: the simplest model within {AICC_MARGIN:g} AICc units of the lowest "
               f"(AICc differences against it: {others or 'none'})")
    return pick, why


def series_start(data, temperature=None) -> tuple[list, list, float]:
    """The notes and warnings a series' reading left, and the fit temperature [K]: the option,
    else the file's temperature column, else 25 degC with a warning; checked against the
    plausible range cases use too."""
    notes = [x for x in data.notes if not x.startswith("warning:")]
    warnings = [x[len("warning: "):] for x in data.notes if x.startswith("warning:")]
    if temperature is None:
        if data.temperature is None:
            temperature = 298.15
            warnings.append("no temperature given (option or column); assumed 25 degC")
        else:
            temperature = data.temperature
    w = plausible.check("--temperature", float(temperature), "temperature")
    if w:
        warnings.append(w)
    return notes, warnings, float(temperature)


def fit_tension(data, *, temperature=None, gibbs_prefactor=1.0, model=None, clean_tension=None,
                bootstrap=0, seed=0) -> TensionFit:
    """Fit the CMC and an isotherm to a tension series.

    Parameters
    ----------
    data : TensionData or str or Path
        The series (a path is read with :func:`read_tension_csv`).
    temperature : float, optional
        [K]; by default the mean of the file's temperature column, else 298.15 K with a warning.
    gibbs_prefactor : float
        n [-] of the Gibbs equation (1 nonionic, 2 a 1:1 ionic without salt), 0.5 to 3.
    model : str, optional
        Force one of :data:`sizing.physics.isotherm.MODELS`; by default the AICc rule picks.
    clean_tension : float, optional
        gamma0 [N/m] held fixed; fitted when None.
    bootstrap : int
        Number of residual-bootstrap resamples of the model used (0 = none), fitted together in
        one batched solve.
    seed : int
        Seed of the bootstrap.

    Returns
    -------
    TensionFit

    Raises
    ------
    InputError
        Bad data (see :func:`read_tension_csv`), fewer than 4 distinct concentrations, too few
        points below (< 4) or above (< 2) the fitted CMC, no plateau in the data, a bad option.
    CalculationError
        No start of the least-squares fit ends on finite residuals (a numeric failure).

    Notes
    -----
    Model: ``gamma = gamma0 - Pi(min(c, cmc))`` (:func:`model_tension`).  The fit runs on the
    distinct concentrations, replicates weighted by their count (the same least-squares problem
    as on every row, so time grows with the distinct concentrations, not the rows).  ``gamma0``,
    ``ln Gamma_inf``, ``ln K``, Frumkin ``beta`` and ``log10 cmc`` are fitted together: at most
    :data:`MAX_STARTS` breakpoint starts spread over the gaps between concentrations run as one
    batched Levenberg-Marquardt fit, the best :data:`POLISHED` are polished by
    ``scipy.optimize.least_squares`` with the analytic Jacobian of the Gibbs equation
    (``dPi/dln(K c) = n R T Gamma_inf theta``) [4].  Standard errors from
    ``cov = s**2 (J^T J)^-1``; the 95 % intervals of the model used are profile-likelihood
    intervals (Student's t on ``n - p`` degrees of freedom), which keep their coverage where the
    data constrain the parameters loosely and linearisation does not [2]; the linearised ones
    are kept in ``ModelFit.linearised``.  Models compared by AICc (:func:`select_model`) [3];
    optional residual bootstrap, all resamples in one batched fit [5].  Valid for a single
    surfactant below and at its CMC, equilibrium tensions, the Gibbs prefactor given.

    Examples
    --------

    >>> import numpy as np
    >>> c = np.logspace(-3, 0, 12)  # mol/m**3, noise-free Langmuir series with a CMC of 0.065
    >>> g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, 298.15)
    >>> fit = fit_tension(TensionData("s.csv", c, g, 298.15, {}, ()), model="langmuir")
    >>> {k: round(v, 9) for k, v in fit.best.params.items()}  # the generator back
    {'clean_tension': 0.052, 'max_surface_excess': 3.3e-06, 'adsorption_constant': 850.0, 'interaction': 0.0, 'cmc': 0.065}

    References
    ----------
    1. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 (the equation of state) [from memory].
    2. Bates, D. M. and Watts, D. G., Nonlinear Regression Analysis and Its Applications, Wiley
       (1988), ch. 2 and sec. 6.1 (covariance ``s**2 (J^T J)^-1``, t-intervals, profile t)
       [from memory].
    3. Burnham, K. P. and Anderson, D. R., Model Selection and Multimodel Inference, 2nd ed.,
       Springer (2002): AICc and the "within 2 units" rule of thumb [from memory].
    4. Muggeo, V. M. R., "Estimating regression models with unknown break-points", Stat. Med. 22
       (2003) 3055-3071, doi:10.1002/sim.1545 [from memory].
    5. Efron, B. and Tibshirani, R. J., An Introduction to the Bootstrap, Chapman and Hall (1993),
       ch. 9 (residual bootstrap) [from memory].
    """
    if not isinstance(data, TensionData):
        data = read_tension_csv(data)
    notes, warnings, temperature = series_start(data, temperature)
    if clean_tension is not None:
        w = plausible.check("--clean-tension", float(clean_tension), "tension")
        if w:
            warnings.append(w)
    n = float(gibbs_prefactor)
    if not (0.5 <= n <= 3.0):
        raise InputError(f"--gibbs-prefactor: expected a number from 1 (nonionic) to 2 (1:1 ionic "
                         f"without salt), got {gibbs_prefactor!r}")
    models = MODELS if model is None else (check_model(model, field="--model"),)
    g0_fixed_mn = None if clean_tension is None else float(clean_tension) * 1e3
    if g0_fixed_mn is not None and g0_fixed_mn < float(np.max(data.tension)) * 1e3 - 0.5:
        warnings.append(f"the clean tension given ({g0_fixed_mn:.4g} mN/m) is below the highest "
                        f"measured tension ({np.max(data.tension) * 1e3:.4g} mN/m)")
    series = _series(data)
    fits, raw = {}, {}
    for m in models:
        starts = None
        if m == "frumkin" and "langmuir" in fits:  # Frumkin nests Langmuir (beta = 0): start there
            starts = _frumkin_starts(data, series, fits["langmuir"], temperature, n, g0_fixed_mn)
        res, names, lo, hi, fun = _fit_model(data, m, temperature, n, g0_fixed_mn, starts=starts,
                                             series=series)
        fits[m] = _summarise(data, m, res, names, lo, hi, fun, temperature, n, g0_fixed_mn,
                             series=series)
        raw[m] = (names, lo, hi)
    if model is None:
        chosen, why = select_model(fits)
    else:
        chosen, why = models[0], f"{models[0]}: chosen with --model"
    best = fits[chosen]
    cmc = best.params["cmc"]
    n_below = int(np.sum(data.concentration < cmc))
    n_above = int(len(data.concentration) - n_below)
    if n_below < MIN_BELOW:
        raise InputError(f"{data.path}: {n_below} points below the fitted CMC ({cmc * 1e3:.4g} uM); "
                         f"expected at least {MIN_BELOW}: measure more dilute solutions")
    if n_above < MIN_ABOVE or "cmc" in best.at_bound:
        raise InputError(
            f"{data.path}: {n_above} point(s) above the fitted CMC ({cmc:.4g} mol/m**3); expected at "
            f"least {MIN_ABOVE} on the plateau: the tension is still falling at the highest "
            "concentration, so measure above the CMC")
    _no_plateau_check(data, best, temperature, n, g0_fixed_mn, series)
    names, lo, hi = raw[chosen]
    intervals, open_ends = _profile(series, best, lo, hi, temperature, n, g0_fixed_mn)
    best = replace(best, intervals={**best.intervals, **intervals}, interval_method="profile likelihood")
    fits[chosen] = best
    for m, f in fits.items():
        bad = [b for b in f.at_bound if b != "cmc"]
        if bad and m == chosen:
            warnings.append(f"{m}: {', '.join(bad)} at the edge of its allowed range; its interval "
                            "is not reliable")
    if open_ends:
        warnings.append(f"{chosen}: the 95 % interval of {', '.join(open_ends)} does not close within "
                        "the allowed range (the data do not bound it); the interval shown stops at "
                        "the edge searched")
    if g0_fixed_mn is None and data.concentration[0] * best.params["adsorption_constant"] > 1.0:
        notes.append("the most dilute point is already well into adsorption (K c > 1); the clean "
                     "tension is an extrapolation: consider fixing it with --clean-tension")
    notes.append(f"{n_below} points below the CMC and {n_above} above; the CMC is a fitted "
                 "breakpoint of tension against log concentration")
    if len(series.u) < series.rows:
        notes.append(f"{series.rows} rows at {len(series.u)} distinct concentrations; replicates are "
                     "fitted as one point each, weighted by their count")
    excess, (ex_lo, ex_hi) = surface_excess_at_cmc(best, float(temperature), n)
    spread = [surface_excess_at_cmc(f, float(temperature), n)[0] for f in fits.values()]
    notes.append(
        f"surface excess at the CMC (the Gibbs slope just below it): {excess * 1e6:.4g} umol/m**2 "
        f"(95 %: {ex_lo * 1e6:.3g} to {ex_hi * 1e6:.3g})"
        + (f", {min(spread) * 1e6:.4g} to {max(spread) * 1e6:.4g} across the models fitted"
           if len(spread) > 1 else "")
        + f"; a coverage target means Gamma/Gamma_inf of the {chosen} model, which reaches "
        f"{excess / best.params['max_surface_excess']:.3g} at the CMC")
    boot = None
    if bootstrap:
        boot = _bootstrap(series, best, names, lo, hi, temperature, n, g0_fixed_mn, int(bootstrap), seed)
    return TensionFit(data, float(temperature), n, None if clean_tension is None else float(clean_tension),
                      fits, chosen, why, n_below, n_above, boot, tuple(notes), tuple(warnings),
                      model is not None)


def _no_plateau_check(data, best, temperature, n, g0_fixed_mn, series=None):
    """Refuse a series whose 'plateau' is no better than the isotherm running on (AICc)."""
    s = _series(data) if series is None else series
    names = _names(best.model, g0_fixed_mn is not None)[:-1]
    lo, hi = _bounds(names + ("log10_cmc",), np.log10(s.u), s.ybar)
    problem = _batch_problem(s, best.model, names, g0_fixed_mn, temperature, n)
    _, cost = _lm(problem, best.x[None, :-1], lo[:-1], hi[:-1], iterations=100)
    npts, m_par = s.rows, len(names) + 1
    rss = max(float(cost[0]) + s.pure, 1e-300)
    aic = npts * math.log(rss * 1e-6 / npts) + 2 * m_par
    aicc = aic + 2 * m_par * (m_par + 1) / max(npts - m_par - 1, 1)
    if aicc <= best.aicc:
        raise InputError(
            f"{data.path}: no CMC in the data: an isotherm without a plateau fits as well as one "
            f"with a break; expected at least {MIN_ABOVE} points on the plateau above the CMC")


def _bootstrap(series, best, names, lo, hi, temperature, n, g0_fixed_mn, count, seed):
    """Return 95 % percentile intervals from a residual bootstrap of the model used.

    Every resample draws one residual per row (inflated by ``sqrt(n/(n - p))``), is averaged per
    distinct concentration and fitted from the estimate; all resamples are one batched fit.
    """
    rng = np.random.default_rng(seed)
    r = best.residuals * 1e3 * math.sqrt(series.rows / max(series.rows - len(names), 1))
    fitted_u = series.ybar + np.bincount(series.inverse, weights=-best.residuals * 1e3,
                                         minlength=len(series.u)) / series.w
    targets = np.empty((count, len(series.u)))
    chunk = max(1, int(2e6 // max(series.rows, 1)))
    starts = np.concatenate([[0], np.cumsum(series.w.astype(int))[:-1]])
    for a in range(0, count, chunk):  # memory bounded: at most about 2e6 draws at a time
        b = min(count, a + chunk)
        draws = rng.choice(r, size=(b - a, series.rows), replace=True)
        sums = np.add.reduceat(draws, starts, axis=1)  # draws are iid: any row order
        targets[a:b] = fitted_u + sums / series.w
    X0 = np.repeat(best.x[None, :], count, axis=0)
    X, cost = _lm(_batch_problem(series, best.model, names, g0_fixed_mn, temperature, n), X0, lo, hi,
                  target=targets, iterations=60)
    X = X[np.isfinite(cost)]
    g0, ginf, k, beta, cmc = _split(X, names, g0_fixed_mn)
    vals = {"clean_tension": np.broadcast_to(np.asarray(g0, float) * 1e-3, (len(X), 1))[:, 0],
            "max_surface_excess": ginf[:, 0], "adsorption_constant": k[:, 0],
            "interaction": np.broadcast_to(np.asarray(beta, float), (len(X), 1))[:, 0], "cmc": cmc[:, 0]}
    a = (1 - CONFIDENCE) / 2 * 100
    return {p: tuple(float(q) for q in np.percentile(vals[p], [a, 100 - a])) for p in PARAMS}


def fitted_curve(fit: TensionFit, model: str | None = None, points: int = 200):
    """Return ``(c [mol/m**3], tension [N/m])`` of a fitted model on a log grid for plots.

    Parameters
    ----------
    fit : TensionFit
    model : str, optional
        One of ``fit.fits``; the model used by default.
    points : int
        Grid size; the grid spans the data widened by 0.3 decades each side.

    Returns
    -------
    (ndarray, ndarray)
        Concentrations [mol/m**3] and tensions [N/m].

    Raises
    ------
    KeyError
        For a model that was not fitted.

    Notes
    -----
    Evaluates :func:`model_tension` with the fitted parameters.

    Examples
    --------

    >>> import numpy as np
    >>> c = np.logspace(-3, 0, 12)  # mol/m**3, noise-free Langmuir series with a CMC of 0.065
    >>> g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, 298.15)
    >>> fit = fit_tension(TensionData("s.csv", c, g, 298.15, {}, ()), model="langmuir")
    >>> gc, gt = fitted_curve(fit, points=5)
    >>> gc.shape, round(float(gt[0]) * 1e3, 9)
    ((5,), 49.096885654)

    References
    ----------
    1. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 [from memory].
    """
    f = fit.fits[model or fit.model]
    c = fit.data.concentration
    grid = np.logspace(math.log10(c[0]) - 0.3, math.log10(c[-1]) + 0.3, points)
    p = f.params
    return grid, model_tension(grid, f.model, p["clean_tension"], p["max_surface_excess"],
                               p["adsorption_constant"], p["cmc"], fit.temperature,
                               fit.gibbs_prefactor, p["interaction"])


def source_name(path) -> str:
    """Return the file name of a data file (for provenance records).

    Parameters
    ----------
    path : str or Path

    Returns
    -------
    str

    Raises
    ------
    None.

    Notes
    -----
    Only the name is recorded, never the folder (it may hold a user's name).

    Examples
    --------
    >>> source_name("lab/x_tension.csv")
    'x_tension.csv'

    References
    ----------
    1. Python documentation, ``pathlib.PurePath.name``.
    """
    return Path(path).name
