"""``sizing check CASE [--json]``: validate a case and show it resolved to SI, without solving."""

from __future__ import annotations

import numpy as np

from ..case import load_case
from ..model import case_inputs, onset_dose_mol
from ..outputs.jsonify import json_number
from ..outputs.solve_json import at_batch_json
from ..physics import balance, distribution, phases
from ..units import DIMENSIONS, sig
from .common import print_json, table


def register(sub) -> None:
    p = sub.add_parser("check", help="validate a case and print it resolved to SI (no solve)",
                       description="Validate a case file and print every input in SI with derived "
                                   "quantities (phase volumes, batch mass, sizes, areas), without solving.")
    p.add_argument("case", help="case file (TOML)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=run)


def _f(x):
    return json_number(x)


def resolve(case) -> dict:
    """Return ``{"inputs": {path: {si, unit, given}}, "derived": {...}}`` for a case (no solve)."""
    inputs = {}
    for path, v in case.quantities().items():
        unit = DIMENSIONS[v.dimension][1]
        if path == "surfactant.price_per_kg" or path.endswith("].price"):
            unit = f"{case.currency}/kg"
        raw = v.raw.get("value") if isinstance(v.raw, dict) else v.raw
        inputs[path] = {"si": v.si, "unit": unit or "-", "given": raw,
                        "spread": list(v.spread) if v.spread else None}
    i = case_inputs(case)
    vc, vd = phases.phase_volumes(i.volume, i.dispersed_fraction)
    area = float(distribution.interfacial_area(i.d32, vd, i.shape_factor))
    cont, disp = phases.phase_names(i.system, i.continuous)
    mass = vc * i.continuous_density + vd * i.dispersed_density
    stats = i.size_stats.as_dict() if i.size_stats is not None else {"d32": _f(i.d32)}
    theta_cmc = balance.max_coverage(i.adsorption_constant, i.cmc, i.model, i.interaction)
    derived = {
        "continuous_phase": cont, "dispersed_phase": disp,
        "batch_volume_m3": _f(i.volume), "continuous_volume_m3": _f(vc), "dispersed_volume_m3": _f(vd),
        "batch_mass_kg": _f(mass),
        "size_m": {k: (_f(v) if v is not None else None) for k, v in stats.items()},
        "interfacial_area_m2": area,
        "area_per_m3_dispersion_m2_m3": area / float(i.volume),
        "area_per_m3_continuous_m2_m3": area / float(vc),
        "area_per_kg_dispersed_m2_kg": _f(area / (vd * i.dispersed_density)) if i.system != "foam" else None,
        "max_surface_excess_mol_m2": _f(i.max_surface_excess),
        "max_surface_excess_mg_m2": _f(np.asarray(i.max_surface_excess) * i.molar_mass * 1e6),
        "isotherm": i.model, "target": {"kind": i.target_kind, "value_si": _f(i.target_value)},
        "coverage_at_cmc": _f(theta_cmc),
        "cmc_mol_m3": _f(i.cmc), "clean_tension_N_m": _f(i.clean_tension),
        "clean_tension_source": i.clean_tension_source if _f(i.clean_tension) is not None else None,
        # the values the balance uses at the batch temperature and salt (moved from the reference
        # temperature by the case's enthalpies, and by Corrin-Harkins for the salt)
        "at_batch": at_batch_json(i),
        "warnings": list(i.range_warnings),
    }
    if i.blend is not None:  # a blend has no isotherm constants of its own: the components hold them
        derived["coverage_at_cmc"] = None
        derived["max_surface_excess_mol_m2"] = derived["max_surface_excess_mg_m2"] = None
        derived["isotherm"] = "competitive Langmuir (blend)"
        derived["mixed_cmc_mol_m3"] = _f(i.cmc)
        derived["onset_dose_mol"] = _f(onset_dose_mol(i))
    return {"title": case.case.title, "valid": True, "inputs": inputs, "derived": derived}


def describe(out: dict) -> str:
    rows = []
    for path, d in out["inputs"].items():
        si = f"{sig(d['si'], 6)} {d['unit'] if d['unit'] != '-' else '(-)'}"
        rows.append((path, f"{si:<24} given {d['given']!r}" + (" with spread" if d["spread"] else "")))
    d = out["derived"]

    def u(x, unit, scale=1.0):
        return "n/a" if x is None else f"{sig(x * scale, 5)} {unit}"

    drows = [
        ("continuous phase", f"{d['continuous_phase']}, {u(d['continuous_volume_m3'], 'm**3')}"),
        ("dispersed phase", f"{d['dispersed_phase']}, {u(d['dispersed_volume_m3'], 'm**3')}"),
        ("batch volume", u(d["batch_volume_m3"], "m**3")),
        ("batch mass", u(d["batch_mass_kg"], "kg")),
    ]
    for k, v in d["size_m"].items():
        if v is not None:
            drows.append((k, u(v, "(-)") if k == "span" else u(v, "um", 1e6)))
    drows += [
        ("interfacial area per batch", u(d["interfacial_area_m2"], "m**2")),
        ("  per m**3 of dispersion", u(d["area_per_m3_dispersion_m2_m3"], "m**2/m**3")),
        ("  per m**3 of continuous phase", u(d["area_per_m3_continuous_m2_m3"], "m**2/m**3")),
        ("  per kg of dispersed phase", u(d["area_per_kg_dispersed_m2_kg"], "m**2/kg")),
        ("Gamma_inf", f"{u(d['max_surface_excess_mol_m2'], 'mol/m**2')} "
                      f"({u(d['max_surface_excess_mg_m2'], 'mg/m**2')})"),
        ("isotherm", d["isotherm"]),
        ("mixed CMC (charged composition, continuous phase alone)" if "mixed_cmc_mol_m3" in d else "CMC",
         u(d["cmc_mol_m3"], "mol/m**3") if d["cmc_mol_m3"] is not None else "none (no micelles)"),
        ("coverage at the CMC", u(d["coverage_at_cmc"], "(-)")),
        ("clean tension", u(d["clean_tension_N_m"], "N/m") + (f" ({d['clean_tension_source']})"
                                                               if d["clean_tension_source"] else "")),
    ]
    ab = d["at_batch"]
    drows.append(("at the batch temperature", f"{u(ab['temperature_K'], 'K')}: CMC {u(ab['cmc_mol_m3'], 'mol/m**3')}, "
                  f"K {u(ab['adsorption_constant_m3_mol'], 'm**3/mol')}, n {u(ab['gibbs_prefactor'], '(-)')}"))
    for comp in ab.get("components", ()):
        drows.append((f"  {comp['name']}", f"CMC {u(comp['cmc_mol_m3'], 'mol/m**3')}, "
                      f"K {u(comp['adsorption_constant_m3_mol'], 'm**3/mol')}, n {u(comp['gibbs_prefactor'], '(-)')}"))
    if "onset_dose_mol" in d:
        drows.append(("onset of mixed micelles", u(d["onset_dose_mol"], "mol per batch")))
    return "\n\n".join([table(rows, f"{out['title']}: inputs in SI"), table(drows, "derived (no solve)"),
                        "case is valid"])


def run(args) -> int:
    case = load_case(args.case)
    out = resolve(case)
    if args.json:
        print_json(out)
    else:
        print(describe(out))
    return 0
