"""Real-browser check of the quick-review notebook (notebooks/01_quick_review.ipynb).

JupyterLab is started on 127.0.0.1 with a temporary copy of ``notebooks/`` and ``designs/`` (same
relative layout, so ``../designs/kestrel_a.toml`` resolves). Headless Chromium (Debian's
``/usr/bin/chromium``, driven through playwright) opens the notebook, clears the saved outputs, runs
all cells, then moves the "shoulder link length" slider from the keyboard the way a reviewer would.
The live map image and the GCI readout must follow, the readout must equal what the core computes
for the moved design, and no error may show.

The browser reaches nothing but 127.0.0.1: every other request is aborted (and listed).
Skipped only when /usr/bin/chromium is missing outside CI; under CI (env var CI set) it must run.
"""

import json
import os
import re
import secrets
import shutil
import signal
import socket
import subprocess
import sys
import time
import urllib.parse
import urllib.request
from pathlib import Path

import pytest

import inertia_review as ir

REPO = Path(__file__).resolve().parents[1]
CHROMIUM = Path("/usr/bin/chromium")
NOTEBOOK = "notebooks/01_quick_review.ipynb"
DESIGN = "designs/kestrel_a.toml"            # the design the notebook loads
SLIDER_LABEL = "shoulder link length [mm]"
SLIDER_PATH = "joints[shoulder].link_length_m"
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--no-first-run", "--headless"]
SERVER_START_S = 90.0
# the readout shows gci with 3 decimals ("{:.3f}"): half a unit of the last digit, plus slack
GCI_DISPLAY_TOL = 0.0015

pytestmark = pytest.mark.browser


def _in_ci():
    return os.environ.get("CI", "").strip().lower() not in ("", "0", "false", "no")


@pytest.fixture(scope="module")
def chromium():
    if not CHROMIUM.exists():
        if _in_ci():
            pytest.fail(f"{CHROMIUM} is missing but CI is set: the browser test must run in CI "
                        "(.ci/run installs Debian's chromium when it is absent)")
        pytest.skip(f"{CHROMIUM} is missing (install it with `apt-get install -y chromium`); "
                    "set CI=true to make this a failure")
    return str(CHROMIUM)


def _free_port():
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


# never go through a proxy: the server is on the loopback interface
_OPENER = urllib.request.build_opener(urllib.request.ProxyHandler({}))


def _request(url, method="GET", timeout=5.0):
    req = urllib.request.Request(url, method=method)
    with _OPENER.open(req, timeout=timeout) as response:
        return response.status, response.read()


def _log_tail(path, lines=40):
    try:
        return "\n".join(Path(path).read_text(errors="replace").splitlines()[-lines:])
    except OSError:
        return "(no log)"


def _stop_server(proc, base, token):
    """Shut the kernels down through the REST API, then end the server's process group."""
    try:
        if proc.poll() is None:
            query = urllib.parse.urlencode({"token": token})
            _, body = _request(f"{base}/api/kernels?{query}")
            for kernel in json.loads(body):
                _request(f"{base}/api/kernels/{kernel['id']}?{query}", method="DELETE",
                         timeout=15.0)
    except (OSError, ValueError):
        pass                                  # the signals below still end the server
    finally:
        for sig, wait_s in ((signal.SIGTERM, 20.0), (signal.SIGKILL, 10.0)):
            if proc.poll() is not None:
                break
            try:
                os.killpg(proc.pid, sig)
            except ProcessLookupError:
                break
            try:
                proc.wait(timeout=wait_s)
            except subprocess.TimeoutExpired:
                continue


