"""The command line's guards (issue 13): an overflow is one error naming the input, numpy
RuntimeWarnings never reach the terminal, control characters in titles never reach it either.

A float's range ends near 1.8e308 (IEEE 754 binary64; common practice).
"""

from __future__ import annotations

import argparse
import io
import sys
import warnings

import numpy as np
import pytest

from sizing.cli import main
from sizing.cli.common import clean, clean_output, guarded, numeric_guard
from sizing.errors import InputError

CASE = """
[case]
title = "{title}"
system = "emulsion"
[batch]
volume = "{volume}"
dispersed_fraction = 0.3
[drops]
d32 = "{d32}"
[surfactant]
name = "{name}"
molar_mass = "288 g/mol"
max_surface_excess = "3 umol/m**2"
adsorption_constant = "1 m**3/mol"
[target]
coverage = 0.8
"""


def write_case(tmp_path, name="c.toml", title="t", volume="2 m**3", d32="2 um", surfactant="S"):
    p = tmp_path / name
    p.write_text(CASE.format(title=title, volume=volume, d32=d32, name=surfactant), encoding="utf-8")
    return p


@pytest.mark.parametrize("field, kw", [("drops.d32", {"d32": "1e308 um"}), ("drops.d32", {"d32": "1e-300 um"}),
                                       ("batch.volume", {"volume": "1e300 m**3"})])
def test_plan_overflow_names_the_input_and_keeps_the_old_plan(tmp_path, capsys, field, kw):
    out = tmp_path / "out"
    assert main(["plan", str(write_case(tmp_path)), "--out", str(out)]) == 0
    before = {p.name: p.read_bytes() for p in out.iterdir()}
    capsys.readouterr()
    assert main(["plan", str(write_case(tmp_path, "bad.toml", **kw)), "--out", str(out)]) == 2
    cap = capsys.readouterr()
    lines = cap.err.strip().splitlines()
    # refused at the case (plausibility range) or by the overflow guard: either way one line naming it
    assert len(lines) == 1 and lines[0].startswith("error: ") and field in lines[0]
    assert "--dose" not in cap.err and "RuntimeWarning" not in cap.err and "Traceback" not in cap.err
    assert cap.out == ""
    assert {p.name: p.read_bytes() for p in out.iterdir()} == before


def test_solve_overflow_from_the_dose_option_names_it(tmp_path, capsys):
    assert main(["solve", str(write_case(tmp_path)), "--dose", "1e300 kg"]) == 2
    cap = capsys.readouterr()
    assert cap.out == "" and "--dose '1e300 kg'" in cap.err and "RuntimeWarning" not in cap.err


def test_guard_hides_numpy_warnings_and_turns_overflow_into_an_input_error(capsys):
    args = argparse.Namespace(case=None, dose="1e308 kg")
    with pytest.raises(InputError, match=r"numeric overflow .*--dose '1e308 kg'"):
        with numeric_guard(args):
            _ = np.float64(1e308) * np.float64(10.0)
    with numeric_guard(args):  # invalid values without overflow: kept quiet, not an error
        _ = np.zeros(1) / np.zeros(1)
    with pytest.raises(InputError, match="numeric overflow"):
        with numeric_guard(args):
            raise OverflowError("math range error")
    with warnings.catch_warnings(record=True) as seen:
        warnings.simplefilter("always")
        assert guarded(lambda a: float(np.float64(1e308) * 10))(args) == float("inf")  # not strict
    assert not [w for w in seen if issubclass(w.category, RuntimeWarning)]
    assert capsys.readouterr().err == ""


def test_other_warnings_still_show():
    with warnings.catch_warnings(record=True) as seen:
        warnings.simplefilter("always")
        with numeric_guard(argparse.Namespace()):
            warnings.warn("kept", UserWarning, stacklevel=1)
    assert [str(w.message) for w in seen] == ["kept"]


HOSTILE = "\\u001b[31mred\\u001b]0;title\\u0007 \\u202eevil\\u001b[2J"


@pytest.mark.parametrize("verb", [["solve"], ["plan", "--out", "OUT"], ["check"]])
def test_control_characters_in_titles_and_names_never_reach_the_terminal(tmp_path, capsys, verb):
    case = write_case(tmp_path, title=HOSTILE, surfactant=HOSTILE)
    argv = [verb[0], str(case)] + [str(tmp_path / "o") if a == "OUT" else a for a in verb[1:]]
    assert main(argv) == 0
    cap = capsys.readouterr()
    for text in (cap.out, cap.err):
        assert "\x1b" not in text and "\x07" not in text and "\u202e" not in text
    assert "?[31mred" in cap.out


def test_clean_and_clean_output():
    assert clean("a\x1b[0m\tb\nc\x9bd") == "a?[0m\tb\nc?d"
    buf = io.StringIO()
    real = sys.stdout
    sys.stdout = buf
    try:
        with clean_output():
            print("x\x1b[2Jy")
    finally:
        sys.stdout = real
    assert buf.getvalue() == "x?[2Jy\n"


def test_guarded_verb_prints_clean_and_hides_warnings(capsys):
    def verb(args):
        print("title \x1b[31mred")
        return int(np.isinf(np.float64(1e308) * 10))

    assert guarded(verb)(argparse.Namespace()) == 1
    cap = capsys.readouterr()
    assert cap.out == "title ?[31mred\n" and cap.err == ""
