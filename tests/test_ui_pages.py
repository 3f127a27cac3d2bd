"""Workbench pages under Streamlit's AppTest: wiring, not physics.

Each page runs on its own with seeded session state (AppTest does not follow st.navigation);
``assert not at.exception`` after every run; the numbers shown are compared with a direct
engine call on the same case, to the three or four significant figures the page prints.
"""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest
from ui_helpers import DEMOS, PAGES, ROOT, metric, run, seeded  # noqa: F401  (the shared AppTest setup)

from sizing import views
from sizing.case import dumps_case, load_case, loads_case, parse_case
from sizing.cli import main as cli_main
from sizing.errors import InputError
from sizing.model import solve_case

PAGE_NAMES = ("case", "drops", "surfactant", "dose", "scaleup", "plan")


def page(name: str, case_file: Path | None = None) -> AppTest:
    """Return an AppTest of one page, its session seeded with a case file (or empty: the demo)."""
    return seeded(PAGES / f"{name}.py", case_file, timeout=60)


def number(text: str) -> float:
    return float(text.split()[0])


def demo_case():
    data, folder = views.load_demo()
    return parse_case(data, folder)


# ---------------------------------------------------------------------------------------------
# every page, every demo case


@pytest.mark.parametrize("name", PAGE_NAMES)
def test_page_runs_on_an_empty_session(name):
    at = run(page(name))
    assert at.title[0].value  # the page drew its title
    assert "case_dict" in at.session_state  # the demo was loaded


@pytest.mark.parametrize("case_file", sorted(DEMOS.glob("*.toml")), ids=lambda p: p.stem)
@pytest.mark.parametrize("name", ("drops", "dose", "scaleup", "plan"))
def test_pages_run_on_every_demo_case(name, case_file):
    at = run(page(name, case_file))
    assert not [e.value for e in at.error]


# ---------------------------------------------------------------------------------------------
# numbers shown = a direct engine call


def test_dose_page_shows_the_engine_dose():
    at = run(page("dose"))
    sol = solve_case(demo_case())
    # shown at 3 significant figures: the relative difference is at most 5e-3
    assert number(metric(at, "Product as delivered")) == pytest.approx(float(sol.kg_product), rel=5e-3)
    assert number(metric(at, "Active")) == pytest.approx(float(sol.kg_active), rel=5e-3)
    assert number(metric(at, "Of batch mass")) == pytest.approx(float(sol.wt_percent), rel=5e-3)
    assert number(metric(at, "Coverage")) == pytest.approx(float(sol.state.coverage), rel=5e-3)


