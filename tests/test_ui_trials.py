"""Plant trials page under AppTest: trial rows by hand or from an uploaded CSV, the calibration's
figures, the plain messages when it cannot learn, and the working case left alone.

Wiring, not statistics: the figures shown are compared with the engine's own
``sizing.views.calibration_view`` (``sizing calibrate``) on the same case and rows, at the digits the
page prints. AppTest cannot drive a file uploader or type into a data editor: the upload and the
table are seeded in session state exactly as the page's own handlers store them; the upload checks
themselves are called directly (and driven in a real browser by tests/test_browser_engine_pages.py).
"""

from __future__ import annotations

import os
import tomllib
from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest
from ui_helpers import DEMOS, PAGES, ROOT, metric, run, seeded  # noqa: F401  (the shared AppTest setup)

from sizing import views
from sizing.case import parse_case
from sizing.errors import InputError

PAGE = PAGES / "trials.py"
CASE = DEMOS / "agro_ew_stirred_tank.toml"
TRIALS = DEMOS / "agro_ew_stirred_tank_trials.csv"


def page(rows: list[dict] | None = None, upload: Path | None = None) -> AppTest:
    at = seeded(PAGE, CASE, timeout=120)
    if rows is not None:
        at.session_state["trials_table"] = rows
    if upload is not None:  # what the page's upload handler stores after the checks
        at.session_state["trials_table"] = views.trials_rows(upload)
        at.session_state["trials_file"] = str(upload)
        at.session_state["trials_source"] = upload.name
    return at


def engine(path: Path) -> dict:
    return views.calibration_view(parse_case(tomllib.loads(CASE.read_text(encoding="utf-8")), DEMOS), str(path))


def posterior_table(at: AppTest):
    tables = [d.value for d in at.dataframe if "learned input" in d.value.columns]
    assert tables, "no posterior table"
    return tables[0]


def test_uploaded_trials_give_the_engine_posterior_and_next_charge():
    at = run(page(upload=TRIALS))
    assert at.radio(key="trials_source").value == TRIALS.name
    at.button(key="btn_calibrate").click()
    run(at)
    cal = engine(TRIALS)
    j = cal["result"]
    assert metric(at, "Next charge") == f"{j['next']['kg_product_per_batch']:.4g} kg"
    assert metric(at, "Target met, after the trials") == f"{100 * j['next']['probability_target_met']:.3g} %"
    assert metric(at, "Target met, before the trials") == f"{100 * j['probability_target_met_before']:.3g} %"
    table = posterior_table(at)
    post = [b for b in cal["bands"] if b["which"] == "posterior"]
    shown = table[table["band"] == "posterior"]
    assert len(shown) == len(post) == len(j["posterior"])
    for b, (_, row) in zip(post, shown.iterrows()):
        assert row["p50"] == f"{b['p50']:.4g} {b['unit']}".strip()
    d32 = table[table["learned input"].str.contains(r"\(drops\.d32\)")]
    assert d32["p50"].str.endswith(" µm").all()  # the unit as people write it
    # one band chart per learned input, measured against predicted for d32 and serum
    assert len(at.get("vega_lite_chart")) == len(j["posterior"]) + 2
    assert not at.session_state["case_dict"].get("case", {}).get("notes")  # the working case is untouched


def test_rows_typed_in_the_table_give_the_same_answer_as_the_file():
    at = run(page(rows=views.trials_rows(TRIALS)))
    at.button(key="btn_calibrate").click()
    run(at)
    j = engine(TRIALS)["result"]
    assert metric(at, "Next charge") == f"{j['next']['kg_product_per_batch']:.4g} kg"
    assert metric(at, "Effective sample size") == f"{j['effective_sample_size']:.0f} of {j['samples']}"
    assert any("separate perfectly" in i.value for i in at.info)  # the stability note, plainly


