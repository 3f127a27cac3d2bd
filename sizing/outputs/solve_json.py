"""The ``sizing solve --json`` contract (DESIGN.md's fixed keys; a floor: add, never rename)."""

from __future__ import annotations

import math

import numpy as np

from ..model import (
    Solution,
    onset_dose_mol,
    solution_warnings,
    split_by_phase,
    storage_solution,
    storage_warnings,
)
from ..physics import phases
from ..planning.blendplan import component_charges
from ..texts import EOS_UNREACHABLE, unreachable_reason
from .jsonify import json_number as _num


def solution_json(sol: Solution, case=None) -> dict:
    """Return the ``sizing solve --json`` object of a scalar solution (the fixed contract)."""
    i = sol.inputs
    feasible = bool(np.all(sol.feasible))
    split = {k: _num(v) for k, v in split_by_phase(sol).items()}
    dose = None
    if feasible:
        dose = {
            "mol": _num(sol.dose_mol), "kg_active": _num(sol.kg_active), "kg_product": _num(sol.kg_product),
            "wt_percent": _num(sol.wt_percent), "wt_percent_active": _num(sol.wt_percent_active),
            "g_per_l": _num(sol.g_per_l), "mg_per_m2": _num(sol.mg_per_m2),
            "percent_on_dispersed": _num(sol.percent_on_dispersed), "cost": _num(sol.cost),
        }
    cont, disp = phases.phase_names(i.system, i.continuous)
    area = float(sol.area)
    vd, vc = float(sol.dispersed_volume), float(sol.continuous_volume)
    stats = i.size_stats.as_dict() if i.size_stats is not None else {"d32": _num(i.d32)}
    out = {
        "title": case.case.title if case is not None else None,
        "mode": sol.mode,
        "feasible": feasible,
        "max_coverage": _num(sol.max_coverage),
        "d32_m": _num(sol.d32),
        **({"lab_d32_m": _num(i.lab_d32),
            "size_m_basis": "size_m describes the lab drops of [drops]; d32_m and the area use the "
                            "plant d32 predicted by [scaleup]"}
           if getattr(case, "scaleup", None) is not None else {}),
        "interfacial_area_m2": area,
        "dose": dose,
        "state": {
            "free_concentration_mol_m3": _num(sol.state.free_concentration),
            "coverage": _num(sol.state.coverage),
            "surface_excess_mol_m2": _num(sol.surface_excess),
            "tension_N_m": _num(sol.tension),
            "at_cmc_ceiling": (not feasible) or bool(np.all(sol.state.micelle_mol > 0)),
            # added later: the adsorbed mass per area (what a protein's surface load means)
            "surface_load_kg_m2": _num(np.asarray(sol.surface_excess) * np.asarray(i.molar_mass)),
            **({"plateau_tension_N_m": _num(i.plateau_tension)} if np.all(np.isfinite(i.plateau_tension)) else {}),
        },
        "split_mol": split,
        "target": {"kind": i.target_kind, "value_si": _num(i.target_value), "margin": _num(i.margin),
                   **({"given": "surface_load", "surface_load_mol_m2": _num(i.target_surface_load),
                       "surface_load_kg_m2": _num(np.asarray(i.target_surface_load) * np.asarray(i.molar_mass))}
                      if np.all(np.isfinite(i.target_surface_load)) else {})},
        "phases": {
            "continuous": cont, "dispersed": disp,
            "continuous_volume_m3": vc, "dispersed_volume_m3": vd,
            "batch_volume_m3": _num(i.volume), "batch_mass_kg": _num(sol.batch_mass),
        },
        "area": {
            "per_batch_m2": area,
            "per_m3_dispersion_m2_m3": area / _num(i.volume),
            "per_m3_continuous_m2_m3": area / vc,
            "per_kg_dispersed_m2_kg": _num(area / (vd * i.dispersed_density)) if i.system != "foam" else None,
        },
        "size_m": {k: _num(v) if v is not None else None for k, v in stats.items()},
        "surfactant": {
            "model": i.model,
            "max_surface_excess_mol_m2": _num(i.max_surface_excess),
            "adsorption_constant_m3_mol": _num(i.adsorption_constant),
            "cmc_mol_m3": _num(i.cmc),
            "partition_coefficient": _num(i.partition_coefficient),
            "clean_tension_N_m": _num(i.clean_tension),
            "clean_tension_source": i.clean_tension_source if math.isfinite(float(np.asarray(i.clean_tension))) else None,
            "molar_mass_kg_mol": _num(i.molar_mass),
            "active_fraction": _num(i.active_fraction),
        },
    }
    out["at_batch"] = at_batch_json(sol.inputs)
    if case is not None and case.batch.storage_temperature is not None:
        stored = storage_solution(case, sol)
        out["storage"] = storage_json(case, stored)
        storage_notes = storage_warnings(case, sol, stored)
    else:
        storage_notes = []
    if i.blend is not None:
        out["components"] = components_json(sol)
        out["blend"] = blend_json(sol)
        out["surfactant"]["name"] = case.active_name if case is not None else None
    out["warnings"] = solution_warnings(sol) + storage_notes
    if not feasible:
        eos = (sol.mode == "target" and i.target_kind == "tension" and i.blend is None
               and not math.isfinite(float(np.asarray(i.cmc))))
        out["unreachable"] = EOS_UNREACHABLE if eos else unreachable_reason(float(sol.max_coverage))
    return out


