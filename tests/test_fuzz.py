"""Hostile and careless input, our own fuzz suite (issue 13).

Every run must end in a result or a one-line error (``error: ...``, exit 2): no traceback, no
hang (subprocesses run under a timeout), nothing from outside the case's folder in any output
(a marker text planted outside never shows up), and the previous outputs intact after a failed
run.  Hostile files are made in a temporary folder; never a real device node.  Few hypothesis
examples and in-process calls keep the file at well under a minute on two cores.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from sizing.cli import main
from sizing.errors import InputError
from sizing.fitting.block import plot_svg_for_provenance

ROOT = Path(__file__).resolve().parents[1]
DEMOS = ROOT / "cases_demo"
MARKER = "OUTSIDE-SECRET-7f3a"  # planted outside the case folder: must never appear anywhere
TIMEOUT = 30  # s per subprocess: a hang fails the test instead of the suite
FUZZ = settings(max_examples=25, deadline=None, derandomize=True, database=None,
                suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])

CASE = """[case]
title = {title}
system = "emulsion"
[batch]
volume = {volume}
dispersed_fraction = {fraction}
temperature = {temperature}
[drops]
d32 = {d32}
[surfactant]
name = {name}
molar_mass = {molar_mass}
max_surface_excess = "3 umol/m**2"
adsorption_constant = "1 m**3/mol"
[target]
coverage = 0.8
"""
GOOD = {"title": '"t"', "volume": '"2 m**3"', "fraction": "0.3", "temperature": '"25 degC"',
        "d32": '"2 um"', "name": '"S"', "molar_mass": '"288 g/mol"'}


def toml_str(text: str) -> str:
    """A TOML basic string holding ``text`` (every character escaped as \\uXXXX when unsafe)."""
    out = []
    for ch in text:
        if ch in '"\\' or not ch.isprintable() or ord(ch) > 0xFFFF:
            out.append(f"\\U{ord(ch):08X}" if ord(ch) > 0xFFFF else f"\\u{ord(ch):04X}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def assert_clean(rc: int, out: str, err: str) -> None:
    """A result or one-line errors, nothing outside, no terminal control characters."""
    assert rc in (0, 2), (rc, err[-2000:])
    assert "Traceback" not in err and "Traceback" not in out
    assert MARKER not in out and MARKER not in err
    assert "\x1b" not in out and "\x1b" not in err
    if rc == 2:
        lines = [ln for ln in err.splitlines() if ln.strip()]
        assert lines and all(ln.startswith(("error: ", "warning: ")) for ln in lines), err[-2000:]
        assert all(len(ln) < 2000 for ln in lines)
    assert "RuntimeWarning" not in err


def run_cli(argv, capsys):
    rc = main([str(a) for a in argv])
    cap = capsys.readouterr()
    return rc, cap.out, cap.err


def run_sub(argv, cwd):
    """Run the CLI in a fresh interpreter with a timeout (for anything that could block)."""
    r = subprocess.run([sys.executable, "-m", "sizing", *map(str, argv)], cwd=cwd, capture_output=True,
                       text=True, timeout=TIMEOUT, env={**os.environ, "PYTHONWARNINGS": "default"})
    return r.returncode, r.stdout, r.stderr


@pytest.fixture
def outside(tmp_path):
    """A folder beside the case folder holding files with the marker; and the case folder."""
    out = tmp_path / "outside"
    out.mkdir()
    (out / "secret.csv").write_text(f"upper [um],volume [%]\n{MARKER},1\n")
    (out / "secret.toml").write_text(f'[surfactant]\nname = "{MARKER}"\nmolar_mass = "300 g/mol"\n')
    (out / "secret.svg").write_text(f'<svg xmlns="http://www.w3.org/2000/svg"><text>{MARKER}</text></svg>')
    case_dir = tmp_path / "case"
    case_dir.mkdir()
    return out, case_dir


def snapshot(folder: Path) -> dict:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


# ---------------------------------------------------------------- hypothesis: case fields
NUMBERS = st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.integers(-10**400, 10**400).map(str),
                    st.sampled_from(["1e308", "1e-308", "-0", "1e999", "nan", "inf", "0x10", "1_000", "1,5", "2,500"]))
UNITS = st.sampled_from(["", " um", " m**3", " K", " degC", " g/mol", " kg/m**3", " mM", " m**9**9**9",
                         " um/(s*0)", " \x1b[31m", " 'um'", " " + "u" * 300])
VALUE = st.one_of(st.builds(lambda n, u: toml_str(f"{n}{u}"), NUMBERS.map(str), UNITS),
                  NUMBERS.filter(lambda x: isinstance(x, float) and x == x and abs(x) != float("inf")).map(repr),
                  st.text(max_size=40).map(toml_str))
FIELDS = st.dictionaries(st.sampled_from(sorted(GOOD)), VALUE, min_size=1, max_size=3)


@FUZZ
@given(fields=FIELDS)
def test_fuzzed_case_fields_give_a_result_or_one_line_errors(fields, capsys):
    with tempfile.TemporaryDirectory() as d:
        case = Path(d) / "c.toml"
        case.write_text(CASE.format(**{**GOOD, **fields}), encoding="utf-8")
        assert_clean(*run_cli(["solve", case], capsys))


@FUZZ
@given(fields=FIELDS)
def test_fuzzed_case_fields_in_plan_keep_the_previous_outputs(fields, capsys):
    with tempfile.TemporaryDirectory() as d:
        good, bad, out = Path(d) / "good.toml", Path(d) / "bad.toml", Path(d) / "out"
        good.write_text(CASE.format(**GOOD), encoding="utf-8")
        bad.write_text(CASE.format(**{**GOOD, **fields}), encoding="utf-8")
        assert run_cli(["plan", good, "--out", out], capsys)[0] == 0
        before = snapshot(out)
        rc, o, e = run_cli(["plan", bad, "--out", out], capsys)
        assert_clean(rc, o, e)
        if rc != 0:
            assert snapshot(out) == before


# ---------------------------------------------------------------- hypothesis: CSV cells
CELL = st.one_of(st.floats(allow_nan=True, allow_infinity=True).map(repr),
                 st.sampled_from(["", "nan", "inf", "-inf", "1e999", "1e-400", "1e308", "0", "-1", "1,5", '"1;2"',
                                  "\x1b[2J", "=cmd|' /C calc'!A0", "\u202e", "#", "sep=;", "\x00"]),
                 st.text(max_size=30))


@FUZZ
@given(rows=st.lists(st.tuples(CELL, CELL), min_size=0, max_size=12),
       header=st.sampled_from(["water_concentration [mM],oil_concentration [mM]",
                               "water_concentration [\x1b[31m],oil_concentration [mM]",
                               "water_concentration [mM];oil_concentration [mM]"]))
def test_fuzzed_partition_cells_give_a_fit_or_one_line_errors(rows, header, capsys):
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "pairs.csv"
        sep = ";" if ";" in header else ","
        p.write_text(header + "\n" + "\n".join(f"{a}{sep}{b}" for a, b in rows) + "\n", encoding="utf-8")
        assert_clean(*run_cli(["fit", "partition", p], capsys))


@FUZZ
@given(rows=st.lists(st.tuples(CELL, CELL, CELL), min_size=1, max_size=8))
def test_fuzzed_tension_cells_give_a_fit_or_one_line_errors(rows, capsys):
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "t.csv"
        p.write_text("concentration [mM],tension [mN/m],temperature [degC]\n"
                     + "\n".join(",".join(r) for r in rows) + "\n", encoding="utf-8")
        assert_clean(*run_cli(["fit", "tension", p], capsys))


# ---------------------------------------------------------------- hostile files
def table_case(case_dir: Path, file: str) -> Path:
    text = (CASE.format(**GOOD).replace('d32 = "2 um"', f'distribution = "table"\nfile = {toml_str(file)}'))
    p = case_dir / "c.toml"
    p.write_text(text, encoding="utf-8")
    return p


def test_symlink_out_of_the_folder_is_refused(outside, capsys):
    out, case_dir = outside
    (case_dir / "sizes.csv").symlink_to(out / "secret.csv")
    for file in ("sizes.csv", str(out / "secret.csv"), "../outside/secret.csv"):
        rc, o, e = run_cli(["plan", table_case(case_dir, file), "--out", case_dir / "plan"], capsys)
        assert rc == 2 and "drops.file" in e
        assert_clean(rc, o, e)
    assert not (case_dir / "plan").exists()


def test_surfactant_from_outside_is_refused(outside, capsys):
    out, case_dir = outside
    (case_dir / "block.toml").symlink_to(out / "secret.toml")
    case = case_dir / "c.toml"
    case.write_text(CASE.format(**GOOD).replace("[surfactant]\n", '[surfactant]\nfrom = "block.toml"\n'))
    rc, o, e = run_cli(["solve", case], capsys)
    assert rc == 2 and "surfactant.from" in e
    assert_clean(rc, o, e)


def fitted_case(case_dir: Path, plot: str, source: str | None = None) -> Path:
    """A case whose surfactant comes from a copy of the demo's fitted block, with its plot path replaced."""
    fits = case_dir / "fits"
    fits.mkdir(exist_ok=True)
    block = (DEMOS / "fits" / "nonionic.toml").read_text(encoding="utf-8")
    lines = []
    for line in block.splitlines():
        if line.startswith("plot ="):
            line = f"plot = {toml_str(plot)}"
        elif line.startswith("source_path =") and source is not None:
            line = f"source_path = {toml_str(source)}"
        lines.append(line)
    (fits / "nonionic.toml").write_text("\n".join(lines) + "\n", encoding="utf-8")
    text = (DEMOS / "agro_ew_fitted.toml").read_text(encoding="utf-8")
    case = case_dir / "fitted.toml"
    case.write_text(text, encoding="utf-8")
    return case


