"""Workbench pages for the keys of issue 14 (surface_load, plateau_tension, measured_in, recipe).

Wiring, not physics: each field reaches the case dict, the page shows the engine's own number
(``views.plan_view`` / ``views.summary`` on the same case, to the figures the page prints) and a
bad value shows an error under the field that names it.
"""

from __future__ import annotations

import copy
import tomllib
from pathlib import Path

from streamlit.testing.v1 import AppTest
from ui_helpers import DEMOS, PAGES, run

from sizing import views
from sizing.case import parse_case

PROTEIN = DEMOS / "food_foam_protein.toml"
LOTION = DEMOS / "lotion_o_w.toml"


def page(name: str, case_file: Path, edit=None) -> AppTest:
    at = AppTest.from_file(str(PAGES / f"{name}.py"), default_timeout=60)
    data = tomllib.loads(case_file.read_text(encoding="utf-8"))
    if edit:
        edit(data)
    at.session_state["case_dict"] = data
    at.session_state["case_base_dir"] = str(case_file.parent)
    return at


def texts(at: AppTest) -> str:
    return " ".join([m.value for m in at.markdown] + [c.value for c in at.caption] + [e.value for e in at.error]
                    + [str(m.value) for m in at.metric] + [m.label for m in at.metric])


def by_key(widgets, key):
    return next(w for w in widgets if w.key == key)


def test_surface_load_target_reaches_the_case_and_the_dose_page():
    at = run(page("case", PROTEIN))
    assert "surface-load target" in texts(at)  # suggested for a protein
    by_key(at.selectbox, "sel_target_kind").set_value("surface_load").run()
    by_key(at.text_input, "f:target.surface_load").set_value("2 mg/m**2").run()
    assert not at.exception
    data = at.session_state["case_dict"]
    assert data["target"] == {"surface_load": "2 mg/m**2", "margin": 0.25}
    dose = run(page("dose", PROTEIN, lambda d: d.__setitem__("target", copy.deepcopy(data["target"]))))
    s = views.summary(parse_case(data, str(DEMOS)))
    kg = s["dose"]["kg_product"]
    assert f"{kg:.3g} kg" in texts(dose)  # the engine's dose, as the page prints it (3 figures)
    assert "surface load 2 mg/m²" in texts(dose)
    assert "nan" not in texts(dose).lower()


def test_surface_load_at_saturation_shows_an_error_under_its_field():
    at = run(page("case", PROTEIN, lambda d: d.__setitem__("target", {"surface_load": "3 mg/m**2"})))
    errs = [e.value for e in at.error]
    assert any("target.surface_load" in e for e in errs), errs


def test_lotion_gets_no_surface_load_suggestion():
    at = run(page("case", LOTION))
    assert "surface-load target" not in texts(at)


def test_plateau_tension_shown_instead_of_a_model_tension():
    for name in ("dose", "plan"):
        at = run(page(name, PROTEIN))
        t = texts(at)
        assert "plateau tension" in t and "50 mN/m" in t, name
        assert "nan" not in t.lower(), name
        assert not any(m.label == "Tension" for m in at.metric), name


def test_plateau_tension_field_and_bad_value():
    at = run(page("surfactant", PROTEIN))
    by_key(at.text_input, "f:surfactant.plateau_tension").set_value("48 mN/m").run()
    assert at.session_state["case_dict"]["surfactant"]["plateau_tension"] == "48 mN/m"
    by_key(at.text_input, "f:surfactant.plateau_tension").set_value("48 kg").run()
    assert not at.exception
    assert any("surfactant.plateau_tension" in e.value for e in at.error), [e.value for e in at.error]


def test_measured_in_select_reaches_the_case():
    at = run(page("surfactant", LOTION))
    sel = by_key(at.selectbox, "f:surfactant.measured_in")
    assert sel.value == ""  # not given: the continuous phase
    sel.set_value("water").run()
    assert at.session_state["case_dict"]["surfactant"]["measured_in"] == "water"
    by_key(at.selectbox, "f:surfactant.measured_in").set_value("").run()
    assert "measured_in" not in at.session_state["case_dict"]["surfactant"]


def test_measured_in_oil_in_a_foam_is_refused_under_the_field():
    at = run(page("surfactant", PROTEIN, lambda d: d["surfactant"].__setitem__("measured_in", "oil")))
    assert any("surfactant.measured_in" in e.value for e in at.error), [e.value for e in at.error]


def test_recipe_charge_on_the_plan_page():
    at = run(page("plan", LOTION))
    by_key(at.text_input, "f:recipe.current_charge").set_value("50 kg").run()
    assert not at.exception
    data = at.session_state["case_dict"]
    assert data["recipe"]["current_charge"] == "50 kg"
    plan = views.plan_view(parse_case(data, str(DEMOS)))
    rp = plan["result"]["recipe"]
    t = texts(at)
    assert f"{rp['times_recommended_charge']:.3g} ×" in t
    assert f"{rp['coverage']:.3g} (-)" in t
    assert "legal limits" in t
    by_key(at.text_input, "f:recipe.current_charge").set_value("fifty").run()
    assert not at.exception
    assert any("recipe.current_charge" in e.value for e in at.error), [e.value for e in at.error]
    by_key(at.text_input, "f:recipe.current_charge").set_value("").run()
    assert "recipe" not in at.session_state["case_dict"]


def test_protein_trial_table_and_storage_show_no_model_tension():
    at = run(page("plan", PROTEIN))
    cols = [str(c) for t in at.table for c in t.value.columns]
    assert not any("tension" in c for c in cols), cols
    proc = run(page("process", PROTEIN))
    assert not any("Tension" in m.label for m in proc.metric)
    assert "nan" not in texts(proc).lower()
