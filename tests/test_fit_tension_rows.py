"""`fit tension` on many rows: the temperature column converted as a column, the replicate table.

Invented synthetic series (a Langmuir truth); the references are pint through
:func:`sizing.units.parse` (per value) and the row data themselves.
"""

from __future__ import annotations

import numpy as np
import pytest

from sizing.cli import main
from sizing.fitting.tension import model_tension, read_tension_csv
from sizing.units import parse

T25 = 298.15


def test_temperature_column_in_degf_matches_pint_per_value(tmp_path):
    # the column is converted once (affine map); each value must equal pint's own conversion
    c = np.logspace(-4, 0, 8)
    g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, T25) * 1e3
    temps = np.array([76.5, 77.0, 77.2, 76.8, 77.1, 77.0, 76.9, 77.3])  # degF
    p = tmp_path / "t_tension.csv"
    p.write_text("concentration [mM],tension [mN/m],temperature [degF]\n"
                 + "\n".join(f"{a:.6g},{b:.3f},{t}" for a, b, t in zip(c, g, temps)))
    d = read_tension_csv(p)
    ref = np.mean([parse(f"{t} degF", "t", "temperature") for t in temps])
    assert d.temperature == pytest.approx(ref, rel=1e-13)  # tolerance: float rounding


def test_cli_text_with_replicates_prints_one_line_per_concentration(tmp_path, capsys):
    rng = np.random.default_rng(4)
    u = np.logspace(-4, 0, 12)
    c = np.repeat(u, 25)
    g = (model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, T25) + rng.normal(0, 3e-4, c.size)) * 1e3
    rep = np.tile(np.arange(1, 26), 12)
    p = tmp_path / "r_tension.csv"
    p.write_text("concentration [mM],tension [mN/m],temperature [degC],replicate\n"
                 + "\n".join(f"{a:.8g},{b:.4f},25,{r}" for a, b, r in zip(c, g, rep)))
    assert main(["fit", "tension", str(p)]) == 0
    out = capsys.readouterr().out
    assert "mean residual" in out and "300 rows at 12 distinct concentrations" in out
    table = out.split("mean residual", 1)[1].split("note:", 1)[0].strip().splitlines()
    assert len(table) == 12 and all(line.split()[2] == "25" for line in table)
