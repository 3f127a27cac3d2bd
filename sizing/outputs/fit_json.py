"""The JSON contracts of ``sizing fit tension|depletion|partition --json``.

One function per fit turns its result (:mod:`sizing.fitting`) into plain data: SI numbers with
the unit in the key, ``null`` for a value that is not finite (through
:func:`sizing.outputs.jsonify.to_jsonable`).  The keys are a contract relied on outside the
project: extend, never rename.
"""

from __future__ import annotations

import numpy as np

from ..fitting.depletion import CONFIDENCE as DEPLETION_CONFIDENCE
from ..fitting.depletion import DepletionFit
from ..fitting.electrolyte import CONFIDENCE as ELECTROLYTE_CONFIDENCE
from ..fitting.partition import CONFIDENCE as PARTITION_CONFIDENCE
from ..fitting.partition import PartitionFit
from ..fitting.tension import CONFIDENCE as TENSION_CONFIDENCE
from ..fitting.tension import PARAMS, TensionFit, surface_excess_at_cmc
from ..physics.isotherm import area_from_surface_excess
from .jsonify import json_number, to_jsonable

# tension-fit parameter -> its JSON key (SI unit in the name)
TENSION_KEYS = {
    "clean_tension": "clean_tension_N_m",
    "max_surface_excess": "max_surface_excess_mol_m2",
    "adsorption_constant": "adsorption_constant_m3_mol",
    "interaction": "interaction",
    "cmc": "cmc_mol_m3",
}


def tension_fit_json(fit: TensionFit) -> dict:
    """Return the plain data printed by ``sizing fit tension --json``.

    Keys: the parameters of the model used (``cmc_mol_m3``, ``max_surface_excess_mol_m2``,
    ``adsorption_constant_m3_mol``, ``clean_tension_N_m``, ``interaction``), ``model``,
    ``selection``, ``confidence``, ``intervals`` and ``standard_errors`` (same keys),
    the area per molecule and its interval [m**2], the temperature [K], the Gibbs prefactor,
    point counts, residuals [N/m], every model's AIC/AICc/RSS and parameters, the bootstrap
    intervals (or null), ``source``, ``notes`` and ``warnings``.  Added later:
    ``interval_method`` and ``linearised_intervals``; ``surface_excess_at_cmc_mol_m2`` (the Gibbs
    slope just below the CMC, little dependent on the model) with its interval, also per model;
    ``coverage_at_cmc`` (Gamma/Gamma_inf of the model used at the CMC: what a coverage target
    means).
    """
    b = fit.best
    excess = {m: surface_excess_at_cmc(f, fit.temperature, fit.gibbs_prefactor) for m, f in fit.fits.items()}
    keys = TENSION_KEYS
    out = {keys[k]: b.params[k] for k in PARAMS}
    out.update(
        model=fit.model,
        selection=fit.selection,
        confidence=TENSION_CONFIDENCE,
        intervals={keys[k]: list(b.intervals[k]) for k in PARAMS},
        standard_errors={keys[k]: json_number(b.standard_errors[k]) for k in PARAMS},
        area_per_molecule_m2=float(area_from_surface_excess(b.params["max_surface_excess"])),
        area_per_molecule_interval_m2=sorted(
            float(area_from_surface_excess(v)) for v in b.intervals["max_surface_excess"]),
        temperature_K=fit.temperature,
        gibbs_prefactor=fit.gibbs_prefactor,
        clean_tension_fitted=fit.clean_tension_fixed is None,
        n_points=int(len(fit.data.concentration)),
        n_below_cmc=fit.n_below,
        n_above_cmc=fit.n_above,
        residuals_N_m=[float(r) for r in b.residuals],
        residual_sd_N_m=float(np.sqrt(b.rss / max(len(b.residuals) - len(b.fitted), 1))),
        models={
            m: {"aic": f.aic, "aicc": f.aicc, "rss_N2_m2": f.rss,
                **{keys[k]: f.params[k] for k in PARAMS},
                "surface_excess_at_cmc_mol_m2": excess[m][0]}
            for m, f in fit.fits.items()
        },
        bootstrap=(None if fit.bootstrap is None else
                   {keys[k]: list(v) for k, v in fit.bootstrap.items()}),
        source=fit.data.path,
        notes=list(fit.notes),
        warnings=list(fit.warnings),
    )
    out.update(  # added after the first contract: appended, so the earlier order holds
        interval_method=b.interval_method,
        linearised_intervals=(None if b.linearised is None else
                              {keys[k]: list(b.linearised[k]) for k in PARAMS}),
        surface_excess_at_cmc_mol_m2=excess[fit.model][0],
        surface_excess_at_cmc_interval_mol_m2=list(excess[fit.model][1]),
        coverage_at_cmc=excess[fit.model][0] / b.params["max_surface_excess"],
    )
    return to_jsonable(out)


