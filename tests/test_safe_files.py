"""Hostile and careless files (issue 13): the fit plot in the report, paths a case names,
lab-CSV messages, and the writers.

Everything is made in ``tmp_path`` (FIFOs with ``os.mkfifo``, symlinks); the one real device
used is /dev/null, and only as a target that must be refused: ``os.replace``/``os.rename`` are
guarded so that no test can ever replace it, even when run as root.
"""

from __future__ import annotations

import base64
import os
import re
import shutil
import stat
import subprocess
import sys
from pathlib import Path

import pytest

from sizing import files
from sizing.case import load_case, loads_case
from sizing.cli import main
from sizing.errors import InputError
from sizing.labcsv import MAX_ROWS, read_lab_csv
from sizing.outputs.plan_files import build_outputs, write_outputs

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases_demo"
SECRET = "TOP-SECRET-LINE-do-not-leak-0123456789"


@pytest.fixture(autouse=True)
def _never_replace_devices(monkeypatch):
    """Refuse, in every test here, a rename onto anything under /dev (a guard, not the check)."""
    real_replace, real_rename = os.replace, os.rename

    def guard(fn):
        def wrapped(src, dst, *a, **k):
            if os.path.realpath(dst).startswith("/dev/"):
                raise AssertionError(f"test guard: rename onto {dst}")
            return fn(src, dst, *a, **k)
        return wrapped

    monkeypatch.setattr(os, "replace", guard(real_replace))
    monkeypatch.setattr(os, "rename", guard(real_rename))


def _fitted_case(tmp_path: Path, plot: str | None, svg: str | None = None) -> Path:
    """Copy the fitted demo into tmp_path; set ``[provenance] plot`` (and write ``svg`` there)."""
    shutil.copy(DEMO / "agro_ew_fitted.toml", tmp_path / "case.toml")
    (tmp_path / "fits").mkdir()
    text = (DEMO / "fits" / "nonionic.toml").read_text(encoding="utf-8")
    text = re.sub(r'^source_path = .*\n', "", text, flags=re.M)  # no re-render fallback
    text = re.sub(r'^plot = .*\n', "" if plot is None else f"plot = {plot!r}\n", text, flags=re.M)
    (tmp_path / "fits" / "nonionic.toml").write_text(text, encoding="utf-8")
    if svg is not None and plot and not os.path.isabs(plot) and ".." not in plot:
        (tmp_path / "fits" / plot).write_text(svg, encoding="utf-8")
    return tmp_path / "case.toml"


def _report(case_path: Path) -> str:
    case = load_case(case_path)
    _, out = build_outputs(case, case_path)
    return out["report.html"]


def _imgs(html: str) -> list[bytes]:
    return [base64.b64decode(m) for m in re.findall(r'src="data:image/svg\+xml;base64,([A-Za-z0-9+/=]+)"', html)]


# ------------------------------------------------------------------ 1. the fit plot in the report

def test_demo_report_still_shows_its_fit_plot():
    html = _report(DEMO / "agro_ew_fitted.toml")
    imgs = _imgs(html)
    assert len(imgs) == 1
    assert imgs[0] == (DEMO / "fits" / "nonionic_tension_fit.svg").read_bytes()[
        (DEMO / "fits" / "nonionic_tension_fit.svg").read_bytes().find(b"<svg"):]
    assert "left out" not in html


@pytest.mark.parametrize("plot", ["/etc/passwd", "../secret.svg", "../../secret.svg"])
def test_plot_outside_the_block_folder_is_left_out(tmp_path, plot):
    (tmp_path / "secret.svg").write_text(f"<svg>{SECRET}</svg>")
    html = _report(_fitted_case(tmp_path, plot))
    assert SECRET not in html and "root:" not in html
    assert _imgs(html) == []
    assert "fit plot named in the fitted block was left out" in html
    assert "outside" in html


def test_plot_symlinked_out_of_the_folder_is_left_out(tmp_path):
    (tmp_path / "secret.svg").write_text(f"<svg>{SECRET}</svg>")
    case = _fitted_case(tmp_path, "fit.svg")
    os.symlink(tmp_path / "secret.svg", tmp_path / "fits" / "fit.svg")
    html = _report(case)
    assert SECRET not in html and _imgs(html) == []


