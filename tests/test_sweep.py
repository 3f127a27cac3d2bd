"""What-if sweeps: spec parsing with units, and agreement with point solves (sizing.planning.sweep)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from sizing import model
from sizing.case import load_case
from sizing.cli import main
from sizing.errors import InputError
from sizing.planning.sweep import parse_vary, sweep

ROOT = Path(__file__).resolve().parents[1]
LOTION = ROOT / "cases_demo" / "lotion_o_w.toml"


@pytest.fixture(scope="module")
def case():
    return load_case(LOTION)


def test_spec_forms_give_the_same_grid(case):
    a = parse_vary("d32=1um..5um:9", case)
    b = parse_vary("drops.d32=1 um..5 um:9", case)
    c = parse_vary("d32=1..5 um:9", case)
    for v in (b, c):
        np.testing.assert_allclose(v.si, a.si, rtol=1e-12)
    assert a.header == "d32 [um]" and a.si[0] == pytest.approx(1e-6, rel=1e-12)
    t = parse_vary("temperature=20..60 degC:5", case)
    assert t.si[0] == pytest.approx(293.15, rel=1e-12) and t.header == "temperature [degC]"


@pytest.mark.parametrize("spec, match", [
    ("d32=1um-5um", "expected NAME=LOW..HIGH:N"),
    ("d32=1 kg..2 kg:3", "is not a length"),
    ("surfactant.cmx=1..2 mM:3", "did you mean 'surfactant.cmc'"),
    ("d32=5um..1um:3", "LOW < HIGH"),
    ("d32=1um..5um:1", "N from 2"),
])
def test_bad_specs(case, spec, match):
    with pytest.raises(InputError, match=match):
        parse_vary(spec, case)


def test_two_way_sweep_matches_point_solves(case):
    df = sweep(case, ["d32=1um..4um:4", "batch.dispersed_fraction=0.1..0.4:3"])
    assert len(df) == 12
    assert "dose product [kg]" in df.columns and "free monomer [mM]" in df.columns
    for _, row in df.iterrows():
        sol = model.solve_case(case, overrides={"drops.d32": row["d32 [um]"] * 1e-6,
                                                "batch.dispersed_fraction": row["dispersed_fraction [-]"]})
        assert row["dose product [kg]"] == pytest.approx(float(sol.kg_product), rel=1e-12)
        assert row["equilibrium coverage [-]"] == pytest.approx(float(sol.state.coverage), rel=1e-12)


def test_target_sweep_marks_unreachable_points(case):
    df = sweep(case, ["coverage=0.5..0.95:10"])
    assert df["feasible"].tolist() == [c <= 0.9077490774907748 for c in df["coverage [-]"]]
    assert df.loc[~df["feasible"], "dose product [kg]"].isna().all()


def test_cli_sweep_csv(tmp_path, capsys):
    out = tmp_path / "s.csv"
    assert main(["sweep", str(LOTION), "--vary", "d32=1um..5um:5", "--csv", str(out)]) == 0
    lines = out.read_text().splitlines()
    assert lines[0].startswith("d32 [um],feasible,dose active [kg]") and len(lines) == 6
    assert main(["sweep", str(LOTION), "--vary", "bogus=1..2:3"]) == 2


def test_log_spacing_matches_geomspace():
    # ':log' spaces the grid as numpy.geomspace (reference library).
    case = load_case(LOTION)
    v = parse_vary("d32=0.5um..20um:5:log", case)
    np.testing.assert_allclose(v.si, np.geomspace(0.5e-6, 20e-6, 5), rtol=1e-12)
    with pytest.raises(InputError, match="a log grid needs LOW > 0"):
        parse_vary("d32=0um..20um:5:log", case)