def test_what_if_slider_matches_a_solve_at_that_d32():
    at = run(page("dose"))
    slider = at.select_slider(key="whatif_d32")
    pick = float(slider.options[len(slider.options) // 4])  # a d32 below the case's
    slider.set_value(pick)
    run(at)
    sol = solve_case(demo_case(), overrides={"drops.d32": pick * 1e-6})
    assert number(metric(at, f"Product at d32 = {pick:g} µm")) == pytest.approx(float(sol.kg_product), rel=5e-3)


def test_charts_carry_units_and_log_axes():
    at = run(page("dose"))
    specs = [json.loads(c.proto.spec) for c in at.get("vega_lite_chart")]
    text = json.dumps(specs, ensure_ascii=False)
    assert "[kg]" in text and "[µm]" in text and '"type": "log"' in text
    assert "tooltip" in text


def test_drops_page_shows_lognormal_statistics_and_area():
    at = page("drops", DEMOS / "lotion_o_w.toml")
    run(at)
    at.selectbox(key="sel_drops_kind").select("lognormal")
    run(at)
    case = parse_case(at.session_state["case_dict"], DEMOS)
    s = views.summary(case)
    assert number(metric(at, "d32")) == pytest.approx(s["d32_m"] * 1e6, rel=5e-3)
    assert number(metric(at, "dv50")) == pytest.approx(s["size_m"]["dv50"] * 1e6, rel=5e-3)
    assert number(metric(at, "per batch")) == pytest.approx(s["interfacial_area_m2"], rel=5e-3)
    assert at.get("vega_lite_chart")  # the distribution is drawn


def test_scaleup_page_matches_the_scaleup_engine():
    from sizing.outputs.result_json import scaleup_json

    case_file = DEMOS / "miniemulsion_hph.toml"
    at = run(page("scaleup", case_file))
    sc = scaleup_json(load_case(case_file))
    assert number(metric(at, "Predicted plant d32")) == pytest.approx(sc["plant_d32_m"] * 1e6, rel=5e-3)
    mc = views.uncertainty_view(load_case(case_file))
    assert number(metric(at, "P50")) == pytest.approx(mc["p50"], rel=5e-3)
    assert len(at.get("vega_lite_chart")) >= 3  # histogram, tornado, knee


def test_plan_page_matches_sizing_plan():
    from sizing.planning.plan import build_plan

    at = run(page("plan"))
    rec = build_plan(demo_case()).recommendation
    assert number(metric(at, "Product as delivered")) == pytest.approx(rec.kg_product_per_batch, rel=5e-4)
    labels = [b.proto.label for b in at.get("download_button")]
    assert {"report.html", "result.json", "trial_plan.csv"} <= set(labels)
    assert any(t.startswith("Defer to local codes") or "local codes" in t for t in
               [m.value for m in at.markdown])


# ---------------------------------------------------------------------------------------------
# errors next to their field, unreachable targets in words


def test_bad_d32_shows_an_error_naming_the_field():
    at = run(page("drops"))
    at.text_input(key="f:drops.d32").set_value("-2 um")
    run(at)
    errors = [e.value for e in at.error]
    assert any("drops.d32" in e and "-2 um" in e for e in errors), errors
    # the error sits in the same column, right after its field
    column = at.columns[0]
    kinds = [type(el).__name__ for el in column]
    assert "TextInput" in kinds and "Error" in kinds
    assert kinds.index("Error") > kinds.index("TextInput")


def test_bad_batch_value_shows_an_error_and_keeps_the_text():
    at = run(page("case"))
    at.text_input(key="f:batch.volume").set_value("2 kg")
    run(at)
    assert any("batch.volume" in e.value for e in at.error)
    assert at.session_state["case_dict"]["batch"]["volume"] == "2 kg"  # nothing typed is lost
    at.text_input(key="f:batch.dispersed_fraction").set_value("1.5")
    run(at)
    assert any("batch.dispersed_fraction" in e.value for e in at.error)


def test_unreachable_target_is_explained_in_words():
    at = run(page("case"))
    at.text_input(key="f:target.coverage").set_value("0.99")
    run(at)
    dose = page("dose")
    dose.session_state["case_dict"] = at.session_state["case_dict"]
    run(dose)
    text = " ".join(w.value for w in dose.warning)
    assert "not reachable" in text and "CMC" in text and "cannot exceed" in text


# ---------------------------------------------------------------------------------------------
# state between pages, save and downloads


def test_state_survives_moving_between_pages():
    at = AppTest.from_file(str(ROOT / "ui" / "app.py"), default_timeout=60)
    run(at)
    before = None
    at.switch_page("screens/dose.py")
    before = number(metric(run(at), "Product as delivered"))
    at.switch_page("screens/drops.py")
    run(at)
    at.text_input(key="f:drops.d32").set_value("1.0 um")
    run(at)
    at.switch_page("screens/dose.py")
    after = number(metric(run(at), "Product as delivered"))
    at.switch_page("screens/drops.py")
    run(at)
    assert at.text_input(key="f:drops.d32").value == "1.0 um"
    assert after > before


def test_saved_case_round_trips_and_the_cli_accepts_it(tmp_path, capsys):
    at = run(page("case"))
    at.text_input(key="f:case.title").set_value("Edited lotion")
    run(at)
    data = at.session_state["case_dict"]
    text = dumps_case(data)
    assert tomllib.loads(text) == data  # round trip identical
    path = tmp_path / "edited.toml"
    path.write_text(text, encoding="utf-8")
    assert cli_main(["solve", str(path), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["title"] == "Edited lotion"
    demo = tomllib.loads(views.demo_case_path().read_text(encoding="utf-8"))
    assert dumps_case(demo) == dumps_case(tomllib.loads(dumps_case(demo)))


def test_plan_downloads_equal_what_sizing_plan_writes(tmp_path, capsys):
    case_file = tmp_path / "case.toml"
    case_file.write_text(views.demo_case_path().read_text(encoding="utf-8"), encoding="utf-8")
    shown = views.plan_view(loads_case(case_file.read_text(encoding="utf-8"), tmp_path))["files"]
    assert cli_main(["plan", str(case_file), "--out", str(tmp_path / "out")]) == 0
    capsys.readouterr()
    for name in ("result.json", "trial_plan.csv"):
        assert shown[name] == (tmp_path / "out" / name).read_text(encoding="utf-8"), name
    assert shown["report.html"].lstrip().lower().startswith("<!doctype html")
    result = json.loads(shown["result.json"])
    assert {"feasible", "dose", "recommendation", "trial"} <= set(result)


# ---------------------------------------------------------------------------------------------
# uploads: too large, wrong type, malformed are refused with a message


def test_uploads_are_checked_before_use():
    from ui import state

    with pytest.raises(InputError, match=r"case file: .*at most 5 MB"):
        state.check_upload("big.toml", b"x" * (5 * 1024 * 1024 + 1), (".toml",), "case file")
    with pytest.raises(InputError, match=r"drops.file: 'sizes.xlsx' is not a CSV file"):
        state.check_upload("sizes.xlsx", b"a,b\n", (".csv",), "drops.file")
    with pytest.raises(InputError, match=r"binary data"):
        state.check_upload("sizes.csv", b"a\x00b", (".csv",), "drops.file")
    with pytest.raises(InputError, match=r"not valid TOML"):
        state.case_from_upload("case.toml", b"[case\ntitle = 1")
    with pytest.raises(InputError, match=r"lacks the section"):
        state.case_from_upload("case.toml", b"[case]\ntitle = 'x'\n")
    good = state.case_from_upload("case.toml", (DEMOS / "lotion_o_w.toml").read_bytes())
    assert good["case"]["title"]


def test_tension_fit_from_lab_data_fills_the_case():
    at = page("surfactant")
    at.session_state["tension_file"] = str(DEMOS / "lab" / "nonionic_tension.csv")
    run(at)
    at.button(key="btn_fit_tension").click()
    run(at)
    assert len(at.get("vega_lite_chart")) >= 2  # data with the fitted curve, residuals
    at.button(key="btn_use_tension_fit").click()
    run(at)
    surf = at.session_state["case_dict"]["surfactant"]
    from sizing.fitting.block import fit_tension, read_tension_csv, surfactant_block

    block = surfactant_block(fit_tension(read_tension_csv(DEMOS / "lab" / "nonionic_tension.csv")))["surfactant"]
    assert surf["cmc"] == block["cmc"] and surf["isotherm"] == block["isotherm"]
    assert at.text_input(key="f:surfactant.cmc").value == block["cmc"]


def test_depletion_runs_show_the_excess_and_its_fit():
    at = page("surfactant")
    at.session_state["depletion_file"] = str(DEMOS / "lab" / "depletion_runs.csv")
    run(at)
    at.button(key="btn_depletion_fit").click()
    run(at)
    spec = json.dumps([json.loads(c.proto.spec) for c in at.get("vega_lite_chart")], ensure_ascii=False)
    assert "surface excess [µmol/m²]" in spec
    table = at.dataframe[0].value
    assert "surface excess [µmol/m²]" in table.columns  # scaled to the numbers (about 2), not 2e-06 mol/m**2
    assert 0.1 < float(table["surface excess [µmol/m²]"].iloc[0]) < 100


def test_every_shipped_demo_loads_from_the_case_page():
    # The Case page lists the built-in demo and cases_demo/*.toml; each loads with the files it
    # names (size table, fitted block and its plot) and validates.
    from sizing import views

    demos = views.demo_cases()
    assert len(demos) >= 1 + len(list(DEMOS.glob("*.toml")))
    for i, (_, path) in enumerate(demos):
        at = run(page("case"))
        at.selectbox(key="sel_demo").select(i)
        at.button(key="btn_demo").click()
        run(at)
        assert at.session_state["case_dict"]["case"]["title"], path
        assert not [e.value for e in at.error], (path, [e.value for e in at.error])


@pytest.mark.parametrize("name, key, other, first", [
    ("case", "sel_batch_size", "batch.mass", "batch.volume"),
    ("surfactant", "sel_excess", "surfactant.area_per_molecule", "surfactant.max_surface_excess"),
])
def test_exclusive_keys_switch_and_come_back(name, key, other, first):
    # Switching between two exclusive case keys keeps the first value aside and restores it.
    at = run(page(name))
    sec, k = first.split(".")
    before = at.session_state["case_dict"][sec][k]
    at.radio(key=key).set_value(other)
    run(at)
    run(at)
    assert at.session_state["case_dict"][sec].get(k) is None
    assert at.session_state["case_dict"][other.split(".")[0]][other.split(".")[1]]
    at.radio(key=key).set_value(first)
    run(at)
    run(at)
    assert at.session_state["case_dict"][sec][k] == before
    assert at.session_state["case_dict"][other.split(".")[0]].get(other.split(".")[1]) is None
