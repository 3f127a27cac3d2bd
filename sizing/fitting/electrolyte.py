"""An electrolyte's tension series: the tension increment and the negative surface excess.

An inorganic salt raises the tension of water almost linearly with its concentration; the ions
are depleted near the interface.  Fitting ``gamma(c) = gamma0 + k c`` by least squares (rows
weighted equally, the intercept fitted or held at a given clean tension) gives the tension
increment ``k = d gamma / d c`` with a Student-t interval, and the Gibbs equation gives the
surface excess at each concentration (ideal solution, activity = concentration)::

    Gamma(c) = -(c / (n R T)) d gamma / d c = -c k / (n R T)       (n = 2 for a 1:1 salt)

negative, and the thickness of the depleted layer ``delta = -Gamma / c = k / (n R T)``, the same
at every concentration of a linear series.  The sign is the point: the mass balance that finds a
surfactant's positive excess finds the salt's negative one (:mod:`sizing.fitting.depletion`).

References
----------
1. Weissenborn, P. K. and Pugh, R. J., "Surface tension of aqueous solutions of electrolytes:
   relationship with ion hydration, oxygen solubility, and bubble coalescence", J. Colloid
   Interface Sci. 184 (1996) 550-563, doi:10.1006/jcis.1996.0651 (tension increments of salts;
   NaCl about 1.64 mN/m per mol/L at 25 degC [from memory]).
2. Adamson, A. W. and Gast, A. P., Physical Chemistry of Surfaces, 6th ed., Wiley (1997),
   sec. III-5 (the Gibbs equation for a 1:1 electrolyte, n = 2; negative adsorption of salts)
   [from memory].
3. Draper, N. R. and Smith, H., Applied Regression Analysis, 3rd ed., Wiley (1998), ch. 1 and 3
   (straight-line least squares, t-intervals of slope and intercept, of the mean response)
   [from memory].
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.special import stdtrit  # Student t quantile, stdtrit(dof, q) = scipy.stats.t.ppf(q, dof)

from ..constants import GAS_CONSTANT
from ..errors import InputError
from .tension import series_start

CONFIDENCE = 0.95
MIN_CONCENTRATIONS = 3  # distinct concentrations for a line with an interval (common practice)
RISE_T = 3.0  # a slope this many standard errors above zero is a rising series


@dataclass(frozen=True)
class ElectrolyteFit:
    """Hold a straight-line fit of an electrolyte's tension series (SI values, 95 % intervals).

    Attributes
    ----------
    path : str
        The file read.
    concentration : ndarray
        Distinct concentrations of the series [mol/m**3], ascending.
    mean_tension : ndarray
        Mean measured tension at each of them [N/m].
    counts : ndarray
        Rows at each concentration.
    tension_increment, tension_increment_interval : float, tuple
        k = d gamma / d c [N/m per mol/m**3] and its interval.
    clean_tension, clean_tension_interval : float, tuple
        gamma0 [N/m], fitted or held (then the interval is the value twice).
    clean_tension_fixed : bool
    surface_excess, surface_excess_interval : ndarray, ndarray
        Gamma at each distinct concentration [mol/m**2] and its interval (shape (n, 2)).
    depletion_thickness, depletion_thickness_interval : float, tuple
        -Gamma/c = k/(n R T) [m] and its interval.
    temperature : float
        [K].
    gibbs_prefactor : float
        n [-] of the Gibbs equation.
    residuals : ndarray
        Measured minus fitted tension per row [N/m], in the file's (sorted) row order.
    dof : int
        Degrees of freedom of the residual variance.
    notes, warnings : tuple of str
    """

    path: str
    concentration: np.ndarray
    mean_tension: np.ndarray
    counts: np.ndarray
    tension_increment: float
    tension_increment_interval: tuple
    tension_increment_se: float
    clean_tension: float
    clean_tension_interval: tuple
    clean_tension_fixed: bool
    surface_excess: np.ndarray
    surface_excess_interval: np.ndarray
    depletion_thickness: float
    depletion_thickness_interval: tuple
    temperature: float
    gibbs_prefactor: float
    residuals: np.ndarray
    dof: int
    notes: tuple = ()
    warnings: tuple = ()


def _line(c, g, g0=None):
    """Least-squares line ``g = a + k c`` (``a`` held at ``g0`` when given): a, k, se_a, se_k, dof,
    residuals.  Closed form of the normal equations (Draper and Smith, ch. 1)."""
    c = np.asarray(c, dtype=float)
    g = np.asarray(g, dtype=float)
    n = c.size
    if g0 is None:
        cm = c.mean()
        sxx = float(np.sum((c - cm) ** 2))
        k = float(np.sum((c - cm) * (g - g.mean())) / sxx)
        a = float(g.mean() - k * cm)
        r = g - (a + k * c)
        dof = n - 2
        s2 = float(np.sum(r * r) / dof) if dof > 0 else math.nan
        return a, k, math.sqrt(s2 * (1.0 / n + cm * cm / sxx)), math.sqrt(s2 / sxx), dof, r
    y = g - g0
    scc = float(np.sum(c * c))
    k = float(np.sum(c * y) / scc)
    r = y - k * c
    dof = n - 1
    s2 = float(np.sum(r * r) / dof) if dof > 0 else math.nan
    return float(g0), k, 0.0, math.sqrt(s2 / scc), dof, r


def rises_with_concentration(concentration, tension) -> bool:
    """True when the tension rises with concentration (slope > 0 by more than 3 standard errors).

    A surfactant's series falls (or stays flat on its plateau); a rising series is an electrolyte
    or another negatively adsorbed solute, which an isotherm cannot fit.

    Examples
    --------
    >>> c = np.array([0.0, 250.0, 500.0, 1000.0, 1500.0, 2000.0])
    >>> rises_with_concentration(c, 0.07197 + 1.64e-6 * c + 1e-5 * np.array([1, -1, 1, -1, 1, -1]))
    True
    >>> rises_with_concentration(c, 0.07 - 1e-6 * c)
    False
    """
    c = np.asarray(concentration, dtype=float)
    g = np.asarray(tension, dtype=float)
    if np.unique(c).size < MIN_CONCENTRATIONS:
        return False
    _, k, _, se_k, dof, _ = _line(c, g)
    if dof <= 0 or not math.isfinite(se_k):
        return False
    return bool(k > 0 and (se_k == 0 or k / se_k > RISE_T))


def fit_electrolyte(data, *, temperature=None, gibbs_prefactor=2.0, clean_tension=None) -> ElectrolyteFit:
    """Fit the tension increment of an electrolyte and its (negative) surface excess.

    Parameters
    ----------
    data : TensionData
        The series (:func:`sizing.fitting.tension.read_tension_csv` with ``allow_zero=True``, so a
        salt-free blank row at 0 is welcome).
    temperature : float, optional
        [K]; by default the file's temperature column, else 298.15 K with a warning.
    gibbs_prefactor : float
        n [-] of the Gibbs equation: 2 for a 1:1 salt (default), 3 for a 2:1 salt such as
        CaCl2 in the ideal limit; 1 to 3 accepted.
    clean_tension : float, optional
        gamma0 [N/m] held fixed (for instance the IAPWS water value); fitted when None.

    Returns
    -------
    ElectrolyteFit

    Raises
    ------
    InputError
        Fewer than three distinct concentrations, a prefactor outside 1..3, a series whose
        tension does not rise (not an electrolyte: fit it as a surfactant).

    Examples
    --------
    >>> from sizing.fitting.tension import TensionData
    >>> c = np.array([0.0, 500.0, 1000.0, 1500.0, 2000.0, 2500.0])
    >>> f = fit_electrolyte(TensionData("salt.csv", c, 0.07197 + 1.64e-6 * c, 298.15, {}))
    >>> round(f.tension_increment * 1e6, 9), round(float(f.surface_excess[2]) * 1e7, 3)
    (1.64, -3.308)
    >>> round(f.depletion_thickness * 1e9, 4)  # nm
    0.3308
    """
    c = np.asarray(data.concentration, dtype=float)
    g = np.asarray(data.tension, dtype=float)
    notes, warnings, temperature = series_start(data, temperature)
    n = float(gibbs_prefactor)
    if not (1.0 <= n <= 3.0):
        raise InputError(f"--gibbs-prefactor: expected 2 for a 1:1 salt (1 to 3 accepted), got {gibbs_prefactor!r}")
    u, inv, counts = np.unique(c, return_inverse=True, return_counts=True)
    if u.size < MIN_CONCENTRATIONS:
        raise InputError(f"{data.path}: {u.size} distinct concentration(s); expected at least "
                         f"{MIN_CONCENTRATIONS} for a tension increment with an interval")
    g0 = None if clean_tension is None else float(clean_tension)
    a, k, se_a, se_k, dof, r = _line(c, g, g0)
    if not k > 0:
        raise InputError(f"{data.path}: the tension does not rise with concentration (slope "
                         f"{k * 1e6:.3g} mN/m per mol/L); expected an electrolyte's rising series; "
                         "fit a surfactant without --electrolyte")
    if dof < 1:
        raise InputError(f"{data.path}: {c.size} rows leave no degree of freedom for the residual "
                         "scatter; expected at least one row more than fitted parameters")
    t = float(stdtrit(dof, 0.5 + CONFIDENCE / 2))
    k_lo, k_hi = k - t * se_k, k + t * se_k
    if k_lo <= 0:
        warnings.append(f"the {CONFIDENCE:.0%} interval of the tension increment reaches zero: the "
                        "data do not show the rise clearly (more concentrations or replicates help)")
    nrt = n * GAS_CONSTANT * float(temperature)
    excess = -u * k / nrt + 0.0  # + 0.0: no "-0" at the salt-free blank
    excess_iv = np.column_stack([-u * k_hi / nrt, -u * k_lo / nrt])
    if g0 is None and not rises_with_concentration(c, g):
        warnings.append(f"the rise of the tension is within {RISE_T:g} standard errors of zero")
    mean_g = np.bincount(inv, weights=g, minlength=u.size) / counts
    notes.append("Gibbs equation for an ideal solution (activity = concentration); at high salt "
                 "the activity coefficient's slope adds a few percent (Adamson and Gast, sec. III-5)")
    return ElectrolyteFit(
        path=data.path, concentration=u, mean_tension=mean_g, counts=counts,
        tension_increment=k, tension_increment_interval=(k_lo, k_hi), tension_increment_se=se_k,
        clean_tension=a,
        clean_tension_interval=(a, a) if g0 is not None else (a - t * se_a, a + t * se_a),
        clean_tension_fixed=g0 is not None,
        surface_excess=excess, surface_excess_interval=excess_iv,
        depletion_thickness=k / nrt, depletion_thickness_interval=(k_lo / nrt, k_hi / nrt),
        temperature=float(temperature), gibbs_prefactor=n, residuals=np.asarray(r, dtype=float),
        dof=int(dof), notes=tuple(notes), warnings=tuple(warnings))
