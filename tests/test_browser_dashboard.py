"""End to end in a real browser: ``floatlift dashboard`` serves the app, a GPX file is
uploaded on the import page, the session is opened and its rides are found.

Debian's chromium driven by Playwright's sync API (never a downloaded browser).
Screenshots go to ``test-artifacts/``.
"""

from __future__ import annotations

import os
import re
import subprocess
import sys
import time
from pathlib import Path

import pytest

from conftest import need_service, stop_server

PROJECT_ROOT = Path(__file__).resolve().parent.parent
SAMPLE_TRACKS = PROJECT_ROOT / "sample_tracks" / "tracks"
CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update", "--disable-sync"]
UPLOAD = "2026-04-05_0945_tobiah_whimbrel-v2.gpx.gz"
WAIT_MS = 90_000

pytestmark = [pytest.mark.browser, pytest.mark.slow]


@pytest.fixture(scope="module")
def chromium_browser():
    need_service(os.path.exists(CHROMIUM), f"Debian chromium not installed ({CHROMIUM})")
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        need_service(False, "playwright (Python package) not installed")
    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        yield b
        b.close()


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    """``floatlift dashboard`` on a free port over a library of one sample session."""
    from test_dashboard import build_library

    from dashboard.server import free_port

    folder = tmp_path_factory.mktemp("browser")
    url = build_library(folder, boards=("whimbrel-v1",), limit=1)
    port = free_port()
    errors = open(folder / "stderr.txt", "w+", encoding="utf-8")  # noqa: SIM115 - closed below
    proc = subprocess.Popen([sys.executable, "-m", "sessions.cli", "dashboard", "--db", url, "--port", str(port)],
                            stdout=subprocess.PIPE, stderr=errors, text=True, cwd=folder)
    line = proc.stdout.readline()  # printed once the server answers its health check
    if not line.startswith("floatlift dashboard: http://"):
        proc.kill()
        proc.wait()
        proc.stdout.close()
        errors.seek(0)
        message = errors.read()[-2000:]
        errors.close()
        pytest.fail(f"the dashboard did not start: {line!r} {message}")
    address = re.search(r"http://\S+", line).group(0)
    assert address == f"http://127.0.0.1:{port}"
    yield address, url, proc
    stop_server(proc, timeout_s=20)
    proc.stdout.close()
    errors.close()


def test_upload_open_and_find_rides(chromium_browser, server, artifacts_dir):
    from playwright.sync_api import expect

    from sessions.store import Library

    address, url, proc = server
    page = chromium_browser.new_page(viewport={"width": 1400, "height": 2400})
    page.set_default_timeout(WAIT_MS)
    try:
        page.goto(f"{address}/add-tracks")
        expect(page.get_by_role("heading", name="Add tracks")).to_be_visible()
        page.locator("[data-testid='stFileUploader'] input[type='file']").set_input_files(str(SAMPLE_TRACKS / UPLOAD))
        expect(page.get_by_role("button", name=f"Remove {UPLOAD}")).to_be_visible()
        page.screenshot(path=str(artifacts_dir / "dashboard-add-tracks.png"))
        page.get_by_role("button", name="Import").click()
        expect(page.get_by_text(re.compile(r"^Imported 1, already in the library 0, refused 0"))).to_be_visible()
        expect(page.get_by_test_id("stDataFrame").locator("table")).to_contain_text(UPLOAD)
        time.sleep(0.5)  # let the table's canvas paint before the screenshot
        page.screenshot(path=str(artifacts_dir / "dashboard-imported.png"))

        with Library.open(url) as lib:
            sid = max(s["id"] for s in lib.sessions())
            detail = lib.session(sid)
        assert detail["source_file"] == UPLOAD and detail["rides"] > 0

        page.get_by_role("button", name=f"Open session #{sid}").click()
        expect(page.get_by_role("heading", name="Session review")).to_be_visible()
        expect(page.get_by_role("heading", name=re.compile(f"no rider · no board · {detail['rides']} rides"))
               ).to_be_visible()
        table = page.get_by_test_id("stDataFrame").locator("table")
        expect(table.locator("tbody tr")).to_have_count(detail["rides"])
        first = detail["ride_list"][0]
        expect(table).to_contain_text(f"{first['onset_speed_mps']:.2f}")
        expect(page.get_by_test_id("stImage")).to_have_count(2)
        time.sleep(0.5)  # let the pictures paint before the screenshot
        page.screenshot(path=str(artifacts_dir / "dashboard-review.png"))

        last_words = {  # text each page writes last: the page has finished running
            "boards": ("Boards and load", "Estimates for comparing boards"),
            "compare": ("Compare boards", "needs sessions on at least two boards"),
            "feedback": ("Test-ride feedback", "the sliders start at 3"),
        }
        for path, (heading, last) in last_words.items():
            page.goto(f"{address}/{path}")
            expect(page.get_by_role("heading", name=heading)).to_be_visible()
            expect(page.get_by_text(last)).to_be_visible()
            expect(page.get_by_test_id("stException")).to_have_count(0)
            time.sleep(0.5)
            page.screenshot(path=str(artifacts_dir / f"dashboard-{path}.png"))
    finally:
        page.close()
    # Ctrl-C stops the server and the command ends cleanly
    # (the server gets STOP_TIMEOUT_S to stop before it is killed; the rest is slack for
    # a loaded machine)
    assert stop_server(proc, timeout_s=45) == 0
    assert "stopped" in proc.stdout.read()
