"""The outputs of ``sizing calibrate``: result.json (a contract: extend, never rename), a short
report.html and the updated case (posterior medians and spreads, annotated)."""

from __future__ import annotations

import copy
import math
import re

from ..case import case_to_dict, dumps_case
from ..texts import CAUTIONS, field_label
from .htmlbits import CSS, chart, esc, q, section, table, unit_text
from .jsonify import json_number as _num
from .jsonify import to_jsonable

# SI unit of a learned input by its dimension, and the unit people read it in (with the factor)
_SI = {"length": "m", "concentration": "mol/m**3", "surface_excess": "mol/m**2", "adsorption_constant": "m**3/mol",
       "molar_mass": "kg/mol", "volume": "m**3", "mass": "kg", "temperature": "K", "tension": "N/m",
       "density": "kg/m**3", "dimensionless": "", "molar_energy": "J/mol", "frequency": "1/s", "power": "W",
       "pressure": "Pa", "velocity": "m/s"}
_SHOWN = {"m": ("um", 1e6), "mol/m**3": ("mM", 1.0), "mol/m**2": ("umol/m**2", 1e6), "N/m": ("mN/m", 1e3),
          "J/mol": ("kJ/mol", 1e-3), "kg/mol": ("g/mol", 1e3), "Pa": ("bar", 1e-5)}


def learned_unit(case, path: str) -> str:
    """The SI unit of a learned input ('' for a ratio such as the plant drop-size factor)."""
    if path == "scaleup.plant_d32":
        return "m"
    q_ = case.quantities().get(path)
    return _SI.get(q_.dimension, "") if q_ is not None else ""


def shown(value, si_unit: str, digits: int = 3, html: bool = False) -> str:
    """A learned value in the unit people read (µm, mM, mN/m): plain text, or as a report writes it."""
    if value is None or not math.isfinite(value):
        return "n/a"
    unit, f = _SHOWN.get(si_unit, (si_unit, 1.0))
    if si_unit == "K":
        unit, value, f = "degC", value - 273.15, 1.0
    return f"{value * f:.{digits}g} {unit_text(unit) if html else unit}".strip()


def calibration_json(cal, case=None) -> dict:
    """``trials``, ``prior``, ``posterior`` (by case path, p10/p50/p90 in SI), ``effective_sample_size``,
    ``next`` {dose_kg_product, kg_product_per_batch, percentile, probability_target_met}, ``stability``.
    Added later: ``units`` (SI unit of each banded input, '' for a ratio), ``warnings``, per trial
    ``d32_source`` (measured or a size table) and its own ``volume_m3``/``mass_kg``/``temperature_K``;
    ``stability`` with a model also gives the coverage interval and the dose for a 90 % chance."""
    t = cal.trials
    rows = []
    for j in range(t.charge_kg.size):
        extra = {"d32_source": (t.d32_source[j] if t.d32_source else None) or None}
        for name, key in (("volume", "volume_m3"), ("mass", "mass_kg"), ("temperature", "temperature_K")):
            arr = getattr(t, name, None)
            if arr is not None:
                extra[key] = _num(arr[j])
        rows.append({"batch": t.batch[j], "charge_kg": _num(t.charge_kg[j]), "d32_m": _num(t.d32[j]),
                     "serum_concentration_mol_m3": _num(t.serum_concentration[j]),
                     "serum_tension_N_m": _num(t.serum_tension[j]),
                     "stable": None if not math.isfinite(t.stable[j]) else bool(t.stable[j]),
                     "predicted_d32_m": _num(cal.predicted["d32_m"][j]),
                     "predicted_free_concentration_mol_m3": _num(cal.predicted["free_concentration_mol_m3"][j]),
                     "predicted_coverage": _num(cal.predicted["coverage"][j]), **extra})
    return to_jsonable({
        "trials": rows, "prior": cal.prior, "posterior": cal.posterior,
        "effective_sample_size": cal.effective_sample_size, "samples": cal.samples,
        "next": {"dose_kg_product": cal.next_dose_kg_product, "kg_product_per_batch": cal.next_charge_kg,
                 "percentile": cal.percentile, "probability_target_met": cal.probability_after},
        "prior_charge_kg": cal.prior_charge_kg, "probability_target_met_before": cal.probability_before,
        "stability": cal.stability, "learned": list(cal.learned), "notes": list(cal.notes),
        "cautions": list(CAUTIONS),
        "units": {p: (learned_unit(case, p) if case is not None else None) for p in cal.posterior},
        "warnings": list(getattr(cal, "warnings", ())),
    })


