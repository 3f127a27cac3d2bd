"""The orchestrating layer: a validated case -> engine inputs (SI) -> solved balance.

This module adds no physics of its own: it wires :mod:`sizing.distribution`,
:mod:`sizing.isotherm`, :mod:`sizing.phases` and :mod:`sizing.balance` together.  Every input
of :class:`Inputs` may be a float or a numpy array; arrays broadcast, so a sweep or a Monte
Carlo run is one call of :func:`solve`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from . import plausible, texts
from .case import point_x, read_size_table, table_path
from .errors import InputError
from .physics import balance, conditions, distribution, isotherm, phases
from .physics import blend as blend_physics
from .physics.dropsize import PowerLawFit, fit_power_law, stirred_tank_ratio, stirred_tank_speed
from .physics.properties import water_surface_tension
from .units import NumberFormatError, parse

AIR_DENSITY = 1.2  # kg/m**3, near 20 C and 1 atm (common practice), default for foam bubbles


@dataclass(frozen=True)
class BlendInputs:
    """The components of a ``[blend]`` in SI; per-component arrays carry the components on the last axis.

    Attributes
    ----------
    names : component names, in case order
    mole_fractions : alpha_i of the active blend [-] (sum 1)
    molar_mass : M_i [kg/mol]; active_fraction : active per product mass as delivered [-]
    cmc : C_i [mol/m**3] (inf: no micelles); max_surface_excess : Gamma_inf_i [mol/m**2]
    adsorption_constant : K_i [m**3/mol]; partition_coefficient : P_i = c_oil/c_water [-]
    gibbs_prefactor : n_i [-]; price : currency per kg of each product (nan when not given)
    micelles : 'ideal' or 'regular'; interaction : beta of the mixed micelle [-]
    """

    names: tuple
    mole_fractions: object
    molar_mass: object
    active_fraction: object
    cmc: object
    max_surface_excess: object
    adsorption_constant: object
    partition_coefficient: object
    gibbs_prefactor: object
    price: object
    micelles: str = "ideal"
    interaction: object = 0.0

    @property
    def size(self) -> int:
        return len(self.names)

    @property
    def product_mass_per_mol(self):
        """kg of each product per mol of the whole blend's active, ``alpha_i M_i / a_i`` [kg/mol]."""
        return np.asarray(self.mole_fractions) * np.asarray(self.molar_mass) / np.asarray(self.active_fraction)


@dataclass(frozen=True)
class Inputs:
    """Engine inputs of one case in SI units; numeric fields may be numpy arrays.

    Attributes
    ----------
    system : 'emulsion' or 'foam'; continuous : 'water' or 'oil'; model : isotherm name
    target_kind : 'coverage', 'tension' or 'free_concentration'
    volume : batch volume [m**3]; dispersed_fraction : phi [-]; temperature : [K]
    continuous_density, dispersed_density : [kg/m**3] (nan when not given)
    d32 : [m]; shape_factor : [-]
    molar_mass : [kg/mol]; active_fraction : [-]; cmc : [mol/m**3] (inf without micelles)
    max_surface_excess : Gamma_inf [mol/m**2]; adsorption_constant : K [m**3/mol]
    interaction : Frumkin beta [-]; gibbs_prefactor : n [-]
    partition_coefficient : P = c_oil/c_water [-]
    clean_tension : gamma0 [N/m] (nan when unknown)
    target_value : the target in SI (coverage [-], tension [N/m] or concentration [mol/m**3])
    margin : [-]; price_per_kg : currency per kg of product (nan when not given)
    """

    system: str
    continuous: str
    model: str
    target_kind: str
    volume: object
    dispersed_fraction: object
    temperature: object
    continuous_density: object
    dispersed_density: object
    d32: object
    shape_factor: object
    molar_mass: object
    active_fraction: object
    cmc: object
    max_surface_excess: object
    adsorption_constant: object
    interaction: object
    gibbs_prefactor: object
    partition_coefficient: object
    clean_tension: object
    target_value: object
    margin: object
    price_per_kg: object = math.nan
    size_stats: distribution.SizeStats | None = field(default=None, compare=False)
    clean_tension_source: str = "case"
    lab_d32: object = math.nan  # [m] the case's own d32 when [scaleup] replaces it by the plant d32
    blend: BlendInputs | None = field(default=None, compare=False)  # set for a [blend] case
    range_warnings: tuple = field(default=(), compare=False)  # values outside their usual range
    # a protein or polymer (no CMC, molar mass above texts.MACROMOLECULE_MOLAR_MASS): the
    # small-molecule equation of state does not give its tension, so none is computed
    macromolecule: bool = False
    plateau_tension: object = math.nan  # [N/m] measured at full coverage (surfactant.plateau_tension)
    target_surface_load: object = math.nan  # [mol/m**2] a target.surface_load, as Gamma (else nan)

    def with_values(self, **changes) -> "Inputs":
        """Return a copy with some fields replaced (e.g. ``d32=np.array([...])``)."""
        return replace(self, **changes)


def _get(values: dict, path: str, default=math.nan):
    v = values.get(path)
    return default if v is None else v


def size_stats(case, values: dict | None = None) -> distribution.SizeStats:
    """Return the size statistics of the case's drop description (arrays if values are)."""
    values = case.values() if values is None else values
    d = case.drops
    if "drops.d32" in values and (d.distribution is None or d.d32 is not None):
        return distribution.SizeStats(d32=values["drops.d32"])
    if d.distribution == "lognormal":
        return distribution.lognormal_stats(values["drops.median"], values["drops.gsd"], d.basis)
    if d.distribution == "rrsb":
        return distribution.rrsb_stats(values["drops.characteristic_size"], values["drops.spread"])
    if d.distribution == "table":
        path = table_path(d.file, case.base_dir)
        try:
            return distribution.table_stats(read_size_table(path))
        except InputError as exc:
            raise InputError(problems=[f"drops.file: {line}" for line in exc.problems]) from None
    return distribution.SizeStats(d32=values["drops.d32"])


