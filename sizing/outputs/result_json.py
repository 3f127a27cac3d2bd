"""JSON contracts of the plan and the planning verbs (keys are a floor: add, never rename).

- result.json of ``sizing plan``: :func:`plan_json` (the solve keys plus ``recommendation``,
  ``trial``, ``assumptions``, ``cautions``, ``warnings`` and the optional parts ``scaleup``,
  ``trial_levels``, ``achievable``, ``uncertainty``, ``adsorption``);
- ``sizing scaleup --json``: :func:`scaleup_json`; ``sizing achievable --json``: :func:`achievable_json`;
- the ``uncertainty`` block: :func:`uncertainty_json`.

Each function turns the typed results of :mod:`sizing.planning` into plain JSON values; every
number passes :func:`sizing.outputs.jsonify.json_number` (nan and inf become null).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from ..model import case_inputs, parse_dose, solve
from ..physics import phases
from ..planning.achievable import achievable
from ..planning.kinetics import AdsorptionCheck
from ..planning.parts import AchievablePart, UncertaintyPart
from ..planning.plan import Plan, Recommendation, plan_warnings
from ..planning.scaleup import ScaleupResult, scaleup_case
from ..planning.uncertainty import MonteCarlo, covering_charge, monte_carlo, sensitivity, uncertainty_notes
from .jsonify import json_number
from .solve_json import solution_json

_num = f = json_number


# ---------------------------------------------------------------------------------------------
# result.json


def recommendation_json(rec: Recommendation) -> dict:
    """Return the ``recommendation`` object of result.json (SI, kg, %; null where unknown)."""
    return {
        "kg_product_per_batch": _num(rec.kg_product_per_batch),
        "kg_active_per_batch": _num(rec.kg_active_per_batch),
        "mol_per_batch": _num(rec.mol_per_batch),
        "wt_percent": _num(rec.wt_percent), "wt_percent_active": _num(rec.wt_percent_active),
        "g_per_l": _num(rec.g_per_l), "percent_on_dispersed": _num(rec.percent_on_dispersed),
        "mg_per_m2": _num(rec.mg_per_m2), "cost_per_batch": _num(rec.cost_per_batch),
        "currency": rec.currency, "margin": rec.margin, "increment_kg": rec.increment_kg,
        "increment_source": rec.increment_source, "basis": rec.basis, "reaches_target": rec.reaches_target,
        "base_kg_product": _num(rec.base_kg_product),
        "coverage_at_charge": _num(rec.coverage_at_charge),
        "free_concentration_at_charge_mol_m3": _num(rec.free_concentration_at_charge),
        "tension_at_charge_N_m": _num(rec.tension_at_charge),
        "micelle_share_at_charge": _num(rec.micelle_share_at_charge),
        "split_mol_at_charge": {k: _num(v) for k, v in rec.split_mol_at_charge.items()},
    }


def trial_json(trial) -> list[dict]:
    """Return the ``trial`` list of result.json, one object per level."""
    return [{
        "level": t.level, "kg_product": _num(t.kg_product), "kg_active": _num(t.kg_active),
        "mol": _num(t.mol), "wt_percent": _num(t.wt_percent), "coverage": _num(t.coverage),
        "free_concentration_mol_m3": _num(t.free_concentration), "tension_N_m": _num(t.tension),
        "micelle_share": _num(t.micelle_share), "batches": t.batches, "measure": list(t.measure),
    } for t in trial]


def scaleup_part_json(r: ScaleupResult) -> dict:
    """Return the ``scaleup`` block of result.json."""
    return {
        "method": r.method, "lab_d32_m": r.lab_d32, "plant_d32_m": r.plant_d32,
        "plant_d32_band_m": list(r.band), "band_method": r.band_method, "rule": r.details.get("rule"),
        "variable": r.details.get("variable"), "exponent": r.exponent,
        "exponent_is_default": r.exponent_is_default, "exponent_source": r.exponent_source,
        "warnings": list(r.warnings)}


def trial_levels_json(part: AchievablePart | None) -> list[dict]:
    """Return ``trial_levels`` of result.json: the achievable d32 and its limit per trial level."""
    if part is None:
        return []
    return [{"achievable_d32_m": _num(lv.d32) if part.feasible else None, "limited_by": lv.limited_by}
            for lv in part.levels]


def achievable_part_json(part: AchievablePart) -> dict:
    """Return the ``achievable`` block of result.json."""
    return {
        "knee_dose_mol": _num(part.knee_dose_mol), "knee_dose_kg_product": _num(part.knee_dose_kg_product),
        "homogeniser_d32_m": _num(part.homogeniser_d32), "min_coverage": _num(part.min_coverage),
        "levels": [dict(level=lv.level, kg_product=lv.kg_product, **j)
                   for lv, j in zip(part.levels, trial_levels_json(part))],
    }


def uncertainty_part_json(case, part: UncertaintyPart) -> dict:
    """Return the ``uncertainty`` block of result.json for the plan's charge."""
    return uncertainty_json(case, part.monte_carlo, charge_kg_product=part.charge_kg_product,
                            sensitivity_rows=part.sensitivity)


