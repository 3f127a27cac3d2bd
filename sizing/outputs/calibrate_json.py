"""The outputs of ``sizing calibrate``: result.json (a contract: extend, never rename), a short
report.html and the updated case (posterior medians and spreads, annotated)."""

from __future__ import annotations

import copy
import math

from ..case import case_to_dict, dumps_case
from ..texts import CAUTIONS
from .htmlbits import CSS, esc, q, section, table
from .jsonify import json_number as _num
from .jsonify import to_jsonable


def calibration_json(cal) -> dict:
    """``trials``, ``prior``, ``posterior`` (by case path, p10/p50/p90 in SI), ``effective_sample_size``,
    ``next`` {dose_kg_product, kg_product_per_batch, percentile, probability_target_met}, ``stability``."""
    t = cal.trials
    rows = []
    for j in range(t.charge_kg.size):
        rows.append({"batch": t.batch[j], "charge_kg": _num(t.charge_kg[j]), "d32_m": _num(t.d32[j]),
                     "serum_concentration_mol_m3": _num(t.serum_concentration[j]),
                     "serum_tension_N_m": _num(t.serum_tension[j]),
                     "stable": None if not math.isfinite(t.stable[j]) else bool(t.stable[j]),
                     "predicted_d32_m": _num(cal.predicted["d32_m"][j]),
                     "predicted_free_concentration_mol_m3": _num(cal.predicted["free_concentration_mol_m3"][j]),
                     "predicted_coverage": _num(cal.predicted["coverage"][j])})
    return to_jsonable({
        "trials": rows, "prior": cal.prior, "posterior": cal.posterior,
        "effective_sample_size": cal.effective_sample_size, "samples": cal.samples,
        "next": {"dose_kg_product": cal.next_dose_kg_product, "kg_product_per_batch": cal.next_charge_kg,
                 "percentile": cal.percentile, "probability_target_met": cal.probability_after},
        "prior_charge_kg": cal.prior_charge_kg, "probability_target_met_before": cal.probability_before,
        "stability": cal.stability, "learned": list(cal.learned), "notes": list(cal.notes),
        "cautions": list(CAUTIONS),
    })


def updated_case_toml(case, cal, trials_name) -> str:
    """The case with each learned input at its posterior median and a log-normal spread from the
    posterior band (p10..p90), annotated in ``[case] notes`` with the trials it came from."""
    data = copy.deepcopy(case_to_dict(case))
    for path, b in cal.posterior.items():
        section, _, key = path.partition(".")
        if key.startswith("component[") or section not in data or path not in case.quantities():
            continue
        v = case.quantities()[path]
        unit = {"length": "m", "concentration": "mol/m**3", "surface_excess": "mol/m**2",
                "adsorption_constant": "m**3/mol", "molar_mass": "kg/mol", "volume": "m**3", "mass": "kg",
                "temperature": "K", "tension": "N/m", "density": "kg/m**3", "dimensionless": ""}.get(v.dimension)
        if unit is None or not (b["p50"] > 0 and b["p10"] > 0):
            continue
        s = (math.log(b["p90"]) - math.log(b["p10"])) / (2 * 1.2815515655446004)
        rel = math.sqrt(math.expm1(s * s))
        text = f"{b['p50']:.6g} {unit}".strip() if unit else b["p50"]
        data[section][key] = {"value": text, "rel_sd": round(min(rel, 3.0), 4)}
    note = (f"calibrated on {len(cal.trials.batch)} trial batch(es) from {trials_name}: "
            f"{', '.join(cal.posterior)} at posterior medians with spreads from the posterior p10..p90 "
            "(calibrate again from the original case, not from this file, to avoid counting trials twice)")
    data.setdefault("case", {})["notes"] = note
    return dumps_case(data)


def calibration_html(case, cal, j) -> str:
    """A short self-contained report: prior against posterior, measured against predicted, next charge."""
    nx = j["next"]
    head = (f'<p class="big">Next charge {esc(q(nx["kg_product_per_batch"], "kg"))} of product per batch</p>'
            f"<p>P{nx['percentile']:g} dose {esc(q(nx['dose_kg_product'], 'kg'))} before margin and rounding; "
            f"before the trials {esc(q(j['prior_charge_kg'], 'kg'))}. Probability that the charge meets the target: "
            f"{esc(q(j['probability_target_met_before'], ''))} before, {esc(q(nx['probability_target_met'], ''))} "
            f"after. Effective sample size {j['effective_sample_size']:.0f} of {j['samples']}.</p>")
    rows = [(p, f"{q(j['prior'][p]['p10'], '')} / {q(j['prior'][p]['p50'], '')} / {q(j['prior'][p]['p90'], '')}",
             f"{q(b['p10'], '')} / {q(b['p50'], '')} / {q(b['p90'], '')}") for p, b in j["posterior"].items()]
    body = head + table(rows, ("learned input (SI)", "prior p10 / p50 / p90", "posterior p10 / p50 / p90"),
                        numeric_cols=())
    trows = [(r["batch"], q(r["charge_kg"], "kg"), q(r["d32_m"], "um", scale=1e6),
              q(r["predicted_d32_m"], "um", scale=1e6), q(r["serum_concentration_mol_m3"], "mM"),
              q(r["predicted_free_concentration_mol_m3"], "mM"), q(r["predicted_coverage"], ""),
              "" if r["stable"] is None else ("yes" if r["stable"] else "no")) for r in j["trials"]]
    body += table(trows, ("batch", "charge", "d32 measured", "d32 predicted", "serum measured", "serum predicted",
                          "coverage predicted", "stable"), numeric_cols=(1, 2, 3, 4, 5, 6))
    body += "".join(f"<p>{esc(n)}</p>" for n in j["notes"])
    cautions = "".join(f"<li>{esc(c)}</li>" for c in CAUTIONS)
    return (f"<!doctype html><html><head><meta charset='utf-8'><title>{esc(case.case.title)}: calibration"
            f"</title><style>{CSS}</style></head><body><h1>{esc(case.case.title)}: learning from the trials</h1>"
            + section("calibration", "Next charge and what the trials taught", body)
            + section("cautions", "Cautions", f"<ul>{cautions}</ul>") + "</body></html>\n")



