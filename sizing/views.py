"""Plain-data views of a case for charts and screens: curves, tables and explanations.

Every function here takes a validated :class:`sizing.case.Case` (or the raw case dict), calls the
orchestrating layer (:mod:`sizing.model`) and returns plain Python data (dicts of lists and
floats, SI units unless a key says otherwise), so that a user interface can cache and draw it.
No physics is added here: each curve is one vectorised :func:`sizing.model.solve` call.
"""

from __future__ import annotations

import copy
import csv
import io
import json
import math
import re
import tomllib
from pathlib import Path

import numpy as np

from .case import read_size_table, table_path
from .errors import InputError
from .model import case_inputs, condition_warnings, solve, solve_case, split_by_phase, target_concentration
from .outputs.calibrate_json import calibration_html, calibration_json, updated_case_toml
from .outputs.plan_files import build_outputs
from .outputs.result_json import adsorption_json, scaleup_json, uncertainty_json
from .outputs.solve_json import solution_json
from .physics import distribution
from .physics.isotherm import theta_of_c
from .planning import calibrate as calibration
from .planning import uncertainty
from .planning.achievable import achievable_curve
from .planning.calibrate import calibrate, read_trials
from .planning.kinetics import adsorption_check
from .planning.uncertainty import NOT_IN_DOSE, spread_quantiles
from .texts import MACROMOLECULE_MOLAR_MASS, field_label, unreachable_explanation  # noqa: F401  (field_label: used by the workbench)
from .units import _NUMBER, DIMENSIONS, format_si, parse, parse_value

# ---------------------------------------------------------------------------------------------
# the built-in demo and a blank case

_PACKAGE = Path(__file__).resolve().parent


def demo_case_path() -> Path:
    """Return the path of the built-in demo case.

    The packaged ``sizing/data/demo.toml`` is used when present, else the repository's
    ``cases_demo/lotion_o_w.toml`` (a source checkout).

    Raises
    ------
    InputError
        When neither file exists.
    """
    for p in (_PACKAGE / "data" / "demo.toml", _PACKAGE.parent / "cases_demo" / "lotion_o_w.toml"):
        if p.is_file():
            return p
    raise InputError("demo case: not found in this installation (sizing/data/demo.toml)")


def load_demo(path: Path | str | None = None) -> tuple[dict, Path]:
    """Return a demo case as a raw dict (unit strings as written) and its folder.

    ``path`` is one of :func:`demo_cases`; None loads the built-in demo.
    """
    path = demo_case_path() if path is None else Path(path)
    return tomllib.loads(path.read_text(encoding="utf-8")), path.parent


def demo_cases() -> list[tuple[str, Path]]:
    """Return ``(title, path)`` of the demo cases: the built-in one, then ``cases_demo/*.toml``.

    The folder ``cases_demo/`` is found beside the package in a source checkout (the README's
    editable install); an installed wheel has only the built-in demo.
    """
    out = [("Built-in demo: " + _title(demo_case_path(), tomllib), demo_case_path())]
    folder = _PACKAGE.parent / "cases_demo"
    if folder.is_dir():
        for p in sorted(folder.glob("*.toml")):
            out.append((f"{_title(p, tomllib)} ({p.name})", p))
    return out


def _title(path: Path, tomllib) -> str:
    try:
        return str(tomllib.loads(path.read_text(encoding="utf-8")).get("case", {}).get("title", path.stem))
    except (OSError, tomllib.TOMLDecodeError):
        return path.stem


def blank_case() -> dict:
    """Return a minimal starting case: batch, drops and target filled, the surfactant left to the user.

    The batch, drop and target values are neutral starting points (a 1 m**3 O/W batch, 2 um
    drops, coverage 0.8) for the engineer to replace; the surfactant's own properties (molar mass,
    CMC, saturated surface excess, adsorption constant) are left out, so the case asks for them
    instead of validating with invented values.
    """
    return {
        "case": {"title": "New case", "system": "emulsion", "continuous": "water"},
        "batch": {"volume": "1 m**3", "dispersed_fraction": 0.2, "temperature": "25 degC",
                  "continuous_density": "1000 kg/m**3", "dispersed_density": "900 kg/m**3"},
        "drops": {"d32": "2 um"},
        "surfactant": {"name": "", "active_fraction": 1.0, "isotherm": "langmuir"},
        "target": {"coverage": 0.8, "margin": 0.15},
    }


def problems_by_field(problems: list[str]) -> dict[str, list[str]]:
    """Group ``"path: message"`` lines by their path (``"drops.d32"``, ``"drops"``, ...).

    >>> problems_by_field(["drops.d32: expected a value > 0 m, got '-2 um'", "oops"])
    {'drops.d32': ["expected a value > 0 m, got '-2 um'"], '': ['oops']}
    >>> problems_by_field(["surfactant: isotherm: unknown isotherm 'x'"])
    {'surfactant.isotherm': ["unknown isotherm 'x'"]}
    """
    out: dict[str, list[str]] = {}
    for line in problems:
        head, sep, tail = line.partition(": ")
        if sep and head and " " not in head:
            # a section-level check that names its key first: "surfactant: isotherm: unknown ..."
            key, sep2, rest = tail.partition(": ")
            if "." not in head and sep2 and key.isidentifier():
                head, tail = f"{head}.{key}", rest
            out.setdefault(head, []).append(tail)
        else:
            out.setdefault("", []).append(line)
    return out


# ---------------------------------------------------------------------------------------------
# summaries


def _f(x) -> float:
    return float(np.asarray(x, dtype=float))


def _d32_override(case, d32: float | None) -> dict | None:
    """Return the override that sets the d32 the dose uses: the plant d32 when ``[scaleup]`` sets it."""
    if d32 is None:
        return None
    return {"scaleup.plant_d32" if getattr(case, "scaleup", None) is not None else "drops.d32": d32}


def summary(case, d32: float | None = None) -> dict:
    """Return the solve contract dict of the case (``d32`` [m] overrides the d32 the dose uses).

    With a ``[scaleup]`` section the override replaces the predicted plant d32 (the lab d32 of
    ``[drops]`` would not move a power-law prediction).
    """
    inputs = case_inputs(case, _d32_override(case, d32))
    return solution_json(solve(inputs), case)


