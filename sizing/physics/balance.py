"""The surfactant mass balance, in both directions, vectorised over numpy arrays.

For a dose ``N`` [mol] of active in a batch with continuous volume ``V_c`` and dispersed
volume ``V_d`` [m**3], interfacial area ``A`` [m**2] and monomer concentration ``c``
[mol/m**3] in the continuous phase::

    N = c V_c + u c V_d + Gamma_inf theta(c) A + N_mic,     0 <= c <= CMC,

where ``u`` is the dispersed uptake factor (:func:`sizing.physics.phases.dispersed_uptake`) and
``N_mic >= 0`` is non-zero only at ``c = CMC``.  Target -> dose is explicit; dose -> state is a
monotone root, solved in ``y = logit(theta)`` where every isotherm is explicit
(:func:`sizing.physics.isotherm.lnkc_of_logit`), by a bracketed Newton iteration over the whole array.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .isotherm import check_model, lnkc_of_logit, logit, theta_of_c
from .roots import bracketed_newton
from .special import expit, log_expit


@dataclass(frozen=True)
class BalanceState:
    """Hold an equilibrium state of the batch; every field broadcasts to the input shape.

    Attributes
    ----------
    free_concentration : ndarray
        c, monomer in the continuous phase [mol/m**3].
    coverage : ndarray
        theta [-].
    continuous_mol : ndarray
        Monomer dissolved in the continuous phase, ``c V_c`` [mol].
    dispersed_mol : ndarray
        Monomer dissolved in the drops, ``u c V_d`` [mol].
    interface_mol : ndarray
        Adsorbed, ``Gamma_inf theta A`` [mol].
    micelle_mol : ndarray
        In micelles, > 0 only at ``c = CMC`` [mol].

    Notes
    -----
    ``total_mol`` is the dose the state holds, the sum of the four places [mol].

    Examples
    --------
    >>> s = state_at_concentration(0.01, continuous_volume=1.0, dispersed_volume=0.25, uptake=2.0,
    ...                            max_surface_excess=4e-6, area=1e4, adsorption_constant=100.0)
    >>> round(float(s.total_mol), 12)
    0.035

    References
    ----------
    1. Rosen, M. J. and Kunjappu, J. T., Surfactants and Interfacial Phenomena, 4th ed., Wiley
       (2012), ch. 2-3 (adsorption at interfaces, micellisation and the pseudo-phase picture)
       [from memory].
    2. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
       surfactant added past the CMC stays in the water.
    """

    free_concentration: np.ndarray
    coverage: np.ndarray
    continuous_mol: np.ndarray
    dispersed_mol: np.ndarray
    interface_mol: np.ndarray
    micelle_mol: np.ndarray

    @property
    def total_mol(self):
        """The dose the state holds [mol]."""
        return self.continuous_mol + self.dispersed_mol + self.interface_mol + self.micelle_mol


def _arr(x):
    return np.asarray(x, dtype=float)


def state_at_concentration(c, *, continuous_volume, dispersed_volume, uptake, max_surface_excess,
                           area, adsorption_constant, model="langmuir", beta=0.0, cmc=np.inf,
                           theta=None) -> BalanceState:
    """Return the state with free concentration ``c`` (<= CMC) and no micelles.

    Parameters
    ----------
    c : float or ndarray
        Free monomer concentration in the continuous phase [mol/m**3].
    continuous_volume, dispersed_volume : float or ndarray
        V_c, V_d [m**3].
    uptake : float or ndarray
        u, dispersed over continuous monomer concentration [-]
        (:func:`sizing.physics.phases.dispersed_uptake`).
    max_surface_excess : float or ndarray
        Gamma_inf [mol/m**2].
    area : float or ndarray
        A [m**2].
    adsorption_constant : float or ndarray
        K [m**3/mol].
    model : str
        Isotherm name; ``beta`` the Frumkin interaction [-].
    cmc : float or ndarray
        [mol/m**3]; not used here (the caller keeps ``c <= cmc``).
    theta : float or ndarray, optional
        The coverage when already known (it must equal theta(c)) [-].

    Returns
    -------
    BalanceState

    Raises
    ------
    InputError
        For an unknown isotherm (through :func:`sizing.physics.isotherm.theta_of_c`).

    Notes
    -----
    ``N = c V_c + u c V_d + Gamma_inf theta(c) A`` with ``N_mic = 0``; valid for
    ``0 <= c <= CMC`` (pseudo-phase model [1]).

    Examples
    --------
    >>> s = state_at_concentration(0.01, continuous_volume=1.0, dispersed_volume=0.25, uptake=2.0,
    ...                            max_surface_excess=4e-6, area=1e4, adsorption_constant=100.0)
    >>> [round(float(v), 12) for v in (s.coverage, s.continuous_mol, s.dispersed_mol, s.interface_mol)]
    [0.5, 0.01, 0.005, 0.02]

    References
    ----------
    1. Rosen, M. J. and Kunjappu, J. T., Surfactants and Interfacial Phenomena, 4th ed., Wiley
       (2012), ch. 2-3 (adsorption at interfaces, micellisation and the pseudo-phase picture)
       [from memory].
    2. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
       surfactant added past the CMC stays in the water.
    """
    c = _arr(c)
    if theta is None:
        theta = theta_of_c(c, adsorption_constant, model, beta)
    vc, vd, u = _arr(continuous_volume), _arr(dispersed_volume), _arr(uptake)
    shape = np.broadcast_shapes(c.shape, _arr(theta).shape, vc.shape, vd.shape, u.shape,
                                _arr(max_surface_excess).shape, _arr(area).shape)
    zero = np.zeros(shape)
    return BalanceState(
        free_concentration=c + zero,
        coverage=_arr(theta) + zero,
        continuous_mol=c * vc + zero,
        dispersed_mol=u * c * vd + zero,
        interface_mol=_arr(max_surface_excess) * _arr(theta) * _arr(area) + zero,
        micelle_mol=zero,
    )


def state_for_dose(dose_mol, *, continuous_volume, dispersed_volume, uptake, max_surface_excess,
                   area, adsorption_constant, model="langmuir", beta=0.0, cmc=np.inf,
                   xtol=1e-13) -> BalanceState:
    """Return the equilibrium state for a dose [mol] (the forward direction).

    Parameters
    ----------
    dose_mol : float or ndarray
        N, active per batch [mol].
    continuous_volume, dispersed_volume : float or ndarray
        V_c, V_d [m**3].
    uptake : float or ndarray
        u, dispersed over continuous monomer concentration [-].
    max_surface_excess : float or ndarray
        Gamma_inf [mol/m**2].
    area : float or ndarray
        A [m**2].
    adsorption_constant : float or ndarray
        K [m**3/mol].
    model : str
        Isotherm name; ``beta`` the Frumkin interaction [-].
    cmc : float or ndarray
        [mol/m**3]; ``inf`` for no micelles.
    xtol : float
        Absolute tolerance of the root in ``logit(theta)`` [-].

    Returns
    -------
    BalanceState
        Broadcast over every input; ``total_mol`` equals the dose to about 1e-12 relative.

    Raises
    ------
    InputError
        For an unknown isotherm or a Frumkin beta above 2.

    Notes
    -----
    Solves ``N = c V_eff + Gamma_inf theta(c) A + N_mic`` with ``V_eff = V_c + u V_d``.
    Below the micelle threshold ``N_cmc = CMC V_eff + Gamma_inf theta(CMC) A`` Langmuir is the
    closed-form root of ``V K c**2 + (V + S K - N K) c - N = 0`` (``S = Gamma_inf A``), written
    in the cancellation-free form; Frumkin and Volmer solve the log residual
    ``h(y) = ln(V_eff exp(lnKc(y))/K + Gamma_inf A expit(y)) - ln N`` in ``y = logit(theta)``
    (nearly straight in y, so Newton takes about 4-5 evaluations per element instead of 8-10 on
    the plain residual), bracketed by the two facts that each term is at most N and one of them
    is at least N/2; the bracket safeguard of :func:`sizing.physics.roots.bracketed_newton`
    stays.
    At or above ``N_cmc`` the state is ``c = CMC`` and the rest is in micelles [1, 2].

    Examples
    --------
    >>> s = state_for_dose(1.0, continuous_volume=1.0, dispersed_volume=0.0, uptake=0.0,
    ...                    max_surface_excess=1e-6, area=1e6, adsorption_constant=1.0)
    >>> round(float(s.free_concentration), 12), round(float(s.coverage), 12)  # c + c/(1+c) = 1
    (0.61803398875, 0.38196601125)

    References
    ----------
    1. Rosen, M. J. and Kunjappu, J. T., Surfactants and Interfacial Phenomena, 4th ed., Wiley
       (2012), ch. 2-3 (adsorption at interfaces, micellisation and the pseudo-phase picture)
       [from memory].
    2. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
       surfactant added past the CMC stays in the water.
    """
    model = check_model(model, beta)
    n, vc, vd, u = _arr(dose_mol), _arr(continuous_volume), _arr(dispersed_volume), _arr(uptake)
    gi, a, k, b, cmc = _arr(max_surface_excess), _arr(area), _arr(adsorption_constant), _arr(beta), _arr(cmc)
    n, vc, vd, u, gi, a, k, b, cmc = np.broadcast_arrays(n, vc, vd, u, gi, a, k, b, cmc)
    veff = vc + u * vd
    s = gi * a
    if model == "langmuir":
        # closed form on the whole array (no masking), the state written out directly (the
        # engine within about 1.2x of the same closed form written by hand in numpy, issue 16)
        # in place where it keeps the same operations in the same order (bit for bit the plain
        # expressions in the comments): each fresh 1e6 array costs about as much as an operation
        shape = n.shape

        def fresh():
            return np.empty(shape)

        with np.errstate(divide="ignore", invalid="ignore"):
            if cmc.size and float(np.max(cmc)) < np.inf:  # every CMC finite (a nan goes below)
                kcmc = np.multiply(cmc, k, out=fresh())
                # n_cmc = veff * cmc + s * (kcmc / (1 + kcmc))
                t = np.add(1.0, kcmc, out=fresh())
                np.divide(kcmc, t, out=t)
                t *= s
                n_cmc = np.multiply(veff, cmc, out=kcmc)
                n_cmc += t
            else:
                finite = np.isfinite(cmc)
                cmc0 = np.where(finite, cmc, 0.0)
                kcmc = cmc0 * k
                n_cmc = np.where(finite, veff * cmc0 + s * (kcmc / (1.0 + kcmc)), np.inf)
                t = fresh()
            micelles = n >= n_cmc
            # V K c**2 + (V + S K - N K) c - N = 0: bq = veff + s k - n k
            bq = np.multiply(s, k, out=fresh())
            bq += veff
            bq -= np.multiply(n, k, out=t)
            # root = sqrt(bq**2 + 4 veff k n)
            root = np.multiply(4.0, veff, out=fresh())
            root *= k
            root *= n
            root += np.multiply(bq, bq, out=t)
            np.sqrt(root, out=root)
            # cs = 2 n / (bq + root) where bq >= 0, else (root - bq) / (2 veff k)
            near = np.add(bq, root, out=t)
            np.divide(np.multiply(2.0, n, out=fresh()), near, out=near)
            cs = np.subtract(root, bq, out=root)
            den = np.multiply(2.0, veff, out=fresh())
            den *= k
            cs /= den
            np.copyto(cs, near, where=bq >= 0)
            if not (n.size and float(np.min(n)) > 0):
                cs = np.where(n > 0, cs, 0.0)
            c = cs
            np.copyto(c, cmc, where=micelles)
            kc = np.multiply(c, k, out=den)
            theta = np.add(1.0, kc, out=bq)
            np.divide(kc, theta, out=theta)
        return BalanceState(c, theta, c * vc, u * c * vd, gi * theta * a,
                            np.where(micelles, n - n_cmc, 0.0))
    finite = np.isfinite(cmc)
    theta_cmc = np.where(finite, theta_of_c(np.where(finite, cmc, 0.0), k, model, b), 1.0)
    n_cmc = np.where(finite, veff * np.where(finite, cmc, 0.0) + s * theta_cmc, np.inf)
    micelles = n >= n_cmc
    c = np.zeros(n.shape)
    theta = np.zeros(n.shape)
    c[micelles] = cmc[micelles]
    theta[micelles] = theta_cmc[micelles]
    solve = (~micelles) & (n > 0)
    if np.any(solve):
        N, V, S, K, B = n[solve], veff[solve], s[solve], k[solve], b[solve]
        with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
            L = np.log(K * N / V)  # ln(K c) at the largest c the dose allows, c = N / V
            if model == "frumkin":
                # y = ln(K c) + 2 beta theta: bounds on c bound y within 2|beta| without a root
                y_c_hi = L + np.maximum(0.0, 2.0 * B)
                y_c_lo = L - np.log(2.0) + np.minimum(0.0, 2.0 * B)
            else:
                # Volmer y + e**y = ln(K c): the root is below ln(K c) and, for ln(K c) > 1, below
                # ln(ln(K c)); above ln(K c) - e**ln(K c) and ln(ln(K c) - ln ln(K c)) likewise
                y_c_hi = np.where(L > 1.0, np.log(np.maximum(L, 1.0)), L)
                Lo = np.minimum(L - np.log(2.0), 1e300)  # finite where V = 0 (c unbounded)
                y_c_lo = np.where(Lo > 1.0, np.log(np.maximum(Lo - np.log(np.maximum(Lo, 1.0)), 1.0)),
                                  Lo - np.exp(np.minimum(Lo, 1.0)))
            y_hi = np.minimum(y_c_hi, logit(np.minimum(N / S, 1.0)))
            y_lo = np.minimum(y_c_lo, logit(np.minimum(0.5 * N / S, 1.0)))
            y_hi = np.minimum(y_hi, logit(theta_cmc[solve]))
            y_lo = np.minimum(y_lo, y_hi)
            ln_v_k, ln_s, ln_n = np.log(V / K), np.log(S), np.log(N)

        def fdf(y, idx):
            # the log residual ln(V c + S theta) - ln N: both terms grow about exponentially in
            # y, so its logarithm is nearly straight and Newton needs about half the steps of
            # the plain residual; log-sum-exp keeps it finite at both ends
            lnkc, dl = lnkc_of_logit(y, model, B[idx])
            a_bulk = ln_v_k[idx] + lnkc
            a_surf = ln_s[idx] + log_expit(y)
            m = np.logaddexp(a_bulk, a_surf)
            w_bulk = np.exp(a_bulk - m)  # share of the bulk in V c + S theta
            return m - ln_n[idx], w_bulk * dl + (1.0 - w_bulk) * expit(-y)

        y = bracketed_newton(fdf, y_lo, y_hi, xtol=xtol, rtol=1e-15)
        lnkc, _ = lnkc_of_logit(y, model, B)
        c[solve] = np.exp(lnkc) / K
        theta[solve] = expit(y)
    state = state_at_concentration(c, continuous_volume=vc, dispersed_volume=vd, uptake=u,
                                   max_surface_excess=gi, area=a, adsorption_constant=k,
                                   model=model, beta=b, theta=theta)
    micelle_mol = np.where(micelles, n - n_cmc, 0.0)
    return BalanceState(state.free_concentration, state.coverage, state.continuous_mol,
                        state.dispersed_mol, state.interface_mol, micelle_mol)


def dose_for_concentration(c, **kwargs) -> BalanceState:
    """Return the state (and with it the dose, ``.total_mol``) that leaves free monomer ``c``.

    Parameters
    ----------
    c : float or ndarray
        Free monomer concentration, <= CMC [mol/m**3].
    **kwargs
        The keywords of :func:`state_at_concentration` (volumes [m**3], uptake [-],
        Gamma_inf [mol/m**2], area [m**2], K [m**3/mol], model, beta [-]).

    Returns
    -------
    BalanceState

    Raises
    ------
    InputError
        For an unknown isotherm.

    Notes
    -----
    The explicit direction target -> dose: ``N = c (V_c + u V_d) + Gamma_inf theta(c) A``.
    ``c`` above the CMC is not an equilibrium state; the caller checks feasibility first
    (see :func:`max_coverage`).

    Examples
    --------
    >>> s = dose_for_concentration(0.01, continuous_volume=1.0, dispersed_volume=0.25, uptake=2.0,
    ...                            max_surface_excess=4e-6, area=1e4, adsorption_constant=100.0)
    >>> round(float(s.total_mol), 12)  # 0.01 + 0.005 + 0.02 mol
    0.035

    References
    ----------
    1. Rosen, M. J. and Kunjappu, J. T., Surfactants and Interfacial Phenomena, 4th ed., Wiley
       (2012), ch. 2-3 (adsorption at interfaces, micellisation and the pseudo-phase picture)
       [from memory].
    2. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
       surfactant added past the CMC stays in the water.
    """
    return state_at_concentration(c, **kwargs)


def max_coverage(adsorption_constant, cmc, model="langmuir", beta=0.0):
    """Return the largest equilibrium coverage [-]: theta at the CMC (1 without a CMC).

    Parameters
    ----------
    adsorption_constant : float or ndarray
        K [m**3/mol].
    cmc : float or ndarray
        [mol/m**3]; inf for a surfactant without micelles.
    model : str
        Isotherm name.
    beta : float or ndarray
        Frumkin interaction [-].

    Returns
    -------
    ndarray
        ``theta(CMC)`` [-], or 1 where the CMC is infinite.

    Raises
    ------
    InputError
        For an unknown isotherm.

    Notes
    -----
    In the pseudo-phase model the monomer concentration stops at the CMC, so no dose reaches
    a coverage above ``theta(CMC)`` at equilibrium [1].

    Examples
    --------
    >>> [float(v) for v in (max_coverage(100.0, 0.01), max_coverage(100.0, float("inf")))]
    [0.5, 1.0]

    References
    ----------
    1. Rosen, M. J. and Kunjappu, J. T., Surfactants and Interfacial Phenomena, 4th ed., Wiley
       (2012), ch. 2-3 (adsorption at interfaces, micellisation and the pseudo-phase picture)
       [from memory].
    2. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
       surfactant added past the CMC stays in the water.
    """
    cmc = _arr(cmc)
    finite = np.isfinite(cmc)
    return np.where(finite, theta_of_c(np.where(finite, cmc, 0.0), adsorption_constant, model, beta), 1.0)
