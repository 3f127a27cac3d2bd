"""Tests of sizing.fitting.tension, sizing.fitting.block (block, plot) and `sizing fit tension`.

Synthetic series are generated from known parameters with the equations of state of DESIGN.md
plus seeded numpy noise; the fit must give the parameters back inside its reported 95 %
intervals.  Coverage tolerance: with 20 seeds at a true coverage of 95 %, at least 16 hits
(80 %) are required (binomial probability of fewer than 16 at p = 0.95 is about 1.6 %; the
seeds are fixed, so the test is deterministic).
"""

from __future__ import annotations

import json
import math
import tomllib
from pathlib import Path

import numpy as np
import pytest

from sizing.cli import main
from sizing.errors import CalculationError, InputError
from sizing.fitting.block import block_stem, plot_svg_for_provenance, surfactant_block, write_fitted_block
from sizing.fitting.tension import TensionData, fit_tension, model_tension, read_tension_csv
from sizing.outputs.fit_json import tension_fit_json
from sizing.units import parse

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases_demo" / "lab" / "nonionic_tension.csv"
T25 = 298.15
TRUTH = {"clean_tension": 52e-3, "max_surface_excess": 3.3e-6, "adsorption_constant": 850.0, "cmc": 0.065}


def synthetic(seed, model="langmuir", beta=0.0, sd=0.3e-3, n=18, cmc=0.065):
    """Return a TensionData from the truth above plus Gaussian noise sd [N/m]."""
    rng = np.random.default_rng(seed)
    c = np.logspace(math.log10(cmc) - 3, math.log10(cmc) + 1, n)
    g = model_tension(c, model, TRUTH["clean_tension"], TRUTH["max_surface_excess"],
                      TRUTH["adsorption_constant"], cmc, T25, 1.0, beta)
    return TensionData("synthetic.csv", c, g + rng.normal(0.0, sd, n), T25, {}, ())


def write_csv(tmp_path, text, name="series.csv"):
    p = tmp_path / name
    p.write_text(text)
    return p


# ---------------------------------------------------------------- reference values
def test_langmuir_reference_pressures():
    # Langmuir/Szyszkowski example derived exactly from Pi = n R T Gamma_inf ln(1 + K c)
    # (Szyszkowski, Z. Phys. Chem. 64 (1908) 385 [from memory]): Gamma_inf 4 umol/m2, K 100 m3/mol, n = 1, 25 C:
    # c = 0.01 mol/m3 -> 6.8731 mN/m, c = 1 -> 45.763 mN/m; tolerance at the printed precision
    pi = 72e-3 - model_tension(np.array([0.01, 1.0]), "langmuir", 72e-3, 4e-6, 100.0, np.inf, T25)
    assert pi[0] * 1e3 == pytest.approx(6.8731, abs=5e-5)
    assert pi[1] * 1e3 == pytest.approx(45.763, abs=5e-4)


def test_plateau_is_flat_above_cmc():
    c = np.array([0.1, 0.2, 1.0])
    g = model_tension(c, "langmuir", 50e-3, 3e-6, 500.0, 0.1, T25)
    assert np.ptp(g) == 0.0


# ---------------------------------------------------------------- recovery and coverage
def test_noise_free_series_recovers_parameters_and_breakpoint():
    # exact data from the generator: the segmented fit must find the known breakpoint (to 1e-6)
    d = synthetic(0, sd=0.0)
    f = fit_tension(d, model="langmuir")
    for k, v in TRUTH.items():
        assert f.best.params[k] == pytest.approx(v, rel=1e-6), k


def test_interval_coverage_over_seeds():
    hits = {k: 0 for k in TRUTH}
    for seed in range(20):
        f = fit_tension(synthetic(seed), model="langmuir")
        for k, v in TRUTH.items():
            lo, hi = f.best.intervals[k]
            hits[k] += lo <= v <= hi
    assert all(h >= 16 for h in hits.values()), hits


def test_breakpoint_found_between_points_with_few_points():
    # 10 points only; a CMC between two measured concentrations; noise 0.3 mN/m
    hits = 0
    for seed in range(20):
        f = fit_tension(synthetic(100 + seed, n=10, cmc=0.05), model="langmuir")
        lo, hi = f.best.intervals["cmc"]
        hits += lo <= 0.05 <= hi
        assert f.n_below >= 4 and f.n_above >= 2
    assert hits >= 16