@pytest.fixture(scope="module")
def lab(chromium, tmp_path_factory):
    """A JupyterLab server on 127.0.0.1 serving a temporary copy of notebooks/ and designs/."""
    top = tmp_path_factory.mktemp("lab")
    root = top / "root"
    for folder in ("notebooks", "designs"):
        shutil.copytree(REPO / folder, root / folder)
    # private Jupyter directories, so neither the user's settings nor workspaces leak in or out;
    # the news/update notification is switched off (it would also reach the internet)
    dirs = {name: top / name for name in ("config", "data", "runtime", "settings", "workspaces",
                                          "ipython")}
    for path in dirs.values():
        path.mkdir()
    notification = dirs["settings"] / "@jupyterlab" / "apputils-extension"
    notification.mkdir(parents=True)
    (notification / "notification.jupyterlab-settings").write_text(
        json.dumps({"fetchNews": "false", "checkForUpdates": False}))
    env = dict(os.environ)
    env.update(JUPYTER_CONFIG_DIR=str(dirs["config"]), JUPYTER_DATA_DIR=str(dirs["data"]),
               JUPYTER_RUNTIME_DIR=str(dirs["runtime"]),
               JUPYTERLAB_SETTINGS_DIR=str(dirs["settings"]),
               JUPYTERLAB_WORKSPACES_DIR=str(dirs["workspaces"]), IPYTHONDIR=str(dirs["ipython"]),
               PYTHONPATH=os.pathsep.join([str(REPO), *filter(None, [env.get("PYTHONPATH")])]))
    port = _free_port()
    token = secrets.token_hex(16)
    base = f"http://127.0.0.1:{port}"
    cmd = [sys.executable, "-m", "jupyter", "lab", "--no-browser", "--allow-root",
           "--ip=127.0.0.1", f"--port={port}", "--ServerApp.port_retries=0",
           f"--IdentityProvider.token={token}", f"--ServerApp.root_dir={root}",
           "--LabApp.news_url=None",
           "--LabApp.check_for_updates_class=jupyterlab.NeverCheckForUpdate",
           "--LabApp.extension_manager=readonly"]
    log_path = top / "jupyter-lab.log"
    with open(log_path, "wb") as log:
        proc = subprocess.Popen(cmd, cwd=root, env=env, stdout=log, stderr=subprocess.STDOUT,
                                stdin=subprocess.DEVNULL, start_new_session=True)
    try:
        deadline = time.monotonic() + SERVER_START_S
        while True:
            if proc.poll() is not None:
                pytest.fail(f"jupyter lab exited with code {proc.returncode}:\n"
                            f"{_log_tail(log_path)}")
            try:
                status, _ = _request(f"{base}/api/status?token={token}", timeout=2.0)
                if status == 200:
                    break
            except OSError:
                pass
            if time.monotonic() > deadline:
                pytest.fail(f"jupyter lab did not answer on {base} within {SERVER_START_S:.0f} s:"
                            f"\n{_log_tail(log_path)}")
            time.sleep(0.5)
        yield {"base": base, "token": token, "root": root, "log": log_path}
    finally:
        _stop_server(proc, base, token)


def _local_only(blocked):
    def handler(route):
        host = urllib.parse.urlsplit(route.request.url).hostname
        if host == "127.0.0.1":
            route.continue_()
        else:
            blocked.append(route.request.url)
            route.abort()
    return handler


def _menu(page, menu, item):
    page.locator(".lm-MenuBar-itemLabel", has_text=re.compile(f"^{menu}$")).click()
    page.get_by_role("menuitem", name=re.compile(f"^{re.escape(item)}")).click()


def _wait_until(predicate, timeout_s, what, poll_s=0.25):
    """Poll ``predicate()`` until it returns a truthy value; fail with ``what()`` after the time."""
    deadline = time.monotonic() + timeout_s
    while True:
        value = predicate()
        if value:
            return value
        if time.monotonic() > deadline:
            pytest.fail(f"gave up after {timeout_s:.0f} s: {what()}")
        time.sleep(poll_s)


def _core_gci(length_m=None):
    """GCI of kestrel_a (optionally with another shoulder link length) straight from the core."""
    arm = ir.load_design(REPO / DESIGN)
    if length_m is not None:
        arm = arm.with_values({SLIDER_PATH: length_m})
    return float(ir.design_scores(ir.metric_map(arm, arm.task))["gci"])


_ALL_CELLS_RAN = """() => {
    const prompts = [...document.querySelectorAll('.jp-CodeCell .jp-InputArea-prompt')];
    return prompts.length > 0 && prompts.every(p => /\\[\\d+\\]/.test(p.textContent));
}"""