# ---------------------------------------------------------------------------------------------
# the plant drop size of a case with [scaleup] (correlations in sizing.physics.dropsize)


def _section_value(values: dict, path: str, section, key: str):
    if path in values:
        return values[path]
    v = getattr(section, key)
    return None if v is None else v.si


def plant_x(s, values: dict):
    """Return the plant's process variable X [SI] from the section and (possibly array) values."""
    x = _section_value(values, "scaleup.plant", s, "plant")
    if s.plant.dimension == "frequency":
        x = math.pi * np.asarray(x) * np.asarray(_section_value(values, "scaleup.plant_diameter", s, "plant_diameter"))
    return x


def lab_fit(s) -> PowerLawFit:
    """Return the power-law fit of a ``power_law`` section's lab points."""
    xs = [point_x(p, s.variable, f"scaleup.points[{i}]") for i, p in enumerate(s.points)]
    ds = [p.d32.si for p in s.points]
    exponent = s.exponent.si if s.exponent is not None else None
    return fit_power_law(xs, ds, exponent, s.variable)


def plant_d32_of_values(case, values: dict, lab_d32):
    """Return the plant d32 [m] of a case with ``[scaleup]`` (arrays where ``values`` has them).

    ``lab_d32`` is the case's own drop size [m]: the lab vessel's d32 for ``stirred_tank``
    (unused by ``power_law``, whose lab points carry their own sizes).
    """
    s = case.scaleup
    if s.method == "power_law":
        x = np.asarray(plant_x(s, values), dtype=float)
        if s.exponent is not None:
            # b held (possibly an array from a spread): ln C = mean(ln d) - b mean(ln X) for each b
            b = np.asarray(values.get("scaleup.exponent", s.exponent.si), dtype=float)
            lxs = np.log([point_x(p, s.variable, "scaleup.points") for p in s.points])
            lds = np.log([p.d32.si for p in s.points])
            return np.exp(lds.mean()) * (x / np.exp(lxs.mean())) ** b
        fit = lab_fit(s)
        return fit.prefactor * x ** fit.exponent
    n_l = _section_value(values, "scaleup.lab_speed", s, "lab_speed")
    d_l = _section_value(values, "scaleup.lab_diameter", s, "lab_diameter")
    d_p = _section_value(values, "scaleup.plant_diameter", s, "plant_diameter")
    n_p = stirred_tank_speed(d_l, n_l, d_p, s.rule, _section_value(values, "scaleup.plant_speed", s, "plant_speed"))
    a = _section_value(values, "scaleup.weber_exponent", s, "weber_exponent")
    return np.asarray(lab_d32) * stirred_tank_ratio(d_l, n_l, d_p, n_p, a)


def inputs_from_values(case, values: dict) -> Inputs:
    """Build engine :class:`Inputs` from a case and its flat table of SI values.

    ``values`` is :meth:`sizing.case.Case.values` with any entries replaced by arrays (a sweep,
    a Monte Carlo sample).  ``drops.d32`` in ``values`` overrides a distribution's own d32.
    """
    c = case
    stats = size_stats(c, values)
    d32 = values["drops.d32"] if "drops.d32" in values else stats.d32
    lab_d32 = d32
    if getattr(c, "scaleup", None) is not None:  # the plant d32 replaces the lab one
        d32 = values["scaleup.plant_d32"] if "scaleup.plant_d32" in values else plant_d32_of_values(c, values, d32)
    rho_c = _get(values, "batch.continuous_density")
    rho_d = _get(values, "batch.dispersed_density", AIR_DENSITY if c.case.system == "foam" else math.nan)
    phi = values["batch.dispersed_fraction"]
    if "batch.volume" in values:
        volume = values["batch.volume"]
    else:
        volume = values["batch.mass"] / ((1 - np.asarray(phi)) * rho_c + np.asarray(phi) * rho_d)
    temperature = values["batch.temperature"]
    if c.blend is not None:
        act = _blend_values(c, values)
        gamma0 = _get(values, "blend.clean_tension")
        given_tension = c.blend.clean_tension is not None
    else:
        act = _surfactant_values(c, values)
        gamma0 = _get(values, "surfactant.clean_tension")
        given_tension = c.surfactant.clean_tension is not None
    source = "case"
    if not given_tension and c.case.system == "foam":
        gamma0 = water_surface_tension(temperature)
        source = "IAPWS R1-76(2014) water at the batch temperature"
    kind = c.target.kind
    target_value = values[f"target.{kind}"]
    load = math.nan
    if kind == "surface_load":  # a surface load (mg/m**2) is a coverage of the saturation load
        if c.blend is not None:
            raise InputError("target.surface_load: a blend's surface load is shared by its components; expected "
                             "target.coverage for a [blend] (or a single [surfactant])")
        load = np.asarray(target_value, dtype=float)
        if c.target.surface_load.dimension == "surface_load":
            load = load / np.asarray(act["molar_mass"], dtype=float)
        sat = np.asarray(act["max_surface_excess"], dtype=float)
        if np.any(load >= sat):
            raise InputError(f"target.surface_load: {c.target.surface_load.raw!r} is at or above the saturation "
                             f"load of the surfactant ({float(np.min(sat * act['molar_mass'])) * 1e6:.4g} mg/m**2); "
                             "expected a load below it (it is the load at full coverage)")
        kind, target_value = "coverage", load / sat
    macro = (c.blend is None and c.surfactant.cmc is None
             and float(np.min(act["molar_mass"])) > texts.MACROMOLECULE_MOLAR_MASS)
    return Inputs(
        system=c.case.system, continuous=c.case.continuous, target_kind=kind,
        volume=volume, dispersed_fraction=phi, temperature=temperature,
        continuous_density=rho_c, dispersed_density=rho_d, d32=d32,
        shape_factor=values["drops.shape_factor"], clean_tension=gamma0,
        target_value=target_value, margin=values["target.margin"], size_stats=stats,
        clean_tension_source=source, lab_d32=lab_d32,
        range_warnings=tuple(plausible.model_warnings(c)) + tuple(condition_warnings(c, temperature)),
        macromolecule=macro, plateau_tension=_get(values, "surfactant.plateau_tension") if c.blend is None else math.nan,
        target_surface_load=load, **act,
    )


