"""Drop-size correlations for scale-up: a calibrated power law and stirred-tank Weber rules.

Two methods, chosen by name (``[scaleup] method``):

- ``power_law``: ``d32 = C X**b`` with X the homogenising pressure [Pa], the energy density
  [J/m**3] or the rotor tip speed [m/s] (given directly or as a speed and a diameter,
  ``v = pi N D``).  C and b are fitted by least squares in log space (the formulas of ``scipy.stats.linregress``)
  from two or more lab points, with 95 % intervals; with one point (or an exponent fixed in the
  case) only C is fitted and b is a default (:data:`DEFAULT_EXPONENTS`), marked as such.
- ``stirred_tank``: the Weber-number correlation ``d32/D = C1 (1 + C2 phi) We**a``,
  ``We = rho_c N**2 D**3 / sigma``, ``a = -0.6`` (Chen and Middleman 1967).  Calibrated on the
  lab vessel (its d32 is the case's ``[drops]`` size), so C1, C2, rho_c and sigma cancel for
  geometrically similar vessels and the same fluids::

      d32_plant / d32_lab = (D_p/D_l) (We_p/We_l)**a,   We_p/We_l = (N_p/N_l)**2 (D_p/D_l)**3.

  Rules: constant power per volume (``N**3 D**2`` kept, d32 unchanged at a = -0.6), constant
  tip speed (``N D`` kept, d32 grows as D**0.4), constant speed, or a given plant speed.

Every result carries a band: a 95 % prediction interval when the lab points allow one, else
the spread of the prediction over an exponent window (:data:`EXPONENT_WINDOWS`), said so in
``band_method``.  Extrapolation beyond the lab range is flagged, never clamped.

References
----------
1. Chen, H. T. and Middleman, S., AIChE J. 13 (1967) 989 (stirred-tank drop size) [from memory].
2. Published ranges for high-pressure homogenisers: d32 ~ p**-0.6, exponents
   -0.6 to -0.9 reported [from memory].
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError


def stdtrit(dof, q):
    """Student t quantile, ``scipy.special.stdtrit`` (= scipy.stats.t.ppf(q, dof)), imported when a band is
    asked for: scipy.special costs about 0.2 s of every command's start-up."""
    from scipy.special import stdtrit as _stdtrit  # deferred: slow to import, only prediction bands need it

    return _stdtrit(dof, q)

VARIABLES = ("pressure", "energy_density", "tip_speed")
RULES = ("constant_power_per_volume", "constant_tip_speed", "constant_speed", "given_speed")

# default exponent b of d32 = C X**b, and where it comes from
DEFAULT_EXPONENTS = {
    "pressure": (-0.6, "homogeniser d32 ~ p**-0.6, turbulent-inertial regime [from memory]"),
    "energy_density": (-0.6, "d32 ~ E_V**-0.6, as for pressure (a valve homogeniser's E_V is about its "
                             "pressure drop, common practice) [from memory]"),
    "tip_speed": (-1.2, "We**-0.6 at fixed geometry gives d32 ~ (N D)**-1.2 (Chen and Middleman 1967) "
                        "[derived from a from-memory exponent]"),
}
# exponent window used for a band when the lab points give no scatter estimate
EXPONENT_WINDOWS = {
    "pressure": (-0.9, -0.6, "reported exponents -0.6 to -0.9 [from memory]"),
    "energy_density": (-0.9, -0.6, "reported exponents -0.6 to -0.9 [from memory]"),
    "tip_speed": (-1.5, -0.9, "assumed window -1.2 +- 0.3 (no source; a plausibility range)"),
}
WEBER_WINDOW = 0.1  # +- on the Weber exponent for the stirred-tank band (assumption, no source)
UNITS = {"pressure": "Pa", "energy_density": "J/m**3", "tip_speed": "m/s"}


# ---------------------------------------------------------------------------------------------
# power law


