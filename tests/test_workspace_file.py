"""The workspace zip: round trip of a demo case with its files, and a hostile upload refused.

The references outside the project are Python's own :mod:`zipfile` (members written by it with a
symlink mode, a ``..`` name, an absolute name, a huge deflated member) and the case checks of
``sizing.case`` (the restored case gives the same solve as the original, compared exactly).
"""

from __future__ import annotations

import io
import stat
import tomllib
import zipfile
from pathlib import Path

import pytest

from sizing import workspace_file as wf
from sizing.case import load_case, parse_case
from sizing.errors import InputError
from sizing.views import summary

ROOT = Path(__file__).resolve().parents[1]
DEMOS = ROOT / "cases_demo"


def _zip(members: dict[str, bytes], modes: dict[str, int] | None = None) -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", compression=zipfile.ZIP_DEFLATED) as zf:
        for name, body in members.items():
            info = zipfile.ZipInfo(name)
            info.compress_type = zipfile.ZIP_DEFLATED
            info.external_attr = (modes or {}).get(name, stat.S_IFREG | 0o644) << 16
            zf.writestr(info, body)
    return buf.getvalue()


def _demo_ws() -> wf.Workspace:
    path = DEMOS / "agro_ew_fitted.toml"
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    scen = {"bigger drops": {**data, "drops": {"d32": "7 um"}}}
    return wf.collect(data, DEMOS, extra={"tension_file": "lab/nonionic_tension.csv"}, scenarios=scen)


def test_round_trip_keeps_case_files_lab_slots_and_scenarios(tmp_path):
    ws = _demo_ws()
    assert set(ws.files) == {"fits/nonionic.toml", "lab/nonionic_tension.csv"}
    blob = wf.pack(ws)
    assert wf.pack(ws) == blob  # the same workspace gives the same bytes (fixed member dates)
    back = wf.unpack(blob)
    assert back.case == ws.case
    assert back.files == ws.files
    assert back.lab_files == {"tension_file": "lab/nonionic_tension.csv"}
    assert list(back.scenarios) == ["bigger drops"]
    case = wf.validate(back)
    # the restored case solves exactly like the original read from its folder
    assert summary(case) == summary(load_case(DEMOS / "agro_ew_fitted.toml"))
    installed = wf.install(back, tmp_path)
    assert (tmp_path / "fits" / "nonionic.toml").read_bytes() == ws.files["fits/nonionic.toml"]
    assert summary(parse_case(installed.case, tmp_path)) == summary(case)


def test_install_keeps_a_different_file_of_the_same_name(tmp_path):
    (tmp_path / "fits").mkdir()
    (tmp_path / "fits" / "nonionic.toml").write_text("# someone else's block\n")
    got = wf.install(wf.unpack(wf.pack(_demo_ws())), tmp_path)
    assert (tmp_path / "fits" / "nonionic.toml").read_text() == "# someone else's block\n"
    assert got.case["surfactant"]["from"] == "fits/nonionic-2.toml"
    assert got.scenarios["bigger drops"]["surfactant"]["from"] == "fits/nonionic-2.toml"
    parse_case(got.case, tmp_path)  # still a valid case, pointing at the renamed copy


def test_missing_fitted_block_is_named_without_the_temporary_folder():
    ws = _demo_ws()
    ws.files.pop("fits/nonionic.toml")
    back = wf.unpack(wf.pack(ws))
    with pytest.raises(InputError) as exc:
        wf.validate(back)
    text = "\n".join(exc.value.problems)
    assert "surfactant.from" in text
    assert "sizing-ws-" not in text and "/tmp" not in text


def test_invalid_case_is_refused_naming_the_field():
    ws = _demo_ws()
    ws.case["batch"]["dispersed_fraction"] = 1.7
    with pytest.raises(InputError) as exc:
        wf.validate(wf.unpack(wf.pack(ws)))
    assert any(line.startswith("batch.dispersed_fraction") for line in exc.value.problems)


CASE = (DEMOS / "lotion_o_w.toml").read_bytes()


@pytest.mark.parametrize("name, why", [
    ("../evil.csv", "leaves the workspace"),
    ("/etc/evil.csv", "absolute path"),
    ("C:/evil.csv", "Windows path"),
    ("fits\\evil.toml", "Windows path"),
    ("run.sh", "only .toml and .csv"),
    ("plot.svg", "only .toml and .csv"),
    ("./case2.toml", "leaves the workspace"),
])
def test_bad_member_names_are_refused(name, why):
    with pytest.raises(InputError, match=why):
        wf.unpack(_zip({"case.toml": CASE, name: b"x"}))


def test_symlink_member_is_refused():
    blob = _zip({"case.toml": CASE, "link.csv": b"/etc/passwd"}, modes={"link.csv": stat.S_IFLNK | 0o777})
    with pytest.raises(InputError, match="symbolic link"):
        wf.unpack(blob)


def test_zip_bomb_is_refused_by_what_is_read(monkeypatch):
    # 60 MB of zeros deflate to about 60 kB; the declared total is over the cap
    with pytest.raises(InputError, match="unpacks to"):
        wf.unpack(_zip({"case.toml": CASE, "big.csv": b"0" * (60 * 2**20)}))
    # a header that lies about the size is still capped by what is read
    monkeypatch.setattr(wf, "MAX_TOTAL_BYTES", 10**9)
    monkeypatch.setattr(wf, "MAX_MEMBER_BYTES", 2**20)
    with pytest.raises(InputError, match="more than"):
        wf.unpack(_zip({"case.toml": CASE, "big.csv": b"0" * (3 * 2**20)}))


def test_too_many_members_and_oversized_zip_are_refused(monkeypatch):
    with pytest.raises(InputError, match="entries"):
        wf.unpack(_zip({"case.toml": CASE, **{f"f{i}.csv": b"a" for i in range(wf.MAX_MEMBERS + 1)}}))
    monkeypatch.setattr(wf, "MAX_ZIP_BYTES", 100)
    with pytest.raises(InputError, match="expected at most"):
        wf.unpack(_zip({"case.toml": CASE}))


@pytest.mark.parametrize("blob, why", [
    (b"not a zip at all", "not a zip file"),
    (_zip({"notes.csv": b"a,b\n"}), "has no case.toml"),
    (_zip({"case.toml": b"[case\n"}), "not valid TOML"),
    (_zip({"case.toml": b"[case]\ntitle='x'\n"}), "lacks the section"),
    (_zip({"case.toml": CASE, "a.csv": b"\xff\xfe\x00"}), "not UTF-8"),
    (_zip({"case.toml": CASE, "a.csv": b"a\x00b"}), "binary"),
])
def test_malformed_workspaces_are_refused(blob, why):
    with pytest.raises(InputError, match=why):
        wf.unpack(blob)


def test_duplicate_member_is_refused():
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf, pytest.warns(UserWarning):  # zipfile itself warns on a duplicate
        zf.writestr("case.toml", CASE)
        zf.writestr("case.toml", CASE)
    with pytest.raises(InputError, match="twice"):
        wf.unpack(buf.getvalue())


def test_encrypted_member_is_refused():
    blob = bytearray(_zip({"case.toml": CASE}))
    # set the 'encrypted' bit in the central directory entry (general purpose flag, offset 8)
    cd = blob.rfind(b"PK\x01\x02")
    blob[cd + 8] |= 0x1
    with pytest.raises(InputError, match="encrypted"):
        wf.unpack(bytes(blob))
