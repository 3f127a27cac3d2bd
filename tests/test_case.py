"""Case files: every problem at once, did-you-mean, choices, round trip (sizing.case)."""

from __future__ import annotations

from pathlib import Path

import pytest

from sizing.case import dumps_case, load_case, loads_case
from sizing.cli import main
from sizing.errors import InputError

DEMOS = sorted((Path(__file__).resolve().parents[1] / "cases_demo").glob("*.toml"))

GOOD = """
[case]
title = "t"
system = "emulsion"
[batch]
volume = "2 m**3"
dispersed_fraction = 0.3
[drops]
d32 = "2 um"
[surfactant]
molar_mass = "288 g/mol"
max_surface_excess = "3 umol/m**2"
adsorption_constant = "1 m**3/mol"
[target]
coverage = 0.8
"""


def problems(text: str) -> list[str]:
    with pytest.raises(InputError) as exc:
        loads_case(text)
    return exc.value.problems


def test_good_case_validates():
    case = loads_case(GOOD)
    assert case.values()["drops.d32"] == pytest.approx(2e-6, rel=1e-12)


def test_every_problem_at_once_with_paths_values_and_expectations():
    text = (GOOD.replace('d32 = "2 um"', 'd32 = "-2 um"')
            .replace("coverage = 0.8", 'coverage = 1.5\ntension = "30 mN/m"')
            .replace('molar_mass = "288 g/mol"', 'molar_mass = "288 g/mol"\ncmx = "8 mM"'))
    lines = problems(text)
    joined = "\n".join(lines)
    assert any(line.startswith("drops.d32:") and "'-2 um'" in line and "> 0" in line for line in lines)
    assert "surfactant.cmx: unknown key; did you mean 'cmc'?" in lines
    assert any(line.startswith("target.coverage:") and "1.5" in line for line in lines)
    # two targets AND a bad coverage: both reported
    assert any(line.startswith("target: give exactly one target") and "coverage, tension" in line
               for line in lines), joined
    assert len(lines) == 4


def test_no_target_missing_section_missing_key_unknown_section():
    lines = problems(GOOD.replace("coverage = 0.8", "margin = 0.1"))
    assert any(line.startswith("target: give exactly one target") and "got none" in line for line in lines)
    lines = problems(GOOD.replace("[target]\ncoverage = 0.8", "[trgt]\ncoverage = 0.8"))
    assert "target: missing section" in lines
    assert "trgt: unknown section; did you mean 'target'?" in lines
    lines = problems(GOOD.replace('molar_mass = "288 g/mol"\n', ""))
    assert "surfactant.molar_mass: missing key" in lines


def test_batch_choice_reported_with_a_field_error():
    lines = problems(GOOD.replace('volume = "2 m**3"', 'volume = "2 m**3"\nmass = "2 t"')
                     .replace("dispersed_fraction = 0.3", "dispersed_fraction = 3"))
    assert any(line.startswith("batch.dispersed_fraction:") for line in lines)
    assert any(line.startswith("batch: give the batch size as exactly one of") for line in lines)


def test_bad_unit_names_the_field_and_an_example():
    lines = problems(GOOD.replace('d32 = "2 um"', 'd32 = "2 kg"'))
    assert lines == ["drops.d32: '2 kg' is not a length; expected a length such as '2.4 um'"]


def test_cli_bad_case_exits_nonzero_without_traceback(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text(GOOD.replace("coverage = 0.8", 'coverage = 0.8\ntension = "30 mN/m"'))
    for verb in ("plan", "check", "solve"):
        args = [verb, str(bad)] + (["--out", str(tmp_path / "o")] if verb == "plan" else [])
        assert main(args) == 2
        err = capsys.readouterr().err
        assert "error: target: give exactly one target" in err
        assert "Traceback" not in err
    assert not (tmp_path / "o").exists()


def test_shape_factor_by_name():
    # Kelvin cell 1.0970: Princen and Levinson, J. Colloid Interface Sci. 120 (1987) 172
    case = loads_case(GOOD.replace('d32 = "2 um"', 'd32 = "2 um"\nshape_factor = "kelvin"'))
    assert case.values()["drops.shape_factor"] == pytest.approx(1.0970, abs=1e-12)


@pytest.mark.parametrize("path", DEMOS, ids=[p.stem for p in DEMOS])
def test_round_trip(path):
    case = load_case(path)
    text = dumps_case(case)
    again = loads_case(text, path.parent)
    assert again.values().keys() == case.values().keys()
    for k, v in case.values().items():
        assert again.values()[k] == pytest.approx(v, rel=1e-12), k
    assert dumps_case(again) == text