def d32_info(case) -> dict:
    """Return where the d32 the dose uses comes from, for every page to say the same.

    Returns
    -------
    dict
        ``scaleup`` (None, ``"power_law"`` or ``"stirred_tank"``), ``lab_d32_m`` [m] (the d32 of
        ``[drops]``, the size description's own), ``used_d32_m`` [m] (the d32 the area and the dose
        use: the plant d32 with a scale-up), ``lab_moves_dose`` (False for a power law, whose lab
        points carry their own sizes), ``note`` (one sentence for a page; None without a scale-up).
    """
    inputs = case_inputs(case)
    lab, used = _f(inputs.lab_d32), _f(inputs.d32)
    method = case.scaleup.method if getattr(case, "scaleup", None) is not None else None
    note = None
    if method == "power_law":
        note = (f"The scale-up section predicts the plant d32 ({used * 1e6:.3g} µm) from the lab points; the "
                f"area and the dose use it. The d32 of the Drops and bubbles page ({lab * 1e6:.3g} µm) describes "
                "the lab drops and does not change the dose; to dose at a d32 of your own, edit the lab points "
                "or the plant setting, or remove the scale-up section (Scale-up page).")
    elif method == "stirred_tank":
        note = (f"The scale-up section turns the lab d32 ({lab * 1e6:.3g} µm, Drops and bubbles page) into a "
                f"plant d32 ({used * 1e6:.3g} µm) with the vessel rule; the area and the dose use the plant d32.")
    return {"scaleup": method, "lab_d32_m": lab, "used_d32_m": used,
            "lab_moves_dose": method != "power_law", "note": note}


def unreachable_text(case) -> str | None:
    """Explain in words why the target cannot be reached, or return None when it can.

    The target fixes the free monomer concentration the continuous phase must hold; above the
    CMC extra surfactant forms micelles and the free concentration no longer rises, so the
    coverage stops at its value at the CMC.
    """
    inputs = case_inputs(case)
    sol = solve(inputs)
    if bool(np.all(sol.feasible)):
        return None
    c, theta = target_concentration(inputs)
    kind = inputs.target_kind
    what = {"coverage": f"a coverage of {_f(inputs.target_value):.3g}",
            "tension": f"a tension of {_f(inputs.target_value) * 1e3:.3g} mN/m",
            "free_concentration": f"a free concentration of {_f(inputs.target_value):.3g} mM"}[kind]
    return unreachable_explanation(what, _f(c), _f(theta), _f(inputs.cmc), _f(sol.max_coverage))


def dose_split(case, d32: float | None = None) -> list[dict]:
    """Return where the dose goes: one row per place with mol, kg of active and per cent.

    Rows are ``{"place", "mol", "kg_active", "percent"}``; the places are the continuous phase,
    the dispersed phase, the interface and micelles (named by phase, e.g. ``"water"``).
    """
    inputs = case_inputs(case, _d32_override(case, d32))
    sol = solve(inputs)
    split = split_by_phase(sol)
    total = sum(_f(v) for v in split.values()) or 1.0
    mm = _f(inputs.molar_mass)
    rows = []
    for place, mol in split.items():
        if inputs.system == "foam" and place == "oil":
            continue
        if place == "micelles" and not math.isfinite(_f(inputs.cmc)):  # no CMC: no micelles to show
            continue
        m = _f(mol)
        rows.append({"place": place, "mol": m, "kg_active": m * mm, "percent": 100.0 * m / total})
    return rows


# ---------------------------------------------------------------------------------------------
# curves (one vectorised solve each)


def dose_vs_coverage(case, points: int = 60) -> dict:
    """Return the dose needed for each coverage up to the CMC ceiling (one vectorised solve).

    Returns
    -------
    dict
        ``coverage`` [-], ``kg_product``, ``kg_active`` [kg] (lists), the case's ``target_coverage``
        (its target expressed as a coverage, or None when unreachable), ``max_coverage`` (the CMC
        ceiling [-]) and ``target_kg_product`` [kg] (None when unreachable).
    """
    inputs = case_inputs(case)
    base = solve(inputs)
    theta_max = _f(base.max_coverage)
    top = min(theta_max, 0.995)
    grid = np.linspace(0.01, top, points)
    sol = solve(inputs.with_values(target_kind="coverage", target_value=grid))
    feasible = bool(np.all(base.feasible))
    _, theta_t = target_concentration(inputs)
    return {
        "coverage": grid.tolist(),
        "kg_product": np.asarray(sol.kg_product, dtype=float).tolist(),
        "kg_active": np.asarray(sol.kg_active, dtype=float).tolist(),
        "target_coverage": _f(theta_t) if math.isfinite(_f(theta_t)) else None,
        "target_feasible": feasible,
        "max_coverage": theta_max,
        "has_cmc": math.isfinite(_f(inputs.cmc)),
        "target_kg_product": _f(base.kg_product) if feasible else None,
    }


def d32_range(case) -> tuple[float, float]:
    """Return a what-if range of d32 [m] around the case's own: a fifth to five times."""
    d32 = _f(case_inputs(case).d32)
    return d32 / 5.0, d32 * 5.0


def dose_vs_d32(case, points: int = 60, low: float | None = None, high: float | None = None) -> dict:
    """Return the dose for the case's target against d32 on a log grid (one vectorised solve).

    Returns
    -------
    dict
        ``d32_m`` [m] and ``kg_product`` [kg] (lists; nan where the target is unreachable),
        ``case_d32_m`` [m] and ``feasible`` (bool list).
    """
    inputs = case_inputs(case)
    lo, hi = d32_range(case)
    lo = lo if low is None else low
    hi = hi if high is None else high
    grid = np.geomspace(lo, hi, points)
    sol = solve(inputs.with_values(d32=grid))
    return {
        "d32_m": grid.tolist(),
        "kg_product": np.asarray(sol.kg_product, dtype=float).tolist(),
        "feasible": np.asarray(sol.feasible, dtype=bool).tolist(),
        "case_d32_m": _f(inputs.d32),
    }


