"""The blend part of a plan: the charge per component, where each goes, the interface composition
against the dose, the apparent CMC against the oil/water ratio and the cheapest ratio.

Every curve is one vectorised solve (:func:`sizing.model.solve` over an array of doses or of
fractions); nothing loops over points.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .. import model
from ..physics import blend as blend_physics
from ..physics import phases


@dataclass(frozen=True)
class ComponentCharge:
    """One component at the recommended charge.

    Attributes
    ----------
    name; mole_fraction [-]; mass_fraction : share of the blend's active by mass [-]
    kg_product, kg_active [kg per batch]; mol [mol per batch]
    coverage : the share of the interface it holds [-]
    split_mol : {water, oil, interface, micelles} [mol]
    """

    name: str
    mole_fraction: float
    mass_fraction: float
    kg_product: float
    kg_active: float
    mol: float
    coverage: float
    split_mol: dict


@dataclass(frozen=True)
class CheapestRatio:
    """The cheapest blend ratio that meets the target, over the range ``[blend.ratio]`` gives.

    Attributes
    ----------
    component : the component whose fraction moves; basis : 'mass' or 'mole'
    fraction : its fraction at the cheapest point [-] (nan when no point meets the target)
    fractions : every component's fraction there [-]
    cost_per_batch [currency], kg_product [kg] at that point, before margin and rounding
    grid, cost, kg_product_grid : the scan (nan where the target is not met)
    currency : the prices' currency
    at_bound : True when the cheapest point is an end of the range (the optimum may lie beyond)
    """

    component: str
    basis: str
    fraction: float
    fractions: tuple
    cost_per_batch: float
    kg_product: float
    grid: np.ndarray
    cost: np.ndarray
    kg_product_grid: np.ndarray
    currency: str
    at_bound: bool


@dataclass(frozen=True)
class BlendPart:
    """What a plan shows for a blend.

    Attributes
    ----------
    name; micelles ('ideal' or 'regular'); interaction : beta [-]
    components : :class:`ComponentCharge` per component at the charge, in case order
    mixed_cmc : total monomer at the onset in the continuous phase alone [mol/m**3]
    onset_kg_product : the blend charge at which micelles first form in this batch [kg]
    dose_kg_product : doses of the interface-composition curve [kg]
    coverage_by_component : theta_i along those doses, shape (points, m) [-]
    oil_water_ratio, apparent_cmc : the apparent CMC [mol per m**3 of water] against
    V_oil/V_water, interface left out (nan arrays for W/O and foams)
    batch_oil_water_ratio : this batch's V_oil/V_water [-] (nan for W/O and foams)
    cheapest : :class:`CheapestRatio` or None (no ``[blend.ratio]`` or no prices)
    split_kg_at_charge : active mass in {water, oil, interface, micelles} at the charge [kg]
    """

    name: str
    micelles: str
    interaction: float
    components: tuple
    mixed_cmc: float
    onset_kg_product: float
    dose_kg_product: np.ndarray
    coverage_by_component: np.ndarray
    oil_water_ratio: np.ndarray
    apparent_cmc: np.ndarray
    batch_oil_water_ratio: float
    cheapest: CheapestRatio | None
    split_kg_at_charge: dict


def _f(x) -> float:
    return float(np.asarray(x, dtype=float).reshape(-1)[0])


def component_charges(fwd: model.Solution, index: int = 0) -> tuple:
    """Return :class:`ComponentCharge` of every component of element ``index`` of a forward solve."""
    i = fwd.inputs
    bi = i.blend
    m = bi.size
    alpha = np.broadcast_to(np.asarray(bi.mole_fractions, dtype=float), (m,)) if np.ndim(bi.mole_fractions) == 1 \
        else np.asarray(bi.mole_fractions, dtype=float).reshape(-1, m)[0]
    mm = np.asarray(bi.molar_mass, dtype=float).reshape(-1, m)[0]
    act = np.asarray(bi.active_fraction, dtype=float).reshape(-1, m)[0]
    n = float(np.asarray(fwd.dose_mol, dtype=float).reshape(-1)[index])
    mass = alpha * mm / np.sum(alpha * mm)
    comp = fwd.components
    cont, disp = phases.phase_names(i.system, i.continuous)

    def at(x, j):
        return float(np.asarray(x, dtype=float).reshape(-1, m)[index, j])

    out = []
    for j, name in enumerate(bi.names):
        split = {"water": 0.0, "oil": 0.0}
        split[cont] = at(comp.continuous_mol, j)
        if disp in split:
            split[disp] = at(comp.dispersed_mol, j)
        split["interface"] = at(comp.interface_mol, j)
        split["micelles"] = at(comp.micelle_mol, j)
        out.append(ComponentCharge(name=name, mole_fraction=float(alpha[j]), mass_fraction=float(mass[j]),
                                   kg_product=float(n * alpha[j] * mm[j] / act[j]),
                                   kg_active=float(n * alpha[j] * mm[j]), mol=float(n * alpha[j]),
                                   coverage=at(comp.coverage, j), split_mol=split))
    return tuple(out)


def cheapest_ratio(case, points: int | None = None) -> CheapestRatio | None:
    """Scan the ``[blend.ratio]`` range in one target solve and return the cheapest point.

    Returns None without ``[blend.ratio]`` or when a component has no price.
    """
    bl = case.blend
    if bl is None or bl.ratio is None or not bl.priced:
        return None
    r = bl.ratio
    j = bl.index(r.component)
    grid = np.linspace(r.low, r.high, points or r.points)
    inputs = model.case_inputs(case, {f"blend.component[{j}].fraction": grid})
    sol = model.solve(inputs)
    ok = np.asarray(sol.feasible)
    kg = np.where(ok, np.asarray(sol.kg_product, dtype=float), np.nan)
    cost = np.where(ok, np.asarray(sol.cost, dtype=float), np.nan)
    if not np.any(np.isfinite(cost)):
        best, at_bound = -1, False
    else:
        best = int(np.nanargmin(cost))
        at_bound = best in (0, grid.size - 1)
    fr = [float(np.asarray(c.fraction.si)) for c in bl.component]
    fractions = tuple(math.nan for _ in fr)
    if best >= 0:
        rest = sum(f for k, f in enumerate(fr) if k != j)
        fractions = tuple(float(grid[best]) if k == j else f / rest * (1 - float(grid[best]))
                          for k, f in enumerate(fr))
    return CheapestRatio(
        component=bl.component[j].name, basis=bl.fractions,
        fraction=float(grid[best]) if best >= 0 else math.nan, fractions=fractions,
        cost_per_batch=float(cost[best]) if best >= 0 else math.nan,
        kg_product=float(kg[best]) if best >= 0 else math.nan,
        grid=grid, cost=cost, kg_product_grid=kg, currency=bl.currency, at_bound=bool(at_bound),
    )


def blend_part(case, inputs: model.Inputs, fwd: model.Solution, curve: model.Solution) -> BlendPart:
    """Build the blend part of a plan from the charge's forward solve and the dose curve."""
    bi = inputs.blend
    kg_per_mol = _f(inputs.molar_mass) / _f(inputs.active_fraction)
    onset = _f(model.onset_dose_mol(inputs))
    dose = np.asarray(curve.dose_mol, dtype=float) * kg_per_mol
    cov = np.asarray(curve.components.coverage, dtype=float).reshape(dose.size, bi.size)
    ratio = np.full(0, np.nan)
    app = np.full(0, np.nan)
    batch_ratio = math.nan
    if inputs.system == "emulsion" and inputs.continuous == "water":
        phi = _f(inputs.dispersed_fraction)
        batch_ratio = phi / (1.0 - phi)
        ratio = np.linspace(0.0, max(1.0, 2.0 * batch_ratio), 41)
        phys = model.blend_physics_of(inputs)
        if np.ndim(phys.fractions) == 1:
            app = np.asarray(blend_physics.apparent_cmc(phys, ratio), dtype=float)
    return BlendPart(
        name=case.blend.name, micelles=bi.micelles, interaction=_f(bi.interaction),
        components=component_charges(fwd, 0), mixed_cmc=_f(inputs.cmc),
        onset_kg_product=onset * kg_per_mol if math.isfinite(onset) else math.nan,
        dose_kg_product=dose, coverage_by_component=cov, oil_water_ratio=ratio, apparent_cmc=app,
        batch_oil_water_ratio=batch_ratio, cheapest=cheapest_ratio(case),
        split_kg_at_charge=split_kg_active(fwd, 0),
    )