def adsorption_json(check: AdsorptionCheck) -> dict:
    """Return the ``adsorption`` block of result.json (h [m], tau_D [s], t_res [s], ratio [-], message)."""
    return dataclasses.asdict(check)


def plan_json(plan: Plan) -> dict:
    """Return result.json: :func:`sizing.outputs.solve_json.solution_json` keys plus the plan's own keys."""
    out = solution_json(plan.solution, plan.case)
    out["recommendation"] = recommendation_json(plan.recommendation)
    out["trial"] = trial_json(plan.trial)
    levels = trial_levels_json(plan.achievable)
    for row, extra in zip(out["trial"], levels):
        row.update(extra)  # achievable d32 per level
    out["target_coverage"] = _num(plan.target_coverage)
    out["ceiling_kg_product"] = _num(plan.curves.ceiling_kg_product)
    out["assumptions"] = [dict(a) for a in plan.assumptions] + [
        {"path": None, "label": "model", "value": text, "source": "model"} for text in plan.model_assumptions]
    out["cautions"] = list(plan.cautions)
    out["warnings"] = plan_warnings(plan)
    if not plan.feasible:
        out["options"] = list(plan.options)
    if plan.scaleup is not None:
        out["scaleup"] = scaleup_part_json(plan.scaleup)
    if plan.achievable is not None:
        out["trial_levels"] = levels
        out["achievable"] = achievable_part_json(plan.achievable)
    if plan.uncertainty is not None:
        out["uncertainty"] = uncertainty_part_json(plan.case, plan.uncertainty)
    if plan.adsorption is not None:
        out["adsorption"] = adsorption_json(plan.adsorption)
    if plan.conditions is not None:
        c = plan.conditions
        out["conditions"] = {
            "temperature_K": [_num(x) for x in c.temperature], "coverage": [_num(x) for x in c.coverage],
            "free_concentration_mol_m3": [_num(x) for x in c.free_concentration],
            "cmc_mol_m3": [_num(x) for x in c.cmc], "batch_temperature_K": _num(c.batch_temperature),
            "storage_temperature_K": _num(c.storage_temperature), "storage_coverage": _num(c.storage_coverage)}
    if plan.recipe is not None:
        r = plan.recipe
        out["recipe"] = {"current_charge_kg_product": _num(r.kg_product), "current_charge_kg_active": _num(r.kg_active),
                         "current_charge_mol": _num(r.mol), "coverage": _num(r.coverage),
                         "free_concentration_mol_m3": _num(r.free_concentration),
                         "split_mol": {k: _num(v) for k, v in r.split_mol.items()},
                         "times_recommended_charge": _num(r.times_recommended), "reserve_share": _num(r.reserve_share),
                         "demand_kg_product": _num(r.demand_kg_product)}
    if plan.blend is not None:
        out["recommendation"]["components"] = [
            {"name": c.name, "kg_product": _num(c.kg_product), "kg_active": _num(c.kg_active), "mol": _num(c.mol),
             "mass_fraction": _num(c.mass_fraction), "mole_fraction": _num(c.mole_fraction),
             "coverage": _num(c.coverage), "split_mol": {k: _num(v) for k, v in c.split_mol.items()}}
            for c in plan.blend.components]
        share = [c.kg_product / plan.recommendation.kg_product_per_batch
                 if plan.recommendation.kg_product_per_batch > 0 else float("nan") for c in plan.blend.components]
        for row in out["trial"]:
            row["components_kg_product"] = {c.name: _num(row["kg_product"] * sh)
                                            for c, sh in zip(plan.blend.components, share)}
        out["blend_plan"] = blend_part_json(plan.blend)
    return out