def size_curve(case, points: int = 200) -> dict | None:
    """Return the volume density against log size of the case's drop description, for a plot.

    Returns
    -------
    dict or None
        ``d_m`` [m] and ``q3`` (volume fraction per unit ln d [-]) as lists, ``d32_m``,
        ``dv50_m`` [m] (dv50 None when unknown) and ``kind``; None when only d32 is given.
    """
    d = case.drops
    values = case.values()
    inputs = case_inputs(case)
    stats = inputs.size_stats
    if d.distribution == "lognormal":
        gsd = values["drops.gsd"]
        centre = _f(stats.dv50)
        grid = np.geomspace(centre / gsd**4, centre * gsd**4, points)
        q3 = distribution.lognormal_volume_density(values["drops.median"], gsd, d.basis, grid)
    elif d.distribution == "rrsb":
        x, n = values["drops.characteristic_size"], values["drops.spread"]
        grid = np.geomspace(x * 0.01 ** (1 / n) / 3, x * 5.0 ** (1 / n) * 1.5, points)
        q3 = distribution.rrsb_volume_density(x, n, grid)
    elif d.distribution == "table":
        table = read_size_table(table_path(d.file, case.base_dir))
        # a step per class: uniform volume density in ln d inside each class
        width = np.log(table.upper / table.lower)
        level = table.volume_fraction / width
        grid = np.column_stack([table.lower, table.upper]).ravel()
        q3 = np.repeat(level, 2)
    else:
        return None
    dv50 = _f(stats.dv50)
    return {
        "d_m": np.asarray(grid, dtype=float).tolist(),
        "q3": np.asarray(q3, dtype=float).tolist(),
        "d32_m": _f(stats.d32),
        "dv50_m": dv50 if math.isfinite(dv50) else None,
        "kind": d.distribution,
    }


def case_copy(data: dict) -> dict:
    """Return a deep copy of a raw case dict (for editing without touching the original)."""
    return copy.deepcopy(data)


# ---------------------------------------------------------------------------------------------
# plan, scale-up and uncertainty (plain data from the engine's own orchestrating functions)


def plan_view(case) -> dict:
    """Return the plan of a case as plain data plus the files ``sizing plan`` would write.

    Returns
    -------
    dict
        ``result`` (result.json as a dict), ``files`` {``report.html``, ``result.json``,
        ``trial_plan.csv``: text}, ``trial_columns`` and ``trial_rows`` (the CSV as rows).
    """
    _, files = build_outputs(case, None)
    rows = list(csv.reader(io.StringIO(files["trial_plan.csv"])))
    return {"result": json.loads(files["result.json"]), "files": files,
            "trial_columns": rows[0] if rows else [], "trial_rows": rows[1:]}


def scaleup_view(case) -> dict | None:
    """Return ``sizing scaleup --json`` of the case, or None when it has no ``[scaleup]`` section."""
    if getattr(case, "scaleup", None) is None:
        return None

    return scaleup_json(case)


def uncertainty_view(case, bins: int = 40) -> dict | None:
    """Return the Monte Carlo of the case for a histogram, or None when nothing carries a spread.

    Returns
    -------
    dict or None
        ``edges_kg`` and ``counts`` (lists), ``p10``, ``p50``, ``p90`` [kg of product],
        ``summary`` (the result.json ``uncertainty`` block, with the one-at-a-time
        ``sensitivity`` swings for a tornado chart).
    """
    plant = getattr(case, "scaleup", None) is not None
    if not case.spreads() and not plant:
        return None
    try:
        mc = uncertainty.monte_carlo(case)
    except InputError as exc:
        if any(line.startswith("uncertainty: no input") for line in exc.problems):
            return None
        raise
    h = uncertainty.histogram(mc, bins)
    summary = uncertainty_json(case, mc)
    return {"edges_kg": np.asarray(h["edges_kg"], dtype=float).tolist(),
            "counts": np.asarray(h["counts"], dtype=int).tolist(),
            "p10": h["p10"], "p50": h["p50"], "p90": h["p90"], "summary": summary}


def achievable_view(case, points: int = 121) -> dict:
    """Return d32 against the dose with the knee, doses in kg of product (one vectorised call).

    Returns
    -------
    dict
        ``kg_product`` and ``d32_m`` [m] (lists), ``limited_by`` (list of 'surfactant' or
        'homogeniser'), ``knee_kg_product`` [kg], ``knee_d32_m`` [m], ``bulk_loss_kg_product`` [kg].
    """
    inputs = case_inputs(case)
    c = achievable_curve(inputs, n_points=points)
    per_mol = _f(inputs.molar_mass) / _f(inputs.active_fraction)  # kg of product per mol of active
    return {"kg_product": (np.asarray(c["dose_mol"], dtype=float) * per_mol).tolist(),
            "d32_m": np.asarray(c["d32_m"], dtype=float).tolist(),
            "limited_by": np.asarray(c["limited_by"]).tolist(),
            "knee_kg_product": float(c["knee_dose_mol"]) * per_mol, "knee_d32_m": float(c["knee_d32_m"]),
            "bulk_loss_kg_product": float(c["bulk_loss_mol"]) * per_mol}


def depletion_curve(langmuir: dict, c_low: float, c_high: float, points: int = 80) -> dict | None:
    """Return the fitted Langmuir excess of one depletion sample on a log grid, for a plot.

    ``langmuir`` is one entry of :attr:`sizing.fit_depletion.DepletionFit.langmuir`; returns
    ``{"c_mol_m3", "surface_excess_mol_m2"}`` (lists) or None when that sample has no fit.
    """
    if not isinstance(langmuir, dict) or "max_surface_excess_mol_m2" not in langmuir:
        return None
    c = np.geomspace(max(c_low, 1e-12), max(c_high, c_low * 10), points)
    gamma = langmuir["max_surface_excess_mol_m2"] * theta_of_c(c, langmuir["adsorption_constant_m3_mol"])
    return {"c_mol_m3": c.tolist(), "surface_excess_mol_m2": np.asarray(gamma, dtype=float).tolist()}


# ---------------------------------------------------------------------------------------------
# spreads for the Monte Carlo, and the adsorption-speed check

def _value_text(raw) -> str:
    raw = raw.get("value") if isinstance(raw, dict) else raw
    return "" if raw is None else str(raw)