def split_kg_active(sol: model.Solution, index: int = 0) -> dict:
    """Active mass [kg] in each place {water, oil, interface, micelles} of element ``index``.

    For a blend each component counts with its own molar mass (the blend's mean molar mass would
    misstate the split when the components differ); for one surfactant it is ``mol * M``.
    """
    i = sol.inputs
    if i.blend is None:
        m = _f(i.molar_mass)
        return {k: float(np.asarray(v, dtype=float).reshape(-1)[index]) * m
                for k, v in model.split_by_phase(sol).items()}
    mm = np.asarray(i.blend.molar_mass, dtype=float).reshape(-1, i.blend.size)[0]
    return {k: float(sum(c.split_mol[k] * mm[j] for j, c in enumerate(component_charges(sol, index))))
            for k in ("water", "oil", "interface", "micelles")}


@dataclass(frozen=True)
class ConditionsPart:
    """The charge across temperatures: from the batch to storage (``[batch] storage_temperature``).

    Attributes
    ----------
    temperature : grid [K]; coverage, free_concentration [mol/m**3], cmc [mol/m**3] of the charge there
    batch_temperature, storage_temperature : [K] (storage nan when not given)
    storage_coverage : coverage of the charge at storage [-] (nan without a storage temperature)
    target_coverage : the target's coverage [-]
    """

    temperature: np.ndarray
    coverage: np.ndarray
    free_concentration: np.ndarray
    cmc: np.ndarray
    batch_temperature: float
    storage_temperature: float
    storage_coverage: float
    target_coverage: float