def depletion_fit_json(fit: DepletionFit) -> dict:
    """Return the plain data printed by ``sizing fit depletion --json``.

    Keys: ``rows`` (one dict per CSV row, in row order, with ``surface_excess_mol_m2`` and its
    ``surface_excess_sd_mol_m2``), ``langmuir`` (per sample: the fit or a note), ``confidence``,
    ``source``, ``notes``.
    """
    return to_jsonable({"rows": fit.rows, "langmuir": fit.langmuir, "confidence": DEPLETION_CONFIDENCE,
                        "source": fit.path, "notes": list(fit.notes)})


def partition_fit_json(fit: PartitionFit) -> dict:
    """Return the plain data printed by ``sizing fit partition --json``.

    Keys: ``partition_coefficient`` [-] with ``partition_coefficient_interval`` (also under
    ``intervals``), ``confidence``, ``cmc_mol_m3`` (or null) and ``cmc_source``, ``method``,
    ``rows``, ``source``, ``notes``.
    """
    return to_jsonable({"partition_coefficient": fit.partition_coefficient,
                        "partition_coefficient_interval": list(fit.interval),
                        "intervals": {"partition_coefficient": list(fit.interval)},
                        "confidence": PARTITION_CONFIDENCE, "cmc_mol_m3": fit.cmc,
                        "cmc_source": fit.cmc_source, "method": fit.method, "rows": fit.rows,
                        "source": fit.path, "notes": list(fit.notes)})


def interaction_fit_json(fit) -> dict:
    """Return the plain data printed by ``sizing fit interaction --json`` (SI; beta dimensionless)."""
    return to_jsonable({"interaction": fit.interaction, "interaction_interval": list(fit.interaction_interval),
                        "confidence": 0.95, "interval_method": "profile likelihood",
                        "cmc_1_mol_m3": fit.cmc_1, "cmc_2_mol_m3": fit.cmc_2, "rms_ln_cmc": fit.rms_ln,
                        "synergism": fit.synergism, "rows": fit.rows, "model": "regular solution (Rubingh 1979)",
                        "source": fit.path, "notes": list(fit.notes)})


def electrolyte_fit_json(fit) -> dict:
    """Return the plain data printed by ``sizing fit tension --json`` for an electrolyte.

    Keys: ``kind`` (``"electrolyte"``), ``tension_increment_N_m_per_mol_m3`` (d gamma/d c) with
    its interval and standard error, ``clean_tension_N_m`` with its interval and
    ``clean_tension_fitted``, ``concentration_mol_m3`` (the distinct concentrations) with
    ``surface_excess_mol_m2`` (negative, Gibbs) and ``surface_excess_interval_mol_m2`` at each,
    ``depletion_thickness_m`` (-Gamma/c) with its interval, ``temperature_K``,
    ``gibbs_prefactor``, ``confidence``, ``n_points``, ``residuals_N_m``, ``residual_sd_N_m``,
    ``source``, ``notes``, ``warnings``.
    """
    r = np.asarray(fit.residuals, dtype=float)
    return to_jsonable({
        "kind": "electrolyte",
        "tension_increment_N_m_per_mol_m3": fit.tension_increment,
        "tension_increment_interval_N_m_per_mol_m3": list(fit.tension_increment_interval),
        "tension_increment_standard_error_N_m_per_mol_m3": fit.tension_increment_se,
        "clean_tension_N_m": fit.clean_tension,
        "clean_tension_interval_N_m": list(fit.clean_tension_interval),
        "clean_tension_fitted": not fit.clean_tension_fixed,
        "concentration_mol_m3": [float(x) for x in fit.concentration],
        "surface_excess_mol_m2": [float(x) for x in fit.surface_excess],
        "surface_excess_interval_mol_m2": [[float(a), float(b)] for a, b in fit.surface_excess_interval],
        "depletion_thickness_m": fit.depletion_thickness,
        "depletion_thickness_interval_m": list(fit.depletion_thickness_interval),
        "temperature_K": fit.temperature,
        "gibbs_prefactor": fit.gibbs_prefactor,
        "confidence": ELECTROLYTE_CONFIDENCE,
        "n_points": int(r.size),
        "residuals_N_m": [float(x) for x in r],
        "residual_sd_N_m": float(np.sqrt(np.sum(r * r) / fit.dof)),
        "source": fit.path,
        "notes": list(fit.notes),
        "warnings": list(fit.warnings),
    })
