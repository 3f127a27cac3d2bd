"""The dosing recommendation and the plant-trial matrix of a case (pure computation).

The recommended charge is the dose for the target times ``1 + margin``, rounded *up* to the
practical increment of the product as weighed (e.g. 0.5 kg)::

    m_charge = increment * ceil(m_target (1 + margin) / increment)        [kg of product]

The state at that charge comes from the forward balance (dose -> state), so the coverage, the
free monomer and the micelles reported for the charge and for each trial level are what the
balance gives for the amount actually charged (micelles appear above the CMC).  When the target
cannot be reached at equilibrium (it needs a free concentration above the CMC), the charge is
built on the dose that just reaches the CMC ceiling and the plan says so.

Every array computation is one call of :func:`sizing.model.solve`: the trial levels, the
dose-coverage curve and the d32 what-if are each a single vectorised solve.

:class:`Plan` is frozen; its optional parts (scale-up, achievable drop size, uncertainty,
adsorption speed) are typed frozen objects built in :mod:`sizing.planning.parts`, ``None`` where
absent.  The JSON, CSV and HTML forms of a plan live in :mod:`sizing.outputs`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .. import model
from ..errors import InputError
from ..texts import (
    CAUTIONS,
    EOS_UNREACHABLE,
    FIELD_LABELS,
    MODEL_ASSUMPTIONS,
    unreachable_options,
    unreachable_reason,
)
from . import blendplan, parts
from .blendplan import BlendPart, ConditionsPart
from .kinetics import AdsorptionCheck
from .parts import AchievablePart, UncertaintyPart
from .scaleup import ScaleupResult
from .uncertainty import uncertainty_notes

AUTO_INCREMENT_NOTE = "automatic: a 1-2-5 step near 1 % of the charge (no [recommendation] increment)"


# ---------------------------------------------------------------------------------------------
# rounding


def auto_increment(kg):
    """Return a practical 1-2-5 weighing step [kg] near 1 % of ``kg`` (at least 1 g).

    Scalars give a float, arrays an array.

    >>> auto_increment(11.42), auto_increment(230.0), auto_increment(0.0)
    (0.1, 2.0, 0.001)
    """
    x = 0.01 * np.asarray(kg, dtype=float)
    ok = np.isfinite(x) & (x > 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        exp = np.floor(np.log10(np.where(ok, x, 1.0)))
        mant = np.where(ok, x, 1.0) / 10.0**exp
    step = np.where(mant < 2, 1.0, np.where(mant < 5, 2.0, 5.0)) * 10.0**exp
    out = np.where(ok, np.maximum(np.round(step, 12), 0.001), 0.001)
    return float(out) if out.ndim == 0 else out


def charge_for_dose(kg_product, margin, increment):
    """Return the charge [kg of product]: ``increment * ceil(kg_product (1 + margin) / increment)``.

    Parameters
    ----------
    kg_product : dose for the target [kg of product]; scalars or arrays broadcast
    margin : safety margin [-]
    increment : weighing step [kg]

    Notes
    -----
    A relative tolerance of 1e-9 keeps float noise from adding a whole step (11.5000000001 kg
    with a 0.5 kg step stays 11.5 kg).  nan stays nan.

    Examples
    --------
    >>> float(charge_for_dose(11.4208, 0.15, 0.5))   # 13.134 kg -> next 0.5 kg step
    13.5
    >>> float(charge_for_dose(10.0, 0.15, 0.5))      # 11.5 exactly stays 11.5
    11.5
    """
    x = np.asarray(kg_product, dtype=float) * (1.0 + np.asarray(margin, dtype=float))
    inc = np.asarray(increment, dtype=float)
    steps = np.ceil(x / inc * (1 - 1e-9))
    return np.maximum(steps, 1.0) * inc


# ---------------------------------------------------------------------------------------------
# containers


@dataclass(frozen=True)
class Recommendation:
    """The recommended charge per batch and the equilibrium it gives.

    Attributes
    ----------
    kg_product_per_batch [kg], kg_active_per_batch [kg], mol_per_batch [mol]
    wt_percent : product per batch mass [%] (nan without densities)
    wt_percent_active [%], g_per_l : product per litre of batch [g/L]
    percent_on_dispersed : product per mass of dispersed phase [%] (nan for a foam)
    mg_per_m2 : active per interfacial area [mg/m**2]
    cost_per_batch [currency] (nan without a price); currency
    margin [-]; increment_kg [kg]; increment_source : 'case' or the automatic rule
    basis : 'target' or 'cmc_ceiling' (target not reachable: built on the ceiling dose)
    reaches_target : bool
    base_kg_product : the dose the charge is built on, before margin and rounding [kg]
    coverage_at_charge [-], free_concentration_at_charge [mol/m**3], tension_at_charge [N/m]
    micelle_share_at_charge : micelles over the charge [-]
    split_mol_at_charge : {water, oil, interface, micelles} [mol]
    """

    kg_product_per_batch: float
    kg_active_per_batch: float
    mol_per_batch: float
    wt_percent: float
    wt_percent_active: float
    g_per_l: float
    percent_on_dispersed: float
    mg_per_m2: float
    cost_per_batch: float
    currency: str
    margin: float
    increment_kg: float
    increment_source: str
    basis: str
    reaches_target: bool
    base_kg_product: float
    coverage_at_charge: float
    free_concentration_at_charge: float
    tension_at_charge: float
    micelle_share_at_charge: float
    split_mol_at_charge: dict


@dataclass(frozen=True)
class TrialLevel:
    """One level of the trial matrix (a multiple of the recommended charge).

    Attributes
    ----------
    level : multiple of the recommended charge [-]
    kg_product [kg], kg_active [kg], mol [mol] per batch; wt_percent [%]
    coverage [-]; free_concentration [mol/m**3]; tension [N/m] (nan without a clean tension)
    micelle_share : micelles over the dose [-]; batches : batches at this level
    measure : what to measure at this level (text)
    """

    level: float
    kg_product: float
    kg_active: float
    mol: float
    wt_percent: float
    coverage: float
    free_concentration: float
    tension: float
    micelle_share: float
    batches: int
    measure: tuple[str, ...]


@dataclass(frozen=True)
class Curves:
    """Chart data.  Arrays in SI ([kg], [-], [mol/m**3], [m]).

    dose_kg_product, coverage, free_concentration : the forward curve dose -> coverage
    ceiling_kg_product : product dose at which the free monomer reaches the CMC (nan: no CMC)
    d32, d32_dose_kg_product : dose for the target (or the ceiling dose) against d32
    d32_charge_kg_product : the charge (margin and rounding) against d32
    """

    dose_kg_product: np.ndarray
    coverage: np.ndarray
    free_concentration: np.ndarray
    ceiling_kg_product: float
    d32: np.ndarray
    d32_dose_kg_product: np.ndarray
    d32_charge_kg_product: np.ndarray


@dataclass(frozen=True)
class Plan:
    """A planned case: the solve, the recommendation, the trial matrix, the chart data and its parts.

    Attributes
    ----------
    case : the validated case; inputs : :class:`sizing.model.Inputs`
    solution : the target solve (:class:`sizing.model.Solution`)
    feasible : the target is reachable at equilibrium
    target_coverage : theta the target asks for [-]
    recommendation : :class:`Recommendation`; trial : tuple of :class:`TrialLevel`
    curves : :class:`Curves`; assumptions : list of dicts {path, label, value, source}
    model_assumptions, cautions : tuples of text; options : what to do when unreachable
    case_notes : the case file's header comment (its story and sources), '' when unknown
    source : the case file's path as given ('' for none)
    scaleup : plant drop size of a case with ``[scaleup]`` (:class:`sizing.planning.scaleup.ScaleupResult`),
        None without that section
    achievable : drop size reached at the charge and each trial level, and the knee dose
        (:class:`sizing.planning.parts.AchievablePart`)
    uncertainty : the Monte Carlo behind the charge, its sensitivity and histogram
        (:class:`sizing.planning.parts.UncertaintyPart`), None when nothing carries a spread
    adsorption : the adsorption-speed check (:class:`sizing.planning.kinetics.AdsorptionCheck`),
        None without a diffusivity and a residence time (or when the target is unreachable)
    blend : the charge per component, interface composition, apparent CMC and cheapest ratio of a
        ``[blend]`` (:class:`sizing.planning.blendplan.BlendPart`), None for one surfactant
    conditions : the charge's coverage against temperature, batch to storage
        (:class:`sizing.planning.blendplan.ConditionsPart`), None without a storage temperature or a
        temperature law
    recipe : where the recipe's current charge goes (:class:`sizing.planning.parts.RecipePart`),
        None without ``[recipe] current_charge``
    """

    case: object
    inputs: model.Inputs
    solution: model.Solution
    feasible: bool
    target_coverage: float
    recommendation: Recommendation
    trial: tuple
    curves: Curves
    assumptions: list
    model_assumptions: tuple
    cautions: tuple
    options: tuple
    case_notes: str = ""
    source: str = ""
    scaleup: ScaleupResult | None = None
    achievable: AchievablePart | None = None
    uncertainty: UncertaintyPart | None = None
    adsorption: AdsorptionCheck | None = None
    blend: BlendPart | None = None
    conditions: ConditionsPart | None = None
    recipe: parts.RecipePart | None = None


# ---------------------------------------------------------------------------------------------
# building a plan


def _f(x) -> float:
    return float(np.asarray(x, dtype=float))


def measurements(system: str, continuous: str, micelles: bool, lowest: bool) -> tuple[str, ...]:
    """Return what to measure at a trial level (text), by the kind of dispersion."""
    if system == "foam":
        out = ["bubble size (d32 and spread, microscopy or image analysis)",
               "surface tension of the drained liquid",
               "overrun and drainage half-life; bubble growth over the shelf life"]
    else:
        out = ["drop size (d32, dv90, laser diffraction) fresh and after 24 h",
               "interfacial or surface tension of the separated continuous phase",
               "creaming or sedimentation (visual or accelerated, e.g. centrifuge) and viscosity"]
        if continuous == "oil":
            out[2] = "sedimentation of water drops, conductivity (phase check) and viscosity"
    if lowest:
        out.append("watch for coalescence or coarse drops: the margin's lower bound")
    if micelles:
        out.append("free surfactant above the CMC: watch foaming and depletion flocculation")
    return tuple(out)


def case_notes(path) -> str:
    """Return the header comment block of a case file (without the '#'), '' if none."""
    if path is None:
        return ""
    try:
        lines = open(path, encoding="utf-8").read().splitlines()
    except OSError:
        return ""
    out = []
    for line in lines:
        s = line.strip()
        if s.startswith("#"):
            out.append(s[1:][1:] if s[1:2] == " " else s[1:])
        elif s == "" and out:
            out.append("")
        elif s == "":
            continue
        else:
            break
    return "\n".join(out).strip()


def _raw_has(case, path: str) -> bool:
    raw = getattr(case, "_raw", None) or {}
    section, _, key = path.partition(".")
    if key.startswith("component[") and isinstance(raw.get(section), dict):  # blend.component[i].key
        index, _, key = key[len("component["):].partition("].")
        comps = raw[section].get("component")
        return (isinstance(comps, list) and index.isdigit() and int(index) < len(comps)
                and isinstance(comps[int(index)], dict) and key in comps[int(index)])
    return isinstance(raw.get(section), dict) and key in raw[section]


def assumptions(case, inputs: model.Inputs) -> list[dict]:
    """Return one dict per parameter: ``{path, label, value, source}`` (value as written)."""
    prov = case.provenance or {}
    fitted = set(prov.get("keys_from_file", ()))
    out = []
    stirred = getattr(getattr(case, "scaleup", None), "method", None) == "stirred_tank"
    for path, v in case.quantities().items():
        section, _, key = path.partition(".")
        if path == "scaleup.weber_exponent" and not stirred:
            continue  # only the stirred-tank rule uses it
        if _raw_has(case, path):
            src = "case file"
        elif section == "surfactant" and key in fitted:
            src = f"fitted block {prov.get('file', '')}".strip()
            if prov.get("kind") or prov.get("source"):
                src += f" ({', '.join(str(prov[k]) for k in ('kind', 'source') if prov.get(k))})"
        else:
            src = "default"
        raw = v.raw
        if isinstance(raw, dict):
            raw = raw.get("value")
        text = str(raw)
        if path == "surfactant.price_per_kg":
            text += f" {case.currency}/kg"
        elif v.dimension == "dimensionless" and not isinstance(raw, str):
            text += " (-)"
        if v.spread is not None:
            text += (f" (log-normal, rel. SD {v.spread[1]:g})" if v.spread[0] == "lognormal"
                     else " (uniform spread)")
        out.append({"path": path, "label": FIELD_LABELS.get(path, path), "value": text, "source": src})
    if case.blend is not None:
        bl = case.blend
        out.append({"path": "blend.micelles", "label": "mixed micelles",
                    "value": ("ideal (Clint 1975)" if bl.micelles == "ideal" else
                              f"regular solution (Rubingh 1979), beta = {bl.beta:g}"),
                    "source": "case file" if _raw_has(case, "blend.micelles") else "default"})
        out.append({"path": "blend.isotherm", "label": "interface", "value": "competitive Langmuir",
                    "source": "model (every blend)"})
        return out
    s = case.surfactant
    out.append({"path": "surfactant.isotherm", "label": "isotherm", "value": inputs.model,
                "source": "case file" if _raw_has(case, "surfactant.isotherm") else
                ("fitted block" if "isotherm" in fitted else "default")})
    if s.cmc is None:
        out.append({"path": "surfactant.cmc", "label": "CMC", "value": "none (no micelles)",
                    "source": "case file (no cmc given)"})
    if s.clean_tension is None and math.isfinite(_f(inputs.clean_tension)):
        out.append({"path": "surfactant.clean_tension", "label": "clean-interface tension",
                    "value": f"{_f(inputs.clean_tension) * 1e3:.4g} mN/m", "source": inputs.clean_tension_source})
    return out


def options_when_unreachable(plan_case, inputs: model.Inputs, max_coverage: float) -> tuple[str, ...]:
    """Return the options an engineer has when the target needs more than the CMC allows."""
    return unreachable_options(max_coverage)


def _level_rows(case, sol: model.Solution, levels, charge_kg: float, increment: float) -> tuple:
    rows = []
    st = sol.state
    total = np.asarray(st.total_mol, dtype=float)
    share = np.where(total > 0, np.asarray(st.micelle_mol) / np.where(total > 0, total, 1.0), 0.0)
    system, continuous = case.case.system, case.case.continuous
    for j, lev in enumerate(levels):
        i = j + 1  # index 0 is the charge itself
        rows.append(TrialLevel(
            level=float(lev), kg_product=_f(sol.kg_product[i]), kg_active=_f(sol.kg_active[i]),
            mol=_f(sol.dose_mol[i]), wt_percent=_f(np.asarray(sol.wt_percent)[i]),
            coverage=_f(st.coverage[i]), free_concentration=_f(st.free_concentration[i]),
            tension=_f(np.asarray(sol.tension)[i]), micelle_share=_f(share[i]),
            batches=int(case.trial.batches_per_level),
            measure=measurements(system, continuous, bool(st.micelle_mol[i] > 0), j == 0),
        ))
    return tuple(rows)


def solution_json_reason(sol) -> str:
    """Why a target solve is unreachable, in the words of the solve JSON (no outputs import here)."""
    i = sol.inputs
    if i.target_kind == "tension" and i.blend is None and not math.isfinite(_f(i.cmc)):
        return EOS_UNREACHABLE
    return unreachable_reason(_f(sol.max_coverage))


def build_plan(case, source=None, curve_points: int = 161, d32_points: int = 61) -> Plan:
    """Plan a validated case: recommendation, trial matrix, chart data and assumptions.

    Parameters
    ----------
    case : :class:`sizing.case.Case`
    source : path of the case file (for its header notes), optional
    curve_points, d32_points : resolution of the two charts [-]

    Returns
    -------
    Plan

    Raises
    ------
    InputError
        From the engine (e.g. a tension target without a clean tension).
    """
    inputs = model.case_inputs(case)
    target_sol = model.solve(inputs)
    feasible = bool(np.all(target_sol.feasible))
    if inputs.blend is None:
        _, target_theta = model.target_concentration(inputs)
    else:  # the total coverage the target asks for (a blend's tension target sets it by the state)
        target_theta = (inputs.target_value if inputs.target_kind == "coverage"
                        else target_sol.state.coverage if feasible else math.nan)
    # the dose at the CMC ceiling (the onset of micelles: for one surfactant free monomer = CMC)
    kg_per_mol = _f(inputs.molar_mass) / _f(inputs.active_fraction)
    onset = _f(model.onset_dose_mol(inputs))
    ceiling_kg = onset * kg_per_mol if math.isfinite(onset) else math.nan
    if not feasible and not math.isfinite(ceiling_kg):
        reason = solution_json_reason(target_sol)
        raise InputError(f"target.{inputs.target_kind}: the target is not reachable ({reason}), and without a "
                         "CMC there is no ceiling dose to plan on; set a reachable target")
    base_kg = _f(target_sol.kg_product) if feasible else ceiling_kg
    # with spreads the charge covers the chosen percentile of the Monte Carlo
    mc = parts.plan_monte_carlo(case) if feasible else None
    if mc is not None and math.isfinite(float(mc.quantile_kg_product(mc.percentile))):
        base_kg = float(mc.quantile_kg_product(mc.percentile))
    margin = _f(inputs.margin)
    inc_value = case.recommendation.increment
    if inc_value is not None:
        increment, inc_source = inc_value.si, "case"
    else:
        increment, inc_source = auto_increment(base_kg * (1 + margin)), AUTO_INCREMENT_NOTE
    charge_kg = _f(charge_for_dose(base_kg, margin, increment))

    # the charge and every trial level: one forward solve
    levels = np.asarray(case.trial.levels, dtype=float)
    level_kg = np.maximum(np.round(levels * charge_kg / increment), 1.0) * increment
    kg_all = np.concatenate([[charge_kg], level_kg])
    mol_all = kg_all * _f(inputs.active_fraction) / _f(inputs.molar_mass)
    fwd = model.solve(inputs, dose_mol=mol_all)
    st = fwd.state
    split0 = {k: _f(np.broadcast_to(v, kg_all.shape)[0]) for k, v in model.split_by_phase(fwd).items()}
    total0 = _f(st.total_mol[0])
    rec = Recommendation(
        kg_product_per_batch=_f(fwd.kg_product[0]), kg_active_per_batch=_f(fwd.kg_active[0]),
        mol_per_batch=_f(fwd.dose_mol[0]), wt_percent=_f(np.asarray(fwd.wt_percent)[0]),
        wt_percent_active=_f(np.asarray(fwd.wt_percent_active)[0]), g_per_l=_f(np.asarray(fwd.g_per_l)[0]),
        percent_on_dispersed=_f(np.asarray(fwd.percent_on_dispersed)[0]),
        mg_per_m2=_f(np.asarray(fwd.mg_per_m2)[0]), cost_per_batch=_f(np.asarray(fwd.cost)[0]),
        currency=case.currency, margin=margin, increment_kg=float(increment),
        increment_source=inc_source, basis="target" if feasible else "cmc_ceiling",
        reaches_target=feasible, base_kg_product=base_kg,
        coverage_at_charge=_f(st.coverage[0]), free_concentration_at_charge=_f(st.free_concentration[0]),
        tension_at_charge=_f(np.asarray(fwd.tension)[0]),
        micelle_share_at_charge=_f(st.micelle_mol[0]) / total0 if total0 > 0 else 0.0,
        split_mol_at_charge=split0,
    )
    trial = _level_rows(case, fwd, levels, charge_kg, increment)

    # dose -> coverage curve: one forward solve
    top = max(2.0 * charge_kg, 1.3 * ceiling_kg if math.isfinite(ceiling_kg) else 0.0, 1.3 * level_kg.max())
    dose_kg = np.linspace(0.0, top, curve_points)
    curve = model.solve(inputs, dose_mol=dose_kg * _f(inputs.active_fraction) / _f(inputs.molar_mass))
    # dose against d32: one target solve over an array of d32 (or of the ceiling when unreachable)
    d32 = _f(inputs.d32) * np.logspace(-np.log10(4.0), np.log10(4.0), d32_points)
    what_if = inputs.with_values(d32=d32)
    if feasible:
        d32_dose = np.asarray(model.solve(what_if).kg_product, dtype=float)
    else:  # the onset of micelles over the d32 range
        d32_dose = np.asarray(model.onset_dose_mol(what_if), dtype=float) * kg_per_mol
    curves = Curves(
        dose_kg_product=dose_kg, coverage=np.asarray(curve.state.coverage, dtype=float),
        free_concentration=np.asarray(curve.state.free_concentration, dtype=float),
        ceiling_kg_product=ceiling_kg, d32=d32, d32_dose_kg_product=d32_dose,
        d32_charge_kg_product=np.asarray(charge_for_dose(d32_dose, margin, increment)),
    )
    opts = () if feasible else options_when_unreachable(case, inputs, _f(target_sol.max_coverage))
    return Plan(
        case=case, inputs=inputs, solution=target_sol, feasible=feasible,
        target_coverage=_f(target_theta), recommendation=rec, trial=trial, curves=curves,
        assumptions=assumptions(case, inputs), model_assumptions=MODEL_ASSUMPTIONS, cautions=CAUTIONS,
        options=opts, case_notes=case_notes(source), source=str(source) if source is not None else "",
        scaleup=parts.scaleup_part(case),
        achievable=parts.achievable_part(inputs, trial),
        uncertainty=parts.uncertainty_part(case, mc, rec.kg_product_per_batch) if mc is not None else None,
        adsorption=parts.adsorption_part(case, target_sol) if feasible else None,
        blend=blendplan.blend_part(case, inputs, fwd, curve) if inputs.blend is not None else None,
        conditions=(blendplan.conditions_part(case, inputs, rec.mol_per_batch, _f(target_theta))
                    if feasible else None),
        recipe=recipe_part(case, inputs, rec, _f(target_sol.kg_product) if feasible else math.nan),
    )


def recipe_part(case, inputs, rec, demand_kg: float):
    """Where the recipe's current charge goes, the coverage it gives and its reserve (one solve)."""
    r = getattr(case, "recipe", None)
    if r is None:
        return None
    kg_per_mol_product = _f(inputs.molar_mass) / _f(inputs.active_fraction)
    kg_product = r.current_charge.si if r.basis == "product" else r.current_charge.si / _f(inputs.active_fraction)
    mol = kg_product / kg_per_mol_product
    sol = model.solve(inputs, dose_mol=mol)
    split = {k: _f(v) for k, v in model.split_by_phase(sol).items()}
    reserve = max(0.0, 1.0 - demand_kg / kg_product) if math.isfinite(demand_kg) else math.nan
    return parts.RecipePart(
        kg_product=kg_product, kg_active=kg_product * _f(inputs.active_fraction), mol=mol,
        coverage=_f(sol.state.coverage), free_concentration=_f(sol.state.free_concentration), split_mol=split,
        times_recommended=kg_product / rec.kg_product_per_batch if rec.kg_product_per_batch else math.nan,
        reserve_share=reserve, demand_kg_product=demand_kg)