def conditions_part(case, inputs: model.Inputs, mol_charge: float, target_coverage: float) -> ConditionsPart | None:
    """Coverage of the charged dose against temperature, one vectorised solve (None without a
    storage temperature or a temperature law in the case)."""
    b = case.batch
    items = [case.surfactant] if case.surfactant is not None else list(case.blend.component)
    has_law = any(s.reference_temperature is not None for s in items)
    if b.storage_temperature is None and not has_law:
        return None
    t_b = b.temperature.si
    t_s = b.storage_temperature.si if b.storage_temperature is not None else math.nan
    lo = min(t_b, t_s if math.isfinite(t_s) else t_b) - 10.0
    hi = max(t_b, t_s if math.isfinite(t_s) else t_b) + 10.0
    grid = np.linspace(lo, hi, 41)
    moved = model.case_inputs(case, {"batch.temperature": grid}).with_values(d32=inputs.d32, volume=inputs.volume)
    sol = model.solve(moved, dose_mol=np.full(grid.shape, mol_charge))
    cov_s = math.nan
    if math.isfinite(t_s):
        at_s = model.case_inputs(case, {"batch.temperature": t_s}).with_values(d32=inputs.d32, volume=inputs.volume)
        cov_s = _f(model.solve(at_s, dose_mol=mol_charge).state.coverage)
    return ConditionsPart(temperature=grid, coverage=np.asarray(sol.state.coverage, dtype=float),
                          free_concentration=np.asarray(sol.state.free_concentration, dtype=float),
                          cmc=np.broadcast_to(np.asarray(moved.cmc, dtype=float), grid.shape).copy(),
                          batch_temperature=t_b, storage_temperature=t_s, storage_coverage=cov_s,
                          target_coverage=float(target_coverage))