@pytest.mark.parametrize("plot", ["../../outside/secret.svg", "/etc/passwd", "link.svg", "nonionic_tension_fit.svg"])
def test_fitted_block_plot_never_brings_outside_content(outside, capsys, plot):
    out, case_dir = outside
    case = fitted_case(case_dir, plot, source="../../outside/secret.csv")
    (case_dir / "fits" / "link.svg").symlink_to(out / "secret.svg")
    rc, o, e = run_cli(["plan", case, "--out", case_dir / "plan"], capsys)
    assert_clean(rc, o, e)
    assert rc == 0  # the plot is an extra: left out with a note, the plan still made
    for f in (case_dir / "plan").iterdir():
        assert MARKER.encode() not in f.read_bytes(), f.name
        assert b"root:" not in f.read_bytes()
    assert b"fit plot named in the fitted block was left out" in (case_dir / "plan" / "report.html").read_bytes()


def test_plot_svg_for_provenance_called_directly_reads_no_outside_path(outside):
    out, case_dir = outside
    fitted_case(case_dir, "../../outside/secret.svg")
    block = case_dir / "fits" / "nonionic.toml"
    with pytest.raises(InputError, match=r"^provenance\.plot: .* points outside"):
        plot_svg_for_provenance(block)
    fitted_case(case_dir, "/etc/passwd")
    with pytest.raises(InputError, match=r"^provenance\.plot: .* points outside"):
        plot_svg_for_provenance(block)
    fitted_case(case_dir, "link.svg")
    (case_dir / "fits" / "link.svg").symlink_to(out / "secret.svg")
    with pytest.raises(InputError, match=r"^provenance\.plot: .* points outside"):
        plot_svg_for_provenance(block)
    fitted_case(case_dir, "plot.txt")
    with pytest.raises(InputError, match=r"^provenance\.plot: .* not an \.svg file"):
        plot_svg_for_provenance(block)
    fitted_case(case_dir, "gone.svg", source="../../outside/secret.csv")
    with pytest.raises(InputError, match=r"^provenance\.source_path: .* points outside"):
        plot_svg_for_provenance(block)
    (case_dir / "fits" / "folder.svg").mkdir()
    fitted_case(case_dir, "folder.svg")
    with pytest.raises(InputError, match=r"^provenance\.plot: .* is a folder"):
        plot_svg_for_provenance(block)


