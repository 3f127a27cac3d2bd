"""Issue 14 items 7, 14, 15 and issue 16 (report charts): the filing head, the context line, units as
people write them, pass criteria, fixed chart layouts with plain tick labels, charts drawn once.

Reference values: SHA-256 from Python's hashlib (FIPS 180-4), compared exactly; the Unicode
characters for units (U+00B5 micro sign, U+00B3 superscript three, U+00B0 degree sign) are
common practice (SI brochure, 9th ed., writes m³ and µm) [from memory].
"""

from __future__ import annotations

import csv
import hashlib
import io
import re
import subprocess
import sys
from pathlib import Path

import pytest

from sizing.case import load_case
from sizing.outputs import htmlbits, report
from sizing.outputs.trial_csv import TRIAL_COLUMNS, trial_csv
from sizing.planning.plan import build_plan
from sizing.texts import DOSE_CONTEXT, pass_criterion

ROOT = Path(__file__).resolve().parents[1]
LOTION = ROOT / "cases_demo" / "lotion_o_w.toml"
MINI = ROOT / "cases_demo" / "miniemulsion_hph.toml"


@pytest.fixture(scope="module")
def lotion():
    plan = build_plan(load_case(LOTION), LOTION)
    return plan, report.render(plan, date="2026-01-31")


def test_filing_head_has_date_case_hash_and_sign_lines(lotion):
    plan, html = lotion
    head = html[:html.index('<section id="recommendation">')]
    assert "2026-01-31" in head and "lotion_o_w.toml" in head
    assert hashlib.sha256(LOTION.read_bytes()).hexdigest() in head
    for label in ("prepared by", "checked by", "signature", "revision"):
        assert f"<th>{label}</th>" in head
    assert str(LOTION.parent) not in head  # the file's name, not this machine's folders


def test_names_revision_and_hostile_names(lotion):
    plan, _ = lotion
    html = report.render(plan, prepared_by="A. Engineer", checked_by="<b>B\x1b[31m</b>", revision="C",
                         date="2026-01-31")
    assert '<td class="sign">A. Engineer</td>' in html
    assert "&lt;b&gt;B?[31m&lt;/b&gt;" in html and "\x1b" not in html
    assert "<th>revision</th><td>C</td>" in html


def test_date_from_source_date_epoch(monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "86400")  # 1970-01-02T00:00:00Z
    assert report.report_date() == "1970-01-02"


def test_context_line_beside_the_headline(lotion):
    _, html = lotion
    big = html.index('<p class="big">')
    assert html.index(DOSE_CONTEXT.replace("'", "&#x27;")) - big < 400
    assert "recipe&#x27;s use level" in html


def test_units_as_people_write_them(lotion):
    _, html = lotion
    text = re.sub(r"<svg.*?</svg>", "", html, flags=re.S)  # charts are paths, not text
    text = re.sub(r'<pre class="notes">.*?</pre>', "", text, flags=re.S)  # the user's own notes
    text = re.sub(r"<table>\s*<tr><th>parameter</th>.*?</table>", "", text, flags=re.S)  # values as given
    for raw in ("m**3", "m**2", " um", "degC", "e+0", "e-0"):
        assert raw not in text, raw
    for shown in ("m³", "µm", "°C", "mg/m²"):
        assert shown in text, shown


def test_numbers_without_exponent_notation():
    assert htmlbits.num(1.575e6).replace("\u202f", " ") == "1 575 000"
    assert htmlbits.q(3.3e-6, "mol/m**2") == "3.3 × 10⁻⁶ mol/m²"
    assert htmlbits.q(0.000123456, "m", digits=3) == "0.000123 m"


def test_pass_criterion_per_level(lotion):
    plan, html = lotion
    assert html.count("<b>Pass criterion:</b>") == len(plan.trial)
    rows = list(csv.DictReader(io.StringIO(trial_csv(plan))))
    assert TRIAL_COLUMNS[-1] == "pass criterion" and len(rows) == len(plan.trial)
    assert all(r["pass criterion"].startswith("pass if") for r in rows)
    assert "at most 3.3 µm" in pass_criterion("emulsion", "water", 0.8, 3.0)
    assert "bubble" in pass_criterion("foam", "water", 1.0, 60.0)


def test_chart_layout_is_fixed_with_plain_log_labels():
    import matplotlib

    seen = {}

    def draw(fig):
        ax = fig.add_subplot()
        ax.plot([0.05, 3.0], [1, 2], label="a curve")
        ax.set_xscale("log")
        ax.legend()
        seen["fig"] = fig

    svg = htmlbits.chart(draw, "x")
    fig = seen["fig"]
    ax = fig.get_axes()[0]
    box = htmlbits.BOX_LEGEND
    assert ax.get_position().x0 == pytest.approx(box["left"]) and ax.get_position().x1 == pytest.approx(box["right"])
    assert fig.get_layout_engine() is None
    leg = ax.get_legend()
    assert leg.get_bbox_to_anchor().x0 > ax.bbox.x1  # outside the axes: covers no data
    with matplotlib.rc_context(htmlbits.SVG_RC):
        labels = [ax.xaxis.get_major_formatter()(v) for v in (0.1, 0.2, 0.5, 1.0, 2.0)]
    assert labels == ["0.1", "0.2", "0.5", "1", "2"]
    assert "$" not in svg


def test_charts_drawn_once_per_plan(lotion, monkeypatch):
    plan = build_plan(load_case(LOTION), LOTION)
    calls = []
    real = htmlbits.chart

    def counting(draw, caption, box=None):
        calls.append(caption)
        return real(draw, caption, box)

    monkeypatch.setattr(report, "chart", counting)
    first = report.render(plan, date="2026-01-31")
    n = len(calls)
    second = report.render(plan, prepared_by="A. Engineer", date="2026-01-31")
    assert n >= 3 and len(calls) == n  # the second render drew no chart
    assert first.split('<section id="recommendation">')[1] == second.split('<section id="recommendation">')[1]


def test_cli_options_reach_the_report(tmp_path):
    out = tmp_path / "p"
    r = subprocess.run([sys.executable, "-m", "sizing", "plan", str(LOTION), "--out", str(out),
                        "--prepared-by", "A. Engineer", "--checked-by", "B. Chemist", "--revision", "2"],
                       capture_output=True, text=True, timeout=120)
    assert r.returncode == 0, r.stderr
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "A. Engineer" in html and "B. Chemist" in html and "<td>2</td>" in html
    assert "recipe's use level" in r.stdout  # the context line on the terminal too