def _unit_of(raw, dimension: str) -> str:
    """Return the unit the user wrote a value in (the SI unit when none is readable)."""
    m = _NUMBER.match(raw) if isinstance(raw, str) else None
    unit = m.group(2) if m else ""
    return unit or DIMENSIONS[dimension][1]


def spread_fields(case) -> list[dict]:
    """Return every numeric field of a validated case, for a spread editor.

    Returns
    -------
    list of dict
        ``path``, ``label``, ``dimension``, ``si_unit``, ``example`` (an input with its unit),
        ``value`` (the value as written, without any spread), ``spread`` (None, or
        ``{"kind": "lognormal", "rel_sd": x}`` or ``{"kind": "uniform", "low": text, "high": text}``)
        and ``in_dose`` (False where a spread cannot move the dose).
    """
    out = []
    for path, v in case.quantities().items():
        spread = None
        if v.spread is not None and isinstance(v.raw, dict):
            if v.spread[0] == "lognormal":
                spread = {"kind": "lognormal", "rel_sd": v.spread[1]}
            else:
                spread = {"kind": "uniform", "low": str(v.raw["low"]), "high": str(v.raw["high"])}
        _, si_unit, example = DIMENSIONS[v.dimension]
        out.append({"path": path, "label": field_label(path), "dimension": v.dimension, "si_unit": si_unit,
                    "example": example, "value": _value_text(v.raw), "spread": spread,
                    "in_dose": path not in NOT_IN_DOSE})
    return out


def spread_entry(value, kind: str, rel_sd: str = "", low: str = "", high: str = "", path: str = "value"):
    """Return the raw case entry of a value with a spread (the schema then checks it).

    Parameters
    ----------
    value : the current raw value (text with its unit, or a number)
    kind : ``"lognormal"`` (uses ``rel_sd``), ``"uniform"`` (uses ``low`` and ``high``) or
        ``"none"`` (the plain value)
    rel_sd, low, high : text as typed; ``rel_sd`` may be a number or a percentage (``"15 %"``)

    Raises
    ------
    InputError
        An empty rel_sd, low or high, naming the field and what is expected.

    Examples
    --------
    >>> spread_entry("2.0 um", "lognormal", rel_sd="15 %")
    {'value': '2.0 um', 'rel_sd': 0.15}
    >>> spread_entry(0.25, "uniform", low="0.2", high=" 0.3 ")
    {'value': 0.25, 'low': 0.2, 'high': 0.3}
    """
    value = value.get("value") if isinstance(value, dict) else value
    if kind == "none":
        return value

    def text(s, name, expected):
        s = str(s).strip()
        if not s:
            raise InputError(f"{path}: {name} is empty; expected {expected}")
        try:
            return float(s) if isinstance(value, (int, float)) else s
        except ValueError:
            return s

    if kind == "lognormal":
        s = str(rel_sd).strip()
        if not s:
            raise InputError(f"{path}: rel_sd is empty; expected a number from 0 to 3 (e.g. 0.15 or 15 %)")
        try:
            rel = parse(s, f"{path}.rel_sd", "dimensionless")
        except InputError:
            rel = s  # the schema names it
        return {"value": value, "rel_sd": rel}
    if kind == "uniform":
        unit = "a value with the field's unit" if not isinstance(value, (int, float)) else "a plain number"
        return {"value": value, "low": text(low, "low", unit), "high": text(high, "high", unit)}
    raise InputError(f"{path}: unknown spread kind {kind!r}; expected lognormal, uniform or none")


def spread_rows(case) -> list[dict]:
    """Return the spreads of a case as table rows, P10 and P90 in the unit the value is written in.

    Rows: ``field``, ``quantity``, ``distribution``, ``value``, ``spread``, ``P10``, ``P90`` (text
    with units), ``unit`` (``"-"`` for a plain number); for a uniform spread P10 and P90 are 10 % and 90 % of the way from low to high).
    """
    rows = []
    for path, v in case.spreads().items():
        unit = _unit_of(_value_text(v.raw), v.dimension)
        p10, p90 = (float(x) for x in spread_quantiles(v, [0.1, 0.9]))
        try:
            q = [format_si(x, v.dimension, unit if v.dimension != "dimensionless" else None, 3) for x in (p10, p90)]
        except Exception:  # a unit pint cannot convert back to: show SI
            q = [format_si(x, v.dimension, None, 3) for x in (p10, p90)]
        if v.spread[0] == "lognormal":
            dist, spread = "log-normal", f"rel_sd {v.spread[1]:g} ({100 * v.spread[1]:.3g} % of the mean)"
        else:
            dist, spread = "uniform", f"{v.raw['low']} .. {v.raw['high']}"
        rows.append({"field": path, "quantity": field_label(path), "distribution": dist,
                     "value": _value_text(v.raw), "spread": spread, "P10": q[0], "P90": q[1],
                     "unit": unit if v.dimension != "dimensionless" else "-"})
    return rows


ADSORPTION_FIELDS = {"surfactant.diffusivity": "the monomer diffusivity D, on the Surfactant page",
                     "process.residence_time": "the residence time in the homogeniser, under Process"}


def adsorption_view(case) -> dict:
    """Return the adsorption-speed check of a case for a screen.

    Returns
    -------
    dict
        ``status``: ``"missing"`` (with ``missing``, the fields that enable the check),
        ``"unreachable"`` (the target is above the CMC ceiling), ``"flagged"`` or ``"ok"``;
        ``diffusivity`` and ``residence_time`` (as written, or None); with a check, ``check``:
        :func:`sizing.kinetics.adsorption_check` (h [m], tau_D [s], t_res [s], ratio [-], message).
    """
    d = case.surfactant.diffusivity if case.surfactant is not None else None  # blends: not yet modelled
    proc = getattr(case, "process", None)
    t = proc.residence_time if proc is not None else None
    out = {"diffusivity": _value_text(d.raw) if d is not None else None,
           "residence_time": _value_text(t.raw) if t is not None else None,
           "missing": [p for p, v in (("surfactant.diffusivity", d), ("process.residence_time", t)) if v is None],
           "check": None}
    if out["missing"]:
        out["status"] = "missing"
        return out
    sol = solve_case(case)
    if not bool(np.all(sol.feasible)):
        out["status"] = "unreachable"
        return out
    check = adsorption_check(case, sol)
    out["check"] = adsorption_json(check) if check is not None else None
    out["status"] = "flagged" if out["check"]["optimistic"] else "ok"
    return out


