"""The workbench as a place to work (issue 15), under Streamlit's AppTest: the d32 in one place,
nothing lost (saved workspace, ask before replacing, undo), a blank case that asks.

Numbers shown are compared with a direct engine call on the same case (three significant
figures as printed: rel 5e-3).
"""

from __future__ import annotations

import os
import re
import tempfile
from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest
from ui_helpers import DEMOS, PAGES, ROOT, metric, run, seeded  # noqa: F401  (the shared AppTest setup)

from sizing import views
from sizing.case import load_case

MINI = DEMOS / "miniemulsion_hph.toml"


def page(name: str, case_file: Path | None = None) -> AppTest:
    return seeded(PAGES / f"{name}.py", case_file, timeout=60)


def number(text: str) -> float:
    return float(text.split()[0])


# ---------------------------------------------------------------------------------------------
# the d32 in one place


def test_drops_page_names_lab_and_plant_d32_with_a_scaleup():
    at = run(page("drops", MINI))
    info = views.d32_info(load_case(MINI))
    assert number(metric(at, "Lab d32")) == pytest.approx(info["lab_d32_m"] * 1e6, rel=5e-3)
    assert number(metric(at, "Plant d32 (for dose)")) == pytest.approx(info["used_d32_m"] * 1e6, rel=5e-3)
    text = " ".join(i.value for i in at.info)
    assert "does not change the dose" in text and "plant d32" in text
    assert "Lab d32" in at.text_input(key="f:drops.d32").label


def test_size_table_with_scaleup_chart_and_tile_show_the_same_d32():
    from sizing.case import parse_case

    at = run(page("drops", MINI))
    at.selectbox(key="sel_drops_kind").select("table")
    run(at)
    data = at.session_state["case_dict"]
    data["drops"]["file"] = "agro_ew_nonionic_sizes.csv"
    at.session_state["case_dict"] = data
    run(at)
    shown = number(metric(at, "Lab d32"))
    curve = views.size_curve(parse_case(at.session_state["case_dict"], DEMOS))  # what the chart marks
    assert shown == pytest.approx(curve["d32_m"] * 1e6, rel=5e-3)
    assert number(metric(at, "Plant d32 (for dose)")) != pytest.approx(shown, rel=5e-3)