def _at_conditions(c, values: dict, prefix: str, cmc, k, n):
    """CMC, K and Gibbs prefactor at the batch temperature and salt (``prefix``: a TOML path stem).

    The case's values hold at ``reference_temperature`` (default: the case's own batch
    temperature, so nothing moves); the temperature law comes first, then Corrin-Harkins for the
    salt in an aqueous continuous phase (:mod:`sizing.physics.conditions`).
    """
    t = values["batch.temperature"]
    t_ref = _get(values, f"{prefix}.reference_temperature", c.batch.temperature.si)
    b = _get(values, f"{prefix}.counterion_binding", 0.0)
    cmc_t = conditions.cmc_at_temperature(cmc, t, t_ref, _get(values, f"{prefix}.micellisation_enthalpy", 0.0), b)
    k_t = conditions.adsorption_constant_at_temperature(k, t, t_ref, _get(values, f"{prefix}.adsorption_enthalpy", 0.0))
    salt = _get(values, "batch.salt", 0.0)
    if c.case.continuous == "water":
        cmc_t = conditions.cmc_with_salt(cmc_t, salt, b)
        n = conditions.gibbs_prefactor_with_salt(n, np.where(np.isfinite(cmc_t), cmc_t, 0.0), salt)
    return cmc_t, k_t, n


def condition_warnings(case, temperature=None) -> list[str]:
    """Krafft and cloud points against the batch and storage temperatures (prominent warnings)."""
    b = case.batch
    temps = [("batch", b.temperature.si if temperature is None else float(np.min(temperature)))]
    if b.storage_temperature is not None:
        temps.append(("storage", b.storage_temperature.si))
    items = ([(case.surfactant.name, case.surfactant)] if case.surfactant is not None
             else [(comp.name, comp) for comp in case.blend.component])
    out = []
    prov = case.provenance or {}
    s0 = case.surfactant
    continuous = "water" if case.case.system == "foam" else case.case.continuous
    if s0 is not None and s0.measured_in is not None and s0.measured_in != continuous:
        out.append(f"the CMC and adsorption constant were measured in the {s0.measured_in} and are converted to the "
                   f"continuous {continuous} through the partition coefficient {s0.partition_coefficient.si:g} "
                   "(K / P and P x CMC for constants from water); the water's CMC in oil terms is where the "
                   "drops start to hold micelles: reverse micelles in the oil may form earlier (measure the "
                   "CMC in the oil where it matters)"
                   + ("; the fitted block does not record its phase and is taken as measured in water "
                      "(refit to record it, or set surfactant.measured_in)" if prov.get("measured_in_assumed") else ""))
    if case.surfactant is not None and case.surfactant.reference_temperature is None and prov.get("temperature"):
        try:
            t_fit = parse(str(prov["temperature"]), "provenance.temperature", "temperature")
        except InputError:
            t_fit = None
        for where, t in temps:
            if t_fit is not None and abs(t - t_fit) > 5.0:
                out.append(f"the fitted constants (CMC, K) of {prov.get('file', 'the fitted block')} hold at "
                           f"{t_fit - 273.15:.4g} degC and are used at the {where} temperature {t - 273.15:.4g} degC "
                           "without a temperature law: give surfactant.reference_temperature with "
                           "micellisation_enthalpy and adsorption_enthalpy to move them, or fit at that temperature")
    for name, s in items:
        for where, t in temps:
            if s.krafft_point is not None and s.krafft_point.si > t:
                out.append(f"{name}: the Krafft point {s.krafft_point.si - 273.15:.4g} degC is above the {where} "
                           f"temperature {t - 273.15:.4g} degC: the surfactant crystallises instead of forming "
                           "micelles and may not dissolve; the balance does not hold there (choose a grade with a "
                           "lower Krafft point, or keep the batch warmer)")
            if s.cloud_point is not None and s.cloud_point.si < t:
                out.append(f"{name}: the cloud point {s.cloud_point.si - 273.15:.4g} degC is below the {where} "
                           f"temperature {t - 273.15:.4g} degC: the nonionic phase-separates and the emulsion may "
                           "invert or break; the balance does not hold there (process below the cloud point, or "
                           "choose a more hydrophilic grade)")
    return out


def _surfactant_values(c, values: dict) -> dict:
    """The :class:`Inputs` fields of a single ``[surfactant]``."""
    molar_mass = values["surfactant.molar_mass"]
    s = c.surfactant
    if s.max_surface_excess is not None:
        gi = values["surfactant.max_surface_excess"]
        if s.max_surface_excess.dimension == "surface_load":  # given per mass, e.g. mg/m**2
            gi = np.asarray(gi) / np.asarray(molar_mass)
    else:
        gi = isotherm.surface_excess_from_area(values["surfactant.area_per_molecule"])
    cmc0, k0 = _get(values, "surfactant.cmc", math.inf), values["surfactant.adsorption_constant"]
    continuous = "water" if c.case.system == "foam" else c.case.continuous
    if s.measured_in is not None and s.measured_in != continuous:
        # concentrations in the other phase: c_oil = P c_water at partition equilibrium, so
        # theta = K_w c_w = (K_w / P) c_oil, and the water's CMC is reached at c_oil = P CMC_w
        p = np.asarray(values["surfactant.partition_coefficient"], dtype=float)
        f = p if s.measured_in == "water" else 1.0 / p  # c_continuous = f * c_measured
        cmc0, k0 = np.asarray(cmc0) * f, np.asarray(k0) / f
    cmc, k, n = _at_conditions(c, values, "surfactant", cmc0, k0, values["surfactant.gibbs_prefactor"])
    return dict(
        model=isotherm.check_model(s.isotherm, values["surfactant.interaction"]),
        molar_mass=molar_mass, active_fraction=values["surfactant.active_fraction"],
        cmc=_scalar(cmc), max_surface_excess=gi, adsorption_constant=_scalar(k),
        interaction=values["surfactant.interaction"], gibbs_prefactor=_scalar(n),
        partition_coefficient=values["surfactant.partition_coefficient"],
        price_per_kg=_get(values, "surfactant.price_per_kg"),
    )