def spread_note(case, path: str) -> str | None:
    """Return why a spread on ``path`` has no effect on the dose, or None when it has one.

    Fields outside the dose (the adsorption-speed inputs, the rounding step) are known up front;
    others (e.g. the temperature under a coverage target) are found by the sensitivity swings.
    """
    if path in uncertainty.NOT_IN_DOSE:
        return (f"{path}: carries a spread but does not change the dose ({uncertainty.NOT_IN_DOSE[path]}); "
                "it is left out of the Monte Carlo")
    try:
        rows = uncertainty.sensitivity(case)
    except InputError:
        return None
    for e in rows:
        if e["path"] == path and not e.get("moves_dose", True):
            return (f"{path}: carries a spread but does not change the dose or any dose output in this "
                    "case; its spread has no effect")
    return None


# SI column suffix -> (display unit, factor): the unit scaled to the numbers a lab table holds
_DISPLAY_UNITS = (("_mol_m2", "µmol/m²", 1e6), ("_mol_m3", "mM", 1.0), ("_N_m", "mN/m", 1e3),
                  ("_m3_mol", "m³/mol", 1.0), ("_m3", "mL", 1e6), ("_m2", "m²", 1.0), ("_mol", "µmol", 1e6),
                  ("_kg", "g", 1e3), ("_m", "µm", 1e6))


def display_rows(rows: list[dict], digits: int = 4) -> list[dict]:
    """Return lab-fit table rows with readable column names and units scaled to the numbers.

    >>> display_rows([{"surface_excess_mol_m2": 2.05e-06, "sample": "A"}])
    [{'surface excess [µmol/m²]': '2.05', 'sample': 'A'}]
    """
    out = []
    for row in rows:
        shown = {}
        for key, value in row.items():
            name, unit, factor = key.replace("_", " "), None, 1.0
            for suffix, u, f in _DISPLAY_UNITS:
                if key.endswith(suffix):
                    name, unit, factor = key[: -len(suffix)].replace("_", " "), u, f
                    break
            if isinstance(value, bool) or value is None:
                text = "" if value is None else ("yes" if value else "no")
            elif isinstance(value, (int, float)):
                text = str(value) if isinstance(value, int) and unit is None else f"{value * factor:.{digits}g}"
            elif isinstance(value, (list, tuple)):
                text = "; ".join(str(v) for v in value)
            else:
                text = str(value)
            shown[f"{name} [{unit}]" if unit else name] = text
        out.append(shown)
    return out


def fitted_plot_name(block_path: Path | str) -> str | None:
    """Return the plot file a fitted ``[surfactant]`` block names in ``[provenance] plot``."""
    try:
        prov = tomllib.loads(Path(block_path).read_text(encoding="utf-8")).get("provenance", {})
    except (OSError, tomllib.TOMLDecodeError):
        return None
    plot = prov.get("plot")
    return plot if isinstance(plot, str) and "/" not in plot and "\\" not in plot else None


# ---------------------------------------------------------------------------------------------
# blends, process conditions and plant trials for the workbench (plain data; the engine computes)

_COMPONENT_PATH = re.compile(r"^blend\.component\[(\d+)\](?:\.(\w+))?$")

#: keys a single [surfactant] and a [[blend.component]] share (copied when one turns into the other)
SHARED_ACTIVE_KEYS = ("name", "molar_mass", "active_fraction", "cmc", "max_surface_excess", "area_per_molecule",
                      "adsorption_constant", "gibbs_prefactor", "partition_coefficient", "reference_temperature",
                      "micellisation_enthalpy", "adsorption_enthalpy", "counterion_binding", "krafft_point",
                      "cloud_point", "charge", "diffusivity")
#: the temperature and salt keys of a surfactant or blend component (issue 11)
CONDITION_KEYS = ("reference_temperature", "micellisation_enthalpy", "adsorption_enthalpy", "counterion_binding",
                  "krafft_point", "cloud_point")
_PRICE = re.compile(r"^\s*([-+]?[0-9][0-9_]*\.?[0-9]*(?:[eE][-+]?[0-9]+)?)\s*([^\s/0-9][^/]*?)?\s*/\s*kg\s*$")


def component_field_label(path: str, data: dict) -> str:
    """Return a readable name of a blend component's field, naming the component.

    >>> d = {"blend": {"component": [{"name": "anionic A"}, {"name": "nonionic B"}]}}
    >>> component_field_label("blend.component[1].cmc", d)
    "CMC of component 2 ('nonionic B')"
    >>> component_field_label("blend.component[0]", d)
    "component 1 ('anionic A')"
    """
    m = _COMPONENT_PATH.match(path)
    if not m:
        return field_label(path)
    i, key = int(m.group(1)), m.group(2)
    comps = (data.get("blend") or {}).get("component") or []
    name = comps[i].get("name") if i < len(comps) and isinstance(comps[i], dict) else None
    who = f"component {i + 1}" + (f" ({str(name)!r})" if name else "")
    return f"{field_label('surfactant.' + key)} of {who}" if key else who


def rescaled_fractions(fractions: list, index: int, value: float) -> list[float]:
    """Return the blend fractions with ``fractions[index] = value`` and the others scaled to keep
    their proportions, so that they add up to 1 (the same rule as a ratio sweep).

    >>> rescaled_fractions([0.6, 0.4], 0, 0.7)
    [0.7, 0.3]
    >>> rescaled_fractions([0.5, 0.0, 0.0], 0, 0.4)
    [0.4, 0.3, 0.3]
    """
    value = min(max(float(value), 0.0), 1.0)
    rest = [float(f) for k, f in enumerate(fractions) if k != index]
    total = sum(rest)
    out = []
    for k, f in enumerate(fractions):
        if k == index:
            out.append(value)
        elif total > 0:
            out.append(float(f) / total * (1.0 - value))
        else:
            out.append((1.0 - value) / max(len(rest), 1))
    return [float(f"{x:.10g}") for x in out]


