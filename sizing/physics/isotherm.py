"""Adsorption isotherms and their equations of state (Langmuir, Frumkin, Volmer).

Coverage ``theta = Gamma / Gamma_inf`` [-] against the free monomer concentration ``c``
[mol/m**3] of the continuous phase, and the surface pressure ``Pi = gamma0 - gamma`` [N/m]:

=========  ===========================================  ==========================================
model      K c                                           Pi / (n R T Gamma_inf)
=========  ===========================================  ==========================================
langmuir   theta / (1 - theta)                           -ln(1 - theta)  (= ln(1 + K c), Szyszkowski)
frumkin    theta / (1 - theta) exp(-2 beta theta)        -ln(1 - theta) - beta theta**2
volmer     theta / (1 - theta) exp(theta / (1 - theta))  theta / (1 - theta)
=========  ===========================================  ==========================================

Each pair satisfies the Gibbs equation ``Gamma = (1/(n R T)) dPi/dln c``; ``n`` is the Gibbs
prefactor (1 for a nonionic or an ionic surfactant in excess salt, 2 for a 1:1 ionic without
salt).  ``beta > 0`` is attraction between adsorbed molecules; above ``beta = 2`` the Frumkin
isotherm has a two-dimensional phase transition and is refused.

All functions take scalars or numpy arrays and broadcast.

References
----------
1. McClements, D. J., Food Emulsions: Principles, Practices and Techniques, 2nd ed., CRC Press
   (2005), ch. 5 (Gibbs equation, prefactor n).
"""

from __future__ import annotations

import numpy as np
from scipy.special import expit, lambertw

from ..constants import AVOGADRO, GAS_CONSTANT
from ..errors import InputError
from .roots import bracketed_newton

MODELS = ("langmuir", "frumkin", "volmer")
CRITICAL_INTERACTION = 2.0  # Frumkin beta at the two-dimensional critical point [-]


def check_model(model: str, beta=0.0, field: str = "surfactant.isotherm") -> str:
    """Return the model name in lower case, or raise naming the valid ones.

    Raises
    ------
    InputError
        For an unknown model, or a Frumkin interaction above the critical value 2.
    """
    name = str(model).strip().lower()
    if name not in MODELS:
        raise InputError(f"{field}: unknown isotherm {model!r}; expected one of {', '.join(MODELS)}")
    b = np.asarray(beta, dtype=float)
    if name == "frumkin" and np.any(b > CRITICAL_INTERACTION):
        raise InputError(
            f"surfactant.interaction: {float(np.max(b))!r} is above 2; a Frumkin interaction "
            "beta > 2 means a two-dimensional phase transition on the interface, where coverage "
            "is not a single-valued function of concentration; expected beta <= 2"
        )
    return name


def logit(theta):
    """Return ``ln(theta / (1 - theta))`` [-], accurate near 0 and 1."""
    theta = np.asarray(theta, dtype=float)
    with np.errstate(divide="ignore"):
        return np.log(theta) - np.log1p(-theta)


def lnkc_of_logit(y, model: str, beta=0.0):
    """Return ``ln(K c)`` and its derivative with respect to ``y = logit(theta)``.

    This is the explicit direction of every model, smooth over the whole real line, which
    makes it the natural variable of the mass-balance root.
    """
    y = np.asarray(y, dtype=float)
    if model == "langmuir":
        return y, np.ones_like(y)
    if model == "frumkin":
        th = expit(y)
        return y - 2.0 * beta * th, 1.0 - 2.0 * beta * th * (1.0 - th)
    if model == "volmer":
        u = np.exp(np.minimum(y, 700.0))
        return y + u, 1.0 + u
    raise InputError(f"surfactant.isotherm: unknown isotherm {model!r}; expected one of {', '.join(MODELS)}")


def c_of_theta(theta, adsorption_constant, model: str = "langmuir", beta=0.0):
    """Return the free monomer concentration [mol/m**3] that gives coverage ``theta`` [-].

    Parameters
    ----------
    theta : float or ndarray
        Coverage, 0 <= theta < 1 [-].
    adsorption_constant : float or ndarray
        K [m**3/mol].
    model : str
        One of :data:`MODELS`.
    beta : float or ndarray
        Frumkin interaction [-] (ignored by the other models).

    Examples
    --------
    >>> float(c_of_theta(0.5, 100.0))
    0.01
    """
    model = check_model(model, beta)
    theta = np.asarray(theta, dtype=float)
    with np.errstate(divide="ignore", over="ignore"):
        lnkc, _ = lnkc_of_logit(logit(theta), model, beta)
        return np.exp(lnkc) / np.asarray(adsorption_constant, dtype=float)


