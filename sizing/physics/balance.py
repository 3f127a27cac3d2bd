"""The surfactant mass balance, in both directions, vectorised over numpy arrays.

For a dose ``N`` [mol] of active in a batch with continuous volume ``V_c`` and dispersed
volume ``V_d`` [m**3], interfacial area ``A`` [m**2] and monomer concentration ``c``
[mol/m**3] in the continuous phase::

    N = c V_c + u c V_d + Gamma_inf theta(c) A + N_mic,     0 <= c <= CMC,

where ``u`` is the dispersed uptake factor (:func:`sizing.phases.dispersed_uptake`) and
``N_mic >= 0`` is non-zero only at ``c = CMC``.  Target -> dose is explicit; dose -> state is a
monotone root, solved in ``y = logit(theta)`` where every isotherm is explicit
(:func:`sizing.isotherm.lnkc_of_logit`), by a bracketed Newton iteration over the whole array.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.special import expit

from .isotherm import check_model, lnkc_of_logit, logit, theta_of_c
from .roots import bracketed_newton


@dataclass(frozen=True)
class BalanceState:
    """An equilibrium state of the batch; every field broadcasts to the input shape.

    Attributes
    ----------
    free_concentration : c, monomer in the continuous phase [mol/m**3]
    coverage : theta [-]
    continuous_mol, dispersed_mol, interface_mol, micelle_mol : where the dose is [mol]
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

    ``theta`` may be passed when already known (it must equal theta(c)).
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
    dose_mol : N, active per batch [mol]
    continuous_volume, dispersed_volume : V_c, V_d [m**3]
    uptake : u, dispersed over continuous monomer concentration [-]
    max_surface_excess : Gamma_inf [mol/m**2]
    area : A [m**2]
    adsorption_constant : K [m**3/mol]
    model : isotherm name; beta : Frumkin interaction [-]
    cmc : [mol/m**3]; ``inf`` for no micelles

    Notes
    -----
    Below the micelle threshold ``N_cmc = c_cmc (V_c + u V_d) + Gamma_inf theta(cmc) A`` the
    root of ``g(y) = V_eff exp(lnKc(y))/K + Gamma_inf A expit(y) - N`` is bracketed by the two
    facts that each term is at most N and one of them is at least N/2.

    Examples
    --------
    >>> s = state_for_dose(1.0, continuous_volume=1.0, dispersed_volume=0.0, uptake=0.0,
    ...                    max_surface_excess=1e-6, area=1e6, adsorption_constant=1.0)
    >>> round(float(s.free_concentration), 12), round(float(s.coverage), 12)  # c + c/(1+c) = 1
    (0.61803398875, 0.38196601125)
    """
    model = check_model(model, beta)
    n, vc, vd, u = _arr(dose_mol), _arr(continuous_volume), _arr(dispersed_volume), _arr(uptake)
    gi, a, k, b, cmc = _arr(max_surface_excess), _arr(area), _arr(adsorption_constant), _arr(beta), _arr(cmc)
    n, vc, vd, u, gi, a, k, b, cmc = np.broadcast_arrays(n, vc, vd, u, gi, a, k, b, cmc)
    veff = vc + u * vd
    s = gi * a
    theta_cmc = np.where(np.isfinite(cmc), theta_of_c(np.where(np.isfinite(cmc), cmc, 0.0), k, model, b), 1.0)
    n_cmc = np.where(np.isfinite(cmc), veff * np.where(np.isfinite(cmc), cmc, 0.0) + s * theta_cmc, np.inf)
    micelles = n >= n_cmc
    if model == "langmuir":
        # closed form on the whole array (no masking): V K c**2 + (V + S K - N K) c - N = 0
        with np.errstate(divide="ignore", invalid="ignore"):
            bq = veff + s * k - n * k
            root = np.sqrt(bq * bq + 4.0 * veff * k * n)
            cs = np.where(bq >= 0, 2.0 * n / (bq + root), (root - bq) / (2.0 * veff * k))
        c = np.where(micelles, cmc, np.where(n > 0, cs, 0.0))
        theta = np.where(micelles, theta_cmc, k * c / (1.0 + k * c))
        state = state_at_concentration(c, continuous_volume=vc, dispersed_volume=vd, uptake=u,
                                       max_surface_excess=gi, area=a, adsorption_constant=k,
                                       model=model, beta=b, theta=theta)
        return BalanceState(state.free_concentration, state.coverage, state.continuous_mol,
                            state.dispersed_mol, state.interface_mol, np.where(micelles, n - n_cmc, 0.0))
    c = np.zeros(n.shape)
    theta = np.zeros(n.shape)
    c[micelles] = cmc[micelles]
    theta[micelles] = theta_cmc[micelles]
    solve = (~micelles) & (n > 0)
    if np.any(solve):
        N, V, S, K, B = n[solve], veff[solve], s[solve], k[solve], b[solve]
        with np.errstate(divide="ignore", over="ignore"):
            if model == "frumkin":
                # y = ln(K c) + 2 beta theta: bounds on c bound y within 2|beta| without a root
                y_c_hi = np.log(K * N / V) + np.maximum(0.0, 2.0 * B)
                y_c_lo = np.log(0.5 * K * N / V) + np.minimum(0.0, 2.0 * B)
            else:
                y_c_hi = logit(theta_of_c(N / V, K, model, B))
                y_c_lo = logit(theta_of_c(0.5 * N / V, K, model, B))
            y_hi = np.minimum(y_c_hi, logit(np.minimum(N / S, 1.0)))
            y_lo = np.minimum(y_c_lo, logit(np.minimum(0.5 * N / S, 1.0)))
            y_hi = np.minimum(y_hi, logit(theta_cmc[solve]))
            y_lo = np.minimum(y_lo, y_hi)

        def fdf(y, idx):
            lnkc, dl = lnkc_of_logit(y, model, B[idx])
            cc = np.exp(lnkc) / K[idx]
            th = expit(y)
            g = V[idx] * cc + S[idx] * th - N[idx]
            dg = V[idx] * cc * dl + S[idx] * th * (1.0 - th)
            # scale so that the tolerance is relative to the dose
            return g / N[idx], dg / N[idx]

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

    Takes the same keywords as :func:`state_at_concentration`.  ``c`` above the CMC is not an
    equilibrium state; the caller checks feasibility first (see :func:`max_coverage`).
    """
    return state_at_concentration(c, **kwargs)


def max_coverage(adsorption_constant, cmc, model="langmuir", beta=0.0):
    """Return the largest equilibrium coverage [-]: theta at the CMC (1 without a CMC)."""
    cmc = _arr(cmc)
    finite = np.isfinite(cmc)
    return np.where(finite, theta_of_c(np.where(finite, cmc, 0.0), adsorption_constant, model, beta), 1.0)
