"""Plant drop size of a case with ``[scaleup]``: the prediction, its band, and how it was found.

The correlations (power law ``d32 = C X**b`` fitted on lab points, stirred-tank Weber rules)
are pure functions in :mod:`sizing.physics.dropsize`; the plant d32 that the balance uses is
computed by :func:`sizing.model.plant_d32_of_values`.  :func:`scaleup_case` adds what the
engineer reads: the band (a 95 % prediction interval when the lab points allow one, else an
exponent window, said so in ``band_method``), the exponent's source, and warnings such as
extrapolation beyond the lab range (flagged, never clamped).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..errors import InputError
from ..model import lab_fit, plant_x, size_stats
from ..physics.dropsize import UNITS, WEBER_WINDOW, predict_power_law, stirred_tank_ratio, stirred_tank_speed

METHODS = ("power_law", "stirred_tank")



# ---------------------------------------------------------------------------------------------
# the case layer


@dataclass(frozen=True)
class ScaleupResult:
    """The plant drop size of a case, with its band and how it was found (SI floats)."""

    method: str
    lab_d32: float
    plant_d32: float
    band: tuple
    band_method: str
    exponent: float
    exponent_is_default: bool
    exponent_source: str
    details: dict
    warnings: list


def scaleup_case(case) -> ScaleupResult:
    """Predict the plant d32 of a case with a ``[scaleup]`` section.

    Raises
    ------
    InputError
        The case has no ``[scaleup]`` section.
    """
    s = case.scaleup
    if s is None:
        raise InputError("scaleup: the case has no [scaleup] section; add method = 'power_law' with lab "
                         "points and the plant conditions, or method = 'stirred_tank' with the vessels")
    values = case.values()
    lab_d32 = float(values["drops.d32"]) if "drops.d32" in values else float(size_stats(case, values).d32)
    warnings: list[str] = []
    if s.method == "power_law":
        fit = lab_fit(s)
        x = float(plant_x(s, values))
        d, lo, hi, how = predict_power_law(fit, x)
        xmin, xmax = fit.x_range
        if x < xmin * (1 - 1e-12) or x > xmax * (1 + 1e-12):
            warnings.append(f"the plant {s.variable} {x:.4g} {UNITS[s.variable]} lies outside the lab range "
                            f"{xmin:.4g} to {xmax:.4g} {UNITS[s.variable]}: the power law is extrapolated")
        if fit.exponent_is_default:
            warnings.append(f"exponent b = {fit.exponent:g} is a DEFAULT ({fit.exponent_source}), not fitted: "
                            "measure at two or more settings to calibrate it")
        if not fit.exponent_is_default and fit.exponent >= 0:
            warnings.append(f"fitted exponent b = {fit.exponent:.3g} >= 0: drops do not shrink with "
                            f"{s.variable} in these lab points; check the data (over-processing, coalescence)")
        details = {
            "variable": s.variable, "variable_unit": UNITS[s.variable], "plant_x": x,
            "prefactor": fit.prefactor, "prefactor_unit": f"m/({UNITS[s.variable]})**b",
            "prefactor_interval": fit.prefactor_interval, "exponent_interval": fit.exponent_interval,
            "n_points": fit.n_points, "dof": fit.dof, "residual_sd_ln": fit.residual_sd_ln,
            "lab_x_range": list(fit.x_range), "extrapolated": bool(warnings and "extrapolated" in warnings[0]),
            "rule": None,
        }
        return ScaleupResult("power_law", lab_d32, float(d), (float(lo), float(hi)), how, fit.exponent,
                             fit.exponent_is_default, fit.exponent_source, details, warnings)
    d_l, n_l, d_p = s.lab_diameter.si, s.lab_speed.si, s.plant_diameter.si
    n_p = float(stirred_tank_speed(d_l, n_l, d_p, s.rule, s.plant_speed.si if s.plant_speed else None))
    a = s.weber_exponent.si
    ratio = float(stirred_tank_ratio(d_l, n_l, d_p, n_p, a))
    r_lo = float(stirred_tank_ratio(d_l, n_l, d_p, n_p, a - WEBER_WINDOW))
    r_hi = float(stirred_tank_ratio(d_l, n_l, d_p, n_p, a + WEBER_WINDOW))
    lo, hi = lab_d32 * min(ratio, r_lo, r_hi), lab_d32 * max(ratio, r_lo, r_hi)
    if d_p < d_l:
        warnings.append("the plant impeller is smaller than the lab one: check the diameters")
    details = {
        "rule": s.rule, "lab_diameter_m": d_l, "plant_diameter_m": d_p,
        "lab_speed_1_s": n_l, "plant_speed_1_s": n_p, "plant_speed_rpm": 60 * n_p,
        "lab_tip_speed_m_s": math.pi * n_l * d_l, "plant_tip_speed_m_s": math.pi * n_p * d_p,
        "power_per_volume_ratio": (n_p / n_l) ** 3 * (d_p / d_l) ** 2,
        "weber_ratio": (n_p / n_l) ** 2 * (d_p / d_l) ** 3, "d32_ratio": ratio,
        "correlation": "d32/D = C1 (1 + C2 phi) We**a (Chen and Middleman 1967) [from memory]",
        "variable": None,
    }
    how = (f"Weber exponent {a - WEBER_WINDOW:g} to {a + WEBER_WINDOW:g} (assumed window around {a:g}; "
           "no source)")
    is_default = "weber_exponent" not in ((case._raw or {}).get("scaleup") or {})
    source = ("We**-0.6, Chen and Middleman 1967 [from memory]" if is_default
              else "fixed in the case (scaleup.weber_exponent)")
    return ScaleupResult("stirred_tank", lab_d32, lab_d32 * ratio, (lo, hi), how, a, is_default, source,
                         details, warnings)