def theta_of_c(c, adsorption_constant, model: str = "langmuir", beta=0.0):
    """Return the coverage [-] in equilibrium with the free concentration ``c`` [mol/m**3].

    Langmuir is explicit; Volmer uses the Lambert W function (``K c = u e**u`` with
    ``u = theta/(1 - theta)``); Frumkin is a bracketed Newton root in ``logit(theta)``,
    vectorised over arrays.  At the Frumkin critical point (beta = 2, theta = 1/2) the slope
    d theta / d c is infinite, so theta there is only good to about 1e-5.

    Examples
    --------
    >>> float(theta_of_c(0.01, 100.0))
    0.5
    """
    model = check_model(model, beta)
    c, k, beta = np.broadcast_arrays(
        np.asarray(c, dtype=float), np.asarray(adsorption_constant, dtype=float),
        np.asarray(beta, dtype=float),
    )
    kc = c * k
    if model == "langmuir":
        return kc / (1.0 + kc)
    if model == "volmer":
        u = lambertw(kc).real
        with np.errstate(invalid="ignore"):
            return np.where(np.isinf(kc), 1.0, u / (1.0 + u))
    # Frumkin: y - 2 beta expit(y) = ln(K c), y in [L + min(0, 2 beta), L + max(0, 2 beta)]
    with np.errstate(divide="ignore"):
        lnkc = np.log(kc)
    out = np.zeros(kc.shape)
    ok = kc > 0
    if np.any(ok):
        L, b = lnkc[ok], beta[ok]
        lo, hi = L + np.minimum(0.0, 2 * b), L + np.maximum(0.0, 2 * b)

        def fdf(y, idx):
            v, d = lnkc_of_logit(y, "frumkin", b[idx])
            return v - L[idx], d

        y = bracketed_newton(fdf, lo - 1e-12, hi + 1e-12, x0=L + 2 * b * expit(L))
        out[ok] = expit(y)
    out[np.isinf(kc)] = 1.0
    return out


def pressure_of_theta(theta, max_surface_excess, temperature, gibbs_prefactor=1.0,
                      model: str = "langmuir", beta=0.0):
    """Return the surface pressure ``Pi = gamma0 - gamma`` [N/m] at coverage ``theta``.

    Parameters
    ----------
    theta : coverage [-]; max_surface_excess : Gamma_inf [mol/m**2]; temperature : [K];
    gibbs_prefactor : n [-]; model : name; beta : Frumkin interaction [-].

    Examples
    --------
    >>> round(float(pressure_of_theta(0.5, 4e-6, 298.15)) * 1e3, 4)  # mN/m
    6.8731
    """
    model = check_model(model, beta)
    theta = np.asarray(theta, dtype=float)
    scale = np.asarray(gibbs_prefactor) * GAS_CONSTANT * np.asarray(temperature) * np.asarray(max_surface_excess)
    with np.errstate(divide="ignore"):
        if model == "langmuir":
            return -scale * np.log1p(-theta)
        if model == "frumkin":
            return -scale * (np.log1p(-theta) + np.asarray(beta) * theta**2)
        return scale * theta / (1.0 - theta)


def theta_of_pressure(pressure, max_surface_excess, temperature, gibbs_prefactor=1.0,
                      model: str = "langmuir", beta=0.0):
    """Return the coverage [-] that lowers the tension by ``pressure`` [N/m].

    Explicit for Langmuir and Volmer; a bracketed Newton root for Frumkin (monotone for
    beta <= 2).
    """
    model = check_model(model, beta)
    scale = np.asarray(gibbs_prefactor) * GAS_CONSTANT * np.asarray(temperature) * np.asarray(max_surface_excess)
    p = np.asarray(pressure, dtype=float) / scale
    if model == "langmuir":
        return -np.expm1(-p)
    if model == "volmer":
        return p / (1.0 + p)
    p, b = np.broadcast_arrays(p, np.asarray(beta, dtype=float))
    p, b = p.ravel(), b.ravel()

    # g(theta) = -ln(1 - theta) - beta theta**2 - p, increasing on [0, 1) for beta <= 2
    def fdf(t, idx):
        bb = b[idx]
        return -np.log1p(-t) - bb * t * t - p[idx], 1.0 / (1.0 - t) - 2.0 * bb * t

    # bracket: -ln(1-t) lies between p and p + max(beta, 0)
    lo = np.where(p > 0, -np.expm1(-np.maximum(p + np.minimum(b, 0), 0.0)), 0.0)
    hi = -np.expm1(-(np.maximum(p, 0) + np.maximum(b, 0.0)))
    theta = bracketed_newton(fdf, lo, np.minimum(hi, 1 - 1e-16), x0=-np.expm1(-np.maximum(p, 0)))
    return np.where(p <= 0, 0.0, theta).reshape(np.broadcast(np.asarray(pressure), np.asarray(beta)).shape)


def surface_excess_from_area(area_per_molecule):
    """Return Gamma_inf [mol/m**2] from the minimum area per molecule [m**2].

    >>> round(float(surface_excess_from_area(0.5e-18)) * 1e6, 4)
    3.3211
    """
    return 1.0 / (AVOGADRO * np.asarray(area_per_molecule, dtype=float))


def area_from_surface_excess(max_surface_excess):
    """Return the area per molecule [m**2] of a maximum surface excess [mol/m**2]."""
    return 1.0 / (AVOGADRO * np.asarray(max_surface_excess, dtype=float))
