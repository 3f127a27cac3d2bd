"""Sweep output that scales (issue 16): the CSV streamed in blocks equals pandas' to_csv, the
terminal summary, no pandas import on a large grid; issue 14 item 13: flat sweeps say why,
infeasible rows say why, a wide table fits the terminal."""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd

from sizing.case import load_case
from sizing.cli import sweep as cli_sweep
from sizing.planning.sweep import sweep, sweep_columns

ROOT = Path(__file__).resolve().parents[1]
LOTION = ROOT / "cases_demo" / "lotion_o_w.toml"


def _exponents(text: str) -> str:
    # pandas writes 1e-08 where pyarrow writes 1e-8 (the same number); compare without the padding
    return re.sub(r"e([+-])0*(\d)", lambda m: f"e{'' if m.group(1) == '+' else '-'}{m.group(2)}", text)


def test_streamed_csv_equals_pandas_to_csv_across_blocks():
    # reference library: pandas DataFrame.to_csv(float_format="%.10g"); blocks of 997 rows so the
    # block edges fall inside runs of the grid; unreachable targets (coverage above the CMC
    # ceiling 0.908) give empty cells and False
    case = load_case(LOTION)
    cols = sweep_columns(case, ["coverage=0.5..0.99:60", "d32=1um..5um:70"])
    assert not cols["feasible"].all() and cols["feasible"].any()
    ours = cli_sweep.csv_bytes(cols, chunk_rows=997).decode()
    ref = pd.DataFrame(cols).to_csv(index=False, float_format="%.10g")
    assert _exponents(ours) == _exponents(ref)
    assert b"".join(bytes(c) for c in cli_sweep.csv_chunks(cols, chunk_rows=997)).decode() == ours


def test_sweep_dataframe_keeps_its_columns_and_values():
    case = load_case(LOTION)
    specs = ["d32=1um..5um:7", "batch.dispersed_fraction=0.1..0.4:5"]
    df, cols = sweep(case, specs), sweep_columns(case, specs)
    assert list(df.columns) == list(cols)
    for c in cols:
        np.testing.assert_array_equal(df[c].to_numpy(), cols[c])


def test_grid_shape_from_the_ravelled_inputs():
    case = load_case(LOTION)
    cols = sweep_columns(case, ["d32=1um..5um:7", "batch.dispersed_fraction=0.1..0.4:5"])
    assert cli_sweep._grid_shape(cols, 2) == (7, 5)
    assert cli_sweep._grid_shape(sweep_columns(case, ["d32=1um..5um:9"]), 1) == (9,)


