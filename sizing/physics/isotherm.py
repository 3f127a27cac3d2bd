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

from ..constants import AVOGADRO, GAS_CONSTANT
from ..errors import InputError
from .roots import bracketed_newton
from .special import expit

MODELS = ("langmuir", "frumkin", "volmer")
CRITICAL_INTERACTION = 2.0  # Frumkin beta at the two-dimensional critical point [-]


def check_model(model: str, beta=0.0, field: str = "surfactant.isotherm") -> str:
    """Return the isotherm name in lower case, or raise naming the valid ones.

    Parameters
    ----------
    model : str
        Isotherm name, one of :data:`MODELS` (case and surrounding spaces ignored).
    beta : float or ndarray, optional
        Frumkin interaction [-]; checked only for ``"frumkin"``.
    field : str, optional
        Name of the input, used in the message (a case path or a CLI option).

    Returns
    -------
    str
        The model name, lower case.

    Raises
    ------
    InputError
        For an unknown model, or a Frumkin interaction above the critical value 2.

    Notes
    -----
    The Frumkin isotherm ``K c = theta/(1 - theta) exp(-2 beta theta)`` is single-valued in
    theta only for ``beta <= 2``; above it the interface has a two-dimensional phase
    transition [1].

    Examples
    --------
    >>> check_model(" Langmuir ")
    'langmuir'

    References
    ----------
    1. Frumkin, A., Z. Phys. Chem. 116 (1925) 466-484 [from memory].
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
    """Return ``y = ln(theta / (1 - theta))`` [-], accurate near 0 and 1.

    Parameters
    ----------
    theta : float or ndarray
        Coverage, 0 <= theta <= 1 [-]; 0 and 1 give -inf and +inf.

    Returns
    -------
    ndarray
        ``ln(theta) - ln1p(-theta)`` [-], same shape as ``theta``.

    Raises
    ------
    None.

    Notes
    -----
    ``y`` is the Langmuir ``ln(K c)`` and the natural variable of every isotherm root here: each
    model gives ``ln(K c)`` explicitly in ``y`` over the whole real line (:func:`lnkc_of_logit`).

    Examples
    --------
    >>> [round(float(v), 12) for v in logit([0.1, 0.5, 0.9])]
    [-2.197224577336, 0.0, 2.197224577336]

    References
    ----------
    1. Langmuir, I., J. Am. Chem. Soc. 40 (1918) 1361-1403, doi:10.1021/ja02242a004 [from memory].
    """
    theta = np.asarray(theta, dtype=float)
    with np.errstate(divide="ignore"):
        return np.log(theta) - np.log1p(-theta)


def lnkc_of_logit(y, model: str, beta=0.0):
    """Return ``ln(K c)`` [-] and its derivative with respect to ``y = logit(theta)``.

    Parameters
    ----------
    y : float or ndarray
        ``logit(theta)`` [-].
    model : str
        One of :data:`MODELS` (already checked, lower case).
    beta : float or ndarray, optional
        Frumkin interaction [-].

    Returns
    -------
    (lnkc, dlnkc_dy) : tuple of ndarray
        ``ln(K c)`` [-] and ``d ln(K c) / d y`` [-].

    Raises
    ------
    InputError
        For an unknown model name.

    Notes
    -----
    With ``theta = expit(y)``:

    - Langmuir: ``ln(K c) = y``;
    - Frumkin: ``ln(K c) = y - 2 beta theta``, derivative ``1 - 2 beta theta (1 - theta)``;
    - Volmer: ``ln(K c) = y + e**y`` (``e**y = theta/(1 - theta)``), derivative ``1 + e**y``.

    This is the explicit direction of every model, smooth over the whole real line, which
    makes it the natural variable of the mass-balance root.  Increasing in y for every model
    when ``beta <= 2`` (the Frumkin derivative is at least ``1 - beta/2``).

    Examples
    --------
    >>> [float(v) for v in lnkc_of_logit(0.0, "frumkin", 1.0)]
    [-1.0, 0.5]
    >>> [float(v) for v in lnkc_of_logit(0.0, "volmer")]
    [1.0, 2.0]

    References
    ----------
    1. Langmuir, I., "The adsorption of gases on plane surfaces of glass, mica and platinum",
       J. Am. Chem. Soc. 40 (1918) 1361-1403, doi:10.1021/ja02242a004 [from memory].
    2. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 [from memory].
    3. Frumkin, A., Z. Phys. Chem. 116 (1925) 466-484 [from memory].
    4. Volmer, M., Z. Phys. Chem. 115 (1925) 253-260 [from memory].
    5. Chang, C.-H. and Franses, E. I., "Adsorption dynamics of surfactants at the air/water
       interface: a critical review of mathematical models, data, and mechanisms", Colloids
       Surf. A 100 (1995) 1-45, doi:10.1016/0927-7757(94)03061-4 [from memory].
    6. McClements, D. J., Food Emulsions: Principles, Practices and Techniques, 2nd ed., CRC
       Press (2005), ch. 5 (Gibbs equation, prefactor n).
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
    """Return the free monomer concentration [mol/m**3] that gives coverage ``theta``.

    Parameters
    ----------
    theta : float or ndarray
        Coverage, 0 <= theta < 1 [-].
    adsorption_constant : float or ndarray
        K [m**3/mol].
    model : str
        One of :data:`MODELS`.
    beta : float or ndarray
        Frumkin interaction [-] (ignored by the other models), <= 2.

    Returns
    -------
    ndarray
        c [mol/m**3]; inf at theta = 1.

    Raises
    ------
    InputError
        For an unknown model or a Frumkin beta above 2.

    Notes
    -----
    Explicit in every model:

    - Langmuir: ``K c = theta / (1 - theta)``;
    - Frumkin: ``K c = theta / (1 - theta) exp(-2 beta theta)``;
    - Volmer: ``K c = theta / (1 - theta) exp(theta / (1 - theta))``.

    Valid for monolayer adsorption of one surfactant from a dilute solution (activity taken as
    concentration), below the CMC.

    Examples
    --------
    >>> float(c_of_theta(0.5, 100.0))
    0.01
    >>> round(float(c_of_theta(0.5, 100.0, "frumkin", 1.0)), 12)  # e**-1 / 100
    0.003678794412
    >>> [round(float(v), 12) for v in c_of_theta([0.25, 0.5], 100.0, "volmer")]
    [0.004652041417, 0.027182818285]

    References
    ----------
    1. Langmuir, I., "The adsorption of gases on plane surfaces of glass, mica and platinum",
       J. Am. Chem. Soc. 40 (1918) 1361-1403, doi:10.1021/ja02242a004 [from memory].
    2. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 [from memory].
    3. Frumkin, A., Z. Phys. Chem. 116 (1925) 466-484 [from memory].
    4. Volmer, M., Z. Phys. Chem. 115 (1925) 253-260 [from memory].
    5. Chang, C.-H. and Franses, E. I., "Adsorption dynamics of surfactants at the air/water
       interface: a critical review of mathematical models, data, and mechanisms", Colloids
       Surf. A 100 (1995) 1-45, doi:10.1016/0927-7757(94)03061-4 [from memory].
    6. McClements, D. J., Food Emulsions: Principles, Practices and Techniques, 2nd ed., CRC
       Press (2005), ch. 5 (Gibbs equation, prefactor n).
    """
    model = check_model(model, beta)
    theta = np.asarray(theta, dtype=float)
    with np.errstate(divide="ignore", over="ignore"):
        lnkc, _ = lnkc_of_logit(logit(theta), model, beta)
        return np.exp(lnkc) / np.asarray(adsorption_constant, dtype=float)