def test_frumkin_data_select_frumkin_and_recover_interaction():
    d = synthetic(1, model="frumkin", beta=1.2, sd=0.2e-3, n=24)
    f = fit_tension(d)
    assert f.model == "frumkin"
    lo, hi = f.best.intervals["interaction"]
    assert lo <= 1.2 <= hi
    assert set(f.fits) == {"langmuir", "frumkin", "volmer"}
    assert f.fits["frumkin"].aicc < f.fits["langmuir"].aicc - 2


def test_fixed_clean_tension_is_kept():
    f = fit_tension(synthetic(3), model="langmuir", clean_tension=52e-3)
    assert f.best.params["clean_tension"] == pytest.approx(52e-3, rel=1e-12)
    assert f.best.intervals["clean_tension"] == pytest.approx((52e-3, 52e-3), rel=1e-12)
    assert tension_fit_json(f)["clean_tension_fitted"] is False


def test_bootstrap_intervals_bracket_the_estimate():
    f = fit_tension(synthetic(4, n=10), model="langmuir", bootstrap=25, seed=1)
    for k in ("cmc", "max_surface_excess", "adsorption_constant"):
        lo, hi = f.bootstrap[k]
        assert lo < f.best.params[k] < hi


def test_area_per_molecule_in_json():
    j = tension_fit_json(fit_tension(synthetic(5, sd=0.0), model="langmuir"))
    # 1/(N_A Gamma_inf): 3.3 umol/m2 -> 0.503194 nm2 (N_A exact since the 2019 SI, BIPM SI Brochure 9th ed.)
    assert j["area_per_molecule_m2"] * 1e18 == pytest.approx(0.503194, rel=1e-5)


# ---------------------------------------------------------------- bad data
GOOD_ROWS = "\n".join(f"{c:.6g},{g:.3f}" for c, g in zip(
    np.logspace(-4, 0, 10), model_tension(np.logspace(-4, 0, 10), "langmuir", 52e-3, 3.3e-6, 850.0,
                                          0.065, T25) * 1e3))


def test_missing_unit(tmp_path):
    p = write_csv(tmp_path, "concentration,tension [mN/m]\n" + GOOD_ROWS)
    with pytest.raises(InputError, match=r"column 'concentration' has no unit"):
        read_tension_csv(p)


def test_non_numeric_cell_names_row_and_column(tmp_path):
    rows = GOOD_ROWS.splitlines()
    rows[2] = "0.0003,abc"
    p = write_csv(tmp_path, "concentration [mM],tension [mN/m]\n" + "\n".join(rows))
    with pytest.raises(InputError, match=r"row 4, column 'tension \[mN/m\]': 'abc' is not a number"):
        read_tension_csv(p)


def test_non_positive_concentration(tmp_path):
    p = write_csv(tmp_path, "concentration [mM],tension [mN/m]\n0,52.0\n" + GOOD_ROWS)
    with pytest.raises(InputError, match=r"row 2, column 'concentration \[mM\]': 0 mol/m\*\*3 is not positive"):
        read_tension_csv(p)


def test_duplicated_concentration_without_replicate(tmp_path):
    rows = GOOD_ROWS.splitlines()
    p = write_csv(tmp_path, "concentration [mM],tension [mN/m]\n" + "\n".join(rows + [rows[3]]))
    with pytest.raises(InputError, match=r"rows 5 and 12 have the same concentration .* no 'replicate' column"):
        read_tension_csv(p)


def test_duplicates_accepted_with_replicate_column(tmp_path):
    rows = [r + ",1" for r in GOOD_ROWS.splitlines()]
    rows.append(GOOD_ROWS.splitlines()[3] + ",2")
    p = write_csv(tmp_path, "concentration [mM],tension [mN/m],replicate\n" + "\n".join(rows))
    assert len(read_tension_csv(p).concentration) == 11