def updated_case_toml(case, cal, trials_name) -> str:
    """The case with each learned input at its posterior median and a log-normal spread from the
    posterior band (p10..p90), annotated in ``[case] notes`` with the trials it came from."""
    data = copy.deepcopy(case_to_dict(case))
    written = []
    for path, b in cal.posterior.items():
        section, _, key = path.partition(".")
        if section not in data or path not in case.quantities():
            continue
        table = data[section]
        m = re.fullmatch(r"component\[(\d+)\]\.(\w+)", key)
        if m:  # a blend component's key: blend.component[i].cmc
            comps = table.get("component") if isinstance(table, dict) else None
            if not isinstance(comps, list) or int(m.group(1)) >= len(comps):
                continue
            table, key = comps[int(m.group(1))], m.group(2)
        v = case.quantities()[path]
        unit = {"length": "m", "concentration": "mol/m**3", "surface_excess": "mol/m**2",
                "adsorption_constant": "m**3/mol", "molar_mass": "kg/mol", "volume": "m**3", "mass": "kg",
                "temperature": "K", "tension": "N/m", "density": "kg/m**3", "dimensionless": ""}.get(v.dimension)
        if unit is None or not (b["p50"] > 0 and b["p10"] > 0):
            continue
        s = (math.log(b["p90"]) - math.log(b["p10"])) / (2 * 1.2815515655446004)
        rel = math.sqrt(math.expm1(s * s))
        text = f"{b['p50']:.6g} {unit}".strip() if unit else b["p50"]
        table[key] = {"value": text, "rel_sd": round(min(rel, 3.0), 4)}
        written.append(path)
    note = (f"calibrated on {len(cal.trials.batch)} trial batch(es) from {trials_name}: "
            f"{', '.join(written) or 'no input'} at posterior medians with spreads from the posterior p10..p90 "
            "(calibrate again from the original case, not from this file, to avoid counting trials twice)")
    data.setdefault("case", {})["notes"] = note
    return dumps_case(data)


def learned_name(path: str, scaleup: bool = False) -> str:
    """A learned input's name as people say it (the JSON keeps the case path)."""
    if path == "drops.d32" and scaleup:
        return "lab d32 (the scale-up's starting size)"
    if path == "scaleup.plant_d32_factor":
        return "plant d32 factor (measured/predicted)"
    if path == "scaleup.plant_d32":
        return "plant d32"
    return field_label(path)


def _bands_chart(j, scaleup=False) -> str:
    """Prior and posterior p10..p90 of each learned input, as ratios to its prior median (log axis)."""
    paths = list(j["posterior"])

    def draw(fig):
        ax = fig.add_subplot(111)
        for i, p in enumerate(paths):
            ref = j["prior"][p]["p50"]
            if not ref:
                continue
            for off, band, colour, label in ((0.17, j["prior"][p], "#9aa7b8", "prior p10-p90"),
                                             (-0.17, j["posterior"][p], "#1f5fa8", "posterior p10-p90")):
                ax.plot([band["p10"] / ref, band["p90"] / ref], [i + off, i + off], color=colour, lw=6,
                        solid_capstyle="butt", label=label if i == 0 else None)
                ax.plot([band["p50"] / ref], [i + off], "|", color="black", ms=12)
        ax.set_yticks(range(len(paths)))
        ax.set_yticklabels([learned_name(p, scaleup) for p in paths])
        ax.set_xscale("log")
        ax.set_xlabel("value / prior median [-]")
        ax.invert_yaxis()
        ax.legend()
    return chart(draw, "What the trials taught: each learned input's 80 % band before and after (tick: median)")


def _measured_chart(j) -> str:
    rows = [r for r in j["trials"] if r["d32_m"] is not None or r["serum_concentration_mol_m3"] is not None]
    if not rows:
        return ""

    def draw(fig):
        ax = fig.add_subplot(111)
        names = [r["batch"] for r in rows]
        for key, pred, label, marker in (("d32_m", "predicted_d32_m", "d32", "o"),
                                         ("serum_concentration_mol_m3", "predicted_free_concentration_mol_m3",
                                          "serum concentration", "s")):
            pts = [(i, 100 * (r[key] / r[pred] - 1)) for i, r in enumerate(rows) if r[key] is not None and r[pred]]
            if pts:
                ax.plot([v for _, v in pts], [i for i, _ in pts], marker, ls="none", label=label)
        ax.axvline(0.0, color="grey", lw=1)
        ax.set_yticks(range(len(names)))
        ax.set_yticklabels(names)
        ax.invert_yaxis()
        ax.set_xlabel("measured against predicted (posterior) [%]")
        ax.legend()
    return chart(draw, "Each trial's measurements against the posterior prediction (0 % = agreement)")


