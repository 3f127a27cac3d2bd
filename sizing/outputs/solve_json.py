"""The ``sizing solve --json`` contract (DESIGN.md's fixed keys; a floor: add, never rename)."""

from __future__ import annotations

import math

import numpy as np

from ..model import Solution, solution_warnings, split_by_phase
from ..physics import phases
from ..texts import unreachable_reason
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
        },
        "split_mol": split,
        "target": {"kind": i.target_kind, "value_si": _num(i.target_value), "margin": _num(i.margin)},
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
    out["warnings"] = solution_warnings(sol)
    if not feasible:
        out["unreachable"] = unreachable_reason(float(sol.max_coverage))
    return out