def _scalar(x):
    """A 0-d array back to a float (the engine's scalar cases stay floats)."""
    return float(x) if np.ndim(x) == 0 else x


def _stack(arrays):
    """Stack per-component values (floats or arrays) on a new last axis."""
    return np.stack(np.broadcast_arrays(*[np.asarray(a, dtype=float) for a in arrays]), axis=-1)


def _blend_values(c, values: dict) -> dict:
    """The :class:`Inputs` fields of a ``[blend]``: per-component arrays and blend-level equivalents.

    The blend's equivalents make every dose conversion of a single surfactant hold for the whole
    blend: ``molar_mass`` is the mean ``sum alpha_i M_i``, ``active_fraction`` the active share of
    the products charged together, ``price_per_kg`` their mass-weighted price, ``cmc`` the mixed
    CMC in the continuous phase alone.  Isotherm constants of the blend as a whole do not exist
    (nan); :func:`solve` uses the components.
    """
    bl = c.blend
    comps = bl.component

    def col(key, default=math.nan):
        return _stack([_get(values, f"blend.component[{i}].{key}", default) for i in range(len(comps))])

    mm = col("molar_mass")
    frac = col("fraction")
    frac = frac / np.sum(frac, axis=-1, keepdims=True)
    alpha = frac if bl.fractions == "mole" else (frac / mm) / np.sum(frac / mm, axis=-1, keepdims=True)
    gis = []
    for i, comp in enumerate(comps):
        if comp.max_surface_excess is not None:
            g = values[f"blend.component[{i}].max_surface_excess"]
            if comp.max_surface_excess.dimension == "surface_load":
                g = np.asarray(g) / np.asarray(values[f"blend.component[{i}].molar_mass"])
        else:
            g = isotherm.surface_excess_from_area(values[f"blend.component[{i}].area_per_molecule"])
        gis.append(g)
    active = col("active_fraction")
    price = col("price")
    at = [_at_conditions(c, values, f"blend.component[{i}]", _get(values, f"blend.component[{i}].cmc", math.inf),
                         values[f"blend.component[{i}].adsorption_constant"],
                         values[f"blend.component[{i}].gibbs_prefactor"]) for i in range(len(comps))]
    cmc = _stack([a[0] for a in at])
    beta = _get(values, "blend.interaction", 0.0)
    bi = BlendInputs(
        names=tuple(comp.name for comp in comps), mole_fractions=alpha, molar_mass=mm,
        active_fraction=active, cmc=cmc, max_surface_excess=_stack(gis),
        adsorption_constant=_stack([a[1] for a in at]), partition_coefficient=col("partition_coefficient"),
        gibbs_prefactor=_stack([a[2] for a in at]), price=price, micelles=bl.micelles, interaction=beta,
    )
    m_mean = np.sum(alpha * mm, axis=-1)
    per_mol = bi.product_mass_per_mol
    product = np.sum(per_mol, axis=-1)
    with np.errstate(invalid="ignore"):
        mixed = blend_physics.mixed_cmc(alpha, cmc, bl.micelles, beta)[0] if np.any(np.isfinite(cmc)) else math.inf
    return dict(
        model="langmuir", molar_mass=m_mean, active_fraction=m_mean / product, cmc=mixed,
        max_surface_excess=math.nan, adsorption_constant=math.nan, interaction=0.0,
        gibbs_prefactor=math.nan, partition_coefficient=math.nan,
        price_per_kg=np.sum(per_mol * price, axis=-1) / product, blend=bi,
    )


def case_inputs(case, overrides: dict | None = None) -> Inputs:
    """Return the engine inputs of a case, with optional ``{"section.key": SI value}`` overrides."""
    values = case.values()
    unknown = [k for k in (overrides or {}) if k not in values and k not in OVERRIDABLE_EXTRA]
    if unknown:
        known = sorted(set(values) | set(OVERRIDABLE_EXTRA))
        raise InputError(f"{unknown[0]}: not a numeric field of this case; expected one of {', '.join(known)}")
    originals = dict(values)
    values.update(overrides or {})
    if getattr(case, "blend", None) is not None:
        _rescale_fractions(case, values, originals, overrides or {})
    return inputs_from_values(case, values)


def _rescale_fractions(case, values: dict, originals: dict, overrides: dict) -> None:
    """Keep a blend's fractions adding up to 1 when some are overridden (a sweep, a what-if).

    The overridden components hold their new fractions; the others keep their proportions and
    share the rest.  When every fraction is overridden (a Monte Carlo draw) they are normalised.
    """
    paths = [f"blend.component[{i}].fraction" for i in range(len(case.blend.component))]
    held = [p for p in paths if p in overrides]
    if not held or len(held) == len(paths):
        return
    held_sum = sum(np.asarray(values[p], dtype=float) for p in held)
    if np.any(held_sum >= 1.0) or np.any(held_sum < 0):
        raise InputError(f"{held[0]}: the fractions given add up to {float(np.max(held_sum)):g}; expected "
                         "less than 1, so that the other components keep a share")
    rest = [p for p in paths if p not in held]
    base = sum(originals[p] for p in rest)
    for p in rest:
        values[p] = (originals[p] / base if base > 0 else 1.0 / len(rest)) * (1.0 - held_sum)


