"""``sizing scaleup CASE [--json]``: the plant d32 from process conditions and the dose it implies."""

from __future__ import annotations

from ..case import load_case
from ..outputs.result_json import scaleup_json
from ..units import sig
from .common import print_json, table


def register(sub) -> None:
    p = sub.add_parser("scaleup", help="plant drop size from the [scaleup] section, and the dose it implies",
                       description="Predict the plant d32 from lab points (power law) or the lab vessel "
                                   "(stirred tank), with its band, and solve the dose at that size.")
    p.add_argument("case", help="case file (TOML) with a [scaleup] section")
    p.add_argument("--json", action="store_true", help="print the result as one JSON object")
    p.set_defaults(func=run)


def _um(x):
    return "n/a" if x is None else f"{sig(x * 1e6, 4)} um"


def _alt(x, variable) -> str:
    if variable == "pressure":
        return f" ({sig(x / 1e5, 4)} bar)"
    if variable == "energy_density":
        return f" ({sig(x / 1e6, 4)} MJ/m**3)"
    return ""


def describe(out: dict) -> str:
    """Return the readable text of a scale-up result (the JSON object)."""
    d = out["details"]
    lo, hi = out["plant_d32_band_m"]
    rows = [("method", out["method"] + (f", rule {out['rule']}" if out["rule"] else "")),
            ("lab d32 (case [drops])", _um(out["lab_d32_m"])),
            ("PLANT d32", f"{_um(out['plant_d32_m'])}  (band {_um(lo)} to {_um(hi)})"),
            ("band", out["band_method"])]
    if out["method"] == "power_law":
        unit = d["variable_unit"]
        b = f"{sig(out['exponent'], 4)}"
        if d["exponent_interval"]:
            b += f"  (95 %: {sig(d['exponent_interval'][0], 3)} to {sig(d['exponent_interval'][1], 3)})"
        rows += [("law", f"d32 = C X**b, X = {out['variable']} [{unit}]"),
                 ("exponent b", b + ("  [DEFAULT, not fitted]" if out["exponent_is_default"] else "")),
                 ("exponent source", out["exponent_source"]),
                 ("C", f"{sig(d['prefactor'], 4)} {d['prefactor_unit']}"),
                 ("lab points", f"{d['n_points']} over {sig(d['lab_x_range'][0], 4)} to "
                                f"{sig(d['lab_x_range'][1], 4)} {unit}"),
                 ("plant X", f"{sig(d['plant_x'], 4)} {unit}" + _alt(d["plant_x"], out["variable"]))]
    else:
        rows += [("Weber exponent", f"{sig(out['exponent'], 3)}" + ("  [default]" if out["exponent_is_default"] else "")),
                 ("impeller D lab / plant", f"{sig(d['lab_diameter_m'], 4)} m / {sig(d['plant_diameter_m'], 4)} m"),
                 ("speed lab / plant", f"{sig(60 * d['lab_speed_1_s'], 4)} rpm / {sig(d['plant_speed_rpm'], 4)} rpm"),
                 ("tip speed lab / plant", f"{sig(d['lab_tip_speed_m_s'], 4)} m/s / {sig(d['plant_tip_speed_m_s'], 4)} m/s"),
                 ("power per volume, plant/lab", f"{sig(d['power_per_volume_ratio'], 4)}"),
                 ("d32 plant/lab", f"{sig(d['d32_ratio'], 4)}")]
    text = [table(rows, out.get("title") or "scale-up")]
    if out["dose"] is not None:
        dose = out["dose"]
        drows = [("active", f"{sig(dose['kg_active'], 4)} kg  ({sig(dose['mol'], 4)} mol)"),
                 ("product as delivered", f"{sig(dose['kg_product'], 4)} kg")]
        if out["dose_band_kg_product"]:
            a, b = out["dose_band_kg_product"]
            drows.append(("product over the d32 band", f"{sig(a, 4)} to {sig(b, 4)} kg"))
        if out["lab_dose_kg_product"] is not None:
            drows.append(("product at the lab d32", f"{sig(out['lab_dose_kg_product'], 4)} kg"))
        text.append(table(drows, "dose at the plant d32 (equilibrium, no margin)"))
    else:
        text.append("TARGET NOT REACHABLE at equilibrium at the plant d32: "
                    + out["solve"].get("unreachable", ""))
    for w in out["warnings"]:
        text.append("warning: " + w)
    return "\n\n".join(text)


def run(args) -> int:
    case = load_case(args.case)
    out = scaleup_json(case)
    if args.json:
        print_json(out)
    else:
        print(describe(out))
    return 0