def test_plot_fifo_folder_and_big_file_are_left_out(tmp_path):
    case = _fitted_case(tmp_path, "fit.svg")
    os.mkfifo(tmp_path / "fits" / "fit.svg")  # would block a plain open() forever
    assert _imgs(_report(case)) == [] and "not a regular file" in _report(case)
    os.unlink(tmp_path / "fits" / "fit.svg")
    (tmp_path / "fits" / "fit.svg").mkdir()
    assert "is a folder" in _report(case)
    os.rmdir(tmp_path / "fits" / "fit.svg")
    (tmp_path / "fits" / "fit.svg").write_bytes(b"<svg>" + b" " * (2 * 1024 * 1024) + b"</svg>")
    html = _report(case)
    assert _imgs(html) == [] and "MB" in html


def test_plot_that_is_not_svg_is_left_out(tmp_path):
    html = _report(_fitted_case(tmp_path, "notes.txt", svg=SECRET))
    assert SECRET not in html and "not an .svg file" in html


def test_hostile_svg_goes_in_only_as_an_inert_image(tmp_path):
    evil = ('<svg xmlns="http://www.w3.org/2000/svg" onload="alert(1)"><script>alert(2)</script>'
            '<a href="javascript:alert(3)"><text>x</text></a></svg>')
    html = _report(_fitted_case(tmp_path, "fit.svg", svg=evil))
    # no script, handler or javascript: URL anywhere in the HTML itself
    assert "<script" not in html.lower() and "onload" not in html.lower() and "javascript:" not in html.lower()
    assert "<svg xmlns" not in html.split('<section id="assumptions"')[-1]
    # the picture is there, as an <img> with a data URI (browsers run no script in <img> SVGs)
    assert _imgs(html) == [evil.encode()]


# ------------------------------------------------------------------ 2. paths a case names

def _case_with(tmp_path: Path, section: str, key: str, value: str) -> Path:
    text = (DEMO / "agro_ew_nonionic.toml").read_text(encoding="utf-8")
    shutil.copy(DEMO / "agro_ew_nonionic_sizes.csv", tmp_path / "agro_ew_nonionic_sizes.csv")
    p = tmp_path / "case" / "c.toml"
    p.parent.mkdir(exist_ok=True)
    if section == "drops":
        text = re.sub(r'^file = .*$', f"file = {value!r}", text, flags=re.M)
    else:
        text = text.replace("[surfactant]\n", f"[surfactant]\nfrom = {value!r}\n", 1)
    p.write_text(text, encoding="utf-8")
    return p


def _run(argv, capsys):
    rc = main(argv)
    out = capsys.readouterr()
    return rc, out.out, out.err


def test_demo_table_case_names_drops_file():
    assert re.search(r'^file = ', (DEMO / "agro_ew_nonionic.toml").read_text(), re.M)


@pytest.mark.parametrize("value", ["../agro_ew_nonionic_sizes.csv", "/etc/passwd", "sub/../../x.csv", ""])
def test_drops_file_outside_the_case_folder_is_refused(tmp_path, capsys, value):
    p = _case_with(tmp_path, "drops", "file", value)
    rc, out, err = _run(["solve", str(p)], capsys)
    assert rc == 2 and "Traceback" not in err
    assert err.startswith("error: drops.file: ")
    assert "root:" not in err and "upper" not in err  # nothing of the outside file
    assert ("outside the case file's folder" in err) or ("empty path" in err)


@pytest.mark.parametrize("value", ["../fits.toml", "/etc/passwd", ""])
def test_surfactant_from_outside_is_refused(tmp_path, value):
    (tmp_path / "fits.toml").write_text(f'[surfactant]\ncmc = "1 mM"\n# {SECRET}\n')
    p = _case_with(tmp_path, "surfactant", "from", value)
    with pytest.raises(InputError) as e:
        load_case(p)
    assert str(e.value).startswith("surfactant.from: ")
    assert SECRET not in str(e.value)


def test_symlink_out_of_the_case_folder_is_refused(tmp_path):
    (tmp_path / "outside.toml").write_text('[surfactant]\ncmc = "1 mM"\n')
    p = _case_with(tmp_path, "surfactant", "from", "link.toml")
    os.symlink(tmp_path / "outside.toml", p.parent / "link.toml")
    with pytest.raises(InputError, match="surfactant.from: 'link.toml' points outside"):
        load_case(p)


def test_fifo_folder_and_oversize_are_refused_without_hanging(tmp_path):
    p = _case_with(tmp_path, "surfactant", "from", "block.toml")
    os.mkfifo(p.parent / "block.toml")
    with pytest.raises(InputError, match="surfactant.from: .* is not a regular file"):
        load_case(p)
    os.unlink(p.parent / "block.toml")
    (p.parent / "block.toml").mkdir()
    with pytest.raises(InputError, match="surfactant.from: .* is a folder"):
        load_case(p)
    os.rmdir(p.parent / "block.toml")
    (p.parent / "block.toml").write_bytes(b"#" * (2 * 1024 * 1024))
    with pytest.raises(InputError, match="surfactant.from: .* MB; at most 1 MB"):
        load_case(p)


