"""Presentation mode in a real browser: `inertia-review present` serves the quick review.

The command is started as a reviewer would start it (a subprocess, 127.0.0.1, a token); headless
Chromium (Debian's /usr/bin/chromium through playwright) opens the printed URL with every request
to another host aborted (only Voila's own icon stylesheet is tried). The page must show the live map without any code cell, and moving the
"shoulder link length" slider must redraw the map.
"""

import os
import re
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from test_browser import CHROMIUM_ARGS, SLIDER_LABEL, _local_only, _wait_until, chromium  # noqa: F401

from inertia_review.review._present import presentation_command

REPO = Path(__file__).resolve().parents[1]
NOTEBOOK = REPO / "notebooks" / "01_quick_review.ipynb"

pytestmark = pytest.mark.browser


def test_command_binds_loopback_with_a_token(tmp_path):
    argv, url = presentation_command(NOTEBOOK, port=8123, token="abc")
    assert "--Voila.ip=127.0.0.1" in argv and "--token=abc" in argv and "--port=8123" in argv
    assert url == "http://127.0.0.1:8123/?token=abc"
    with pytest.raises(ValueError, match="notebook: no notebook file"):
        presentation_command(tmp_path / "missing.ipynb")
    with pytest.raises(ValueError, match="port: must be from 1 to 65535"):
        presentation_command(NOTEBOOK, port=70000)


@pytest.fixture()
def served(tmp_path):
    log_path = tmp_path / "present.log"
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(
        [str(REPO), *filter(None, [os.environ.get("PYTHONPATH")])]))
    with open(log_path, "wb") as log:
        proc = subprocess.Popen([sys.executable, "-m", "inertia_review.review._cli", "present",
                                 str(NOTEBOOK)], stdout=log, stderr=subprocess.STDOUT,
                                stdin=subprocess.DEVNULL, env=env, start_new_session=True)
    try:
        def url():
            text = log_path.read_text(errors="replace")
            match = re.search(r"at (http://127\.0\.0\.1:\d+/\?token=[0-9a-f]+)", text)
            ready = "Voil" in text and ("running at" in text or "localhost" in text
                                        or "127.0.0.1:" in text.split("presenting", 1)[-1])
            if proc.poll() is not None:
                pytest.fail(f"present exited with code {proc.returncode}:\n{text[-3000:]}")
            return match.group(1) if match and ready else None
        address = _wait_until(url, 90, lambda: log_path.read_text(errors="replace")[-3000:])
        yield address, log_path
    finally:
        for sig in (signal.SIGTERM, signal.SIGKILL):
            if proc.poll() is not None:
                break
            os.killpg(proc.pid, sig)
            try:
                proc.wait(timeout=20)
            except subprocess.TimeoutExpired:
                continue


def test_presentation_shows_the_map_and_follows_a_slider(served, chromium, tmp_path):  # noqa: F811
    from playwright.sync_api import sync_playwright

    address, log_path = served
    blocked = []
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=chromium, headless=True, args=CHROMIUM_ARGS)
        try:
            context = browser.new_context(viewport={"width": 1600, "height": 1000})
            context.route("**/*", _local_only(blocked))
            page = context.new_page()
            page.set_default_timeout(60_000)
            try:
                page.goto(address, timeout=180_000)
                panel = page.locator(".widget-vbox:has(> .widget-html .ir-scores)")
                panel_map = panel.locator("> .widget-image").first
                panel_map.wait_for(state="visible", timeout=180_000)
                # no code cell on the page: the notebook's imports never show
                assert "import inertia_review" not in page.content()
                slider = page.locator(".widget-slider", has_text=SLIDER_LABEL)
                slider.wait_for(state="visible")
                src_before = panel_map.get_attribute("src") or ""
                assert src_before.startswith(("blob:", "data:image/png")), src_before[:60]
                handle = slider.locator(".noUi-handle")
                handle.scroll_into_view_if_needed()
                handle.focus()
                handle.press("PageDown")
                _wait_until(lambda: (panel_map.get_attribute("src") or "") != src_before, 90,
                            lambda: "the map did not redraw after the slider moved")
                page.screenshot(path=tmp_path / "present.png")
            except BaseException:
                page.screenshot(path=tmp_path / "present_failure.png")
                print(f"screenshot: {tmp_path / 'present_failure.png'}\n"
                      f"{log_path.read_text(errors='replace')[-3000:]}")
                raise
        finally:
            browser.close()
    # Voila's page template links the Font Awesome icon stylesheets from a CDN; the page works
    # without them (aborted here). Nothing else may leave 127.0.0.1.
    assert all("fontawesome" in url for url in blocked), blocked