def test_plot_svg_for_provenance_source_inside_the_given_root_is_redrawn(tmp_path):
    fits, lab = tmp_path / "fits", tmp_path / "lab"
    fits.mkdir()
    lab.mkdir()
    shutil.copy(DEMOS / "lab" / "nonionic_tension.csv", lab)
    block = (DEMOS / "fits" / "nonionic.toml").read_text(encoding="utf-8")
    (fits / "nonionic.toml").write_text(block, encoding="utf-8")
    with pytest.raises(InputError, match="provenance.source_path"):
        plot_svg_for_provenance(fits / "nonionic.toml")  # ../lab is outside the block's folder
    assert "<svg" in plot_svg_for_provenance(fits / "nonionic.toml", source_root=tmp_path)


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs FIFOs")
def test_fifo_anywhere_never_hangs(tmp_path):
    os.mkfifo(tmp_path / "sizes.csv")
    os.mkfifo(tmp_path / "pairs.csv")
    os.mkfifo(tmp_path / "fifo.csv")
    case = table_case(tmp_path, "sizes.csv")
    rc, o, e = run_sub(["plan", case, "--out", tmp_path / "plan"], tmp_path)
    assert_clean(rc, o, e)
    assert rc == 2 and "drops.file" in e and "not a regular file" in e
    rc, o, e = run_sub(["fit", "partition", tmp_path / "pairs.csv"], tmp_path)
    assert rc == 2 and "not a regular file" in e
    good = tmp_path / "good.toml"
    good.write_text(CASE.format(**GOOD), encoding="utf-8")
    rc, o, e = run_sub(["sweep", good, "--vary", "drops.d32=1um..5um:3", "--csv", tmp_path / "fifo.csv"], tmp_path)
    assert rc == 2 and "Traceback" not in e


