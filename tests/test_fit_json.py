"""Tests of sizing.outputs.fit_json: the JSON contracts of `sizing fit ... --json`.

The keys are a contract relied on outside the project (DESIGN.md, "Fixed contracts"): the
floor of keys and their order are checked on the demo lab files; every number is plain JSON
(no NaN or Infinity, which are not JSON; RFC 8259 section 6).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

from sizing.fitting.depletion import fit_depletion
from sizing.fitting.partition import PartitionFit, fit_partition
from sizing.fitting.tension import fit_tension
from sizing.outputs.fit_json import depletion_fit_json, partition_fit_json, tension_fit_json

LAB = Path(__file__).resolve().parents[1] / "cases_demo" / "lab"

TENSION_KEYS = [
    "clean_tension_N_m", "max_surface_excess_mol_m2", "adsorption_constant_m3_mol", "interaction",
    "cmc_mol_m3", "model", "selection", "confidence", "intervals", "standard_errors",
    "area_per_molecule_m2", "area_per_molecule_interval_m2", "temperature_K", "gibbs_prefactor",
    "clean_tension_fitted", "n_points", "n_below_cmc", "n_above_cmc", "residuals_N_m",
    "residual_sd_N_m", "models", "bootstrap", "source", "notes", "warnings",
    "interval_method", "linearised_intervals", "surface_excess_at_cmc_mol_m2",
    "surface_excess_at_cmc_interval_mol_m2", "coverage_at_cmc",
]


def _plain(obj) -> str:
    return json.dumps(obj, allow_nan=False)  # raises on NaN/inf


def test_tension_json_keys_in_order_and_plain():
    j = tension_fit_json(fit_tension(LAB / "nonionic_tension.csv"))
    assert list(j) == TENSION_KEYS
    assert set(j["intervals"]) == set(j["standard_errors"]) == {
        "clean_tension_N_m", "max_surface_excess_mol_m2", "adsorption_constant_m3_mol",
        "interaction", "cmc_mol_m3"}
    _plain(j)


def test_tension_json_writes_null_for_a_parameter_not_fitted():
    # the Langmuir model has no interaction parameter: its standard error is NaN inside, null out
    j = tension_fit_json(fit_tension(LAB / "nonionic_tension.csv", model="langmuir"))
    assert j["standard_errors"]["interaction"] is None
    assert j["interaction"] == 0.0
    _plain(j)


def test_depletion_json_keys_and_rows_in_row_order():
    j = depletion_fit_json(fit_depletion(LAB / "depletion_runs.csv"))
    assert list(j) == ["rows", "langmuir", "confidence", "source", "notes"]
    rows = [r["row"] for r in j["rows"]]
    assert rows == sorted(rows) and all("surface_excess_mol_m2" in r for r in j["rows"])
    _plain(j)


def test_partition_json_keys_and_interval():
    j = partition_fit_json(fit_partition(LAB / "nonionic_partition.csv"))
    assert list(j) == ["partition_coefficient", "partition_coefficient_interval", "intervals",
                       "confidence", "cmc_mol_m3", "cmc_source", "method", "rows", "source", "notes"]
    lo, hi = j["partition_coefficient_interval"]
    assert lo <= j["partition_coefficient"] <= hi
    assert j["intervals"]["partition_coefficient"] == [lo, hi]
    _plain(j)


def test_partition_json_writes_null_for_an_interval_that_is_not_finite():
    # an interval that could not be formed (NaN inside) is null in the JSON, never NaN
    fit = PartitionFit("p.csv", 2.0, (math.nan, math.inf), None, "none", [], "m", ())
    j = partition_fit_json(fit)
    assert j["partition_coefficient_interval"] == [None, None]
    _plain(j)