def test_too_few_points_below_cmc(tmp_path):
    c = np.array([0.01, 0.02, 0.04, 0.1, 0.2, 0.4, 0.8, 1.6])  # CMC 0.065: 3 points below
    g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, T25) * 1e3
    p = write_csv(tmp_path, "concentration [mM],tension [mN/m]\n"
                  + "\n".join(f"{a},{b:.3f}" for a, b in zip(c, g)))
    with pytest.raises(InputError, match=r"3 points below the fitted CMC .* expected at least 4"):
        fit_tension(p, temperature=T25, model="langmuir")


def test_too_few_points_above_cmc(tmp_path):
    c = np.logspace(-4, -1.5, 9)  # all below a CMC of 0.065 mM: no plateau
    g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, T25) * 1e3
    p = write_csv(tmp_path, "concentration [mM],tension [mN/m]\n"
                  + "\n".join(f"{a:.6g},{b:.3f}" for a, b in zip(c, g)))
    with pytest.raises(InputError, match=r"(above the fitted CMC|no CMC in the data).*at least 2"):
        fit_tension(p, temperature=T25, model="langmuir")


def test_too_few_rows(tmp_path):
    p = write_csv(tmp_path, "concentration [mM],tension [mN/m]\n0.001,50\n0.01,40\n0.1,30\n")
    with pytest.raises(InputError, match=r"3 data rows; expected at least 6"):
        read_tension_csv(p)


def test_bad_option_values():
    with pytest.raises(InputError, match=r"--model: unknown isotherm 'henry'"):
        fit_tension(synthetic(0), model="henry")
    with pytest.raises(InputError, match=r"--gibbs-prefactor"):
        fit_tension(synthetic(0), gibbs_prefactor=7)


def test_too_few_distinct_concentrations_is_an_input_error(tmp_path):
    # replicates allowed, but three distinct concentrations leave no gap for a breakpoint
    rows = [f"{c},{g},{r}" for r in (1, 2, 3) for c, g in ((0.001, 50), (0.01, 40), (0.1, 30))]
    p = write_csv(tmp_path, "concentration [mM],tension [mN/m],replicate\n" + "\n".join(rows))
    with pytest.raises(InputError, match=r"3 distinct concentrations; expected at least 4"):
        fit_tension(p, temperature=T25, model="langmuir")