def blend_of_surfactant(data: dict, second_name: str = "co-surfactant", share: float = 0.2) -> tuple[dict, list[str]]:
    """Return a copy of a raw case whose ``[surfactant]`` becomes a two-component ``[blend]``, and notes.

    The second component starts as a copy of the first (a blend of two equal components gives the
    single surfactant's answer), at ``share`` of the active by mass, for the user to edit.

    Raises
    ------
    InputError
        No ``[surfactant]``, or one whose values come from a fitted file (``surfactant.from``).
    """
    out = case_copy(data)
    s = out.pop("surfactant", None)
    if not isinstance(s, dict):
        raise InputError("surfactant: the case has no [surfactant] section to turn into a blend")
    if s.get("from"):
        raise InputError(f"surfactant.from: the values come from {s['from']!r}; copy them into the case "
                         "(Surfactant page, Fit from lab data) before turning it into a blend")
    notes = []
    first = {k: s[k] for k in SHARED_ACTIVE_KEYS if k in s}
    first["name"] = str(s.get("name") or "surfactant") or "surfactant"
    price = s.get("price_per_kg")
    if isinstance(price, str) and _PRICE.match(price):  # already '1.2 EUR/kg'
        first["price"] = price
    elif isinstance(price, (int, float)):
        first["price"] = f"{price} {s.get('currency') or 'EUR'}/kg"
    if str(s.get("isotherm", "langmuir")).lower() != "langmuir":
        notes.append(f"the {s.get('isotherm')} isotherm became competitive Langmuir (blends use it)")
    for key, what in (("measured_in", "the phase the constants were measured in"),
                      ("plateau_tension", "the measured plateau tension")):
        if s.get(key) is not None:
            notes.append(f"{what} ({key}) is left out: a blend component does not take it")
    second = copy.deepcopy(first)
    second["name"] = second_name if second_name != first["name"] else second_name + " 2"
    first["fraction"] = float(f"{1.0 - share:.10g}")
    second["fraction"] = float(share)
    blend = {"name": f"{first['name']} with {second['name']}", "fractions": "mass", "micelles": "ideal",
             "component": [first, second]}
    if s.get("clean_tension") is not None:
        blend["clean_tension"] = s["clean_tension"]
    out["blend"] = blend
    return out, notes


def surfactant_of_blend(data: dict, index: int = 0) -> tuple[dict, list[str]]:
    """Return a copy of a raw case whose ``[blend]`` becomes the single ``[surfactant]`` of one
    component (``index``), and notes of what was left out.

    Raises
    ------
    InputError
        No ``[blend]`` with that component.
    """
    out = case_copy(data)
    b = out.pop("blend", None)
    comps = (b or {}).get("component") if isinstance(b, dict) else None
    if not isinstance(comps, list) or not 0 <= index < len(comps) or not isinstance(comps[index], dict):
        raise InputError(f"blend.component: no component {index + 1} to keep as the single surfactant")
    c = comps[index]
    s = {k: c[k] for k in SHARED_ACTIVE_KEYS if k in c}
    s["name"] = str(c.get("name") or "surfactant")
    s["isotherm"] = "langmuir"
    price = c.get("price")
    m = _PRICE.match(price) if isinstance(price, str) else None
    if m:
        s["price_per_kg"] = float(m.group(1).replace("_", ""))
        if m.group(2):
            s["currency"] = m.group(2).strip()
    if isinstance(b.get("clean_tension"), (str, int, float, dict)):
        s["clean_tension"] = b["clean_tension"]
    out["surfactant"] = s
    others = [str(x.get("name", f"component {k + 1}")) for k, x in enumerate(comps) if k != index and isinstance(x, dict)]
    notes = [f"left out: {', '.join(others)}"] if others else []
    if b.get("micelles") == "regular":
        notes.append("the mixed-micelle interaction no longer applies")
    return out, notes


#: the trials CSV's columns as ``sizing calibrate`` reads them: (header, unit shown, what it holds)
TRIAL_COLUMNS = (("batch", "-", "the batch's name or number"),
                 ("charge [kg]", "kg", "product as delivered, per batch, as the plan states it"),
                 ("d32 [um]", "µm", "Sauter mean diameter of the batch"),
                 ("serum concentration [mM]", "mM", "free surfactant left in the continuous phase"),
                 ("serum tension [mN/m]", "mN/m", "tension of the separated continuous phase"),
                 ("stable", "yes/no", "after the storage test"),
                 ("d32 sd [%]", "%", "measurement error of d32, relative (empty: the default)"),
                 ("serum sd [%]", "%", "measurement error of the serum analysis, relative (empty: the default)"),
                 ("notes", "", "free text, not read"))
#: the default measurement errors [%] written where an sd column is given but a cell is left empty
_SD_DEFAULTS = {"d32 sd [%]": 100 * calibration.D32_REL_SD, "serum sd [%]": 100 * calibration.SERUM_REL_SD}


def trials_csv(rows: list[dict]) -> str:
    """Return a trials CSV (headers with units in brackets, as ``sizing calibrate`` reads it) from rows
    keyed by :data:`TRIAL_COLUMNS` headers; empty cells stay empty (a missing measurement).

    >>> print(trials_csv([{"batch": "P-1", "charge [kg]": 1.5, "stable": True}]).strip())
    batch,charge [kg],d32 [um],serum concentration [mM],serum tension [mN/m],stable,notes
    P-1,1.5,,,,yes,
    """
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    heads = [h for h, _, _ in TRIAL_COLUMNS]
    rows = [r for r in rows if not all(_blank(r.get(h)) for h in heads)]
    heads = [h for h in heads if h not in _SD_DEFAULTS or any(not _blank(r.get(h)) for r in rows)]
    w.writerow(heads)
    for r in rows:
        cells = []
        for h in heads:
            v = r.get(h)
            if _blank(v) and h in _SD_DEFAULTS:  # a measurement error left empty: the stated default
                cells.append(f"{_SD_DEFAULTS[h]:g}")
            elif _blank(v):
                cells.append("")
            elif isinstance(v, bool):
                cells.append("yes" if v else "no")
            elif isinstance(v, float):
                cells.append(f"{v:.12g}")
            else:
                cells.append(str(v).strip())
        w.writerow(cells)
    return buf.getvalue()


