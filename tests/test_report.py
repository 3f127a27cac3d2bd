"""The HTML report: self-contained, deterministic, numbers equal result.json (sizing.outputs.report)."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from sizing.case import case_with, load_case
from sizing.outputs.report import SECTIONS, q, render
from sizing.planning.plan import build_plan

ROOT = Path(__file__).resolve().parents[1]
LOTION = ROOT / "cases_demo" / "lotion_o_w.toml"
SECTION_IDS = ("recommendation", "case", "split", "coverage", "d32", "trial", "assumptions", "cautions")


@pytest.fixture(scope="module")
def lotion_html():
    case = load_case(LOTION)
    plan = build_plan(case, LOTION)
    return plan, render(plan)


def test_sections_and_self_contained(lotion_html):
    plan, html = lotion_html
    for sid in SECTION_IDS:
        assert f'<section id="{sid}">' in html
    assert 'id="unreachable"' not in html
    assert html.count("<svg") >= 3
    assert "<script" not in html
    assert not re.search(r'(src|href)\s*=\s*"https?:', html)
    assert "@media print" in html


def test_report_is_byte_stable(lotion_html):
    plan, html = lotion_html
    assert render(build_plan(plan.case, LOTION)) == html


def test_report_numbers_equal_the_plan(lotion_html):
    plan, html = lotion_html
    r = plan.recommendation
    assert f"Charge {q(r.kg_product_per_batch, 'kg')} of" in html
    assert q(r.coverage_at_charge, "(-)") in html
    assert q(r.cost_per_batch, "EUR", digits=5) in html
    for t in plan.trial:
        assert q(t.kg_product, "kg") in html and q(t.coverage, "(-)") in html
    assert "safety data sheet" in html and "local codes" in html
    assert "case file" in html and "default" in html  # where each parameter came from


def test_unreachable_report_explains_the_options():
    case = case_with(load_case(LOTION), {"target.coverage": 0.95})
    html = render(build_plan(case))
    assert '<section id="unreachable">' in html
    for text in ("Accept a lower coverage", "another surfactant", "larger drops"):
        assert text in html


def test_sections_can_be_appended(lotion_html):
    plan, _ = lotion_html
    extra = (lambda p: "<section id=\"extra\">x [kg]</section>",)
    assert '<section id="extra">' in render(plan, SECTIONS + extra)
