"""Spreads editor, residence time and adsorption-speed flag of the Scale-up and uncertainty page.

AppTest runs the page alone with the built-in demo case seeded in the session; the numbers shown
are compared with direct engine calls on the same case (the page prints 3 significant figures,
so the relative tolerance is 5e-3).
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest

from sizing import views
from sizing.case import parse_case
from sizing.planning.kinetics import adsorption_check
from sizing.planning.uncertainty import monte_carlo

# the workbench saves each session's case on disk: keep the tests' saves out of the home folder
os.environ.setdefault("SIZING_WORKSPACES", tempfile.mkdtemp(prefix="sizing-ws-test-"))

PAGE = Path(__file__).resolve().parents[1] / "ui" / "screens" / "scaleup.py"
SAMPLES = 20_000  # fewer draws than the default keep the test quick; same seed as the page


def seeded() -> AppTest:
    at = AppTest.from_file(str(PAGE), default_timeout=30)
    data, folder = views.load_demo()
    data["uncertainty"] = {"samples": SAMPLES, "seed": 7}
    at.session_state["case_dict"] = data
    at.session_state["case_base_dir"] = str(folder)
    return run(at)


def run(at: AppTest) -> AppTest:
    at.run()
    assert not at.exception, [e.value for e in at.exception]
    return at


def metric(at: AppTest, label: str) -> float:
    found = [m.value for m in at.metric if m.label == label]
    assert found, f"no metric {label!r}; have {[m.label for m in at.metric]}"
    return float(found[0].split()[0])


def add_spread(at: AppTest, path: str, kind: str, **texts) -> AppTest:
    at.selectbox(key="spread_path").select(path)
    at.radio(key="spread_kind").set_value(kind)
    for name, text in texts.items():
        at.text_input(key=f"spread_{name}").set_value(text)
    at.button(key="btn_spread_apply").click()
    return run(at)


def test_a_spread_added_in_the_form_drives_the_monte_carlo():
    at = seeded()
    assert not [m for m in at.metric if m.label == "P50"]  # the demo has no spread
    add_spread(at, "drops.d32", "lognormal", rel_sd="0.15")
    data = at.session_state["case_dict"]
    assert data["drops"]["d32"] == {"value": "2.0 um", "rel_sd": 0.15}
    mc = monte_carlo(parse_case(data, at.session_state["case_base_dir"]))
    assert mc.samples == SAMPLES and mc.seed == 7
    # P50 of the same draws (same seed), numpy's inverted-CDF percentile; 3 figures shown
    assert metric(at, "P50") == pytest.approx(float(mc.quantile_kg_product(50)), rel=5e-3)
    assert len(at.get("vega_lite_chart")) >= 3  # histogram, tornado, knee
    table = at.table[0].value
    assert list(table.index) == ["drops.d32"] and table.loc["drops.d32", "P10"].endswith(" um")

    add_spread(at, "batch.dispersed_fraction", "uniform", low="0.2", high="0.3")
    assert at.session_state["case_dict"]["batch"]["dispersed_fraction"] == {"value": 0.25, "low": 0.2, "high": 0.3}
    at.selectbox(key="spread_path").select("drops.d32")
    at.button(key="btn_spread_remove").click()
    run(at)
    assert at.session_state["case_dict"]["drops"]["d32"] == "2.0 um"
    assert list(at.table[0].value.index) == ["batch.dispersed_fraction"]


def test_a_bad_spread_names_the_field_and_keeps_the_text():
    at = seeded()
    add_spread(at, "drops.d32", "uniform", low="3 um", high="2.5 um")
    errors = [e.value for e in at.error]
    assert any("drops.d32" in e and "low" in e and "high" in e for e in errors), errors
    assert at.text_input(key="spread_low").value == "3 um"  # nothing typed is lost
    assert at.session_state["case_dict"]["drops"]["d32"]["low"] == "3 um"

    at = seeded()
    add_spread(at, "drops.d32", "lognormal", rel_sd="-0.1")
    assert any("drops.d32" in e.value and "rel_sd" in e.value for e in at.error)

    at = seeded()  # a spread that cannot move the dose: a warning, not an error (the case stays usable)
    at.session_state["case_dict"]["process"] = {"residence_time": "2 s"}
    run(at)
    add_spread(at, "process.residence_time", "lognormal", rel_sd="0.2")
    assert any("process.residence_time" in w.value and "does not change the dose" in w.value for w in at.warning)
    assert not any("process.residence_time" in e.value for e in at.error)


def test_residence_time_shows_the_adsorption_flag():
    at = seeded()
    assert any("process.residence_time" in i.value and "surfactant.diffusivity" in i.value for i in at.info)
    at.session_state["case_dict"]["surfactant"]["diffusivity"] = "5e-10 m**2/s"
    run(at)
    at.text_input(key="f:process.residence_time").set_value("0.5 ms")
    run(at)
    data = at.session_state["case_dict"]
    assert data["process"] == {"residence_time": "0.5 ms"}
    j = adsorption_check(parse_case(data, at.session_state["case_base_dir"]))
    assert metric(at, "Adsorption depth h") == pytest.approx(j.depth_m * 1e6, rel=5e-3)
    assert metric(at, "Diffusion time tau_D") == pytest.approx(j.diffusion_time_s, rel=5e-3)
    assert metric(at, "Residence time t_res") == pytest.approx(5e-4, rel=1e-9)
    assert metric(at, "tau_D / t_res") == pytest.approx(j.ratio, rel=5e-3)
    assert j.optimistic  # tau_D about 0.7 ms against 0.5 ms
    assert any("equilibrium dose is optimistic" in w.value for w in at.warning)
    at.text_input(key="f:process.residence_time").set_value("10 s")
    run(at)
    assert metric(at, "Residence time t_res") == pytest.approx(10.0, rel=1e-9)
    assert any("fast enough" in s.value for s in at.success)
    assert not any("optimistic" in w.value for w in at.warning)
    at.text_input(key="f:process.residence_time").set_value("")  # optional: empty removes it
    run(at)
    assert "process" not in at.session_state["case_dict"]