def blend_part_json(part) -> dict:
    """Return the ``blend_plan`` block of result.json (curves in SI and kg)."""
    ch = part.cheapest
    return {
        "name": part.name, "micelles": part.micelles,
        "interaction": _num(part.interaction) if part.micelles == "regular" else None,
        "mixed_cmc_mol_m3": _num(part.mixed_cmc), "onset_kg_product": _num(part.onset_kg_product),
        "split_kg_active_at_charge": {k: _num(v) for k, v in part.split_kg_at_charge.items()},
        "interface_composition": {
            "dose_kg_product": [_num(x) for x in part.dose_kg_product],
            "coverage": {c.name: [_num(x) for x in part.coverage_by_component[:, j]]
                         for j, c in enumerate(part.components)}},
        "apparent_cmc": {"oil_water_ratio": [_num(x) for x in part.oil_water_ratio],
                         "cmc_mol_m3_water": [_num(x) for x in part.apparent_cmc],
                         "batch_oil_water_ratio": _num(part.batch_oil_water_ratio)},
        "cheapest_ratio": None if ch is None else {
            "component": ch.component, "basis": ch.basis, "fraction": _num(ch.fraction),
            "fractions": [_num(x) for x in ch.fractions], "cost_per_batch": _num(ch.cost_per_batch),
            "kg_product": _num(ch.kg_product), "currency": ch.currency, "at_bound": ch.at_bound,
            "grid": [_num(x) for x in ch.grid], "cost": [_num(x) for x in ch.cost]},
    }


# ---------------------------------------------------------------------------------------------
# the planning verbs and blocks


def scaleup_json(case, result: ScaleupResult | None = None) -> dict:
    """Return the ``sizing scaleup --json`` object: plant d32 with its band and the dose it implies."""
    r = scaleup_case(case) if result is None else result
    plant = solution_json(solve(case_inputs(case)), case)
    band_doses = solve(case_inputs(case, {"scaleup.plant_d32": np.array(r.band)}))
    lab = solve(case_inputs(case, {"scaleup.plant_d32": r.lab_d32}))
    feasible = bool(np.all(band_doses.feasible))

    return {
        "title": case.case.title,
        "method": r.method,
        "lab_d32_m": r.lab_d32,
        "plant_d32_m": r.plant_d32,
        "plant_d32_band_m": list(r.band),
        "band_method": r.band_method,
        "rule": r.details.get("rule"),
        "variable": r.details.get("variable"),
        "exponent": r.exponent,
        "exponent_is_default": r.exponent_is_default,
        "exponent_source": r.exponent_source,
        "details": r.details,
        "warnings": r.warnings,
        "dose": plant["dose"],
        "dose_band_kg_product": sorted(json_number(v) for v in band_doses.kg_product) if feasible else None,
        "lab_dose_kg_product": json_number(lab.kg_product) if bool(np.all(lab.feasible)) else None,
        "feasible": plant["feasible"],
        "solve": plant,
    }