def _blank(v) -> bool:
    return v is None or (isinstance(v, float) and not math.isfinite(v)) or (isinstance(v, str) and not v.strip())


def trials_rows(path) -> list[dict]:
    """Return the rows of a trials CSV as read by ``sizing calibrate``, keyed by :data:`TRIAL_COLUMNS`
    (for an editor table: d32 in µm, concentrations in mM, tension in mN/m, stable as yes/no/None)."""
    t = read_trials(path)
    out = []
    for j in range(t.charge_kg.size):
        def val(x, scale=1.0):
            return float(x) * scale if math.isfinite(float(x)) else None
        out.append({"batch": t.batch[j], "charge [kg]": val(t.charge_kg[j]), "d32 [um]": val(t.d32[j], 1e6),
                    "serum concentration [mM]": val(t.serum_concentration[j]),
                    "serum tension [mN/m]": val(t.serum_tension[j], 1e3),
                    "stable": None if not math.isfinite(t.stable[j]) else bool(t.stable[j]),
                    "d32 sd [%]": val(t.d32_rel_sd[j], 100.0), "serum sd [%]": val(t.serum_rel_sd[j], 100.0),
                    "notes": ""})
    return out


def calibration_view(case, trials_path: str, digest: str = "", samples: int | None = None) -> dict:
    """Return ``sizing calibrate CASE TRIALS.csv`` for a screen: ``result`` (its result.json),
    ``updated_case`` (TOML text), ``report`` (report.html) and ``bands`` (rows for a prior against
    posterior chart: ``path``, ``label``, ``which``, ``p10``, ``p50``, ``p90`` in display units, ``unit``).

    ``digest`` names the file's content (the cache key of a screen); it is not read.

    Raises
    ------
    InputError
        From the trials file or the calibration (rows and columns named).
    """
    trials = read_trials(trials_path)
    cal = calibrate(case, trials, samples=samples)
    j = calibration_json(cal)
    bands = []
    quantities = case.quantities()
    for path, post in j["posterior"].items():
        dim = quantities[path].dimension if path in quantities else ("length" if path.endswith("d32") else
                                                                      "dimensionless")
        unit, scale = _SHOWN_UNITS.get(dim, ("", 1.0))
        for which, b in (("prior", j["prior"][path]), ("posterior", post)):
            bands.append({"path": path, "label": field_label(path), "which": which, "unit": unit,
                          **{k: b[k] * scale for k in ("p10", "p50", "p90")}})
    return {"result": j, "updated_case": updated_case_toml(case, cal, Path(trials_path).name),
            "report": calibration_html(case, cal, j), "bands": bands}


# dimension -> (unit as people write it, factor from SI)
_SHOWN_UNITS = {"length": ("µm", 1e6), "concentration": ("mM", 1.0), "surface_excess": ("µmol/m²", 1e6),
                "adsorption_constant": ("m³/mol", 1.0), "molar_mass": ("g/mol", 1e3), "volume": ("m³", 1.0),
                "mass": ("kg", 1.0), "temperature": ("K", 1.0), "tension": ("mN/m", 1e3),
                "density": ("kg/m³", 1.0), "dimensionless": ("", 1.0), "molar_energy": ("kJ/mol", 1e-3)}


def blend_rows(result: dict) -> dict:
    """Return a blend plan's figures as rows for a screen, from result.json (:func:`plan_view`).

    Returns
    -------
    dict or None (not a blend)
        ``charge``: per component ``name``, ``mass_fraction``, ``mole_fraction``, ``kg_product``,
        ``kg_active``, ``mol``, ``coverage`` (share of the interface [-]) and ``percent`` {place: %};
        ``split``: rows ``component``, ``place``, ``kg_active``, ``percent``; ``interface``: rows
        ``dose_kg``, ``component``, ``coverage``; ``mixed_cmc_mol_m3``, ``onset_kg_product``,
        ``charge_kg`` (the recommended blend charge), ``cheapest`` (result.json's cheapest_ratio).
    """
    bp = result.get("blend_plan")
    comps = (result.get("recommendation") or {}).get("components")
    if not bp or not comps:
        return None
    charge, split = [], []
    for c in comps:
        total = sum(v for v in c["split_mol"].values() if v is not None) or 1.0
        kg_per_mol = c["kg_active"] / c["mol"] if c["mol"] else math.nan
        pct = {k: 100.0 * (v or 0.0) / total for k, v in c["split_mol"].items()}
        charge.append({k: c[k] for k in ("name", "mass_fraction", "mole_fraction", "kg_product", "kg_active", "mol",
                                         "coverage")} | {"percent": pct})
        for place, mol in c["split_mol"].items():
            if mol:
                split.append({"component": c["name"], "place": place, "kg_active": mol * kg_per_mol,
                              "percent": pct[place]})
    ic = bp["interface_composition"]
    interface = [{"dose_kg": d, "component": name, "coverage": cov[k]}
                 for name, cov in ic["coverage"].items() for k, d in enumerate(ic["dose_kg_product"])
                 if d is not None and cov[k] is not None]
    return {"charge": charge, "split": split, "interface": interface, "mixed_cmc_mol_m3": bp["mixed_cmc_mol_m3"],
            "onset_kg_product": bp["onset_kg_product"],
            "charge_kg": result["recommendation"]["kg_product_per_batch"], "cheapest": bp.get("cheapest_ratio"),
            "micelles": bp["micelles"], "interaction": bp["interaction"]}


def condition_notes(case) -> list[str]:
    """Return the Krafft- and cloud-point warnings of a case at its batch and storage temperatures
    (:func:`sizing.model.condition_warnings`; the balance does not hold where one applies)."""
    return list(condition_warnings(case))


