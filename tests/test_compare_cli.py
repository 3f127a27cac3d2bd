"""``sizing compare``: cases side by side on the terminal, as JSON and as one HTML page.

References: each case's dose and area in the comparison are the ones ``sizing solve --json``
gives for that case alone (the solve contract, compared at 1e-12 relative); the HTML page is
read back with Python's own :class:`html.parser.HTMLParser` (well-formed enough to parse, no
script, no address outside the page); user mistakes exit 2 with one line naming the file and
the field, and a failed run keeps the page of the last good one.
"""

from __future__ import annotations

import json
import shutil
import tomllib
from html.parser import HTMLParser
from pathlib import Path

import pytest
import tomli_w

from sizing.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMOS = ROOT / "cases_demo"
A = str(DEMOS / "lotion_o_w.toml")
B = str(DEMOS / "agro_ew_fitted.toml")
BLEND = str(DEMOS / "cream_blend_pair.toml")


def _json(capsys, *argv) -> dict:
    assert main(list(argv)) == 0
    return json.loads(capsys.readouterr().out)


def test_values_are_those_of_solve_for_each_case(capsys):
    got = _json(capsys, "compare", A, B, BLEND, "--json")
    assert [r["scenario"] for r in got["rows"]] == ["lotion_o_w", "agro_ew_fitted", "cream_blend_pair"]
    for path, row in zip((A, B, BLEND), got["rows"]):
        solo = _json(capsys, "solve", path, "--json")
        assert row["kg_product"] == pytest.approx(solo["dose"]["kg_product"], rel=1e-12)
        assert row["area_m2"] == pytest.approx(solo["interfacial_area_m2"], rel=1e-12)
        assert row["d32_um"] == pytest.approx(solo["d32_m"] * 1e6, rel=1e-12)
        assert row["coverage"] == pytest.approx(solo["state"]["coverage"], rel=1e-12)
    assert got["differs"]["kg_product"] and "kg_product" in got["rows"][1]["differs"]
    assert got["rows"][0]["differs"] == []


def test_table_marks_differences_and_the_same_case_twice_has_none(capsys, tmp_path):
    assert main(["compare", A, B]) == 0
    out = capsys.readouterr().out
    assert "* product per batch [kg]" in out and "lotion_o_w" in out and "agro_ew_fitted" in out
    assert "safety data sheet" in out  # the usual cautions close the output
    twin = tmp_path / "copy"
    twin.mkdir()
    shutil.copy(A, twin / "lotion_o_w.toml")
    got = _json(capsys, "compare", A, str(twin / "lotion_o_w.toml"), "--json")
    assert not any(got["differs"].values())
    assert got["rows"][0]["scenario"] != got["rows"][1]["scenario"]  # same stem: the paths name the columns


class _Page(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags, self.refs, self.text = [], [], []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.refs += [v for k, v in attrs if k in ("href", "src", "xlink:href") and v and not v.startswith("#")]

    def handle_data(self, data):
        self.text.append(data)


def test_html_page_side_by_side_with_one_chart_and_no_network(capsys, tmp_path):
    out = tmp_path / "cmp"
    assert main(["compare", A, B, BLEND, "--out", str(out)]) == 0
    assert f"wrote {out / 'compare.html'}" in capsys.readouterr().out
    page = (out / "compare.html").read_text(encoding="utf-8")
    parser = _Page()
    parser.feed(page)
    assert parser.tags.count("svg") == 1 and "script" not in parser.tags
    assert parser.refs == []  # nothing to fetch: no link, image or font address
    text = " ".join(parser.text)
    assert "m³" in text and "µm" in text and "m**3" not in text and "e+0" not in text
    assert "◆" in text and "Cautions" in text
    assert [lab in text for lab in ("lotion_o_w", "agro_ew_fitted", "cream_blend_pair")] == [True] * 3


def test_user_mistakes_name_the_file_and_field(capsys, tmp_path):
    assert main(["compare", A]) == 2
    assert "at least two case files" in capsys.readouterr().err
    assert main(["compare"]) == 2
    assert "got 0" in capsys.readouterr().err
    missing = tmp_path / "nope.toml"
    assert main(["compare", A, str(missing)]) == 2
    err = capsys.readouterr().err
    assert str(missing) in err and "not found" in err and "Traceback" not in err
    bad = tmp_path / "bad.toml"
    data = tomllib.loads(Path(A).read_text(encoding="utf-8"))
    data["batch"]["dispersed_fraction"] = 1.5
    bad.write_text(tomli_w.dumps(data), encoding="utf-8")
    assert main(["compare", A, str(bad)]) == 2
    err = capsys.readouterr().err
    line = next(x for x in err.splitlines() if "dispersed_fraction" in x)
    assert str(bad) in line and "1.5" in line


def test_a_failed_run_keeps_the_last_page(capsys, tmp_path):
    out = tmp_path / "cmp"
    assert main(["compare", A, B, "--out", str(out)]) == 0
    before = (out / "compare.html").read_bytes()
    assert main(["compare", A, str(tmp_path / "gone.toml"), "--out", str(out)]) == 2
    assert (out / "compare.html").read_bytes() == before
    capsys.readouterr()