def test_what_if_d32_moves_the_dose_with_a_scaleup():
    at = run(page("dose", MINI))
    slider = at.select_slider(key="whatif_d32")
    pick = float(slider.options[len(slider.options) // 4])
    slider.set_value(pick)
    run(at)
    from sizing.model import solve_case

    sol = solve_case(load_case(MINI), overrides={"scaleup.plant_d32": pick * 1e-6})
    assert number(metric(at, f"Product at d32 = {pick:g} µm")) == pytest.approx(float(sol.kg_product), rel=5e-3)
    assert "plant" in slider.label


def test_what_if_at_the_case_d32_shows_no_change():
    at = run(page("dose"))
    m = [m for m in at.metric if m.label.startswith("Product at d32")][0]
    assert not m.proto.delta


def test_example_scaleup_points_wait_for_confirmation():
    at = run(page("scaleup", DEMOS / "lotion_o_w.toml"))
    before = number(metric(run(page("dose", DEMOS / "lotion_o_w.toml")), "Product as delivered"))
    at.button(key="btn_add_scaleup").click()
    run(at)
    assert "scaleup" not in at.session_state["case_dict"]  # not used yet
    assert any("Example values, not yet used" in w.value for w in at.warning)
    dose = page("dose")
    dose.session_state["case_dict"] = at.session_state["case_dict"]
    dose.session_state["case_base_dir"] = str(DEMOS)
    assert number(metric(run(dose), "Product as delivered")) == before
    at.button(key="btn_draft_use").click()
    run(at)
    assert at.session_state["case_dict"]["scaleup"]["method"] == "power_law"
    assert "scaleup_draft" not in at.session_state


# ---------------------------------------------------------------------------------------------
# nothing lost


def test_blank_case_asks_for_the_surfactant():
    at = run(page("case"))
    at.text_input(key="f:case.title").set_value("My edits")
    run(at)
    at.button(key="btn_blank").click()
    run(at)
    assert at.session_state["case_dict"]["case"]["title"] == "My edits"  # asked first, nothing replaced
    at.button(key="btn_confirm_replace").click()
    run(at)
    assert at.session_state["case_dict"]["case"]["title"] == "New case"
    surf = run(page("surfactant"))
    surf.session_state["case_dict"] = at.session_state["case_dict"]
    run(surf)
    errors = " ".join(e.value for e in surf.error)
    assert "molar mass" in errors.lower() or "molar_mass" in errors
    # undo brings the edited case back
    at.button(key="btn_undo_replace").click()
    run(at)
    assert at.session_state["case_dict"]["case"]["title"] == "My edits"


def test_cancel_keeps_the_case():
    at = run(page("case"))
    at.text_input(key="f:case.title").set_value("Keep me")
    run(at)
    at.button(key="btn_demo").click()
    run(at)
    at.button(key="btn_cancel_replace").click()
    run(at)
    assert at.session_state["case_dict"]["case"]["title"] == "Keep me"


def test_the_working_case_survives_a_new_session_with_the_same_address():
    at = AppTest.from_file(str(ROOT / "ui" / "app.py"), default_timeout=60)
    run(at)
    token = at.session_state["ws_token"]
    at.text_input(key="f:case.title").set_value("Afternoon case")
    run(at)
    again = AppTest.from_file(str(ROOT / "ui" / "app.py"), default_timeout=60)
    again.query_params["ws"] = token
    run(again)
    assert again.session_state["case_dict"]["case"]["title"] == "Afternoon case"
    assert any("Restored your working case" in i.value for i in again.info)
    other = run(AppTest.from_file(str(ROOT / "ui" / "app.py"), default_timeout=60))  # no token: its own case
    assert other.session_state["ws_token"] != token
    assert other.session_state["case_dict"]["case"]["title"] != "Afternoon case"


def test_a_hostile_token_is_not_used_as_a_path():
    at = AppTest.from_file(str(ROOT / "ui" / "app.py"), default_timeout=60)
    at.query_params["ws"] = "../../etc"
    run(at)
    assert at.session_state["ws_token"] != "../../etc"
    assert ".." not in at.session_state["ws_token"]


def test_errors_do_not_show_the_server_folder():
    at = run(page("drops"))
    at.selectbox(key="sel_drops_kind").select("table")
    run(at)
    data = at.session_state["case_dict"]
    data["drops"]["file"] = "missing.csv"
    at.session_state["case_dict"] = data
    run(at)
    folder = os.environ["SIZING_WORKSPACES"]
    shown = " ".join(e.value for e in at.error) + " ".join(e.value for e in at.info)
    assert "missing.csv" in shown
    assert folder not in shown and "/tmp/" not in shown


# ---------------------------------------------------------------------------------------------
# readable


def test_foam_protein_case_shows_no_cmc_line_and_no_micelles_row():
    at = run(page("dose", DEMOS / "food_foam_protein.toml"))
    places = [r["place"] for r in views.dose_split(load_case(DEMOS / "food_foam_protein.toml"))]
    assert "micelles" not in places
    tables = " ".join(str(t.value) for t in at.table)
    assert "micelles" not in tables
    assert not any("CMC ceiling" in c.value for c in at.caption)
    plan = run(page("plan", DEMOS / "food_foam_protein.toml"))
    assert "micelle share [%]" not in " ".join(str(t.value.columns.tolist()) for t in plan.table)


def test_tornado_names_inputs_in_words():
    at = run(page("scaleup", MINI))
    assert len(at.get("vega_lite_chart")) >= 3  # the tornado among them
    spec_inputs = views.uncertainty_view(load_case(MINI))["summary"]["sensitivity"]
    names = {views.field_label(e["path"]) for e in spec_inputs}
    assert "maximum surface excess" in names and "adsorption constant K" in names


def test_field_errors_name_the_field_in_words():
    at = run(page("drops"))
    at.text_input(key="f:drops.d32").set_value("-2 um")
    run(at)
    assert any("Sauter mean diameter d32" in e.value and "drops.d32" in e.value for e in at.error)


def test_fit_errors_do_not_show_the_server_folder(tmp_path):
    at = page("surfactant")
    run(at)
    bad = Path(os.environ["SIZING_WORKSPACES"]) / "bad_tension.csv"
    bad.write_text("concentration [mM],tension [mN/m]\n1,x\n", encoding="utf-8")
    at.session_state["tension_file"] = str(bad)
    run(at)
    at.button(key="btn_fit_tension").click()
    run(at)
    shown = " ".join(e.value for e in at.error)
    assert shown and os.environ["SIZING_WORKSPACES"] not in shown, shown


def test_monte_carlo_settings_show_the_case_after_the_case_page():
    at = AppTest.from_file(str(ROOT / "ui" / "app.py"), default_timeout=60)
    run(at)
    at.switch_page("screens/case.py")
    run(at)
    at.selectbox(key="sel_demo").select(next(i for i, (_, p) in enumerate(views.demo_cases()) if p.name == MINI.name))
    at.button(key="btn_demo").click()
    run(at)
    assert at.text_input(key="f:uncertainty.samples").value == "100000"
    at.switch_page("screens/scaleup.py")
    run(at)
    assert at.text_input(key="f:uncertainty.samples").value == "100000"
    assert at.text_input(key="f:uncertainty.seed").value == "7"


# ---------------------------------------------------------------------------------------------
# scenarios side by side


def test_scenarios_in_one_table_and_one_chart():
    at = run(page("compare", DEMOS / "lotion_o_w.toml"))
    at.text_input(key="scenario_name").set_value("lab d32")
    at.button(key="btn_keep_scenario").click()
    run(at)
    data = at.session_state["case_dict"]
    data["drops"] = {"d32": "1 um"}
    at.session_state["case_dict"] = data
    run(at)
    at.text_input(key="scenario_name").set_value("finer drops")
    at.button(key="btn_keep_scenario").click()
    run(at)
    table = at.table[0].value
    assert list(table.index) == ["lab d32", "finer drops"]
    assert str(table.loc["finer drops", "d32 for the dose [µm]"]).startswith("◆")
    from sizing.case import parse_case

    fine = views.summary(parse_case(data, DEMOS))["dose"]["kg_product"]
    shown = float(str(table.loc["finer drops", "product [kg/batch]"]).lstrip("◆ "))
    assert shown == pytest.approx(fine, rel=5e-3)
    assert at.get("vega_lite_chart")  # one dose-against-coverage chart


def test_case_page_takes_a_mass_fraction():
    text = (DEMOS / "lotion_o_w.toml").read_text(encoding="utf-8")
    p = Path(tempfile.mkdtemp()) / "mass.toml"

    p.write_text(re.sub(r"(?m)^dispersed_fraction = .*$", "dispersed_mass_fraction = 0.2", text), encoding="utf-8")
    at = run(page("case", p))
    assert at.radio(key="sel_fraction").value == "batch.dispersed_mass_fraction"
    assert any("mass fraction" in w.label.lower() for w in list(at.number_input) + list(at.text_input))
    at.radio(key="sel_fraction").set_value("batch.dispersed_fraction")
    run(at)
    assert at.session_state["case_dict"]["batch"].get("dispersed_fraction") is not None
    assert "dispersed_mass_fraction" not in at.session_state["case_dict"]["batch"]