# fields that may be overridden although the case does not give them
OVERRIDABLE_EXTRA = ("drops.d32", "target.coverage", "target.tension", "target.free_concentration",
                     "scaleup.plant_d32")


@dataclass(frozen=True)
class Solution:
    """A solved case; arrays broadcast over the inputs.

    Attributes
    ----------
    inputs : the :class:`Inputs`; mode : 'target' or 'dose'
    feasible : bool array, the target is reachable below the CMC
    max_coverage : theta at the CMC [-]
    d32 [m], area [m**2], continuous_volume, dispersed_volume [m**3]
    state : :class:`sizing.balance.BalanceState` (at the CMC ceiling where infeasible)
    dose_mol : dose of active [mol] (nan where infeasible)
    surface_excess [mol/m**2], tension [N/m] (nan when no clean tension is known)
    components : for a blend, :class:`sizing.physics.blend.BlendState` (components on the last
    axis); ``state`` then holds the totals and ``max_coverage`` the largest total coverage found
    """

    inputs: Inputs
    mode: str
    feasible: np.ndarray
    max_coverage: np.ndarray
    d32: np.ndarray
    area: np.ndarray
    continuous_volume: np.ndarray
    dispersed_volume: np.ndarray
    state: balance.BalanceState
    dose_mol: np.ndarray
    surface_excess: np.ndarray
    tension: np.ndarray
    components: object = None  # a blend's per-component state (sizing.physics.blend.BlendState)

    # dose in the units an engineer charges --------------------------------------------------
    @property
    def kg_active(self):
        return self.dose_mol * self.inputs.molar_mass

    @property
    def kg_product(self):
        return self.kg_active / self.inputs.active_fraction

    @property
    def batch_mass(self):
        """Batch mass [kg] (nan without densities)."""
        i = self.inputs
        return self.continuous_volume * i.continuous_density + self.dispersed_volume * i.dispersed_density

    @property
    def wt_percent(self):
        """Product as charged, per cent of the batch mass [%]."""
        return 100.0 * self.kg_product / self.batch_mass

    @property
    def wt_percent_active(self):
        return 100.0 * self.kg_active / self.batch_mass

    @property
    def g_per_l(self):
        """Product per litre of batch [g/L] (= kg/m**3)."""
        return self.kg_product / self.inputs.volume

    @property
    def mg_per_m2(self):
        """Active per interfacial area [mg/m**2]."""
        return 1e6 * self.kg_active / self.area

    @property
    def percent_on_dispersed(self):
        """Product per mass of dispersed phase [%] (nan for a foam or without a density)."""
        if self.inputs.system == "foam":
            return np.full(np.shape(self.dose_mol), np.nan)
        return 100.0 * self.kg_product / (self.dispersed_volume * self.inputs.dispersed_density)

    @property
    def cost(self):
        """Product cost per batch [currency] (nan without a price)."""
        return self.kg_product * self.inputs.price_per_kg


def _tension(inputs: Inputs, theta):
    pressure = isotherm.pressure_of_theta(theta, inputs.max_surface_excess, inputs.temperature,
                                          inputs.gibbs_prefactor, inputs.model, inputs.interaction)
    if inputs.macromolecule:  # not estimated: the small-molecule equation of state does not hold
        return np.full(np.shape(pressure), np.nan)
    return np.asarray(inputs.clean_tension) - pressure


def target_concentration(inputs: Inputs):
    """Return ``(c, theta)`` for the target [mol/m**3, -] (c may lie above the CMC).

    Raises
    ------
    InputError
        A tension target without a clean tension, or at or above it.
    """
    kind, value = inputs.target_kind, np.asarray(inputs.target_value, dtype=float)
    k, model, beta = inputs.adsorption_constant, inputs.model, inputs.interaction
    if kind == "tension" and inputs.macromolecule:
        # a protein or polymer's tension does not follow the small-molecule equation of state: no
        # dose can be read from a tension target, which is therefore unreachable (said in words)
        return np.full(np.shape(value), np.inf), np.ones(np.shape(value))
    if kind == "coverage":
        theta = value
        return isotherm.c_of_theta(theta, k, model, beta), theta
    if kind == "free_concentration":
        return value, isotherm.theta_of_c(value, k, model, beta)
    gamma0 = np.asarray(inputs.clean_tension, dtype=float)
    if np.any(~np.isfinite(gamma0)):
        raise InputError(
            "target.tension: a tension target needs surfactant.clean_tension (the tension of the "
            "clean interface, e.g. '50 mN/m'); for a foam it defaults to water at the batch temperature"
        )
    if np.any(value >= gamma0):
        raise InputError(
            f"target.tension: {float(np.max(value)) * 1e3:g} mN/m is not below the clean tension "
            f"{float(np.min(gamma0)) * 1e3:g} mN/m; expected a tension the surfactant can reach"
        )
    theta = isotherm.theta_of_pressure(gamma0 - value, inputs.max_surface_excess, inputs.temperature,
                                       inputs.gibbs_prefactor, model, beta)
    return isotherm.c_of_theta(theta, k, model, beta), theta


def _common(inputs: Inputs):
    vc, vd = phases.phase_volumes(inputs.volume, inputs.dispersed_fraction)
    uptake = phases.dispersed_uptake(inputs.system, inputs.continuous, inputs.partition_coefficient)
    area = distribution.interfacial_area(inputs.d32, vd, inputs.shape_factor)
    kw = dict(continuous_volume=vc, dispersed_volume=vd, uptake=uptake,
              max_surface_excess=inputs.max_surface_excess, area=area,
              adsorption_constant=inputs.adsorption_constant, model=inputs.model,
              beta=inputs.interaction)
    return vc, vd, area, kw


