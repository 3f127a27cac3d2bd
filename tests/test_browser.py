"""Real-browser check of the workbench: `sizing app --headless` driven by Playwright in Chromium.

Load the demo, change d32 on the Drops and bubbles page, see the dose on the Dose balance page
change, and save a screenshot under the test's temporary folder.  Skips with a reason where
Debian's Chromium (/usr/bin/chromium) or Playwright is missing; CI installs both.
"""

from __future__ import annotations

import os
import re
import shutil
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

CHROMIUM = "/usr/bin/chromium"
ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
        "--disable-background-networking", "--disable-component-update", "--disable-sync"]

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(not Path(CHROMIUM).exists(), reason=f"Chromium not found at {CHROMIUM} "
                       "(install it with 'apt-get install -y chromium')"),
]


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def start_app(port: int) -> subprocess.Popen:
    """Start ``sizing app --headless`` on a port and wait for /_stcore/health (no fixed sleep)."""
    exe = shutil.which("sizing", path=str(Path(sys.executable).parent))
    cmd = [exe] if exe else [sys.executable, "-m", "sizing"]
    import tempfile

    log = tempfile.TemporaryFile()  # a file, not a pipe: a full pipe buffer would stall the server
    env = dict(os.environ)
    # the workbench saves each session's case: a test server saves into a folder of its own
    env.setdefault("SIZING_WORKSPACES", tempfile.mkdtemp(prefix="sizing-ws-browser-"))
    proc = subprocess.Popen(cmd + ["app", "--headless", "--port", str(port)],
                            stdout=log, stderr=subprocess.STDOUT, start_new_session=True, env=env)
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            log.seek(0)
            raise RuntimeError(f"the app exited early:\n{log.read().decode(errors='replace')}")
        try:
            with urllib.request.urlopen(f"http://127.0.0.1:{port}/_stcore/health", timeout=2) as r:
                if r.read().strip() == b"ok":
                    return proc
        except OSError:
            time.sleep(0.2)  # polling interval while the server starts, not a wait for the page
    proc.kill()
    raise RuntimeError("the app did not answer /_stcore/health within 60 s")


def stop_app(proc: subprocess.Popen) -> None:
    """Stop the app and the Streamlit server it started (its own process group, see start_app)."""
    import signal

    try:
        os.killpg(proc.pid, signal.SIGTERM)  # the server is a child of `sizing app`: end the group
    except ProcessLookupError:
        pass
    try:
        proc.wait(timeout=10)
    except subprocess.TimeoutExpired:
        os.killpg(proc.pid, signal.SIGKILL)


@pytest.fixture(scope="module")
def app_url():
    port = free_port()
    proc = start_app(port)
    yield f"http://127.0.0.1:{port}"
    stop_app(proc)


def product_text(page) -> str:
    """Return the text of the 'Product as delivered' metric value on the Dose balance page."""
    metric = page.get_by_test_id("stMetric").filter(has_text="Product as delivered").first
    metric.wait_for()
    return metric.get_by_test_id("stMetricValue").inner_text()


def nav(page, title: str) -> None:
    """Move to another page through the sidebar (the session and its case are kept)."""
    # the link text ends with the title (an icon name may come first): "Plan" does not pick "Plant trials"
    link = page.get_by_test_id("stSidebarNavLink").filter(has_text=re.compile(rf"{re.escape(title)}\s*$"))
    heading = page.get_by_role("heading", name=title, level=1)
    for attempt in range(3):  # a click landing while the app reruns (a loaded machine) can be lost: click again
        link.click()
        try:
            heading.wait_for(timeout=30000)
            return
        except Exception:
            if attempt == 2:
                raise


def run_story(url: str, shot: Path, d32: str = "1.0 um") -> tuple[str, str]:
    """Load the demo, read the dose, change d32, read the dose again; save a screenshot."""
    sync_api = pytest.importorskip("playwright.sync_api", reason="Playwright (PyPI) is not installed")
    with sync_api.sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        page = browser.new_page(viewport={"width": 1400, "height": 1500})
        page.set_default_timeout(60000)  # a loaded CI machine: every wait is for an element, never a sleep
        page.goto(url)  # the Case page
        page.get_by_role("button", name="Load the demo case").click()
        page.get_by_text("Editing: demo case").wait_for()
        nav(page, "Dose balance")
        before = product_text(page)
        nav(page, "Drops and bubbles")
        box = page.get_by_label("Sauter mean diameter d32")
        box.wait_for()
        box.fill(d32)
        box.press("Enter")
        page.get_by_test_id("stMetric").filter(has_text="d32").get_by_text(d32.replace(".0 um", " µm")).wait_for()
        nav(page, "Dose balance")
        value = page.get_by_test_id("stMetric").filter(has_text="Product as delivered").first
        value.get_by_test_id("stMetricValue").filter(has_not_text=before).wait_for()
        page.get_by_test_id("stVegaLiteChart").last.wait_for()
        after = product_text(page)
        page.screenshot(path=str(shot))
        browser.close()
    return before, after


def test_demo_change_d32_changes_dose(app_url, tmp_path):
    shot = tmp_path / "dose_balance.png"
    before, after = run_story(app_url, shot)
    number = re.compile(r"^[0-9.]+ kg$")
    assert number.match(before) and number.match(after), (before, after)
    # halving d32 doubles the interface, so the dose must rise (common practice: A = 6 V_d / d32)
    assert float(after.split()[0]) > float(before.split()[0])
    assert shot.stat().st_size > 10_000


if __name__ == "__main__":  # manual use: python tests/test_browser.py OUT.png
    port = free_port()
    proc = start_app(port)
    try:
        print(run_story(f"http://127.0.0.1:{port}", Path(sys.argv[1] if len(sys.argv) > 1 else "/tmp/shot.png")))
    finally:
        stop_app(proc)
    os._exit(0)