@dataclass(frozen=True)
class PowerLawFit:
    """Hold a fitted ``d32 = C X**b``.

    Attributes
    ----------
    prefactor : float
        C [m / X_unit**b].
    exponent : float
        b [-].
    prefactor_interval, exponent_interval : tuple or None
        95 % intervals (None where not estimable).
    exponent_is_default : bool
        b was not fitted (one point) and is the variable's default.
    exponent_source : str
        Where b comes from.
    n_points, dof : int
        Number of lab points and residual degrees of freedom.
    residual_sd_ln : float
        Standard deviation of the ln d32 residuals [-] (nan when dof = 0).
    x_range : (float, float)
        (min, max) of the lab X [SI of the variable].
    variable : str
        ``pressure`` [Pa], ``energy_density`` [J/m**3] or ``tip_speed`` [m/s].

    Examples
    --------
    >>> fit_power_law([5e7], [2e-6]).exponent_is_default
    True

    References
    ----------
    1. Walstra, P., "Principles of emulsion formation", Chem. Eng. Sci. 48 (1993) 333-349,
       doi:10.1016/0009-2509(93)80021-H (d32 against homogenising pressure, exponents about
       -0.6 to -0.9) [from memory].
    2. Montgomery, D. C. and Runger, G. C., Applied Statistics and Probability for Engineers,
       Wiley, ch. 11 (simple linear regression: t-intervals and prediction intervals)
       [from memory].
    """

    prefactor: float
    exponent: float
    prefactor_interval: tuple | None
    exponent_interval: tuple | None
    exponent_is_default: bool
    exponent_source: str
    n_points: int
    dof: int
    residual_sd_ln: float
    x_range: tuple
    variable: str = ""
    _lnx: np.ndarray = field(default=None, repr=False, compare=False)
    _fixed: bool = False


def _linregress(x: np.ndarray, y: np.ndarray) -> tuple[float, float, float, float]:
    """Return slope, intercept and their standard errors of ``y = a + b x`` (ordinary least squares).

    The formulas and their order are those of ``scipy.stats.linregress`` (same numbers to the last
    bit), written out so the solve path does not import ``scipy.stats``.  Two points give zero
    standard errors; x all equal raises ValueError, as there.
    """
    if np.amax(x) == np.amin(x) and len(x) > 1:
        raise ValueError("Cannot calculate a linear regression if all x values are identical")
    n = len(x)
    xmean, ymean = np.mean(x, None), np.mean(y, None)
    ssxm, ssxym, _, ssym = np.cov(x, y, bias=1).flat
    if ssxm == 0.0 or ssym == 0.0:
        r = np.asarray(np.nan if ssxym == 0 else 0.0)[()]
    else:
        r = min(max(ssxym / np.sqrt(ssxm * ssym), -1.0), 1.0)
    slope = ssxym / ssxm
    intercept = ymean - slope * xmean
    if n == 2:
        return float(slope), float(intercept), 0.0, 0.0
    slope_se = np.sqrt((1 - r**2) * ssym / ssxm / (n - 2))
    return float(slope), float(intercept), float(slope_se), float(slope_se * np.sqrt(ssxm + xmean**2))