def solve(inputs: Inputs, dose_mol=None) -> Solution:
    """Solve the balance: the dose for the target, or the state for ``dose_mol`` [mol].

    Returns
    -------
    Solution
        Arrays broadcast over every array-valued input (and ``dose_mol``).
    """
    if inputs.blend is not None:
        return _solve_blend(inputs, dose_mol)
    vc, vd, area, kw = _common(inputs)
    cmc = np.asarray(inputs.cmc, dtype=float)
    theta_max = balance.max_coverage(inputs.adsorption_constant, cmc, inputs.model, inputs.interaction)
    if dose_mol is None:
        mode = "target"
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            c, theta = target_concentration(inputs)
        # a tension the equation of state reaches only at full coverage (a protein without a
        # CMC, say): no finite monomer concentration gives it, so it is unreachable
        beyond = ~np.isfinite(c) | (np.asarray(theta) >= 1.0)
        feasible = np.asarray((c <= cmc * (1 + 1e-12)) & ~beyond)
        c_eq = np.where(feasible, c, np.where(np.isfinite(cmc), cmc, np.where(beyond, 0.0, c)))
        th_eq = np.where(feasible, theta, np.where(np.isfinite(cmc) | ~beyond, theta_max, 0.0))
        state = balance.state_at_concentration(c_eq, theta=th_eq, **kw)
        dose = np.where(feasible, state.total_mol, np.nan)
    else:
        mode = "dose"
        dose = np.asarray(dose_mol, dtype=float)
        if np.any(dose < 0) or np.any(~np.isfinite(dose)):
            raise InputError(f"--dose: expected an amount >= 0, got {float(np.min(dose))!r} mol")
        state = balance.state_for_dose(dose, cmc=cmc, **kw)
        feasible = np.ones(np.shape(state.coverage), dtype=bool)
    shape = np.broadcast_shapes(np.shape(state.coverage), np.shape(dose), np.shape(theta_max))
    gamma = state.coverage * np.asarray(inputs.max_surface_excess)
    tension = _tension(inputs, state.coverage)
    return Solution(
        inputs=inputs, mode=mode, feasible=np.broadcast_to(feasible, shape),
        max_coverage=np.broadcast_to(theta_max, shape), d32=np.broadcast_to(inputs.d32, shape),
        area=np.broadcast_to(area, shape), continuous_volume=np.broadcast_to(vc, shape),
        dispersed_volume=np.broadcast_to(vd, shape), state=state,
        dose_mol=np.broadcast_to(dose, shape), surface_excess=gamma, tension=tension,
    )


def blend_physics_of(inputs: Inputs):
    """The physics blend of a blend case's inputs, with each component's uptake."""
    bi = inputs.blend
    p = np.asarray(bi.partition_coefficient, dtype=float)
    if inputs.system == "emulsion" and inputs.continuous == "oil" and np.any(p <= 0):
        i = int(np.argmax(np.any(np.reshape(p <= 0, (-1, bi.size)), axis=0)))
        raise InputError(f"blend.component[{i}].partition_coefficient: 0 means {bi.names[i]!r} does not "
                         "dissolve in oil, so it cannot be dosed into the continuous oil of a W/O emulsion; "
                         "expected P > 0 (c_oil/c_water)")
    uptake = phases.dispersed_uptake(inputs.system, inputs.continuous, p)
    return blend_physics.Blend(bi.mole_fractions, bi.cmc, bi.max_surface_excess, bi.adsorption_constant,
                               uptake, bi.micelles, bi.interaction)


# a blend's largest coverage needs a scan of doses above the onset; arrays larger than this (a Monte
# Carlo run, a big sweep) skip it where it is not needed and report max_coverage as nan there
MAX_COVERAGE_SCAN = 4096


