"""Real-Chromium checks of the workbench as a place to work (issue 15), no network.

One app, one browser: every request that is not to 127.0.0.1 is blocked and recorded (the test
asserts none was attempted); edit the case, reload, open the address in a new tab: the case is
still there; '/case' opens the Case page; a scale-up case says lab and plant d32 on the Drops
page.  Screenshots go to $SIZING_SHOTS (default: the test's temporary folder) for a person.
"""

from __future__ import annotations

import os
from pathlib import Path
from urllib.parse import urlparse

import pytest

from tests.test_browser import ARGS, CHROMIUM, free_port, nav, start_app, stop_app

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(not Path(CHROMIUM).exists(), reason=f"Chromium not found at {CHROMIUM}"),
]


@pytest.fixture(scope="module")
def app(tmp_path_factory):
    os.environ["SIZING_WORKSPACES"] = str(tmp_path_factory.mktemp("workspaces"))  # inherited by the app
    port = free_port()
    proc = start_app(port)
    yield f"http://127.0.0.1:{port}", proc
    stop_app(proc)


def shots(tmp_path: Path) -> Path:
    folder = Path(os.environ.get("SIZING_SHOTS") or tmp_path)
    folder.mkdir(parents=True, exist_ok=True)
    return folder


def test_reload_new_tab_offline_and_lab_plant_d32(app, tmp_path):
    url, _ = app
    sync_api = pytest.importorskip("playwright.sync_api", reason="Playwright (PyPI) is not installed")
    out = shots(tmp_path)
    blocked: list[str] = []

    def guard(route):
        host = urlparse(route.request.url).hostname
        if host in ("127.0.0.1", "localhost", "::1") or route.request.url.startswith(("data:", "blob:")):
            route.continue_()
        else:
            blocked.append(route.request.url)
            route.abort()

    with sync_api.sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        context = browser.new_context(viewport={"width": 1400, "height": 1800})
        context.route("**/*", guard)
        page = context.new_page()
        page.goto(url)
        page.get_by_role("heading", name="Case", level=1).wait_for()
        box = page.get_by_label("Title")
        box.fill("Afternoon case")
        box.press("Enter")
        page.get_by_text("Afternoon case").first.wait_for()
        page.wait_for_function("() => new URL(location.href).searchParams.get('ws')")
        page.wait_for_timeout(500)  # the save follows the rerun the edit triggers
        address = page.url
        assert "ws=" in address
        # F5: the case is restored, with a clear note and a way to start over
        page.reload()
        page.get_by_text("Restored your working case").wait_for()
        sync_api.expect(page.get_by_label("Title")).to_have_value("Afternoon case")
        page.screenshot(path=str(out / "case_restored.png"))
        # a new tab on the same address
        tab = context.new_page()
        tab.goto(address)
        tab.get_by_text("Restored your working case").wait_for()
        sync_api.expect(tab.get_by_label("Title")).to_have_value("Afternoon case")
        # the page moves keep the workspace token in the address
        nav(tab, "Dose balance")
        assert "ws=" in tab.url
        tab.close()
        # '/case' is the Case page, not "Page not found"
        direct = context.new_page()
        direct.goto(url + "/case")
        direct.get_by_role("heading", name="Case", level=1).wait_for()
        direct.wait_for_timeout(300)
        assert direct.get_by_text("Page not found").count() == 0
        # a scale-up demo: lab and plant d32 on the Drops page
        direct.get_by_test_id("stSelectbox").filter(has_text="Demo case").click()
        direct.get_by_role("option", name="pre-emulsion").first.click()
        direct.get_by_role("button", name="Load the demo case").click()
        direct.get_by_text("Editing: demo miniemulsion_hph.toml").wait_for()
        nav(direct, "Drops and bubbles")
        direct.get_by_test_id("stMetric").filter(has_text="Plant d32 (for dose)").wait_for()
        direct.get_by_test_id("stMetric").filter(has_text="Lab d32").first.wait_for()
        direct.screenshot(path=str(out / "drops_lab_plant.png"))
        nav(direct, "Dose balance")
        direct.get_by_text("Plant d32.").first.wait_for()
        direct.get_by_test_id("stVegaLiteChart").last.wait_for()
        direct.screenshot(path=str(out / "dose_plant.png"))
        browser.close()
    assert not blocked, f"requests left the machine: {blocked[:5]}"