HUGE = ("2 " + "u" * 200_000, "2 " + "m*" * 50_000 + "m", "1" * 100_000 + " um")


def test_huge_unit_strings_are_refused_quickly(tmp_path, capsys):
    for text in HUGE:
        case = tmp_path / "c.toml"
        case.write_text(CASE.format(**{**GOOD, "d32": toml_str(text)}), encoding="utf-8")
        rc, o, e = run_cli(["solve", case], capsys)
        assert rc == 2 and "drops.d32" in e and "at most 200 characters" in e
        assert "Traceback" not in e and o == ""


def test_huge_unit_strings_are_not_echoed(tmp_path, capsys):
    for text in HUGE:
        case = tmp_path / "c.toml"
        case.write_text(CASE.format(**{**GOOD, "d32": toml_str(text)}), encoding="utf-8")
        rc, o, e = run_cli(["solve", case], capsys)
        assert rc == 2 and len(e) < 1000


def test_huge_cell_and_header_in_a_lab_csv(tmp_path, capsys):
    p = tmp_path / "pairs.csv"
    p.write_text("water_concentration [" + "m" * 100_000 + "],oil_concentration [mM]\n" + "1," + "9" * 100_000 + "\n")
    rc, o, e = run_cli(["fit", "partition", p], capsys)
    assert rc == 2 and len(e) < 2000
    assert_clean(rc, o, e)


@pytest.mark.parametrize("nest", ["[" * 50_000 + "]" * 50_000, "{a=" * 5_000 + "1" + "}" * 5_000])
def test_deeply_nested_toml_is_one_line(tmp_path, nest):
    case = tmp_path / "deep.toml"
    case.write_text(CASE.format(**GOOD) + f"\n[extra]\nx = {nest}\n", encoding="utf-8")
    rc, o, e = run_sub(["check", case], tmp_path)
    assert_clean(rc, o, e)
    assert rc == 2


def test_case_with_a_byte_order_mark_is_read(tmp_path, capsys):
    case = tmp_path / "bom.toml"
    case.write_text(CASE.format(**GOOD), encoding="utf-8-sig")
    assert run_cli(["check", case], capsys)[0] == 0


def test_csv_with_a_byte_order_mark_and_sep_line_is_read(tmp_path, capsys):
    p = tmp_path / "pairs.csv"
    p.write_text("sep=;\nwater_concentration [mM];oil_concentration [mM]\n0,01;0,2\n0,02;0,41\n0,04;0,79\n",
                 encoding="utf-8-sig")
    rc, o, e = run_cli(["fit", "partition", p, "--json"], capsys)
    assert rc == 0
    assert_clean(rc, o, e)


def test_hostile_title_and_names_never_reach_the_terminal(tmp_path, capsys):
    hostile = toml_str("\x1b]0;owned\x07\x1b[2J\x1b[31m\u202eX\x9b1m")
    case = tmp_path / "c.toml"
    case.write_text(CASE.format(**{**GOOD, "title": hostile, "name": hostile}), encoding="utf-8")
    for argv in (["solve", case], ["check", case], ["plan", case, "--out", tmp_path / "p"]):
        rc, o, e = run_cli(argv, capsys)
        assert rc == 0
        assert_clean(rc, o, e)
        assert "\x07" not in o and "\u202e" not in o and "\x9b" not in o