def achievable_json(case, dose) -> dict:
    """Return the ``sizing achievable --json`` object for a dose (text such as ``"2 kg"`` or mol)."""
    inputs = case_inputs(case)
    dose_mol = parse_dose(dose, inputs.molar_mass) if isinstance(dose, str) else float(dose)
    a = achievable(inputs, dose_mol)
    m, af = float(inputs.molar_mass), float(inputs.active_fraction)

    feasible = bool(np.all(a.feasible))
    knee = f(a.knee_dose_mol) if feasible else None
    d32 = f(a.d32)
    vd = float(phases.phase_volumes(inputs.volume, inputs.dispersed_fraction)[1])
    out = {
        "title": case.case.title,
        "dose_mol": dose_mol,
        "dose_kg_active": dose_mol * m,
        "dose_kg_product": dose_mol * m / af,
        "d32_m": d32 if feasible else None,
        "limited_by": str(a.limited_by),
        "knee_dose_mol": knee,
        "knee_dose_kg_active": knee * m if knee is not None else None,
        "knee_dose_kg_product": knee * m / af if knee is not None else None,
        "homogeniser_d32_m": f(a.homogeniser_d32),
        "surfactant_d32_m": f(a.surfactant_d32),
        "interfacial_area_m2": 6.0 * float(inputs.shape_factor) * vd / d32 if d32 else 0.0,
        "min_coverage": f(a.min_coverage),
        "min_free_concentration_mol_m3": f(a.min_concentration),
        "bulk_loss_mol": f(a.bulk_loss_mol),
        "feasible": feasible,
    }
    if not feasible:
        out["unreachable"] = ("the coverage needed to stabilise new interface needs a free concentration "
                              "above the CMC: no dose reaches it at equilibrium")
    elif d32 is None:
        out["note"] = ("the dose does not even cover what the continuous phase and the drops take at the "
                       "needed free concentration: no stable interface is made")
    return out


def uncertainty_json(case, mc: MonteCarlo | None = None, charge_kg_product: float | None = None,
                     with_sensitivity: bool = True, sensitivity_rows=None) -> dict:
    """Return the ``uncertainty`` block of result.json.

    ``charge_kg_product`` is the recommended charge to test (default: :func:`covering_charge`);
    ``sensitivity_rows`` the swings already computed (default: computed here).
    Keys: ``samples``, ``dose_kg_product`` {``p10``, ``p50``, ``p90``}, ``probability_target_met``,
    and ``seed``, ``percentile``, ``covering_kg_product``, ``charge_kg_product``,
    ``deterministic_kg_product``, ``infeasible_fraction``, ``sampling``, ``inputs``, ``sensitivity``.
    """
    mc = monte_carlo(case) if mc is None else mc
    p10, p50, p90, pc = (float(v) for v in mc.quantile_kg_product([10, 50, 90, mc.percentile]))
    charge = covering_charge(case, mc) if charge_kg_product is None else float(charge_kg_product)

    spreads = case.spreads()
    inputs = []
    for path in mc.paths:
        v = spreads.get(path)
        if v is None:
            inputs.append({"path": path, "kind": "lognormal (scale-up band as 95 % range)"})
        elif v.spread[0] == "lognormal":
            inputs.append({"path": path, "kind": "lognormal", "value_si": v.si, "rel_sd": v.spread[1]})
        else:
            inputs.append({"path": path, "kind": "uniform", "value_si": v.si, "low_si": v.spread[1],
                           "high_si": v.spread[2]})
    out = {
        "samples": mc.samples,
        "dose_kg_product": {"p10": f(p10), "p50": f(p50), "p90": f(p90)},
        "probability_target_met": mc.probability_met(charge),
        "seed": mc.seed,
        "percentile": mc.percentile,
        "dose_kg_product_at_percentile": f(pc),
        "covering_kg_product": f(covering_charge(case, mc)),
        "charge_kg_product": f(charge),
        "deterministic_kg_product": f(mc.deterministic_kg_product),
        "infeasible_fraction": mc.infeasible_fraction,
        "sampling": "rel_sd: log-normal with mean = value and that coefficient of variation; low/high: uniform",
        "inputs": inputs,
    }
    sens = ()
    if with_sensitivity:
        sens = sensitivity(case) if sensitivity_rows is None else sensitivity_rows
        out["sensitivity"] = [{k: (f(v) if isinstance(v, float) else v) for k, v in e.items()}
                              for e in sens]
    out["notes"] = uncertainty_notes(mc, sens)
    return out