def _solve_blend(inputs: Inputs, dose_mol=None) -> Solution:
    """:func:`solve` for a blend: the state of every component, totals in ``state``."""
    bi = inputs.blend
    vc, vd = phases.phase_volumes(inputs.volume, inputs.dispersed_fraction)
    area = distribution.interfacial_area(inputs.d32, vd, inputs.shape_factor)
    bl = blend_physics_of(inputs)
    # one common shape for every per-case array, so the flat rows of the solver line up
    shape = np.broadcast_shapes(np.shape(vc), np.shape(vd), np.shape(area), np.shape(inputs.temperature),
                                np.shape(inputs.clean_tension), np.shape(inputs.target_value),
                                np.shape(bi.interaction),
                                *(np.shape(x)[:-1] for x in (bl.fractions, bl.cmc, bl.max_surface_excess,
                                                              bl.adsorption_constant, bl.uptake)),
                                np.shape(dose_mol) if dose_mol is not None else ())
    vc_b, vd_b, area_b = (np.broadcast_to(x, shape) for x in (vc, vd, area))
    geo = dict(continuous_volume=vc_b, dispersed_volume=vd_b, area=area_b)
    gis = np.broadcast_to(bi.max_surface_excess, shape + (bi.size,))
    ns = np.broadcast_to(bi.gibbs_prefactor, shape + (bi.size,))
    temp = np.broadcast_to(np.asarray(inputs.temperature, dtype=float), shape)

    def pressure(state, rows=None):
        if rows is None:
            return blend_physics.surface_pressure(state, gis, temp, ns)
        g, n, t = gis.reshape(-1, bi.size)[rows], ns.reshape(-1, bi.size)[rows], temp.reshape(-1)[rows]
        return blend_physics.surface_pressure(state, g, t, n)

    scan = int(np.prod(shape, dtype=int)) <= MAX_COVERAGE_SCAN
    if dose_mol is None:
        mode = "target"
        kind = inputs.target_kind
        value = np.broadcast_to(np.asarray(inputs.target_value, dtype=float), shape)
        if kind == "tension":
            gamma0 = np.broadcast_to(np.asarray(inputs.clean_tension, dtype=float), shape)
            if np.any(~np.isfinite(gamma0)):
                raise InputError("target.tension: a tension target needs blend.clean_tension (the tension of "
                                 "the clean interface, e.g. '50 mN/m'); for a foam it defaults to water at the "
                                 "batch temperature")
            if np.any(value >= gamma0):
                raise InputError(f"target.tension: {float(np.max(value)) * 1e3:g} mN/m is not below the clean "
                                 f"tension {float(np.min(gamma0)) * 1e3:g} mN/m; expected a tension the blend can reach")
            dose, feasible, _, best_dose = blend_physics.dose_for_target("pressure", gamma0 - value, bl,
                                                                         pressure_fn=pressure, **geo)
        else:  # a coverage target scans every row, so its best is the largest coverage too
            dose, feasible, best, best_dose = blend_physics.dose_for_target(kind, value, bl, scan_all=scan, **geo)
        # the largest coverage any dose reaches (a scan from the onset up; large arrays skip it
        # where the target is met: max_coverage is then nan, unknown, rather than a guess)
        if kind == "coverage":
            best_cov = best if scan else np.where(feasible, np.nan, best)
        elif scan:
            best_cov = blend_physics.dose_for_target("coverage", np.full(shape, 1.0 - 1e-12), bl, **geo)[2]
        else:
            best_cov = np.full(shape, np.nan)
        n_eval = np.where(feasible, dose, best_dose)
        comp = blend_physics.state_for_dose(np.where(np.isfinite(n_eval), n_eval, 0.0), bl, **geo)
        theta_max = np.fmax(best_cov, np.where(feasible & scan, np.sum(comp.coverage, axis=-1), np.nan))
    else:
        mode = "dose"
        dose = np.asarray(dose_mol, dtype=float)
        if np.any(dose < 0) or np.any(~np.isfinite(dose)):
            raise InputError(f"--dose: expected an amount >= 0, got {float(np.min(dose))!r} mol")
        comp = blend_physics.state_for_dose(dose, bl, **geo)
        feasible = np.ones(shape, dtype=bool)
        theta_max = (blend_physics.dose_for_target("coverage", np.full(shape, 1.0 - 1e-12), bl, **geo)[2]
                     if scan else np.full(shape, np.nan))
    state = balance.BalanceState(*(np.sum(getattr(comp, f), axis=-1) for f in (
        "free_concentration", "coverage", "continuous_mol", "dispersed_mol", "interface_mol", "micelle_mol")))
    gamma = np.sum(comp.coverage * gis, axis=-1)
    tension = np.asarray(inputs.clean_tension, dtype=float) - pressure(comp)
    return Solution(
        inputs=inputs, mode=mode, feasible=np.broadcast_to(feasible, shape),
        max_coverage=np.broadcast_to(theta_max, shape), d32=np.broadcast_to(inputs.d32, shape),
        area=area_b, continuous_volume=vc_b, dispersed_volume=vd_b, state=state,
        dose_mol=np.broadcast_to(dose, shape), surface_excess=gamma, tension=tension, components=comp,
    )


def onset_dose_mol(inputs: Inputs):
    """Return the dose [mol] at which micelles first form in the batch (inf without a CMC).

    For one surfactant this is the dose that leaves the free monomer at the CMC; for a blend the
    onset of mixed micelles at the charged composition, with water, oil and interface served.
    """
    if inputs.blend is not None:
        vc, vd = phases.phase_volumes(inputs.volume, inputs.dispersed_fraction)
        area = distribution.interfacial_area(inputs.d32, vd, inputs.shape_factor)
        return blend_physics.onset_dose(blend_physics_of(inputs), continuous_volume=vc, dispersed_volume=vd,
                                        area=area)
    cmc = np.asarray(inputs.cmc, dtype=float)
    if not np.all(np.isfinite(cmc)):
        return np.where(np.isfinite(cmc), np.nan, np.inf) + np.zeros(np.shape(cmc))
    return solve(inputs.with_values(target_kind="free_concentration", target_value=cmc)).dose_mol


def storage_solution(case, sol: Solution) -> Solution | None:
    """Re-equilibrate a solved dose at ``[batch] storage_temperature`` (same phases and area).

    The CMC and K move with the temperature laws of the case (nothing moves without enthalpies);
    None without a storage temperature or where the dose is unknown (an unreachable target).
    """
    t = case.batch.storage_temperature
    dose = np.asarray(sol.dose_mol, dtype=float)
    if t is None or not np.all(np.isfinite(dose)):
        return None
    stored = case_inputs(case, {"batch.temperature": t.si}).with_values(
        d32=sol.inputs.d32, volume=sol.inputs.volume)
    return solve(stored, dose_mol=dose)


def storage_warnings(case, sol: Solution, stored: Solution | None = None) -> list[str]:
    """A warning when the coverage at the storage temperature falls below the target coverage."""
    if case.batch.storage_temperature is None:
        return []
    stored = storage_solution(case, sol) if stored is None else stored
    if stored is None:
        return []
    target = (np.asarray(sol.inputs.target_value, dtype=float) if sol.inputs.target_kind == "coverage"
              else np.asarray(sol.state.coverage, dtype=float))
    cov = np.asarray(stored.state.coverage, dtype=float)
    if np.all(cov >= target * (1 - 1e-9)):
        return []
    return [f"at the storage temperature {case.batch.storage_temperature.si - 273.15:.4g} degC the charged dose "
            f"re-equilibrates to coverage {float(np.min(cov)):.3g}, below the {float(np.max(target)):.3g} it has "
            "in the batch: K and the CMC move with temperature; check stability in storage (a cold or hot "
            "storage test) or size the dose for the storage conditions"]