def test_fit_that_does_not_converge_is_a_calculation_error(monkeypatch, capsys):
    # a numeric failure (every start ends on a non-finite residual) is not the user's mistake
    import sizing.fitting.tension as ft

    class Failed:
        fun = np.array([np.nan])
        cost = np.nan

    monkeypatch.setattr(ft, "_solve", lambda fun, x0, lo, hi: Failed())
    with pytest.raises(CalculationError, match=r"the langmuir fit did not converge") as info:
        fit_tension(synthetic(0), model="langmuir")
    assert not isinstance(info.value, ValueError)
    # the command line prints it on one line and exits non-zero, no traceback
    assert main(["fit", "tension", str(DEMO), "--model", "langmuir"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ") and err.count("\n") == 1 and "Traceback" not in err


# ---------------------------------------------------------------- demo file, block, CLI
def test_demo_file_fits_without_warnings_and_near_its_generator():
    f = fit_tension(DEMO)
    assert f.warnings == ()
    # the generating parameters written in the file's header (invented demo data)
    truth = {"max_surface_excess": 2.9e-6, "adsorption_constant": 1200.0, "cmc": 0.085,
             "clean_tension": 48e-3}
    for k, v in truth.items():
        lo, hi = f.best.intervals[k]
        assert lo <= v <= hi, k


def test_block_uses_only_case_keys_and_round_trips():
    f = fit_tension(synthetic(6), model="langmuir")
    block = surfactant_block(f, plot="x.svg")
    assert set(block["surfactant"]) == {"isotherm", "max_surface_excess", "adsorption_constant",
                                        "interaction", "gibbs_prefactor", "cmc", "clean_tension", "measured_in"}
    s = block["surfactant"]
    assert parse(s["cmc"], "cmc", "concentration") == pytest.approx(f.best.params["cmc"], rel=1e-5)
    assert parse(s["max_surface_excess"], "g", "surface_excess") == pytest.approx(
        f.best.params["max_surface_excess"], rel=1e-5)
    assert parse(s["adsorption_constant"], "k", "adsorption_constant") == pytest.approx(
        f.best.params["adsorption_constant"], rel=1e-5)
    assert parse(s["clean_tension"], "g0", "tension") == pytest.approx(
        f.best.params["clean_tension"], rel=1e-5)
    assert block["provenance"]["plot"] == "x.svg"


def test_block_stem():
    assert block_stem("a/b/sds_tension.csv") == "sds"
    assert block_stem("runs.csv") == "runs"


def test_cli_json_and_out(tmp_path, capsys):
    lab = tmp_path / "lab"
    lab.mkdir()
    src = lab / "demo_tension.csv"
    src.write_text(DEMO.read_text())
    rc = main(["fit", "tension", str(src), "--model", "langmuir", "--json", "--out", str(tmp_path / "fits")])
    assert rc == 0
    j = json.loads(capsys.readouterr().out)
    for key in ("cmc_mol_m3", "max_surface_excess_mol_m2", "adsorption_constant_m3_mol",
                "clean_tension_N_m", "intervals", "model"):
        assert key in j
    for key in ("cmc_mol_m3", "max_surface_excess_mol_m2", "adsorption_constant_m3_mol", "clean_tension_N_m"):
        lo, hi = j["intervals"][key]
        assert lo <= j[key] <= hi
    toml_path = tmp_path / "fits" / "demo.toml"
    doc = tomllib.loads(toml_path.read_text())
    assert doc["surfactant"]["isotherm"] == "langmuir"
    assert doc["provenance"]["source"] == "demo_tension.csv"
    svg = plot_svg_for_provenance(toml_path)
    assert svg.lstrip().startswith("<?xml") and "<svg" in svg
    # the plot file gone: re-rendered from the source CSV, only when it lies inside source_root
    (tmp_path / "fits" / doc["provenance"]["plot"]).unlink()
    with pytest.raises(InputError, match="provenance.source_path: .* points outside"):
        plot_svg_for_provenance(toml_path)  # ../lab is outside the block's own folder
    assert "<svg" in plot_svg_for_provenance(toml_path, source_root=tmp_path)


def test_cli_text_output_has_units(capsys):
    assert main(["fit", "tension", str(DEMO), "--model", "langmuir"]) == 0
    out = capsys.readouterr().out
    assert "CMC" in out and " mM" in out and "umol/m**2" in out and "m**3/mol" in out and "mN/m" in out


def test_cli_bad_file_exits_2(tmp_path, capsys):
    p = write_csv(tmp_path, "concentration,tension [mN/m]\n" + GOOD_ROWS)
    assert main(["fit", "tension", str(p)]) == 2
    assert "has no unit" in capsys.readouterr().err


def test_failed_write_keeps_good_output(tmp_path, monkeypatch):
    f = fit_tension(synthetic(7), model="langmuir")
    toml_path, _ = write_fitted_block(f, tmp_path, name="blk")
    good = toml_path.read_text()
    import sizing.fitting.block as fitmod

    def boom(fit):
        raise RuntimeError("render failed")

    monkeypatch.setattr(fitmod, "tension_plot_svg", boom)
    with pytest.raises(RuntimeError):
        write_fitted_block(f, tmp_path, name="blk")
    assert toml_path.read_text() == good


def test_analytic_jacobian_matches_scipy_differentiate():
    # cross-check of the Gibbs-equation Jacobian against scipy.differentiate.jacobian
    # (adaptive finite differences), on the demo file for every model; tolerance 1e-7 relative
    from scipy.differentiate import jacobian

    import sizing.fitting.tension as ft

    data = read_tension_csv(DEMO)
    for model in ("langmuir", "frumkin", "volmer"):
        best, names, lo, hi, fun = ft._fit_model(data, model, T25, 1.0, None)
        analytic = ft._jacobian(data.concentration, model, names, best.x, None, T25, 1.0)

        def f(xs, fun=fun):  # scipy.differentiate evaluates columns of x at once
            xs = np.asarray(xs)
            out = np.empty((len(data.concentration),) + xs.shape[1:])
            for idx in np.ndindex(xs.shape[1:]):
                out[(slice(None),) + idx] = fun(xs[(slice(None),) + idx])
            return out

        numeric = jacobian(f, best.x, initial_step=1e-3).df
        assert analytic == pytest.approx(numeric, rel=1e-7, abs=1e-7 * np.abs(analytic).max()), model
