"""``sizing homologues``: a technical ethoxylate as Poisson homologue cuts, and its apparent CMC.

Checks: the cut fractions are the Poisson law p_j = exp(-nu) nu**j / j! renormalised over the
cuts kept (written out here with math.factorial, rel 1e-12; Weibull and Nycander, Acta Chem.
Scand. 8 (1954) 847, from memory, for ethoxylation giving a Poisson spread); the apparent CMC equals
the ideal pseudo-phase sum 1/C_app = sum_i alpha_i / (C_i (1 + P_i r)) (the form of Ben Ghoulam et
al., Langmuir 2004, as the issue cites it; rel 1e-9) and rises with the oil/water ratio; the
written [blend] block loads into a case and solves; bad options are named.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys

import numpy as np
import pytest

from sizing.case import loads_case
from sizing.model import solve_case

ARGS = ["--mean-eo", "7", "--tail-molar-mass", "186.34 g/mol", "--cmc", "0.08 mM", "--cmc-factor-per-eo", "1.14",
        "--partition-coefficient", "5", "--partition-factor-per-eo", "0.55", "--max-surface-excess",
        "2.6 umol/m**2", "--adsorption-constant", "300 m**3/mol"]

CASE = """
[case]
title = "homologue check"
system = "emulsion"
[batch]
volume = "1 m**3"
dispersed_fraction = 0.2
continuous_density = "1000 kg/m**3"
dispersed_density = "850 kg/m**3"
[drops]
d32 = "3 um"
[target]
coverage = 0.8
"""


def _run(*extra):
    return subprocess.run([sys.executable, "-m", "sizing", "homologues", *ARGS, *extra], capture_output=True,
                          text=True)


def test_poisson_cuts_and_apparent_cmc_against_the_formulas():
    r = _run("--json", "--oil-water", "0..2:5")
    assert r.returncode == 0, r.stderr
    j = json.loads(r.stdout)
    eo, x = np.array(j["eo"]), np.array(j["mole_fraction"])
    p = np.array([math.exp(-7) * 7 ** k / math.factorial(k) for k in eo])
    np.testing.assert_allclose(x, p / p.sum(), rtol=1e-12)
    assert abs(float(np.sum(eo * x)) - 7) < 0.01  # the cuts keep 99.9 % of the molecules
    c, pp = np.array(j["cmc_mol_m3"]), np.array(j["partition_coefficient"])
    np.testing.assert_allclose(c[eo == 7], [0.08], rtol=1e-12)
    np.testing.assert_allclose(c[1:] / c[:-1], 1.14, rtol=1e-12)
    for r_, app in zip(j["oil_water_ratio"], j["apparent_cmc_mol_m3"]):
        assert app == pytest.approx(1 / np.sum(x / (c * (1 + pp * r_))), rel=1e-9)
    assert np.all(np.diff(j["apparent_cmc_mol_m3"]) > 0)


def test_the_written_block_loads_into_a_case_and_solves(tmp_path):
    out = tmp_path / "eo7.toml"
    r = _run("--out", out)
    assert r.returncode == 0, r.stderr
    case = loads_case(CASE + out.read_text())
    assert len(case.blend.component) == len(json.loads(_run("--json").stdout)["eo"])
    sol = solve_case(case)
    assert bool(np.all(sol.feasible)) and float(sol.state.coverage) == pytest.approx(0.8, rel=1e-9)


@pytest.mark.parametrize("extra, expected", [
    (["--mean-eo", "0"], "--mean-eo: expected a mean EO number"),
    (["--cmc-factor-per-eo", "-1"], "--cmc-factor-per-eo: expected a number > 0"),
    (["--oil-water", "2..1:3"], "--oil-water: expected 0 <= LOW <= HIGH"),
    (["--cmc", "0.08 kg"], "--cmc"),
    (["--out", "x.txt"], "--out: expected a file name ending in .toml"),
])
def test_bad_options_are_named(extra, expected):
    r = _run(*extra)
    assert r.returncode == 2 and expected in r.stderr and "Traceback" not in r.stderr