# ---------------------------------------------------------------------------------------------
# warnings


def plan_warnings(plan: Plan) -> list[str]:
    """Return the engine's warnings for the target state, the charge and the trial levels."""
    out = model.solution_warnings(plan.solution)
    if plan.feasible:  # the charge itself, re-equilibrated at the storage temperature
        charged = model.solve(plan.inputs, dose_mol=plan.recommendation.mol_per_batch)
        out += [w for w in model.storage_warnings(plan.case, charged) if w not in out]
    tensions = [plan.recommendation.tension_at_charge] + [t.tension for t in plan.trial]
    inputs = model.case_inputs(plan.case)
    for w in model.tension_warnings(inputs, np.array(tensions, dtype=float), "the charge or a trial level"):
        if w not in out:
            out.append(w)
    at_ceiling = [t for t in plan.trial if t.micelle_share > 1e-9]
    if len(at_ceiling) >= 2:  # however many levels lie below (a Monte Carlo charge often sits at the ceiling)
        names = ", ".join(f"{t.level:g} x" for t in at_ceiling)
        text = (f"trial levels {names} sit at the CMC ceiling (coverage {at_ceiling[0].coverage:.3g}): "
                "they differ only in micelles, so coverage, tension and drop size will hardly tell them apart")
        if len(plan.trial) - len(at_ceiling) < 2:
            text += ("; put more levels below the charge (e.g. 0.6 x, 0.8 x) to find where the dispersion "
                     "starts to fail")
        else:
            text += ("; only the levels below them show where the dispersion starts to fail, so the upper "
                     "levels test only the micelle excess (foaming, depletion flocculation, cost)")
        out.append(text)
    share = plan.recommendation.micelle_share_at_charge
    if share > 0.2:
        out.append(f"{100 * share:.3g} % of the recommended charge forms micelles: the target sits close to the "
                   "CMC ceiling, and surfactant above the ceiling adds micelles (foaming, depletion "
                   "flocculation, cost) rather than coverage")
    ads = plan.adsorption
    if ads is not None and ads.optimistic and ads.message not in out:  # the adsorption-speed verdict
        out.append(ads.message)
    unc = plan.uncertainty
    if unc is not None:
        out += [n for n in uncertainty_notes(unc.monte_carlo, unc.sensitivity) if n not in out]
    if unc is not None and unc.monte_carlo.infeasible_fraction > 0:
        share = 100 * unc.monte_carlo.infeasible_fraction
        pct = unc.monte_carlo.percentile
        if share > 100 - pct:
            out.append(f"{share:.3g} % of the Monte Carlo draws need more than the CMC allows, more than the "
                       f"{100 - pct:.3g} % the P{pct:g} recommendation may leave out: the charge falls back to "
                       "the dose for the nominal inputs and does not cover the chosen percentile; narrow the "
                       "spreads, accept a lower coverage or choose another surfactant")
        else:
            out.append(f"{share:.3g} % of the Monte Carlo draws cannot reach the target below the CMC")
    return out
