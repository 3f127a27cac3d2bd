"""Process and storage page under AppTest: batch temperature, salt, storage and the surfactant's laws.

Wiring, not physics: the values shown are compared with the engine's own ``sizing solve --json``
blocks (``at_batch``, ``storage``) and the plan's ``conditions`` part for the same case.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest
from ui_helpers import DEMOS, PAGES, metric, run, seeded  # noqa: F401

from sizing import views
from sizing.case import parse_case

PAGE = PAGES / "process.py"
HOT = DEMOS / "hot_cream_salted_anionic.toml"


def page(case_file: Path) -> AppTest:
    return seeded(PAGE, case_file)


def engine(case_file: Path):
    return parse_case(tomllib.loads(case_file.read_text(encoding="utf-8")), DEMOS)


@pytest.mark.parametrize("name", ["hot_cream_salted_anionic", "cream_blend_pair", "agro_ew_stirred_tank"])
def test_demo_cases_render(name):
    at = run(page(DEMOS / f"{name}.toml"))
    assert not [e.value for e in at.error]
    assert at.title[0].value == "Process and storage"


def test_hot_salted_case_shows_the_engine_values_at_batch_and_storage():
    at = run(page(HOT))
    s = views.summary(engine(HOT))
    table = at.table[0].value
    row = table.iloc[0]
    assert row["CMC at 75 °C [mM]"] == f"{s['at_batch']['cmc_mol_m3']:.4g}"
    assert row["K at 75 °C [m³/mol]"] == f"{s['at_batch']['adsorption_constant_m3_mol']:.4g}"
    assert row["Gibbs prefactor n [-]"] == f"{s['at_batch']['gibbs_prefactor']:.3g}"
    assert row["measured at"] == "25 °C" and row["CMC as given"] == "8.2 mM"  # units as people write them
    stg = s["storage"]
    assert metric(at, "Coverage at storage") == f"{stg['coverage']:.3g} (-)"
    assert metric(at, "CMC at storage") == f"{stg['cmc_mol_m3']:.3g} mM"
    assert metric(at, "Tension at storage") == f"{stg['tension_N_m'] * 1e3:.3g} mN/m"
    # the chart of the plan's conditions part, and its storage coverage in the caption
    curve = views.conditions_curve(views.plan_view(engine(HOT))["result"])
    assert len(at.get("vega_lite_chart")) == 1
    assert any(f"at storage its coverage is {curve['storage_coverage']:.3g}" in c.value for c in at.caption)


def test_storage_below_the_krafft_point_is_a_prominent_warning_in_degrees_celsius():
    at = run(page(HOT))
    at.text_input(key="f:batch.storage_temperature").set_value("10 degC")
    run(at)
    errors = [e.value for e in at.error]
    assert any("Krafft point 16 °C is above the storage temperature 10 °C" in e for e in errors), errors
    assert any("local codes" in w.value and "qualified people" in w.value for w in at.warning)


def test_a_bad_salt_shows_an_error_under_its_field():
    at = run(page(HOT))
    at.text_input(key="f:batch.salt").set_value("lots")
    run(at)
    errors = [e.value for e in at.error]
    assert any("batch.salt" in e and "'lots'" in e for e in errors), errors


def test_blend_components_carry_their_own_laws():
    blend = DEMOS / "cream_blend_pair.toml"
    at = run(page(blend))
    at.text_input(key="f:blend.component[1].cloud_point").set_value("20 degC")
    run(at)
    assert at.session_state["case_dict"]["blend"]["component"][1]["cloud_point"] == "20 degC"
    errors = [e.value for e in at.error]
    assert any("nonionic B" in e and "cloud point 20 °C is below the batch temperature 25 °C" in e
               for e in errors), errors