def test_a_zero_charge_is_refused_naming_the_row_and_column():
    rows = views.trials_rows(TRIALS)
    rows[1]["charge [kg]"] = 0.0
    at = run(page(rows=rows))
    at.button(key="btn_calibrate").click()
    run(at)
    errors = [e.value for e in at.error]
    assert any(e.startswith("trials table: row 3, column charge") and "> 0 kg" in e for e in errors), errors
    assert not [m for m in at.metric if m.label == "Next charge"]
    assert not any(os.sep + "files" + os.sep in e for e in errors)  # no server folder in the message


def test_collapsed_weights_get_a_plain_message(tmp_path):
    far = tmp_path / "far_trials.csv"
    far.write_text("batch,charge [kg],d32 [um]\nA,1.5,60\nB,1.8,65\n", encoding="utf-8")
    at = run(page(upload=far))
    at.button(key="btn_calibrate").click()
    run(at)
    errors = [e.value for e in at.error]
    assert any("The trials cannot update this case" in e and "effective sample size" in e for e in errors), errors


def test_the_updated_case_replaces_the_working_case_only_after_asking_and_can_be_undone():
    at = run(page(upload=TRIALS))
    at.button(key="btn_calibrate").click()
    run(at)
    before = at.session_state["case_dict"]
    at.button(key="btn_open_calibrated").click()
    run(at)
    assert at.session_state["case_dict"] == before
    at.button(key="btn_confirm_calibrated").click()
    run(at)
    assert "calibrated on 4 trial batch(es)" in at.session_state["case_dict"]["case"]["notes"]
    assert not [m for m in at.metric if m.label == "Next charge"]  # not calibrated a second time
    at.button(key="btn_undo_calibrated").click()
    run(at)
    assert at.session_state["case_dict"] == before


def test_trial_uploads_are_checked_before_use(tmp_path):
    from ui import state

    with pytest.raises(InputError, match=r"trials file: 'trials.xlsx' is not a CSV file"):
        state.check_upload("trials.xlsx", b"batch,charge [kg]\n", (".csv",), "trials file")
    with pytest.raises(InputError, match=r"binary data"):
        state.check_upload("trials.csv", b"batch\x00", (".csv",), "trials file")
    with pytest.raises(InputError, match=r"at most 5 MB"):
        state.check_upload("trials.csv", b"x" * (5 * 1024 * 1024 + 1), (".csv",), "trials file")
    bad = tmp_path / "bad.csv"
    bad.write_text("batch,charge [kg],stable\nA,1.5,maybe\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"row 2, column stable: expected yes or no"):
        views.trials_rows(bad)


def test_partial_rows_on_a_blend_case_and_the_stability_note():
    blend = DEMOS / "cream_blend_pair.toml"
    at = AppTest.from_file(str(PAGE), default_timeout=120)
    at.session_state["case_dict"] = tomllib.loads(blend.read_text(encoding="utf-8"))
    at.session_state["case_base_dir"] = str(blend.parent)
    # rows that give only some columns (the others are missing measurements, not zeros)
    at.session_state["trials_table"] = [{"batch": "A", "charge [kg]": 2.6, "d32 [um]": 4.4, "stable": "yes"},
                                        {"batch": "B", "charge [kg]": 2.0, "d32 [um]": 4.1, "stable": "no"}]
    run(at)
    at.button(key="btn_calibrate").click()
    run(at)
    csv = (Path(at.session_state["trials_run"]["file"])).read_text(encoding="utf-8").splitlines()
    assert csv[1] == "A,2.6,4.4,,,yes,"
    path = Path(at.session_state["trials_run"]["file"])
    j = views.calibration_view(parse_case(tomllib.loads(blend.read_text(encoding="utf-8")), DEMOS), str(path))["result"]
    assert metric(at, "Next charge") == f"{j['next']['kg_product_per_batch']:.4g} kg"
    assert any("cannot separate" in i.value for i in at.info)
    assert path.name == "trials_entered.csv"