def conditions_curve(result: dict) -> dict | None:
    """Return the plan's ``conditions`` part (result.json) in °C for a chart, or None without one.

    Returns
    -------
    dict or None
        ``temperature_C``, ``coverage`` [-], ``free_concentration_mol_m3``, ``cmc_mol_m3`` (lists),
        ``batch_C``, ``storage_C`` (None without a storage temperature), ``storage_coverage`` [-] and
        ``target_coverage`` [-].
    """
    c = result.get("conditions")
    if not c:
        return None

    def celsius(t):
        return None if t is None else t - 273.15

    return {"temperature_C": [celsius(t) for t in c["temperature_K"]], "coverage": c["coverage"],
            "free_concentration_mol_m3": c["free_concentration_mol_m3"], "cmc_mol_m3": c["cmc_mol_m3"],
            "batch_C": celsius(c["batch_temperature_K"]), "storage_C": celsius(c["storage_temperature_K"]),
            "storage_coverage": c["storage_coverage"], "target_coverage": result.get("target_coverage")}


# ---------------------------------------------------------------------------------------------
# scenarios side by side (the Scenarios page and `sizing compare`)

#: the compared quantities: key, label, unit as a case writes it ("" for text)
COMPARE_COLUMNS = (
    ("surfactant", "surfactant", ""),
    ("d32_um", "d32 for the dose", "um"),
    ("d32_source", "d32 from", ""),
    ("batch_m3", "batch volume", "m**3"),
    ("area_m2", "interfacial area", "m**2"),
    ("coverage", "target coverage", "-"),
    ("kg_product", "product per batch", "kg"),
    ("kg_active", "active per batch", "kg"),
    ("wt_percent", "product in the batch", "%"),
    ("where", "where the surfactant goes", ""),
)


def _same(a, b) -> bool:
    if isinstance(a, float) and isinstance(b, float):
        return a == b or abs(a - b) <= 1e-9 * max(abs(a), abs(b))
    return a == b


def compare_view(cases: list, points: int = 40) -> dict:
    """Return scenarios side by side: one row per case, the curves, and what differs from the first.

    ``cases`` is a list of ``(label, Case)``.  Each row holds the keys of :data:`COMPARE_COLUMNS`
    (SI-scaled as the key says: ``d32_um`` in µm; None where the target is not reachable) plus
    ``scenario``, ``feasible``, ``warnings`` and ``differs`` (the keys whose value is not the first
    case's).  ``curves`` are the dose against coverage of each case (one vectorised solve each).

    >>> from sizing.case import load_case
    >>> a = load_case(demo_case_path())
    >>> v = compare_view([("a", a), ("b", a)], points=5)
    >>> [r["differs"] for r in v["rows"]], v["differs"]["kg_product"]
    ([[], []], False)
    """
    rows, curves = [], []
    for label, case in cases:
        s = summary(case)
        info = d32_info(case)
        dose = s["dose"] or {}
        split = dose_split(case) if s["dose"] else []
        where = ", ".join(f"{r['place']} {r['percent']:.0f} %" for r in sorted(split, key=lambda r: -r["percent"])
                          if r["percent"] >= 0.5)
        rows.append({"scenario": str(label), "surfactant": str(case.active_name),
                     "d32_um": info["used_d32_m"] * 1e6,
                     "d32_source": "plant (scale-up)" if info["scaleup"] else "case",
                     "batch_m3": _f(s["phases"]["batch_volume_m3"]), "area_m2": _f(s["interfacial_area_m2"]),
                     "coverage": _f(s["state"]["coverage"]),
                     "kg_product": dose.get("kg_product"), "kg_active": dose.get("kg_active"),
                     "wt_percent": dose.get("wt_percent"),
                     "where": where or "target not reachable", "feasible": bool(s["feasible"]),
                     "warnings": list(s.get("warnings", []))})
        cov = dose_vs_coverage(case, points=points)
        curves.append({"scenario": str(label), "coverage": cov["coverage"], "kg_product": cov["kg_product"],
                       "target_coverage": cov["target_coverage"], "target_kg_product": cov["target_kg_product"]})
    keys = [k for k, _, _ in COMPARE_COLUMNS]
    for r in rows:
        r["differs"] = [k for k in keys if not _same(r[k], rows[0][k])]
    differs = {k: any(k in r["differs"] for r in rows) for k in keys}
    return {"columns": [{"key": k, "label": lab, "unit": u} for k, lab, u in COMPARE_COLUMNS],
            "rows": rows, "curves": curves, "differs": differs}


def apply_table_edits(rows: list[dict], edits: dict, columns: list[str]) -> list[dict]:
    """Return table rows with a data editor's edits applied (``edited_rows`` {position: {column:
    value}}, ``added_rows`` [{column: value}], ``deleted_rows`` [position]), every row keyed by
    ``columns``.

    >>> apply_table_edits([{"a": 1, "b": None}], {"edited_rows": {"0": {"b": 2}}, "added_rows": [{"a": 3}],
    ...                   "deleted_rows": []}, ["a", "b"])
    [{'a': 1, 'b': 2}, {'a': 3, 'b': None}]
    >>> apply_table_edits([{"a": 1}, {"a": 2}], {"deleted_rows": [0]}, ["a"])
    [{'a': 2}]
    """
    out = [{c: r.get(c) for c in columns} for r in rows]
    for pos, change in (edits.get("edited_rows") or {}).items():
        i = int(pos)
        if 0 <= i < len(out):
            out[i].update({c: v for c, v in change.items() if c in columns})
    for added in edits.get("added_rows") or []:
        out.append({c: added.get(c) for c in columns})
    for i in sorted({int(p) for p in edits.get("deleted_rows") or []}, reverse=True):
        if 0 <= i < len(out):
            out.pop(i)
    return out


def suggests_surface_load(data: dict) -> bool:
    """Return True for a raw case dict of a protein or polymer: one surfactant, no CMC, molar mass
    above ``texts.MACROMOLECULE_MOLAR_MASS`` (the workbench then offers a surface-load target).

    >>> suggests_surface_load({"surfactant": {"molar_mass": "66 kg/mol"}})
    True
    >>> suggests_surface_load({"surfactant": {"molar_mass": "288 g/mol", "cmc": "8 mM"}})
    False
    """
    s = data.get("surfactant") if isinstance(data, dict) else None
    if not isinstance(s, dict) or data.get("blend") or s.get("cmc") not in (None, ""):
        return False
    raw = s.get("molar_mass")
    raw = raw.get("value") if isinstance(raw, dict) else raw
    try:
        return parse_value(raw, "molar_mass") > MACROMOLECULE_MOLAR_MASS
    except Exception:  # an unreadable molar mass: its own field says so
        return False
