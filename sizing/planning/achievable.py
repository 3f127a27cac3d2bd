"""Surfactant-limited drop size: the d32 a dose can reach, and the knee dose.

The case's drop size is what the homogeniser makes with surfactant in excess (``d_h``), and the
target coverage is the coverage ``theta_min`` needed to stabilise new interface.  New interface
can only be made while there is surfactant to cover it: after the continuous phase and the
drops take their share at the free concentration ``c_min = c(theta_min)``, a dose ``N`` [mol]
covers at most::

    A_max = (N - c_min (V_c + u V_d)) / (Gamma_inf theta_min),   d_s = 6 s V_d / A_max,

and the drops reached are ``d32 = max(d_h, d_s)`` (DESIGN.md, surfactant-poor regime).  The knee
dose, beyond which more surfactant no longer makes smaller drops, is where ``d_s = d_h``::

    N_knee = c_min (V_c + u V_d) + Gamma_inf theta_min 6 s V_d / d_h,

which is the target dose of the case without margin.  With no bulk losses, ``d_s`` is
Tcholakova's ``6 Gamma* phi / ((1 - phi) C_ini)`` with ``Gamma* = Gamma_inf theta_min`` and
``C_ini`` the dose per volume of continuous phase.

References
----------
1. Tcholakova, S., Denkov, N. D., Sidzhakova, D., Ivanov, I. B. and Campbell, B., Langmuir 19
   (2003) 5640 (surfactant-poor regime) [concept read, formula from memory].
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..model import blend_physics_of, solve, target_concentration
from ..physics import blend, phases


@dataclass(frozen=True)
class Achievable:
    """Drop size reached with a dose; arrays broadcast over the doses.

    Attributes
    ----------
    dose_mol : N [mol]; d32 : drops reached [m] (inf: the dose does not cover even the bulk)
    homogeniser_d32 : d_h [m]; surfactant_d32 : d_s [m] (inf where N <= bulk losses)
    limited_by : array of 'surfactant' or 'homogeniser'
    knee_dose_mol : N_knee [mol]; bulk_loss_mol : c_min (V_c + u V_d) [mol]
    min_coverage : theta_min [-]; min_concentration : c_min [mol/m**3]
    feasible : theta_min is reachable below the CMC
    """

    dose_mol: np.ndarray
    d32: np.ndarray
    homogeniser_d32: np.ndarray
    surfactant_d32: np.ndarray
    limited_by: np.ndarray
    knee_dose_mol: np.ndarray
    bulk_loss_mol: np.ndarray
    min_coverage: np.ndarray
    min_concentration: np.ndarray
    feasible: np.ndarray


def surfactant_limited_d32(dose_mol, *, dispersed_volume, continuous_volume, uptake, max_surface_excess,
                           min_coverage, min_concentration, shape_factor=1.0):
    """Return the d32 [m] that a dose can cover at the coverage ``min_coverage`` (inf if none).

    Parameters
    ----------
    dose_mol : N [mol]; dispersed_volume, continuous_volume : V_d, V_c [m**3]
    uptake : u, dispersed over continuous monomer concentration [-]
    max_surface_excess : Gamma_inf [mol/m**2]; min_coverage : theta_min [-]
    min_concentration : c_min, the free monomer in equilibrium with theta_min [mol/m**3]
    shape_factor : s [-]

    Examples
    --------
    Tcholakova et al. (2003) form, no bulk losses: 3 mol in 0.8 m**3 of water, phi = 0.2,
    Gamma* = 2 umol/m**2 gives d32 = 6 * 2e-6 * 0.2 / 3 = 0.8 um.

    >>> round(float(surfactant_limited_d32(3.0, dispersed_volume=0.2, continuous_volume=0.8, uptake=0.0,
    ...       max_surface_excess=2e-6, min_coverage=1.0, min_concentration=0.0)) * 1e6, 12)
    0.8
    """
    n = np.asarray(dose_mol, dtype=float)
    loss = np.asarray(min_concentration) * (np.asarray(continuous_volume) + np.asarray(uptake)
                                            * np.asarray(dispersed_volume))
    left = n - loss
    cover = np.asarray(max_surface_excess) * np.asarray(min_coverage)
    with np.errstate(divide="ignore"):
        return np.where(left > 0, 6.0 * np.asarray(shape_factor) * np.asarray(dispersed_volume) * cover
                        / np.where(left > 0, left, 1.0), np.inf)


def achievable(inputs, dose_mol) -> Achievable:
    """Return the drops reached with ``dose_mol`` [mol] for engine inputs (vectorised over doses).

    Parameters
    ----------
    inputs : :class:`sizing.model.Inputs`; its d32 is the homogeniser's own size and its
        target gives theta_min
    dose_mol : float or array [mol], >= 0

    Raises
    ------
    InputError
        A negative or non-finite dose.
    """
    n = np.asarray(dose_mol, dtype=float)
    if np.any(~np.isfinite(n)) or np.any(n < 0):
        raise InputError(f"--dose: expected an amount >= 0, got {float(np.min(n))!r} mol")
    if inputs.blend is not None:
        return _achievable_blend(inputs, n)
    vc, vd = phases.phase_volumes(inputs.volume, inputs.dispersed_fraction)
    u = phases.dispersed_uptake(inputs.system, inputs.continuous, inputs.partition_coefficient)
    c_min, theta_min = target_concentration(inputs)
    cmc = np.asarray(inputs.cmc, dtype=float)
    feasible = np.asarray(c_min <= cmc * (1 + 1e-12))
    loss = np.asarray(c_min) * (np.asarray(vc) + np.asarray(u) * np.asarray(vd))
    kw = dict(dispersed_volume=vd, continuous_volume=vc, uptake=u, max_surface_excess=inputs.max_surface_excess,
              min_coverage=theta_min, min_concentration=c_min, shape_factor=inputs.shape_factor)
    d_s = surfactant_limited_d32(n, **kw)
    d_h = np.asarray(inputs.d32, dtype=float)
    knee = loss + np.asarray(inputs.max_surface_excess) * np.asarray(theta_min) * 6.0 * np.asarray(
        inputs.shape_factor) * np.asarray(vd) / d_h
    shape = np.broadcast_shapes(n.shape, d_s.shape, d_h.shape, np.shape(knee))
    d = np.maximum(d_h, d_s)
    limited = np.where(d_s > d_h, "surfactant", "homogeniser")
    b = lambda x: np.broadcast_to(np.asarray(x), shape)  # noqa: E731
    return Achievable(dose_mol=b(n), d32=b(d), homogeniser_d32=b(d_h), surfactant_d32=b(d_s),
                      limited_by=b(limited), knee_dose_mol=b(knee), bulk_loss_mol=b(loss),
                      min_coverage=b(theta_min), min_concentration=b(c_min), feasible=b(feasible))


def _achievable_blend(inputs, n) -> Achievable:
    """:func:`achievable` for a blend: the area a dose covers at the target's total coverage.

    Below the onset of micelles the total coverage fixes ``w = theta/(1 - theta)`` and the area
    follows from one monotone root per dose (:func:`sizing.physics.blend.area_for_dose`).
    """
    vc, vd = phases.phase_volumes(inputs.volume, inputs.dispersed_fraction)
    target = solve(inputs)
    theta_min = np.asarray(target.state.coverage, dtype=float)
    c_min = np.asarray(target.state.free_concentration, dtype=float)
    feasible = np.asarray(target.feasible)
    phys = blend_physics_of(inputs)
    geo = dict(continuous_volume=vc, dispersed_volume=vd)
    area = blend.area_for_dose(theta_min, n, phys, **geo)
    s = np.asarray(inputs.shape_factor, dtype=float)
    with np.errstate(divide="ignore"):
        d_s = np.where(area > 0, 6.0 * s * np.asarray(vd) / np.where(area > 0, area, 1.0), np.inf)
    d_h = np.asarray(inputs.d32, dtype=float)
    a_h = 6.0 * s * np.asarray(vd) / d_h
    knee = blend.dose_for_area(theta_min, a_h, phys, **geo)
    loss = blend.dose_for_area(theta_min, np.zeros_like(a_h), phys, **geo)
    shape = np.broadcast_shapes(n.shape, d_s.shape, d_h.shape, np.shape(knee))
    d = np.maximum(d_h, d_s)
    limited = np.where(d_s > d_h, "surfactant", "homogeniser")
    b = lambda x: np.broadcast_to(np.asarray(x), shape)  # noqa: E731
    return Achievable(dose_mol=b(n), d32=b(d), homogeniser_d32=b(d_h), surfactant_d32=b(d_s),
                      limited_by=b(limited), knee_dose_mol=b(knee), bulk_loss_mol=b(loss),
                      min_coverage=b(theta_min), min_concentration=b(c_min), feasible=b(feasible))


def achievable_curve(inputs, n_points: int = 121, span: tuple = (0.05, 3.0)) -> dict:
    """Return ``{dose_mol, d32_m, knee_dose_mol, knee_d32_m}`` for a d32-against-dose chart.

    The doses run geometrically from ``span[0]`` to ``span[1]`` times the knee dose (one call).
    """
    knee = float(achievable(inputs, 0.0).knee_dose_mol)
    doses = knee * np.geomspace(span[0], span[1], n_points)
    a = achievable(inputs, doses)
    return {"dose_mol": doses, "d32_m": a.d32, "limited_by": a.limited_by, "knee_dose_mol": knee,
            "knee_d32_m": float(np.asarray(inputs.d32)), "bulk_loss_mol": float(a.bulk_loss_mol[0])}