def components_json(sol: Solution) -> list[dict]:
    """The ``components`` list of a blend (case order): dose, free monomer, coverage and split.

    Amounts and split come from :func:`sizing.planning.blendplan.component_charges` (one home);
    the dose keys are null where the target is not reachable.
    """
    bi, comp = sol.inputs.blend, sol.components
    feasible = bool(np.all(sol.feasible))

    def at(x, j):
        return _num(np.asarray(x, dtype=float).reshape(-1, bi.size)[0, j])

    out = []
    for j, c in enumerate(component_charges(sol, 0)):
        out.append({
            "name": c.name,
            "mole_fraction": _num(c.mole_fraction),
            "dose_mol": _num(c.mol) if feasible else None,
            "kg_active": _num(c.kg_active) if feasible else None,
            "kg_product": _num(c.kg_product) if feasible else None,
            "free_concentration_mol_m3": at(comp.free_concentration, j),
            "coverage": _num(c.coverage),
            "micelle_fraction": at(comp.micelle_fraction, j),
            "split_mol": {k: _num(v) for k, v in c.split_mol.items()},
        })
    return out


def blend_json(sol: Solution) -> dict:
    """The ``blend`` object: mixed CMC (continuous phase alone), micelle model, onset dose [mol]."""
    bi = sol.inputs.blend
    return {
        "mixed_cmc_mol_m3": _num(sol.inputs.cmc),
        "micelles": bi.micelles,
        "interaction": _num(bi.interaction) if bi.micelles == "regular" else None,
        "onset_dose_mol": _num(onset_dose_mol(sol.inputs)),
        "components": len(bi.names),
    }


def at_batch_json(i) -> dict:
    """The ``at_batch`` object of engine inputs: the values the balance uses at the batch temperature
    and salt (SI)."""
    out = {"temperature_K": _num(i.temperature), "cmc_mol_m3": _num(i.cmc),
           "adsorption_constant_m3_mol": _num(i.adsorption_constant), "gibbs_prefactor": _num(i.gibbs_prefactor)}
    if i.blend is not None:
        bi = i.blend
        m = bi.size
        rows = [np.asarray(x, dtype=float).reshape(-1, m)[0] for x in (bi.cmc, bi.adsorption_constant,
                                                                         bi.gibbs_prefactor)]
        out["components"] = [{"name": n, "cmc_mol_m3": _num(rows[0][j]), "adsorption_constant_m3_mol":
                              _num(rows[1][j]), "gibbs_prefactor": _num(rows[2][j])} for j, n in enumerate(bi.names)]
    return out


def storage_json(case, stored: Solution | None) -> dict:
    """The ``storage`` object: the charged dose re-equilibrated at the storage temperature."""
    t = case.batch.storage_temperature.si
    if stored is None:
        return {"temperature_K": t, "coverage": None, "free_concentration_mol_m3": None, "cmc_mol_m3": None,
                "micelle_mol": None, "tension_N_m": None, "note": "no dose to store (the target is not reachable)"}
    return {"temperature_K": t, "coverage": _num(stored.state.coverage),
            "free_concentration_mol_m3": _num(stored.state.free_concentration), "cmc_mol_m3": _num(stored.inputs.cmc),
            "micelle_mol": _num(stored.state.micelle_mol), "tension_N_m": _num(stored.tension),
            "adsorption_constant_m3_mol": _num(stored.inputs.adsorption_constant)}
