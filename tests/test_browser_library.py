"""Real-Chromium checks of the workspace file and the surfactant library (issue 15), no network.

One app, one browser (every request that is not to 127.0.0.1 blocked and recorded):

* the Case page's "Save the workspace (.zip)" download is a zip holding case.toml; after an
  edit, opening that file asks first, then brings the saved case back (with an undo); a zip
  with a '..' member is refused, and the message shows no server folder;
* the Surfactant library page saves the case's surfactant under a name (the file appears in the
  library folder, which the test points at a temporary folder) and uses a shipped entry as the
  case's surfactant, which the Surfactant page then shows.

Screenshots go to $SIZING_SHOTS (default: the test's temporary folder) for a person to look at.
"""

from __future__ import annotations

import io
import os
import zipfile
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
    # inherited by the app: its saves and its library stay in temporary folders
    os.environ["SIZING_WORKSPACES"] = str(tmp_path_factory.mktemp("workspaces"))
    lib = tmp_path_factory.mktemp("library")
    os.environ["SIZING_LIBRARY"] = str(lib)
    port = free_port()
    proc = start_app(port)
    yield f"http://127.0.0.1:{port}", lib
    stop_app(proc)
    os.environ.pop("SIZING_LIBRARY", None)


def shots(tmp_path: Path) -> Path:
    folder = Path(os.environ.get("SIZING_SHOTS") or tmp_path)
    folder.mkdir(parents=True, exist_ok=True)
    return folder


def _guarded(sync_api, p, blocked):
    def guard(route):
        host = urlparse(route.request.url).hostname
        if host in ("127.0.0.1", "localhost", "::1") or route.request.url.startswith(("data:", "blob:")):
            route.continue_()
        else:
            blocked.append(route.request.url)
            route.abort()

    browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
    context = browser.new_context(viewport={"width": 1400, "height": 1800}, accept_downloads=True)
    context.route("**/*", guard)
    return browser, context


def _set_title(page, text: str) -> None:
    box = page.get_by_label("Title")
    box.fill(text)
    box.press("Enter")
    page.get_by_text(text).first.wait_for()


def test_workspace_file_round_trip_and_hostile_zip(app, tmp_path):
    url, _ = app
    sync_api = pytest.importorskip("playwright.sync_api", reason="Playwright (PyPI) is not installed")
    out = shots(tmp_path)
    blocked: list[str] = []
    with sync_api.sync_playwright() as p:
        browser, context = _guarded(sync_api, p, blocked)
        page = context.new_page()
        page.goto(url)
        page.get_by_role("heading", name="Case", level=1).wait_for()
        _set_title(page, "Workspace saved here")
        with page.expect_download() as info:
            page.get_by_role("button", name="Save the workspace (.zip)").click()
        saved = tmp_path / info.value.suggested_filename
        info.value.save_as(saved)
        with zipfile.ZipFile(saved) as zf:
            assert "case.toml" in zf.namelist()
            assert 'title = "Workspace saved here"' in zf.read("case.toml").decode()
        _set_title(page, "Edited afterwards")
        uploader = page.get_by_test_id("stFileUploader").filter(has_text="Open a workspace file")
        uploader.locator("input[type=file]").set_input_files(str(saved))
        page.get_by_text("by the workspace").first.wait_for()
        page.screenshot(path=str(out / "workspace_confirm.png"))
        page.get_by_role("button", name="Replace by the workspace").click()
        sync_api.expect(page.get_by_label("Title")).to_have_value("Workspace saved here")
        page.get_by_role("button", name="Undo the replacement").wait_for()
        # a hostile file: refused with the member named, no server folder shown
        buf = io.BytesIO()
        with zipfile.ZipFile(buf, "w") as zf:
            zf.writestr("case.toml", zipfile.ZipFile(saved).read("case.toml"))
            zf.writestr("../escape.csv", "a,b\n")
        bad = tmp_path / "hostile.zip"
        bad.write_bytes(buf.getvalue())
        uploader.locator("input[type=file]").set_input_files(str(bad))
        alert = page.get_by_test_id("stAlert").filter(has_text="The workspace file was refused")
        alert.wait_for()
        text = alert.inner_text()
        assert "escape.csv" in text and "leaves the workspace" in text
        assert "/tmp" not in text and os.environ["SIZING_WORKSPACES"] not in text
        sync_api.expect(page.get_by_label("Title")).to_have_value("Workspace saved here")
        page.screenshot(path=str(out / "workspace_refused.png"))
        browser.close()
    assert not blocked, f"requests left the machine: {blocked[:5]}"