def test_fifo_as_size_table_is_refused_without_hanging(tmp_path):
    # in a subprocess with a timeout: a regression hangs the child, not the suite
    p = _case_with(tmp_path, "drops", "file", "sizes.csv")
    os.mkfifo(p.parent / "sizes.csv")
    r = subprocess.run([sys.executable, "-m", "sizing", "solve", str(p)], capture_output=True,
                       text=True, timeout=120, cwd=tmp_path)
    assert r.returncode == 2 and "not a regular file" in r.stderr and "Traceback" not in r.stderr


def test_read_regular_caps_what_is_read(tmp_path):
    f = tmp_path / "f.bin"
    f.write_bytes(b"x" * 100)
    assert files.read_regular(f, "field", 100) == b"x" * 100
    with pytest.raises(InputError, match="field: .* MB"):
        files.read_regular(f, "field", 99)
    with pytest.raises(InputError, match="not a regular file"):
        files.read_regular("/dev/zero", "field", 10)  # stat first: never read


def test_inside_without_a_case_folder_uses_the_working_folder(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert files.inside("a.csv", None, "drops.file") == (tmp_path / "a.csv").resolve()
    with pytest.raises(InputError, match="drops.file: '../a.csv' points outside"):
        files.inside("../a.csv", None, "drops.file")


def test_loads_case_text_cannot_reach_outside(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    text = (DEMO / "lotion_o_w.toml").read_text(encoding="utf-8")
    text = text.replace("[surfactant]\n", '[surfactant]\nfrom = "/etc/passwd"\n', 1)
    with pytest.raises(InputError, match="surfactant.from: '/etc/passwd' points outside"):
        loads_case(text, tmp_path)


def test_lab_csv_messages_quote_at_most_a_short_token(tmp_path):
    long_cell = SECRET * 3
    f = tmp_path / "lab.csv"
    f.write_text(f"concentration [mM],tension [mN/m]\n0.01,{long_cell}\n0.02,70\n")
    with pytest.raises(InputError) as e:
        read_lab_csv(f, {"concentration": "concentration", "tension": "tension"})
    msg = str(e.value)
    assert SECRET not in msg and "is not a number" in msg
    quoted = re.findall(r"'([^']*)' is not a number", msg)
    assert quoted and all(len(q) <= 20 for q in quoted)
    f.write_text(f"concentration [mM],{long_cell} [mN/m]\n0.01,70\n")
    with pytest.raises(InputError) as e:
        read_lab_csv(f, {"concentration": "concentration", "tension": "tension"}, required=("tension",))
    assert SECRET not in str(e.value)
    f.write_text(f"concentration [mM],tension [{long_cell}]\n0.01,70\n")
    with pytest.raises(InputError) as e:
        read_lab_csv(f, {"concentration": "concentration", "tension": "tension"})
    assert SECRET not in str(e.value) and "unit text is" in str(e.value)


def test_token_escapes_control_characters():
    assert files.token("\x1b[2J" + "a" * 40) == repr("?[2J" + "a" * 13 + "...")


# ------------------------------------------------------------------ 3. the writers

def _umask() -> int:
    old = os.umask(0o022)
    os.umask(old)
    return old


def test_new_file_gets_the_umask_mode_and_replaced_file_keeps_its_mode(tmp_path):
    f = tmp_path / "a.csv"
    files.write_atomic(f, "one\n")
    assert stat.S_IMODE(f.stat().st_mode) == 0o666 & ~_umask()
    os.chmod(f, 0o640)
    files.write_atomic(f, "two\n")
    assert f.read_text() == "two\n" and stat.S_IMODE(f.stat().st_mode) == 0o640
    assert [p.name for p in tmp_path.iterdir()] == ["a.csv"]  # no temporary left


def test_symlink_is_followed_and_kept(tmp_path):
    shared = tmp_path / "shared"
    shared.mkdir()
    target = shared / "table.csv"
    target.write_text("old\n")
    os.chmod(target, 0o664)
    link = tmp_path / "link.csv"
    os.symlink(target, link)
    files.write_atomic(link, "new\n")
    assert link.is_symlink() and target.read_text() == "new\n"
    assert stat.S_IMODE(target.stat().st_mode) == 0o664


def test_devices_fifos_and_folders_are_refused(tmp_path):
    with pytest.raises(InputError, match="/dev/null: is not a regular file"):
        files.write_atomic("/dev/null", "x")
    assert stat.S_ISCHR(os.stat("/dev/null").st_mode)
    link = tmp_path / "out.csv"
    os.symlink("/dev/null", link)
    with pytest.raises(InputError, match="not a regular file"):
        files.write_atomic(link, "x")
    os.mkfifo(tmp_path / "fifo")
    with pytest.raises(InputError, match="not a regular file"):
        files.write_atomic(tmp_path / "fifo", "x")
    (tmp_path / "dir").mkdir()
    with pytest.raises(InputError, match="is a folder"):
        files.write_atomic(tmp_path / "dir", "x")


def test_sweep_csv_onto_a_device_is_a_one_line_error(capsys):
    rc, _, err = _run(["sweep", str(DEMO / "lotion_o_w.toml"), "--vary", "d32=1um..2um:2",
                       "--csv", "/dev/null"], capsys)
    assert rc == 2 and err.strip().count("\n") == 0 and "/dev/null" in err and "Traceback" not in err


def _plan_files(name="x"):
    return {"report.html": f"<p>{name}</p>", "result.json": f'{{"n": "{name}"}}', "trial_plan.csv": f"n\n{name}\n"}


def test_plan_folder_is_replaced_whole_and_no_temporary_stays(tmp_path):
    out = tmp_path / "plan"
    write_outputs(out, _plan_files("old"))
    assert stat.S_IMODE((out / "result.json").stat().st_mode) == 0o666 & ~_umask()
    os.chmod(out / "report.html", 0o640)
    write_outputs(out, _plan_files("new"))
    assert {p.name: p.read_text() for p in out.iterdir()} == _plan_files("new")
    assert stat.S_IMODE((out / "report.html").stat().st_mode) == 0o640
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan"]


def test_plan_failure_keeps_the_old_set_and_leaves_nothing(tmp_path, monkeypatch):
    out = tmp_path / "plan"
    write_outputs(out, _plan_files("old"))
    calls = {"n": 0}
    real_write = os.write

    def full_disk(fd, data):
        calls["n"] += 1
        if calls["n"] == 2:
            raise OSError(28, "No space left on device")
        return real_write(fd, data)

    monkeypatch.setattr(os, "write", full_disk)
    with pytest.raises(OSError):
        write_outputs(out, _plan_files("new"))
    monkeypatch.setattr(os, "write", real_write)
    assert {p.name: p.read_text() for p in out.iterdir()} == _plan_files("old")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan"]


def test_plan_folder_with_other_files_keeps_them(tmp_path):
    out = tmp_path / "mine"
    out.mkdir()
    (out / "keep.txt").write_text("mine\n")
    write_outputs(out, _plan_files("new"))
    assert (out / "keep.txt").read_text() == "mine\n"
    assert (out / "result.json").read_text() == _plan_files("new")["result.json"]
    assert sorted(p.name for p in out.iterdir()) == ["keep.txt", "report.html", "result.json", "trial_plan.csv"]


def test_plan_out_onto_a_file_is_a_one_line_error(tmp_path, capsys):
    f = tmp_path / "taken"
    f.write_text("precious\n")
    rc, out, err = _run(["plan", str(DEMO / "lotion_o_w.toml"), "--out", str(f)], capsys)
    assert rc == 2 and "Traceback" not in err and err.strip().count("\n") == 0
    assert str(f) in err and "not a folder" in err
    assert f.read_text() == "precious\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["taken"]


def test_plan_into_an_unwritable_folder_is_a_one_line_error(tmp_path, capsys, monkeypatch):
    # tests may run as root, who may write anywhere: the refusal is simulated at mkdir
    def refuse(path, *a, **k):
        raise PermissionError(13, "Permission denied", str(path))

    monkeypatch.setattr(os, "mkdir", refuse)
    out = tmp_path / "ro" / "plan"
    rc, _, err = _run(["plan", str(DEMO / "lotion_o_w.toml"), "--out", str(out)], capsys)
    assert rc == 2 and "Traceback" not in err and err.strip().count("\n") == 0
    assert str(out) in err and "Permission denied" in err


def test_plan_on_a_full_disk_is_a_one_line_error(tmp_path, capsys, monkeypatch):
    def full(fd, data):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "write", full)
    out = tmp_path / "plan"
    rc, _, err = _run(["plan", str(DEMO / "lotion_o_w.toml"), "--out", str(out)], capsys)
    assert rc == 2 and "Traceback" not in err and err.strip().count("\n") == 0
    assert "No space left on device" in err and str(out) in err
    assert list(tmp_path.iterdir()) == []


def test_plan_into_the_working_folder_never_swaps_it(tmp_path, monkeypatch):
    out = tmp_path / "plan"
    write_outputs(out, _plan_files("old"))
    monkeypatch.chdir(out)
    inode = os.stat(".").st_ino
    write_outputs(Path("."), _plan_files("new"))
    assert os.stat(".").st_ino == inode and os.path.samefile(".", out)
    assert {p.name: p.read_text() for p in out.iterdir()} == _plan_files("new")


# ------------------------------------------------------------------ lab CSVs a careless user makes

LAB = {"concentration": "concentration", "tension": "tension"}


def test_nan_and_inf_cells_are_named_not_called_empty(tmp_path):
    f = tmp_path / "lab.csv"
    f.write_text("concentration [mM],tension [mN/m]\n0.01,nan\n0.02,inf\n0.03,1e999\n0.04,\n")
    with pytest.raises(InputError) as e:
        read_lab_csv(f, LAB)
    assert e.value.problems == [
        f"{f}: row {r}, column 'tension [mN/m]': {c!r} is not a finite number; expected a measured "
        "value (leave the cell empty when there is none)" for r, c in ((2, "nan"), (3, "inf"), (4, "1e999"))]


def test_utf16_and_excel_sep_line_are_read(tmp_path):
    f = tmp_path / "lab.csv"
    text = "concentration [mM];tension [mN/m]\n0,5;70,2\n"
    f.write_bytes(text.encode("utf-16"))  # with its byte-order mark
    t = read_lab_csv(f, LAB)
    assert float(t.columns["tension"][0]) == pytest.approx(0.0702, rel=1e-12)
    f.write_text("sep=;\n" + text)
    t = read_lab_csv(f, LAB)
    assert float(t.columns["concentration"][0]) == pytest.approx(0.5, rel=1e-12)


def test_too_many_rows_is_a_clear_error(tmp_path):
    f = tmp_path / "lab.csv"
    f.write_text("concentration [mM],tension [mN/m]\n" + "0.01,70\n" * (MAX_ROWS + 1))
    with pytest.raises(InputError, match=f"{MAX_ROWS + 1} data rows; at most {MAX_ROWS} are accepted"):
        read_lab_csv(f, LAB)


def _fitted_case_with_source(tmp_path: Path, source: str) -> Path:
    shutil.copy(DEMO / "agro_ew_fitted.toml", tmp_path / "case.toml")
    shutil.copytree(DEMO / "lab", tmp_path / "lab")
    (tmp_path / "fits").mkdir()
    text = (DEMO / "fits" / "nonionic.toml").read_text(encoding="utf-8")
    text = re.sub(r'^source_path = .*\n', f"source_path = {source!r}\n", text, flags=re.M)
    (tmp_path / "fits" / "nonionic.toml").write_text(text, encoding="utf-8")  # no .svg beside it
    return tmp_path / "case.toml"


def test_missing_plot_is_redrawn_from_a_source_inside_the_case_folder(tmp_path):
    html = _report(_fitted_case_with_source(tmp_path, "../lab/nonionic_tension.csv"))
    imgs = _imgs(html)
    assert len(imgs) == 1 and imgs[0].startswith(b"<svg")


def test_missing_plot_is_not_redrawn_from_outside(tmp_path):
    sub = tmp_path / "case"
    sub.mkdir()
    html = _report(_fitted_case_with_source(sub, "../../outside.csv"))
    assert _imgs(html) == [] and "provenance.source_path" in html and "outside" in html


@pytest.mark.parametrize("name", ["../../x", "a/b", "..", "/tmp/x", ""])
def test_fit_name_cannot_leave_the_out_folder(tmp_path, name):
    # a name with a folder part would write outside --out (issue: files stay where the user said)
    import numpy as np

    from sizing.errors import InputError
    from sizing.fitting.block import write_fitted_block
    from sizing.fitting.tension import TensionData, fit_tension, model_tension

    c = np.logspace(-3, 0, 12)
    g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, 298.15)
    fit = fit_tension(TensionData("s_tension.csv", c, g, 298.15, {}, ()), model="langmuir")
    out = tmp_path / "out"
    out.mkdir()
    with pytest.raises(InputError, match="--name"):
        write_fitted_block(fit, out, name=name)
    assert list(tmp_path.rglob("*.toml")) == []