def fit_power_law(x, d32, exponent=None, variable: str = "pressure") -> PowerLawFit:
    """Fit ``d32 = C X**b`` in log space, with 95 % intervals.

    Parameters
    ----------
    x : array_like
        Process variable of each lab point [Pa, J/m**3 or m/s, per ``variable``].
    d32 : array_like
        Sauter mean diameter of each lab point [m].
    exponent : float, optional
        b [-] to hold fixed; None fits it (two or more points) or takes the default of
        ``variable`` (one point).
    variable : str
        ``"pressure"``, ``"energy_density"`` or ``"tip_speed"`` (chooses the default exponent).

    Returns
    -------
    PowerLawFit

    Raises
    ------
    InputError
        Non-positive values, or a mismatch between X and d32.

    Notes
    -----
    ``ln d32 = ln C + b ln X`` by ordinary least squares (the formulas of ``scipy.stats.linregress``); with the
    exponent fixed, ``ln C`` is the mean of ``ln d32 - b ln X``.  Intervals use Student's t with
    the residual degrees of freedom (n - 2, or n - 1 with b fixed) [2].  Valid inside the lab
    range of X and one homogeniser type; homogenisers report b from -0.6 to -0.9 [1].

    Examples
    --------
    >>> f = fit_power_law([1e7, 4e7, 1.6e8], [4e-6, 1.74110112659e-6, 7.5785828326e-7])
    >>> round(f.exponent, 9), f.exponent_is_default
    (-0.6, False)

    References
    ----------
    1. Walstra, P., "Principles of emulsion formation", Chem. Eng. Sci. 48 (1993) 333-349,
       doi:10.1016/0009-2509(93)80021-H (d32 against homogenising pressure, exponents about
       -0.6 to -0.9) [from memory].
    2. Montgomery, D. C. and Runger, G. C., Applied Statistics and Probability for Engineers,
       Wiley, ch. 11 (simple linear regression: t-intervals and prediction intervals)
       [from memory].
    """
    x = np.asarray(x, dtype=float).ravel()
    d = np.asarray(d32, dtype=float).ravel()
    if x.size != d.size or x.size == 0:
        raise InputError("scaleup.points: expected one or more lab points, each with X and d32")
    if np.any(x <= 0) or np.any(d <= 0):
        raise InputError("scaleup.points: expected positive process variables and d32 values")
    lx, ld = np.log(x), np.log(d)
    n = x.size
    t975 = None
    if exponent is None and n >= 2:
        b, a, b_se, a_se = _linregress(lx, ld)
        dof = n - 2
        resid = ld - (a + b * lx)
        s = math.sqrt(float(resid @ resid) / dof) if dof > 0 else math.nan
        b_int = a_int = None
        if dof > 0:
            t975 = stdtrit(dof, 0.975)
            b_int = (b - t975 * b_se, b + t975 * b_se)
            a_int = (a - t975 * a_se, a + t975 * a_se)
        return PowerLawFit(
            prefactor=math.exp(a), exponent=b,
            prefactor_interval=(math.exp(a_int[0]), math.exp(a_int[1])) if a_int else None,
            exponent_interval=b_int, exponent_is_default=False,
            exponent_source=f"fitted to {n} lab points", n_points=n, dof=dof, residual_sd_ln=s,
            x_range=(float(x.min()), float(x.max())), variable=variable, _lnx=lx,
        )
    if exponent is None:
        b, source = DEFAULT_EXPONENTS[variable]
        is_default, fixed = True, False
    else:
        b, source = float(exponent), "fixed in the case (scaleup.exponent)"
        is_default, fixed = False, True
    a_each = ld - b * lx
    a = float(a_each.mean())
    dof = n - 1
    s = float(a_each.std(ddof=1)) if dof > 0 else math.nan
    a_int = None
    if dof > 0:
        t975 = stdtrit(dof, 0.975)
        half = t975 * s / math.sqrt(n)
        a_int = (math.exp(a - half), math.exp(a + half))
    return PowerLawFit(
        prefactor=math.exp(a), exponent=b, prefactor_interval=a_int, exponent_interval=None,
        exponent_is_default=is_default, exponent_source=source, n_points=n, dof=dof, residual_sd_ln=s,
        x_range=(float(x.min()), float(x.max())), variable=variable, _lnx=lx, _fixed=fixed,
    )


