"""Real-Chromium checks of the workbench pages for blends, process conditions and plant trials.

One app, one browser, no network beyond 127.0.0.1: open the blend demo by uploading its case file,
edit a component's fraction on the Surfactant page and see the blend's dose change; give a storage
temperature on the Process and storage page and see the storage figures and the chart; open the
stirred-tank demo, upload its trials CSV on the Plant trials page and learn from it.  Screenshots go
to $SIZING_SHOTS (default: the test's temporary folder) for a person to look at.
"""

from __future__ import annotations

import os
import re
from pathlib import Path

import pytest

from tests.test_browser import ARGS, CHROMIUM, free_port, nav, start_app, stop_app

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(not Path(CHROMIUM).exists(), reason=f"Chromium not found at {CHROMIUM}"),
]

DEMOS = Path(__file__).resolve().parents[1] / "cases_demo"


@pytest.fixture(scope="module")
def app(tmp_path_factory):
    os.environ["SIZING_WORKSPACES"] = str(tmp_path_factory.mktemp("workspaces"))  # inherited by the app
    port = free_port()
    proc = start_app(port)
    yield f"http://127.0.0.1:{port}"
    stop_app(proc)


def shots(tmp_path: Path) -> Path:
    folder = Path(os.environ.get("SIZING_SHOTS") or tmp_path)
    folder.mkdir(parents=True, exist_ok=True)
    return folder


def metric_value(page, label: str) -> str:
    m = page.get_by_test_id("stMetric").filter(has_text=label).first
    m.wait_for()
    return m.get_by_test_id("stMetricValue").inner_text()


def open_case(page, path: Path) -> None:
    """Open a case file through the Case page's uploader (the same checks as a user's upload)."""
    nav(page, "Case")
    page.get_by_test_id("stFileUploaderDropzoneInput").first.set_input_files(str(path))
    page.get_by_text(f"Editing: uploaded {path.name}").wait_for()


def test_blend_process_and_trials_pages_in_a_real_browser(app, tmp_path):
    sync_api = pytest.importorskip("playwright.sync_api", reason="Playwright (PyPI) is not installed")
    out = shots(tmp_path)
    outside = []
    with sync_api.sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        page = browser.new_page(viewport={"width": 1400, "height": 3400})
        page.route(re.compile(r"^(?!https?://127\.0\.0\.1[:/]).*"),
                   lambda route: (outside.append(route.request.url), route.abort()))
        page.goto(app)
        page.get_by_role("heading", name="Case", level=1).wait_for()

        # ---- a blend: edit a fraction, the dose follows
        open_case(page, DEMOS / "cream_blend_pair.toml")
        nav(page, "Surfactant")
        page.get_by_role("heading", name="Blend components").wait_for()
        before = metric_value(page, "Blend for the target")
        box = page.get_by_role("textbox", name="Fraction of the active blend, by mass [-]").first
        box.fill("0.7")
        box.press("Enter")
        page.get_by_test_id("stMetric").filter(has_text="Blend for the target").first \
            .get_by_test_id("stMetricValue").filter(has_not_text=before).wait_for()
        after = metric_value(page, "Blend for the target")
        page.get_by_test_id("stVegaLiteChart").nth(1).wait_for()
        page.get_by_text("Interface composition against the charge").scroll_into_view_if_needed()
        page.screenshot(path=str(out / "surfactant_blend.png"), full_page=True)

        # ---- process and storage: a storage temperature brings the storage figures
        nav(page, "Process and storage")
        box = page.get_by_role("textbox", name="Storage temperature [e.g. 20 degC]")
        box.fill("5 degC")
        box.press("Enter")
        page.get_by_text("At storage, 5 °C", exact=False).wait_for()
        storage_cov = metric_value(page, "Coverage at storage")
        page.get_by_test_id("stVegaLiteChart").first.wait_for()
        page.screenshot(path=str(out / "process_storage.png"), full_page=True)

        # ---- plant trials: upload the trials CSV and learn from it
        open_case(page, DEMOS / "agro_ew_stirred_tank.toml")
        nav(page, "Plant trials")
        page.get_by_test_id("stFileUploaderDropzoneInput").first.set_input_files(
            str(DEMOS / "agro_ew_stirred_tank_trials.csv"))
        page.get_by_text("the uploaded file agro_ew_stirred_tank_trials.csv as it is").wait_for()
        page.get_by_role("button", name="Learn from the trials").click()
        charge = metric_value(page, "Next charge")
        page.get_by_role("heading", name="What the trials taught: prior against posterior").wait_for()
        page.get_by_test_id("stVegaLiteChart").nth(3).wait_for()
        body = page.inner_text("body")
        page.screenshot(path=str(out / "plant_trials.png"), full_page=True)
        browser.close()

    number = re.compile(r"^[0-9.]+ kg$")
    assert number.match(before) and number.match(after) and before != after, (before, after)
    assert re.match(r"^[0-9.]+ \(-\)$", storage_cov), storage_cov
    assert number.match(charge), charge
    assert "Plant trials." in body and "qualified people" in body  # the caution for plant trials
    assert "µm" in body  # the posterior table in the unit people write
    assert not outside, outside  # nothing fetched from outside the machine
    for name in ("surfactant_blend.png", "process_storage.png", "plant_trials.png"):
        assert (out / name).stat().st_size > 20_000
