"""The optional parts of a plan, as typed frozen objects: scale-up, achievable d32, uncertainty, adsorption.

:func:`plan_monte_carlo` runs the Monte Carlo when the case has spreads (or an ``[uncertainty]``
section with a scale-up band to sample); :func:`sizing.planning.plan.build_plan` then bases the
charge on the chosen percentile and builds each part here:

- ``scaleup``: :class:`sizing.planning.scaleup.ScaleupResult` (when ``[scaleup]`` is given);
- ``achievable``: :class:`AchievablePart`, the d32 reached at each trial level and the knee dose;
- ``uncertainty``: :class:`UncertaintyPart`, the Monte Carlo, its sensitivity and histogram;
- ``adsorption``: :class:`sizing.planning.kinetics.AdsorptionCheck` (diffusivity and residence time given).

Their JSON (result.json) and HTML (report.html) forms are in :mod:`sizing.outputs`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from . import achievable, kinetics, scaleup, uncertainty
from .kinetics import AdsorptionCheck
from .scaleup import ScaleupResult
from .uncertainty import MonteCarlo


@dataclass(frozen=True)
class AchievableLevel:
    """The drop size one trial level reaches.

    Attributes
    ----------
    level : multiple of the recommended charge [-]; kg_product : the level's charge [kg]
    d32 : Sauter mean diameter reached [m] (nan when no dose stabilises new interface)
    limited_by : 'surfactant' or 'homogeniser'
    """

    level: float
    kg_product: float
    d32: float
    limited_by: str


@dataclass(frozen=True)
class AchievablePart:
    """Surfactant-limited drop size over the trial levels and the knee of the d32-dose curve.

    Attributes
    ----------
    knee_dose_mol : dose beyond which more surfactant no longer makes smaller drops [mol]
        (nan when not feasible); knee_dose_kg_product : the same as product [kg]
    homogeniser_d32 : the homogeniser's own limit, the case's d32 [m]
    min_coverage : coverage needed to stabilise new interface [-]
    levels : tuple of :class:`AchievableLevel`, one per trial level
    curve : ``{dose_mol [mol], d32_m [m], limited_by, knee_dose_mol [mol], knee_d32_m [m],
        bulk_loss_mol [mol]}`` arrays for the chart (:func:`sizing.planning.achievable.achievable_curve`)
    feasible : the needed coverage is reachable below the CMC
    """

    knee_dose_mol: float
    knee_dose_kg_product: float
    homogeniser_d32: float
    min_coverage: float
    levels: tuple
    curve: dict
    feasible: bool


@dataclass(frozen=True)
class UncertaintyPart:
    """The Monte Carlo behind the charge.

    Attributes
    ----------
    monte_carlo : :class:`sizing.planning.uncertainty.MonteCarlo` (draws, doses [kg], percentile [%])
    charge_kg_product : the recommended charge it is tested against [kg of product]
    sensitivity : tuple of one-at-a-time swings (:func:`sizing.planning.uncertainty.sensitivity`;
        doses [kg], inputs [SI])
    histogram : ``{edges_kg [kg], counts [-], p10, p50, p90 [kg]}`` of the needed dose
    """

    monte_carlo: MonteCarlo
    charge_kg_product: float
    sensitivity: tuple
    histogram: dict


def plan_monte_carlo(case) -> MonteCarlo | None:
    """Return the Monte Carlo of a case for its plan, or None when nothing is uncertain."""
    moving = [p for p in case.spreads() if p not in uncertainty.NOT_IN_DOSE]
    if not moving and (case.uncertainty is None or uncertainty.plant_d32_spread(case) is None):
        return None
    return uncertainty.monte_carlo(case)


def scaleup_part(case) -> ScaleupResult | None:
    """Return the plant drop size of a case with ``[scaleup]``, else None."""
    return scaleup.scaleup_case(case) if case.scaleup is not None else None


def achievable_part(inputs, trial) -> AchievablePart:
    """Return the achievable d32 at each trial level (one vectorised call) and the d32-dose curve."""
    mol = np.array([t.mol for t in trial], dtype=float)
    a = achievable.achievable(inputs, mol)
    curve = achievable.achievable_curve(inputs)
    feasible = bool(np.all(a.feasible))
    levels = tuple(AchievableLevel(level=t.level, kg_product=t.kg_product,
                                   d32=float(d) if feasible else math.nan, limited_by=str(lim))
                   for t, d, lim in zip(trial, a.d32, a.limited_by))
    knee = float(a.knee_dose_mol[0]) if feasible else math.nan
    m, af = float(inputs.molar_mass), float(inputs.active_fraction)
    return AchievablePart(knee_dose_mol=knee, knee_dose_kg_product=knee * m / af,
                          homogeniser_d32=float(np.asarray(inputs.d32)), min_coverage=float(a.min_coverage[0]),
                          levels=levels, curve=curve, feasible=feasible)


def uncertainty_part(case, mc: MonteCarlo, charge_kg_product: float) -> UncertaintyPart:
    """Return the uncertainty part: the Monte Carlo, the sensitivity of the dose, a histogram."""
    return UncertaintyPart(monte_carlo=mc, charge_kg_product=float(charge_kg_product),
                           sensitivity=tuple(uncertainty.sensitivity(case)),
                           histogram=uncertainty.histogram(mc))


def adsorption_part(case, solution) -> AdsorptionCheck | None:
    """Return the adsorption-speed check at the target state, or None without its data."""
    return kinetics.adsorption_check(case, solution)


@dataclass(frozen=True)
class RecipePart:
    """Where the current recipe's charge goes (``[recipe] current_charge``), beside the plan.

    Attributes
    ----------
    kg_product, kg_active, mol : the current charge per batch
    coverage, free_concentration : the equilibrium it gives [-, mol/m**3]
    split_mol : {water, oil, interface, micelles} [mol]
    times_recommended : current / recommended charge (product) [-]
    reserve_share : the share of the current charge beyond the equilibrium demand for the target
        (before margin), ``1 - demand / current`` (0 when the current charge is below the demand) [-]
    demand_kg_product : that demand [kg product]
    """

    kg_product: float
    kg_active: float
    mol: float
    coverage: float
    free_concentration: float
    split_mol: dict
    times_recommended: float
    reserve_share: float
    demand_kg_product: float = float("nan")  # the equilibrium demand for the target, before margin