def predict_power_law(fit: PowerLawFit, x):
    """Return ``(d32, lo, hi, band_method)`` at X (arrays broadcast over ``x``).

    Parameters
    ----------
    fit : PowerLawFit
    x : float or ndarray
        Process variable at the plant [SI of ``fit.variable``].

    Returns
    -------
    (ndarray, ndarray, ndarray, str)
        d32, the low and high ends of its band [m], and how the band was made.

    Raises
    ------
    None.

    Notes
    -----
    The band is the 95 % prediction interval of ln d32,
    ``t s sqrt(1 + 1/n + (ln X - mean ln X)**2 / Sxx)``, when the residuals give a scatter
    (``dof > 0``) [2]; else the predictions over the exponent window of the variable, pivoting
    on the lab point nearest in ln X, together with the fitted prediction [1].

    Examples
    --------
    >>> d, lo, hi, how = predict_power_law(fit_power_law([5e7], [2e-6]), 1e8)  # b = -0.6 default
    >>> round(float(d) * 1e6, 12), round(float(lo) * 1e6, 12)  # window down to b = -0.9
    (1.319507910773, 1.071773462536)

    References
    ----------
    1. Walstra, P., "Principles of emulsion formation", Chem. Eng. Sci. 48 (1993) 333-349,
       doi:10.1016/0009-2509(93)80021-H (d32 against homogenising pressure, exponents about
       -0.6 to -0.9) [from memory].
    2. Montgomery, D. C. and Runger, G. C., Applied Statistics and Probability for Engineers,
       Wiley, ch. 11 (simple linear regression: t-intervals and prediction intervals)
       [from memory].
    """
    x = np.asarray(x, dtype=float)
    lx = np.log(x)
    d = fit.prefactor * x ** fit.exponent
    if fit.dof > 0 and math.isfinite(fit.residual_sd_ln):
        t975 = stdtrit(fit.dof, 0.975)
        n, lxs = fit.n_points, fit._lnx
        if fit.exponent_interval is not None:  # both fitted
            sxx = float(((lxs - lxs.mean()) ** 2).sum())
            se = fit.residual_sd_ln * np.sqrt(1 + 1 / n + (lx - lxs.mean()) ** 2 / sxx)
        else:  # b held: only ln C uncertain
            se = fit.residual_sd_ln * math.sqrt(1 + 1 / n) + 0 * lx
        return d, d * np.exp(-t975 * se), d * np.exp(t975 * se), (
            f"95 % prediction interval (Student t, {fit.dof} degrees of freedom)")
    lo_b, hi_b, src = EXPONENT_WINDOWS[fit.variable]
    # pivot: the lab point nearest in ln X (the fitted line passes through it when dof = 0)
    lxs = fit._lnx
    idx = np.argmin(np.abs(lx[..., None] - lxs), axis=-1) if lx.ndim else int(np.argmin(np.abs(lx - lxs)))
    lx0 = lxs[idx]
    d0 = fit.prefactor * np.exp(fit.exponent * lx0)
    cands = [d, d0 * np.exp(lo_b * (lx - lx0)), d0 * np.exp(hi_b * (lx - lx0))]
    return d, np.minimum.reduce(cands), np.maximum.reduce(cands), (
        f"exponent window {lo_b:g} to {hi_b:g} around the nearest lab point ({src}); "
        "no scatter estimate from the lab points")


# ---------------------------------------------------------------------------------------------
# stirred tank