def test_quick_review_notebook_runs_and_follows_a_slider(lab, chromium, tmp_path):
    from playwright.sync_api import sync_playwright

    shot = tmp_path / "quick_review_browser.png"
    blocked, page_errors = [], []
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=chromium, headless=True, args=CHROMIUM_ARGS)
        try:
            context = browser.new_context(viewport={"width": 1600, "height": 1000})
            context.route("**/*", _local_only(blocked))
            page = context.new_page()
            page.set_default_timeout(30_000)
            page.on("pageerror", lambda exc: page_errors.append(str(exc)))
            try:
                _drive(page, lab, shot)
            except BaseException:
                fail_shot = tmp_path / "quick_review_browser_failure.png"
                page.screenshot(path=fail_shot)
                print(f"failure screenshot: {fail_shot}\nserver log:\n{_log_tail(lab['log'])}")
                raise
            finally:
                if blocked:
                    print("requests to hosts other than 127.0.0.1 (aborted):", *blocked, sep="\n  ")
                if page_errors:
                    print("uncaught page errors:", *page_errors, sep="\n  ")
        finally:
            browser.close()
    print(f"screenshot: {shot}")


def _drive(page, lab, shot):
    baseline_gci = _core_gci()

    page.goto(f"{lab['base']}/lab/tree/{NOTEBOOK}?token={lab['token']}")
    page.locator(".jp-Notebook").wait_for(timeout=60_000)
    kernel_idle = page.locator(".jp-StatusBar-Widget").get_by_text(re.compile(r"\| Idle"))
    kernel_idle.wait_for(timeout=90_000)

    # the saved outputs go first, so that whatever widget shows up afterwards is live
    _menu(page, "Edit", "Clear Outputs of All Cells")
    notebook = page.locator(".jp-Notebook")
    _wait_until(lambda: notebook.locator(".jp-OutputArea-output").count() == 0, 15,
                lambda: "the saved outputs did not clear")
    assert notebook.locator(".widget-image").count() == 0

    _menu(page, "Run", "Run All Cells")
    # the live map panel: the VBox holding the scores table; its map is the Image child
    panel = notebook.locator(".widget-vbox:has(> .widget-html .ir-scores)")
    panel_map = panel.locator("> .widget-image")
    slider = notebook.locator(".widget-slider", has_text=SLIDER_LABEL)
    panel_map.wait_for(state="visible", timeout=120_000)
    slider.wait_for(state="visible", timeout=30_000)
    page.wait_for_function(_ALL_CELLS_RAN, timeout=120_000)
    kernel_idle.wait_for(timeout=60_000)

    gci_cell = panel.locator("td.ir-score[data-score='gci']")
    gci_before = gci_cell.inner_text().strip()
    src_before = panel_map.get_attribute("src") or ""
    assert src_before.startswith(("blob:", "data:image/png")), src_before[:60]
    # the live readout shows the core's score of the design as loaded
    assert float(gci_before) == pytest.approx(baseline_gci, abs=GCI_DISPLAY_TOL)

    # move the slider from the keyboard (values apply on release, i.e. per key press)
    handle = slider.locator(".noUi-handle")
    handle.scroll_into_view_if_needed()
    length_before_mm = float(handle.get_attribute("aria-valuenow"))
    handle.focus()
    for _ in range(3):
        handle.press("PageDown")
    length_after_mm = float(handle.get_attribute("aria-valuenow"))
    assert length_after_mm < length_before_mm
    expected_gci = _core_gci(length_after_mm / 1000.0)     # while the kernel recomputes

    _wait_until(lambda: (panel_map.get_attribute("src") != src_before
                         and gci_cell.inner_text().strip() != gci_before), 60,
                lambda: f"map src and gci readout did not both change (gci {gci_before!r})")
    # several key presses queue several recomputes: wait for the one of the final value
    _wait_until(lambda: abs(float(gci_cell.inner_text()) - expected_gci) <= GCI_DISPLAY_TOL, 60,
                lambda: (f"gci readout {gci_cell.inner_text().strip()} never matched the core's "
                         f"{expected_gci:.4f} for a shoulder link of {length_after_mm} mm"))
    kernel_idle.wait_for(timeout=60_000)
    assert panel_map.is_visible()
    assert (panel_map.get_attribute("src") or "").startswith(("blob:", "data:image/png"))

    visible_errors = page.locator(".ir-error:visible")
    assert visible_errors.count() == 0, visible_errors.all_inner_texts()
    stderr = notebook.locator(
        ".jp-OutputArea-output[data-mime-type='application/vnd.jupyter.stderr']")
    tracebacks = [t for t in stderr.all_inner_texts() if "Traceback" in t]
    assert not tracebacks, tracebacks[0][-2000:]

    panel.scroll_into_view_if_needed()
    page.screenshot(path=shot)