def calibration_html(case, cal, j) -> str:
    """A short self-contained report: prior against posterior, measured against predicted, next charge."""
    nx = j["next"]
    units = j.get("units") or {}
    warn = "".join(f"<p class='warn'>{esc(w)}</p>" for w in j.get("warnings", []))
    warn += "".join(f"<p class='warn'>{esc(n)}</p>" for n in j["notes"] if n.startswith("WARNING"))
    before, after = j["prior_charge_kg"], nx["kg_product_per_batch"]
    raised = any(n.startswith("WARNING") and "raised" in n for n in j["notes"])
    if before is None or after is None:
        moved = "no charge before the trials to compare with"
    elif abs(after - before) <= 1e-9 * max(abs(before), 1e-12):
        moved = "unchanged"
    else:
        moved = "lower" if after < before else "higher"
    moved += ("; the lowest charge that passed above every failure (see the warning)" if raised else
              "; the trials narrowed the inputs below")
    head = (f'<p class="big">Next charge {esc(q(nx["kg_product_per_batch"], "kg"))} of product per batch</p>'
            f"<p>P{nx['percentile']:g} dose {esc(q(nx['dose_kg_product'], 'kg'))} before margin and rounding; "
            f"before the trials {esc(q(j['prior_charge_kg'], 'kg'))} ({esc(moved)}). "
            "Probability that the charge meets the target: "
            f"{esc(q(j['probability_target_met_before'], ''))} before, {esc(q(nx['probability_target_met'], ''))} "
            f"after. Effective sample size {j['effective_sample_size']:.0f} of {j['samples']}.</p>" + warn)

    def band(b, p):
        return " / ".join(shown(b[k], units.get(p) or "", 3, html=True) for k in ("p10", "p50", "p90"))
    scaleup = getattr(case, "scaleup", None) is not None
    rows = [(learned_name(p, scaleup), band(j["prior"][p], p), band(b, p)) for p, b in j["posterior"].items()]
    body = head + table(rows, ("learned input", "prior p10 / p50 / p90", "posterior p10 / p50 / p90"),
                        numeric_cols=()) + _bands_chart(j, scaleup)
    trows = [(r["batch"], q(r["charge_kg"], "kg"), q(r["d32_m"], "um", scale=1e6),
              q(r["predicted_d32_m"], "um", scale=1e6), q(r["serum_concentration_mol_m3"], "mM"),
              q(r["predicted_free_concentration_mol_m3"], "mM"), q(r["predicted_coverage"], ""),
              "" if r["stable"] is None else ("yes" if r["stable"] else "no")) for r in j["trials"]]
    body += table(trows, ("batch", "charge", "d32 measured", "d32 predicted", "serum measured", "serum predicted",
                          "coverage predicted", "stable"), numeric_cols=(1, 2, 3, 4, 5, 6))
    body += _measured_chart(j)
    st = j.get("stability") or {}
    if st.get("coverage_for_90_percent") is not None:
        lo, hi = st.get("coverage_for_90_percent_interval") or (None, None)
        kg = st.get("dose_kg_product_for_90_percent")
        body += (f"<p>Stability (logistic model on {st['rows']} pass/fail rows): a 90 % chance of a stable batch "
                 f"from coverage {q(st['coverage_for_90_percent'], '', 3)} (95 % profile interval "
                 f"{q(lo, '', 3) if lo is not None else 'open'} to {q(hi, '', 3) if hi is not None else 'open'}), "
                 f"a dose of {esc(q(kg, 'kg'))} of product before margin.</p>")
    body += "".join(f"<p>{esc(n)}</p>" for n in j["notes"] if not n.startswith("WARNING"))
    cautions = "".join(f"<li>{esc(c)}</li>" for c in CAUTIONS)
    return (f"<!doctype html><html><head><meta charset='utf-8'><title>{esc(case.case.title)}: calibration"
            f"</title><style>{CSS}</style></head><body><h1>{esc(case.case.title)}: learning from the trials</h1>"
            + section("calibration", "Next charge and what the trials taught", body)
            + section("cautions", "Cautions", f"<ul>{cautions}</ul>") + "</body></html>\n")
