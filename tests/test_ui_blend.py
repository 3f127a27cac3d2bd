"""Surfactant page with a [blend]: the component editor and the blend's results, under AppTest.

Wiring, not physics: every number the page shows is compared with the engine's own output for
the same case (``sizing.views.summary`` / ``plan_view``), at the three significant figures the
page prints (``ui.charts.num``).
"""

from __future__ import annotations

import tomllib
from pathlib import Path

from streamlit.testing.v1 import AppTest
from ui_helpers import DEMOS, PAGES, metric, run, seeded  # noqa: F401

from sizing import views
from sizing.case import parse_case

PAGE = PAGES / "surfactant.py"
BLEND = DEMOS / "cream_blend_pair.toml"


def page(case_file: Path) -> AppTest:
    return seeded(PAGE, case_file)


def kg(text: str) -> float:
    number, unit = text.split()
    assert unit == "kg"
    return float(number)


def engine(data: dict) -> dict:
    return views.summary(parse_case(data, DEMOS))


def test_blend_demo_renders_with_the_engine_doses():
    at = run(page(BLEND))
    assert not [e.value for e in at.error]
    s = engine(tomllib.loads(BLEND.read_text(encoding="utf-8")))
    assert kg(metric(at, "Blend for the target")) == float(f"{s['dose']['kg_product']:.3g}")
    for c in s["components"]:
        assert kg(metric(at, f"{c['name']} for the target")) == float(f"{c['kg_product']:.3g}")
    assert metric(at, "Mixed CMC") == f"{s['blend']['mixed_cmc_mol_m3']:.3g} mM"
    # the charge per component at the recommended charge: the plan's own numbers
    plan = views.blend_rows(views.plan_view(parse_case(tomllib.loads(BLEND.read_text(encoding="utf-8")), DEMOS))
                            ["result"])
    table = at.table[0].value
    for c in plan["charge"]:
        assert table.loc[c["name"], "product [kg/batch]"] == f"{c['kg_product']:.4g}"
    assert len(at.get("vega_lite_chart")) >= 2  # where each goes, interface composition


def test_editing_a_fraction_rescales_the_other_and_moves_the_dose():
    at = run(page(BLEND))
    before = kg(metric(at, "Blend for the target"))
    at.text_input(key="f:blend.component[0].fraction").set_value("0.7")
    run(at)
    data = at.session_state["case_dict"]
    assert [c["fraction"] for c in data["blend"]["component"]] == [0.7, 0.3]
    s = engine(data)
    after = kg(metric(at, "Blend for the target"))
    assert after == float(f"{s['dose']['kg_product']:.3g}")
    assert after != before
    assert not [e.value for e in at.error]


def test_fractions_typed_as_given_show_the_sum_under_the_fractions():
    at = run(page(BLEND))
    at.checkbox(key="blend_keep_sum").uncheck()
    run(at)
    at.text_input(key="f:blend.component[0].fraction").set_value("0.9")
    run(at)
    errors = [e.value for e in at.error]
    assert any("blend.component" in e and "add up to 1.3" in e for e in errors), errors


def test_a_bad_component_value_shows_an_error_naming_the_component_field():
    at = run(page(BLEND))
    at.text_input(key="f:blend.component[1].cmc").set_value("abc")
    run(at)
    errors = [e.value for e in at.error]
    assert any("CMC of component 2 ('nonionic B')" in e and "blend.component[1].cmc" in e and "'abc'" in e
               for e in errors), errors


def test_single_surfactant_becomes_a_blend_after_asking_and_the_change_is_undoable():
    case = DEMOS / "hot_cream_salted_anionic.toml"
    at = run(page(case))
    at.button(key="btn_to_blend").click()
    run(at)
    assert "blend" not in at.session_state["case_dict"]  # asked first, nothing replaced yet
    assert any("two-component blend" in w.value for w in at.warning)
    at.button(key="btn_confirm_blend_switch").click()
    run(at)
    data = at.session_state["case_dict"]
    assert "surfactant" not in data and len(data["blend"]["component"]) == 2
    # two equal components give the single surfactant's dose (issue 10's check, here through the page)
    s0 = engine(tomllib.loads(case.read_text(encoding="utf-8")))
    assert kg(metric(at, "Blend for the target")) == float(f"{s0['dose']['kg_product']:.3g}")
    at.button(key="btn_undo_blend_switch").click()
    run(at)
    assert "blend" not in at.session_state["case_dict"]
    assert at.session_state["case_dict"]["surfactant"]["cmc"] == "8.2 mM"


def test_blend_back_to_one_surfactant_keeps_the_chosen_component():
    at = run(page(BLEND))
    at.selectbox(key="sel_keep_component").set_value(1)
    run(at)
    at.button(key="btn_to_single").click()
    run(at)
    at.button(key="btn_confirm_blend_switch").click()
    run(at)
    data = at.session_state["case_dict"]
    assert "blend" not in data and data["surfactant"]["name"] == "nonionic B"
    assert data["surfactant"]["price_per_kg"] == 3.4 and data["surfactant"]["currency"] == "EUR"
    assert not [e.value for e in at.error]


def test_add_and_remove_a_component():
    at = run(page(BLEND))
    at.selectbox(key="f:blend.micelles").set_value("ideal")  # three components need ideal micelles
    run(at)
    assert "interaction" not in at.session_state["case_dict"]["blend"]  # kept aside, not an error
    at.button(key="btn_add_component").click()
    run(at)
    comps = at.session_state["case_dict"]["blend"]["component"]
    assert len(comps) == 3 and comps[2]["fraction"] == 0.0
    assert not [e.value for e in at.error]
    at.button(key="btn_remove_component_0").click()
    run(at)
    comps = at.session_state["case_dict"]["blend"]["component"]
    assert [c["name"] for c in comps] == ["nonionic B", "component 3"]
    assert abs(sum(c["fraction"] for c in comps) - 1.0) < 1e-9
    at.selectbox(key="f:blend.micelles").set_value("regular")
    run(at)
    assert at.session_state["case_dict"]["blend"]["interaction"] == -4.1  # brought back


def test_every_langmuir_demo_turned_into_a_blend_keeps_its_dose():
    """Two equal components give the single surfactant's answer to 1e-9 (issue 10's own check), so the
    page's conversion must not move the dose of any shipped Langmuir demo."""
    checked = 0
    for path in sorted(DEMOS.glob("*.toml")):
        data = tomllib.loads(path.read_text(encoding="utf-8"))
        s = data.get("surfactant")
        if not isinstance(s, dict) or s.get("from") or str(s.get("isotherm", "langmuir")) != "langmuir" \
                or s.get("measured_in") or s.get("plateau_tension") or s.get("cmc") is None:
            continue
        single = engine(data)
        if not single["feasible"]:
            continue
        blend, _ = views.blend_of_surfactant(data)
        assert "surfactant" not in blend and len(blend["blend"]["component"]) == 2
        both = engine(blend)
        assert abs(both["dose"]["kg_product"] / single["dose"]["kg_product"] - 1) < 1e-9, path.name
        back, _ = views.surfactant_of_blend(blend)
        assert abs(engine(back)["dose"]["kg_product"] / single["dose"]["kg_product"] - 1) < 1e-12, path.name
        checked += 1
    assert checked >= 3