def test_large_grid_prints_a_summary_and_imports_no_pandas(tmp_path):
    # a test of imports, not of time: a large grid with --csv streams the CSV without pandas
    out = tmp_path / "s.csv"
    code = ("import sys; from sizing.cli import main; "
            f"rc = main(['sweep', {str(LOTION)!r}, '--vary', 'd32=1um..5um:300', '--vary', "
            f"'batch.dispersed_fraction=0.1..0.4:200', '--csv', {str(out)!r}]); "
            "print('PANDAS', 'pandas' in sys.modules, rc)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert "PANDAS False 0" in done.stdout
    assert "60,000 grid points (300 x 200" in done.stdout
    assert len(done.stdout.splitlines()) < 40
    assert out.read_text().count("\n") == 60_001


MINI = ROOT / "cases_demo" / "miniemulsion_hph.toml"  # [scaleup] power law on the pressure
TANK = ROOT / "cases_demo" / "agro_ew_stirred_tank.toml"  # [scaleup] stirred tank, constant tip speed


def test_d32_sweep_on_a_power_law_scaleup_says_the_scaleup_sets_the_d32(capsys, monkeypatch):
    # issue 14 item 13: the sweep is flat because the plant d32 comes from the scale-up; say so
    from sizing import model
    from sizing.cli import main

    monkeypatch.setenv("COLUMNS", "1000")
    assert main(["sweep", str(MINI), "--vary", "d32=0.1um..0.5um:4"]) == 0
    out, err = capsys.readouterr()
    assert "[scaleup] sets the plant d32" in err and "vary scaleup.plant" in err
    assert err.count("does not change with d32") == 1  # one note, not the generic one as well
    cols = sweep_columns(load_case(MINI), ["d32=0.1um..0.5um:4"])
    sol = model.solve_case(load_case(MINI))  # the case as written: its plant d32 and dose
    np.testing.assert_allclose(cols["plant d32 [um]"], float(sol.d32) * 1e6, rtol=1e-12)
    np.testing.assert_allclose(cols["dose product [kg]"], float(sol.kg_product), rtol=1e-12)
    # and the variable that does move it: the plant pressure
    moved = sweep_columns(load_case(MINI), ["scaleup.plant=300..900 bar:3"])["dose product [kg]"]
    assert np.all(np.diff(moved) > 0)


def test_d32_sweep_on_a_stirred_tank_scaleup_shows_the_plant_d32(capsys, monkeypatch):
    from sizing import model
    from sizing.cli import main

    monkeypatch.setenv("COLUMNS", "1000")
    assert main(["sweep", str(TANK), "--vary", "d32=1um..5um:3"]) == 0
    assert "turns it into the plant d32" in capsys.readouterr().err
    case = load_case(TANK)
    cols = sweep_columns(case, ["d32=1um..5um:3"])
    for lab, plant in zip(cols["d32 [um]"], cols["plant d32 [um]"]):
        sol = model.solve_case(case, overrides={"drops.d32": lab * 1e-6})  # point solve, same path
        assert plant == np.float64(float(sol.d32) * 1e6) or abs(plant / (float(sol.d32) * 1e6) - 1) < 1e-12
    ratio = cols["plant d32 [um]"] / cols["d32 [um]"]
    np.testing.assert_allclose(ratio, ratio[0], rtol=1e-12)  # the stirred-tank rule scales the lab d32


def test_infeasible_rows_say_why(tmp_path, capsys, monkeypatch):
    # coverage above the largest the CMC allows (0.9077 for the lotion: K CMC / (1 + K CMC) with
    # K = 1.2 m**3/mol, CMC = 8.2 mM, Langmuir) is unreachable; the row says so
    from sizing.cli import main

    case = load_case(LOTION)
    cols = sweep_columns(case, ["coverage=0.5..0.99:12"])
    k_cmc = 1.2 * 8.2
    bad = cols["coverage [-]"] > k_cmc / (1 + k_cmc)
    assert bad.any() and (~bad).any()
    np.testing.assert_array_equal(cols["feasible"], ~bad)
    assert all(r == "" for r in cols["reason"][~bad])
    assert all("above the largest coverage below the CMC" in r for r in cols["reason"][bad])
    out = tmp_path / "s.csv"
    monkeypatch.setenv("COLUMNS", "1000")
    assert main(["sweep", str(LOTION), "--vary", "coverage=0.5..0.99:12", "--csv", str(out)]) == 0
    lines = out.read_text().splitlines()
    assert lines[0].endswith(",reason")
    assert lines[-1].endswith("coverage target above the largest coverage below the CMC (see max coverage)")
    # a summary (a grid too long to print) counts the rows by reason
    assert main(["sweep", str(LOTION), "--vary", "coverage=0.5..0.99:60", "--vary", "d32=1um..5um:3"]) == 0
    text = capsys.readouterr().out
    assert re.search(r"not met at [\d,]+ points: coverage target above", text)


def test_a_wide_table_prints_a_summary_in_a_narrower_terminal(capsys, monkeypatch):
    from sizing.cli import main

    spec = ["sweep", str(LOTION), "--vary", "d32=1um..5um:5"]
    monkeypatch.setenv("COLUMNS", "80")
    assert main(spec) == 0
    out = capsys.readouterr().out
    assert "wider than this terminal (80)" in out and max(len(x) for x in out.splitlines()) <= 80
    monkeypatch.setenv("COLUMNS", "1000")
    assert main(spec) == 0
    out = capsys.readouterr().out
    assert "wider than this terminal" not in out and len(out.splitlines()) == 6  # header and 5 rows
    monkeypatch.delenv("COLUMNS")  # not a terminal (captured): a file or pipe gets the whole table
    assert main(spec) == 0
    assert len(capsys.readouterr().out.splitlines()) == 6