def parse_dose(text, molar_mass: float, field: str = "--dose") -> float:
    """Return a dose of active [mol] from text: a mass (``"12 kg"``) or an amount (``"40 mol"``)."""
    value = None
    try:
        value = parse(text, field, "amount")
    except NumberFormatError:
        raise  # its hint (use a decimal point) is the message to show
    except InputError:
        try:
            value = parse(text, field, "mass") / molar_mass
        except NumberFormatError:
            raise
        except InputError:
            raise InputError(
                f"{field}: expected the active amount per batch as a mass ('12 kg') or an amount "
                f"of substance ('40 mol'), got {text!r}"
            ) from None
    if not value >= 0:
        raise InputError(f"{field}: expected an amount of active >= 0, got {text!r}")
    return value


def solve_case(case, dose: str | float | None = None, overrides: dict | None = None) -> Solution:
    """Solve a validated case; ``dose`` is text (``"2.5 kg"``) or mol, None for the target."""
    inputs = case_inputs(case, overrides)
    dose_mol = None
    if dose is not None:
        dose_mol = parse_dose(dose, inputs.molar_mass) if isinstance(dose, str) else float(dose)
    return solve(inputs, dose_mol)


def split_by_phase(sol: Solution) -> dict:
    """Return ``{water, oil, interface, micelles}`` [mol] of a solved state."""
    s = sol.state
    cont, disp = phases.phase_names(sol.inputs.system, sol.inputs.continuous)
    out = {"water": 0.0, "oil": 0.0}
    out[cont] = s.continuous_mol
    if disp in out:
        out[disp] = s.dispersed_mol
    out["interface"] = s.interface_mol
    out["micelles"] = s.micelle_mol
    return out


def tension_warnings(inputs: Inputs, tension, where: str = "the solved state") -> list[str]:
    """Return warnings when the equation of state gives a tension below zero (unphysical).

    A negative tension means the isotherm's pressure ``n R T Gamma_inf f(theta)`` exceeds the
    clean tension: the parameters (max_surface_excess, gibbs_prefactor, clean_tension) do not
    belong together at that coverage, so tension outputs there are not to be trusted.
    """
    t = np.asarray(tension, dtype=float)
    bad = ~np.isnan(t) & (t < 0)  # -inf at full coverage counts too
    if not np.any(bad):
        return []
    return [
        f"the equation of state gives a negative tension ({float(np.min(t[bad])) * 1e3:.3g} mN/m) at "
        f"{where}: the surface pressure exceeds the clean tension "
        f"({float(np.max(np.asarray(inputs.clean_tension))) * 1e3:.3g} mN/m), which is unphysical; check "
        "surfactant.clean_tension, surfactant.gibbs_prefactor and surfactant.max_surface_excess "
        "(tension outputs there are not reliable; the dose balance itself does not use them)"
    ]


# Plausibility limits (common practice, not physics): beyond them the answer is arithmetic on
# inputs that do not belong together, and the user is told so.
MAX_ACTIVE_WT_PERCENT = 20.0  # active surfactant per batch mass [%]
MAX_FREE_MONOMER_KG_M3 = 50.0  # free monomer per volume of continuous phase [kg/m**3] (5 % w/v)


def plausibility_warnings(sol: Solution) -> list[str]:
    """Return warnings when a solved dose or state is far outside anything a plant could use.

    The balance is exact for its inputs, but a target coverage close to 1 without a CMC (a
    protein, a polymer) or an enormous dose can ask the bulk to hold more surfactant than a
    solution can: the numbers are then correct arithmetic and useless advice.
    """
    out = []
    i = sol.inputs
    wt = np.asarray(sol.wt_percent_active, dtype=float)
    per_volume = np.asarray(sol.kg_active, dtype=float) / np.asarray(i.volume, dtype=float) / 10.0  # % w/v
    share = wt if np.all(np.isfinite(wt)) else per_volume
    if np.any(np.isfinite(share) & (share > MAX_ACTIVE_WT_PERCENT)):
        out.append(
            f"the dose is {float(np.nanmax(share)):.3g} % active on the batch, far beyond any emulsifier "
            f"level in practice (flag above {MAX_ACTIVE_WT_PERCENT:g} %): check the inputs, or lower the "
            "target coverage"
        )
    free = np.asarray(sol.state.free_concentration, dtype=float) * np.asarray(i.molar_mass, dtype=float)
    if np.any(np.isfinite(free) & (free > MAX_FREE_MONOMER_KG_M3)):
        out.append(
            f"the free monomer in the continuous phase would be {float(np.nanmax(free)):.3g} kg/m**3 "
            f"(flag above {MAX_FREE_MONOMER_KG_M3:g} kg/m**3): no monomer solution holds that much; without "
            "a CMC a coverage close to 1 needs ever more free surfactant, so lower the target coverage "
            "or check the adsorption constant"
        )
    return out


def solution_warnings(sol: Solution) -> list[str]:
    """Return the warnings of a solved state: size-table notes, tension and plausibility checks."""
    i = sol.inputs
    size_notes = list(getattr(i.size_stats, "notes", ()) or ())
    return (size_notes + list(i.range_warnings) + tension_warnings(i, sol.tension) + plausibility_warnings(sol)
            + macromolecule_warnings(i))


def macromolecule_warnings(inputs: Inputs) -> list[str]:
    """A protein or polymer: say that tensions are not estimated, and what to measure instead."""
    if not inputs.macromolecule:
        return []
    plateau = float(np.max(np.asarray(inputs.plateau_tension, dtype=float)))
    return [f"a protein or polymer (no CMC, molar mass {float(np.max(inputs.molar_mass)):.4g} kg/mol): tensions are "
            "not estimated, as the small-molecule equation of state understates the lowering (about 0.7 mN/m "
            "where a caseinate gives about 20, from memory); "
            + (f"the measured plateau tension {plateau * 1e3:.4g} mN/m holds near full coverage; "
               if math.isfinite(plateau) else "measure the plateau tension (surfactant.plateau_tension); ")
            + "judge trial levels by drop or bubble size and stability, with the surface load in mg/m**2"]