def test_library_save_and_reuse(app, tmp_path):
    url, lib = app
    sync_api = pytest.importorskip("playwright.sync_api", reason="Playwright (PyPI) is not installed")
    out = shots(tmp_path)
    blocked: list[str] = []
    with sync_api.sync_playwright() as p:
        browser, context = _guarded(sync_api, p, blocked)
        page = context.new_page()
        page.goto(url)
        page.get_by_role("heading", name="Case", level=1).wait_for()
        nav(page, "Library")
        sync_api.expect(page.get_by_role("textbox", name="Library folder (on this computer)")).to_have_value(str(lib))
        box = page.get_by_role("textbox", name="Name of the entry")
        box.fill("Browser entry: our anionic")
        box.press("Enter")
        page.wait_for_timeout(300)
        page.get_by_role("button", name="Save the surfactant in the library").click()
        page.get_by_text("Saved as browser_entry_our_anionic.toml").wait_for()
        assert (lib / "browser_entry_our_anionic.toml").is_file()
        page.get_by_test_id("stDataFrame").wait_for()
        page.get_by_test_id("stSelectbox").filter(has_text="Entry").click()
        page.get_by_role("option", name="C12 ethoxylate").first.click()
        page.get_by_text("Typical values, not a product's data.").first.wait_for()
        page.get_by_role("button", name="Use it as the case's surfactant").click()
        page.get_by_text("The case now uses").wait_for()
        page.screenshot(path=str(out / "library.png"), full_page=True)
        nav(page, "Surfactant")
        sync_api.expect(page.get_by_role("textbox", name="Name", exact=True)).to_have_value("C12E6 alcohol ethoxylate (typical values)")
        sync_api.expect(page.get_by_role("textbox", name="CMC [concentration, e.g. 8.2 mM]")).to_have_value("0.087 mM")
        browser.close()
    assert not blocked, f"requests left the machine: {blocked[:5]}"


def test_every_chart_downloads_as_svg_and_png(app, tmp_path):
    """Each chart of the Dose balance page has SVG and PNG buttons; the files are what they say
    (an SVG root element that Python's XML parser reads; the PNG signature of the PNG spec,
    ISO/IEC 15948: bytes 89 50 4E 47 0D 0A 1A 0A); no request leaves the machine."""
    import xml.etree.ElementTree as ET

    url, _ = app
    sync_api = pytest.importorskip("playwright.sync_api", reason="Playwright (PyPI) is not installed")
    pytest.importorskip("vl_convert", reason="vl-convert-python is not installed")
    out = shots(tmp_path)
    blocked: list[str] = []
    with sync_api.sync_playwright() as p:
        browser, context = _guarded(sync_api, p, blocked)
        page = context.new_page()
        page.goto(url)
        page.get_by_role("heading", name="Case", level=1).wait_for()
        nav(page, "Dose balance")
        page.get_by_test_id("stVegaLiteChart").last.wait_for()
        n_charts = page.get_by_test_id("stVegaLiteChart").count()
        svg = page.get_by_role("button", name="SVG", exact=True)
        png = page.get_by_role("button", name="PNG", exact=True)
        assert n_charts >= 2 and svg.count() == n_charts and png.count() == n_charts
        with page.expect_download() as info:
            svg.nth(1).click()
        root = ET.fromstring(Path(info.value.path()).read_bytes())
        assert root.tag.endswith("svg") and info.value.suggested_filename.endswith(".svg")
        with page.expect_download() as info:
            png.nth(1).click()
        assert Path(info.value.path()).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
        page.screenshot(path=str(out / "dose_export_buttons.png"))
        browser.close()
    assert not blocked, f"requests left the machine: {blocked[:5]}"