def stirred_tank_speed(lab_diameter, lab_speed, plant_diameter, rule: str, plant_speed=None):
    """Return the plant impeller speed N_p [1/s] under a geometric scale-up rule.

    Parameters
    ----------
    lab_diameter, plant_diameter : float or ndarray
        Impeller diameters D_l, D_p [m].
    lab_speed : float or ndarray
        N_l [1/s].
    rule : str
        One of :data:`RULES`.
    plant_speed : float or ndarray, optional
        N_p [1/s] for ``rule = "given_speed"``.

    Returns
    -------
    ndarray
        N_p [1/s].

    Raises
    ------
    InputError
        For an unknown rule, or ``given_speed`` without a plant speed.

    Notes
    -----
    Geometric similarity, turbulent regime (power number constant): power per volume
    ``P/V ~ N**3 D**2``; tip speed ``pi N D``.  So constant P/V gives ``N_p = N_l (D_l/D_p)**(2/3)``,
    constant tip speed ``N_p = N_l D_l/D_p``, constant speed ``N_p = N_l`` [2; common practice].

    Examples
    --------
    >>> round(float(stirred_tank_speed(0.1, 10.0, 0.8, "constant_tip_speed")), 12)
    1.25

    References
    ----------
    1. Chen, H. T. and Middleman, S., "Drop size distribution in agitated liquid-liquid systems",
       AIChE J. 13 (1967) 989-995, doi:10.1002/aic.690130529 [from memory].
    2. Paul, E. L., Atiemo-Obeng, V. A. and Kresta, S. M. (eds.), Handbook of Industrial Mixing,
       Wiley (2004), ch. 12 (scale-up of liquid-liquid dispersions) [from memory].
    """
    d_l, n_l, d_p = (np.asarray(v, dtype=float) for v in (lab_diameter, lab_speed, plant_diameter))
    if rule == "constant_power_per_volume":
        return n_l * (d_l / d_p) ** (2.0 / 3.0)
    if rule == "constant_tip_speed":
        return n_l * d_l / d_p
    if rule == "constant_speed":
        return n_l + 0 * d_p
    if rule == "given_speed":
        if plant_speed is None:
            raise InputError("scaleup.plant_speed: rule = 'given_speed' needs the plant speed (e.g. '90 rpm')")
        return np.asarray(plant_speed, dtype=float) + 0 * d_p
    raise InputError(f"scaleup.rule: unknown rule {rule!r}; expected one of {', '.join(RULES)}")


def stirred_tank_ratio(lab_diameter, lab_speed, plant_diameter, plant_speed, weber_exponent=-0.6):
    """Return d32_plant / d32_lab [-] for geometrically similar stirred tanks.

    Parameters
    ----------
    lab_diameter, plant_diameter : float or ndarray
        Impeller diameters D_l, D_p [m].
    lab_speed, plant_speed : float or ndarray
        N_l, N_p [1/s].
    weber_exponent : float or ndarray
        a [-], -0.6 for the inertial break-up regime.

    Returns
    -------
    ndarray
        d32_plant / d32_lab [-].

    Raises
    ------
    None.

    Notes
    -----
    ``d32/D = C1 (1 + C2 phi) We**a``, ``We = rho_c N**2 D**3/sigma``, a = -0.6 [1]; same fluids
    and phi, so ``ratio = (D_p/D_l) ((N_p/N_l)**2 (D_p/D_l)**3)**a``.  Valid for dilute to
    moderate phi in the turbulent regime, break-up limited (not coalescence).

    Examples
    --------
    >>> n_p = stirred_tank_speed(0.1, 10.0, 0.8, "constant_power_per_volume")
    >>> round(float(stirred_tank_ratio(0.1, 10.0, 0.8, n_p)), 12)
    1.0
    >>> round(float(stirred_tank_ratio(0.1, 10.0, 0.8, 1.25)), 12)  # constant tip speed: 8**0.4
    2.297396709994

    References
    ----------
    1. Chen, H. T. and Middleman, S., "Drop size distribution in agitated liquid-liquid systems",
       AIChE J. 13 (1967) 989-995, doi:10.1002/aic.690130529 [from memory].
    2. Paul, E. L., Atiemo-Obeng, V. A. and Kresta, S. M. (eds.), Handbook of Industrial Mixing,
       Wiley (2004), ch. 12 (scale-up of liquid-liquid dispersions) [from memory].
    """
    d_l, n_l, d_p, n_p, a = (np.asarray(v, dtype=float)
                             for v in (lab_diameter, lab_speed, plant_diameter, plant_speed, weber_exponent))
    we_ratio = (n_p / n_l) ** 2 * (d_p / d_l) ** 3
    return (d_p / d_l) * we_ratio ** a