def theta_of_c(c, adsorption_constant, model: str = "langmuir", beta=0.0):
    """Return the coverage [-] in equilibrium with the free concentration ``c``.

    Parameters
    ----------
    c : float or ndarray
        Free monomer concentration, >= 0 [mol/m**3].
    adsorption_constant : float or ndarray
        K [m**3/mol].
    model : str
        One of :data:`MODELS`.
    beta : float or ndarray
        Frumkin interaction [-], <= 2.

    Returns
    -------
    ndarray
        theta [-], broadcast shape of the inputs; 1 for an infinite ``K c``.

    Raises
    ------
    InputError
        For an unknown model or a Frumkin beta above 2.

    Notes
    -----
    The inverse of :func:`c_of_theta`.  Langmuir is explicit, ``theta = K c / (1 + K c)``;
    Volmer uses the Lambert W function (``K c = u e**u`` with ``u = theta/(1 - theta)``, so
    ``u = W(K c)`` [2]); Frumkin is a bracketed Newton root of ``y - 2 beta expit(y) = ln(K c)``
    in ``y = logit(theta)``, vectorised over arrays (:func:`sizing.physics.roots.bracketed_newton`).
    At the Frumkin critical point (beta = 2, theta = 1/2) the slope d theta / d c is infinite, so
    theta there is only good to about 1e-5; elsewhere to about 1e-13.

    Examples
    --------
    >>> float(theta_of_c(0.01, 100.0))
    0.5
    >>> round(float(theta_of_c(0.01, 100.0, "frumkin", 1.0)), 12)
    0.843946999414
    >>> round(float(theta_of_c(0.01, 100.0, "volmer")), 12)
    0.361896256635

    References
    ----------
    1. Frumkin, A., Z. Phys. Chem. 116 (1925) 466-484 [from memory].
    2. Corless, R. M., Gonnet, G. H., Hare, D. E. G., Jeffrey, D. J. and Knuth, D. E., "On the
       Lambert W function", Adv. Comput. Math. 5 (1996) 329-359, doi:10.1007/BF02124750
       [from memory].
    3. Chang, C.-H. and Franses, E. I., Colloids Surf. A 100 (1995) 1-45,
       doi:10.1016/0927-7757(94)03061-4 [from memory].
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
        from scipy.special import lambertw  # deferred: scipy.special is slow to import; only Volmer needs it

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
    theta : float or ndarray
        Coverage, 0 <= theta < 1 [-].
    max_surface_excess : float or ndarray
        Gamma_inf [mol/m**2].
    temperature : float or ndarray
        T [K].
    gibbs_prefactor : float or ndarray
        n [-]: 1 for a nonionic or an ionic in excess salt, 2 for a 1:1 ionic without salt.
    model : str
        One of :data:`MODELS`.
    beta : float or ndarray
        Frumkin interaction [-], <= 2.

    Returns
    -------
    ndarray
        Pi [N/m]; inf at theta = 1.

    Raises
    ------
    InputError
        For an unknown model or a Frumkin beta above 2.

    Notes
    -----
    With ``S = n R T Gamma_inf``:

    - Langmuir (Szyszkowski): ``Pi = -S ln(1 - theta) = S ln(1 + K c)``;
    - Frumkin: ``Pi = -S (ln(1 - theta) + beta theta**2)``;
    - Volmer: ``Pi = S theta / (1 - theta)``.

    Each is the equation of state of its isotherm by the Gibbs equation
    ``Gamma = (1/(n R T)) dPi/dln c`` [5, 6].

    Examples
    --------
    >>> round(float(pressure_of_theta(0.5, 4e-6, 298.15)) * 1e3, 12)  # mN/m
    6.873128303066
    >>> round(float(pressure_of_theta(0.5, 4e-6, 298.15, 1, "frumkin", 1.0)) * 1e3, 12)
    4.394171273509
    >>> round(float(pressure_of_theta(0.5, 4e-6, 298.15, 1, "volmer")) * 1e3, 12)
    9.915828118227

    References
    ----------
    1. Langmuir, I., "The adsorption of gases on plane surfaces of glass, mica and platinum",
       J. Am. Chem. Soc. 40 (1918) 1361-1403, doi:10.1021/ja02242a004 [from memory].
    2. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 [from memory].
    3. Frumkin, A., Z. Phys. Chem. 116 (1925) 466-484 [from memory].
    4. Volmer, M., Z. Phys. Chem. 115 (1925) 253-260 [from memory].
    5. Chang, C.-H. and Franses, E. I., "Adsorption dynamics of surfactants at the air/water
       interface: a critical review of mathematical models, data, and mechanisms", Colloids
       Surf. A 100 (1995) 1-45, doi:10.1016/0927-7757(94)03061-4 [from memory].
    6. McClements, D. J., Food Emulsions: Principles, Practices and Techniques, 2nd ed., CRC
       Press (2005), ch. 5 (Gibbs equation, prefactor n).
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

    Parameters
    ----------
    pressure : float or ndarray
        Pi = gamma0 - gamma [N/m]; 0 or less gives theta = 0.
    max_surface_excess : float or ndarray
        Gamma_inf [mol/m**2].
    temperature : float or ndarray
        T [K].
    gibbs_prefactor : float or ndarray
        n [-].
    model : str
        One of :data:`MODELS`.
    beta : float or ndarray
        Frumkin interaction [-], <= 2.

    Returns
    -------
    ndarray
        theta [-].

    Raises
    ------
    InputError
        For an unknown model or a Frumkin beta above 2.

    Notes
    -----
    The inverse of :func:`pressure_of_theta`, with ``p = Pi / (n R T Gamma_inf)``: Langmuir
    ``theta = 1 - e**-p``, Volmer ``theta = p / (1 + p)``; Frumkin solves
    ``-ln(1 - theta) - beta theta**2 = p``, increasing on [0, 1) for beta <= 2, by a bracketed
    Newton root (bracket: ``-ln(1 - theta)`` lies between ``p + min(beta, 0)`` and
    ``p + max(beta, 0)``).

    Examples
    --------
    >>> round(float(theta_of_pressure(6.873128303066e-3, 4e-6, 298.15)), 12)
    0.5
    >>> p = pressure_of_theta(0.5, 4e-6, 298.15, 1, "frumkin", 1.0)
    >>> round(float(theta_of_pressure(p, 4e-6, 298.15, 1, "frumkin", 1.0)), 12)
    0.5

    References
    ----------
    1. Langmuir, I., "The adsorption of gases on plane surfaces of glass, mica and platinum",
       J. Am. Chem. Soc. 40 (1918) 1361-1403, doi:10.1021/ja02242a004 [from memory].
    2. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 [from memory].
    3. Frumkin, A., Z. Phys. Chem. 116 (1925) 466-484 [from memory].
    4. Volmer, M., Z. Phys. Chem. 115 (1925) 253-260 [from memory].
    5. Chang, C.-H. and Franses, E. I., "Adsorption dynamics of surfactants at the air/water
       interface: a critical review of mathematical models, data, and mechanisms", Colloids
       Surf. A 100 (1995) 1-45, doi:10.1016/0927-7757(94)03061-4 [from memory].
    6. McClements, D. J., Food Emulsions: Principles, Practices and Techniques, 2nd ed., CRC
       Press (2005), ch. 5 (Gibbs equation, prefactor n).
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

    Parameters
    ----------
    area_per_molecule : float or ndarray
        a, area one adsorbed molecule takes at saturation [m**2] (0.5 nm**2 = 0.5e-18 m**2).

    Returns
    -------
    ndarray
        ``Gamma_inf = 1 / (N_A a)`` [mol/m**2].

    Raises
    ------
    None.

    Notes
    -----
    N_A = 6.02214076e23 1/mol, exact since the 2019 SI [1].

    Examples
    --------
    >>> round(float(surface_excess_from_area(0.5e-18)) * 1e6, 12)  # umol/m**2
    3.321078134348

    References
    ----------
    1. BIPM, The International System of Units (SI), 9th ed. (2019): N_A = 6.02214076e23 mol**-1
       (exact).
    """
    return 1.0 / (AVOGADRO * np.asarray(area_per_molecule, dtype=float))


def area_from_surface_excess(max_surface_excess):
    """Return the area per molecule [m**2] of a maximum surface excess [mol/m**2].

    Parameters
    ----------
    max_surface_excess : float or ndarray
        Gamma_inf [mol/m**2].

    Returns
    -------
    ndarray
        ``a = 1 / (N_A Gamma_inf)`` [m**2].

    Raises
    ------
    None.

    Notes
    -----
    The inverse of :func:`surface_excess_from_area`; N_A exact (2019 SI) [1].

    Examples
    --------
    >>> round(float(area_from_surface_excess(3.3e-6)) * 1e18, 12)  # nm**2
    0.503193656719

    References
    ----------
    1. BIPM, The International System of Units (SI), 9th ed. (2019): N_A = 6.02214076e23 mol**-1
       (exact).
    """
    return 1.0 / (AVOGADRO * np.asarray(max_surface_excess, dtype=float))
