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


def not_applicable(case) -> dict[str, str]:
    """Return ``{path: reason}`` for the keys of a case that its model does not use (hidden by ``check``).

    Only defaults are hidden: a key the file gives is always shown (a stray key given on purpose
    is refused by the schema, or at least seen).
    """
    out: dict[str, str] = {}
    s = case.scaleup
    if s is not None and s.method == "power_law":
        out["scaleup.weber_exponent"] = "a stirred-tank key; this [scaleup] uses a power law of the process variable"
    sections = ([("surfactant", case.surfactant)] if case.surfactant is not None
                else [(f"blend.component[{i}]", c) for i, c in enumerate(case.blend.component)])
    for where, sec in sections:
        if getattr(sec, "isotherm", "langmuir").strip().lower() != "frumkin":
            out[f"{where}.interaction"] = "the Frumkin beta; this isotherm has none"
        if sec.reference_temperature is None:
            for key in ("micellisation_enthalpy", "adsorption_enthalpy"):
                out[f"{where}.{key}"] = "used only with reference_temperature (the constants hold at the batch temperature)"
        if sec.cmc is None:
            out[f"{where}.counterion_binding"] = "acts on the CMC, and this surfactant forms no micelles"
    if case.case.continuous == "oil":
        out["batch.salt"] = "the salt corrections act on an aqueous continuous phase"
    present = case.quantities()
    return {p: r for p, r in out.items() if p in present and case.source_of(p) == "default"}


def ionic_flags(case) -> list[str]:
    """An ionic surfactant (charge given, or counter-ion binding > 0) left with the default Gibbs prefactor."""
    sections = ([("surfactant", case.surfactant)] if case.surfactant is not None
                else [(f"blend.component[{i}]", c) for i, c in enumerate(case.blend.component)])
    out = []
    for where, sec in sections:
        why = []
        if sec.charge in ("anionic", "cationic"):
            why.append(f"charge = {sec.charge!r}")
        if sec.counterion_binding.si > 0:
            why.append(f"counterion_binding = {sec.counterion_binding.si:g}")
        if why and case.source_of(f"{where}.gibbs_prefactor") == "default":
            out.append(f"{where}.gibbs_prefactor: not given for an ionic surfactant ({', '.join(why)}); the default "
                       "n = 1 holds for a nonionic or an ionic in excess salt, a 1:1 ionic without salt has n = 2 "
                       "(common practice; the Gibbs equation of a 1:1 electrolyte), which halves Gamma_inf from "
                       "the slope of a tension isotherm: give gibbs_prefactor (e.g. 2), or fit the isotherm with "
                       "'sizing fit tension --electrolyte'")
    return out


def resolve(case) -> dict:
    """Return ``{"inputs": {path: {si, unit, given, source, as_written}}, "derived": {...}}`` (no solve).

    ``given`` is the value as the case file (or its fitted block) writes it, None for a default;
    ``source`` says which: ``"case file"``, ``"fitted block"``, ``"default"`` or
    ``"derived from <path>"``.  Keys the case's model does not use are left out of ``inputs`` and
    listed with the reason in ``not_applicable``.
    """
    inputs = {}
    hidden = not_applicable(case)
    for path, v in case.quantities().items():
        if path in hidden:
            continue
        unit = DIMENSIONS[v.dimension][1]
        if path == "surfactant.price_per_kg" or path.endswith("].price"):
            unit = f"{case.currency}/kg"
        raw = v.raw.get("value") if isinstance(v.raw, dict) else v.raw
        source = case.source_of(path)
        inputs[path] = {"si": v.si, "unit": unit or "-", "given": None if source == "default" else raw,
                        "source": source, "as_written": raw, "spread": list(v.spread) if v.spread else None}
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
        "warnings": list(i.range_warnings) + ionic_flags(case),
    }
    if i.blend is not None:  # a blend has no isotherm constants of its own: the components hold them
        derived["coverage_at_cmc"] = None
        derived["max_surface_excess_mol_m2"] = derived["max_surface_excess_mg_m2"] = None
        derived["isotherm"] = "competitive Langmuir (blend)"
        derived["mixed_cmc_mol_m3"] = _f(i.cmc)
        derived["onset_dose_mol"] = _f(onset_dose_mol(i))
    return {"title": case.case.title, "valid": True, "inputs": inputs, "not_applicable": hidden,
            "derived": derived}


def describe(out: dict) -> str:
    rows = []
    for path, d in out["inputs"].items():
        si = f"{sig(d['si'], 6)} {d['unit'] if d['unit'] != '-' else '(-)'}"
        src = d["source"]
        if src == "case file":
            where = f"given {d['as_written']!r}"
        elif src == "fitted block":
            where = f"from the fitted block {d['as_written']!r}"
        elif src.startswith("derived from "):
            where = f"{src} = {d['as_written']!r}"
        else:
            where = "default"
        if path == "batch.dispersed_fraction":
            where += " (volume fraction)"
        rows.append((path, f"{si:<24} {where}" + (" with spread" if d["spread"] else "")))
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
    parts = [table(rows, f"{out['title']}: inputs in SI")]
    if out.get("not_applicable"):
        parts.append("not used by this case (defaults hidden): " + ", ".join(out["not_applicable"]))
    parts.append(table(drows, "derived (no solve)"))
    parts += [f"warning: {w}" for w in d["warnings"]]
    return "\n\n".join(parts + ["case is valid"])


def run(args) -> int:
    case = load_case(args.case)
    out = resolve(case)
    if args.json:
        print_json(out)
    else:
        print(describe(out))
    return 0
