"""The HTML report opens offline: nothing loaded from the network, every image embedded.

What is checked, and against what:
- the page written by ``inertia-review report`` has no script, stylesheet, image, font or
  import with a remote address (no ``src=``/``href=``/``url()``/``@import`` pointing at http(s),
  and no ``http://`` / ``https://`` text at all), no ``<script src=...>`` of any kind, and no
  widget state or widget-view JSON that only a network-loaded widget manager could draw;
- every ``image/png`` output of the notebook (read back with nbformat, independent of the
  exporter) is in the page, byte for byte, as a ``data:image/png;base64,...`` URI;
- ``--no-input`` hides every code source and keeps the outputs; without it the sources show;
- ``--no-execute`` renders the saved outputs as they are (no kernel: an output that a run would
  change stays as saved);
- the saved review notebooks render this way too (``--no-execute``, their saved figures);
- in Debian's headless Chromium (through playwright), the quick review's report opened from
  ``file://`` with every other request aborted makes no request, fails none, raises no script
  error and decodes every image (marked ``browser``; skipped when /usr/bin/chromium is missing).

The small notebooks are written here (invented numbers); the saved notebooks are the invented
Kestrel Optics demo reviews.
"""

import re
from pathlib import Path

import nbformat
import pytest
from nbformat.v4 import new_code_cell, new_markdown_cell, new_notebook

from inertia_review.review import _notebooks
from inertia_review.review._cli import main

ROOT = Path(__file__).resolve().parents[1]
SOURCE_MARK = "source_marker_q7"              # appears only in the code, never in an output


def _remote_loads(page):
    """Every place in the page where a browser would fetch something from the network."""
    found = re.findall(r"<script[^>]*\bsrc\s*=", page, re.I)
    found += re.findall(r"""(?:src|href)\s*=\s*["']?\s*(?:https?:)?//[^"'\s>]*""", page, re.I)
    found += re.findall(r"""url\(\s*["']?\s*(?:https?:)?//[^)]*\)""", page, re.I)
    found += re.findall(r"@import", page, re.I)
    found += re.findall(r"https?://\S{0,60}", page, re.I)
    return found


def _pngs(nb):
    return [o["data"]["image/png"].replace("\n", "") for c in nb.cells if c.cell_type == "code"
            for o in c.get("outputs", []) if "image/png" in o.get("data", {})]


def _page_pngs(page):
    return set(re.findall(r"data:image/png;base64,([A-Za-z0-9+/=]+)", page))


@pytest.fixture(scope="module")
def executed(tmp_path_factory):
    """A small review notebook with text, two figures and a live widget, executed once."""
    folder = tmp_path_factory.mktemp("report")
    nb = new_notebook(cells=[
        new_markdown_cell("# Offline report test (invented numbers)"),
        new_code_cell(f"{SOURCE_MARK} = 'x'\nprint('report marker 42.125 kg')"),
        new_code_cell("%matplotlib inline\nimport matplotlib.pyplot as plt\n"
                      "fig, ax = plt.subplots()\nax.plot([0, 1, 2], [0, 1, 4])\nplt.show()"),
        new_code_cell("import ipywidgets\nipywidgets.IntSlider(value=3, description='links')"),
        new_code_cell("fig, ax = plt.subplots()\nax.bar([0, 1], [2, 1])\nplt.show()"),
    ])
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3",
                                 "language": "python"}
    path = folder / "review.ipynb"
    nbformat.write(nb, path)
    done = _notebooks.execute_notebook(path)
    nbformat.write(done, path)
    return path


def test_executed_fixture_has_what_the_report_must_handle(executed):
    nb = nbformat.read(executed, as_version=4)
    assert len(_pngs(nb)) == 2
    views = [o for c in nb.cells for o in c.get("outputs", [])
             if _notebooks.WIDGET_VIEW in o.get("data", {})]
    assert len(views) == 1 and "widgets" in nb.metadata     # a live view with its state


def test_report_loads_nothing_from_the_network_and_embeds_every_image(executed, tmp_path):
    out = tmp_path / "review.html"
    assert main(["report", "--no-execute", str(executed), "-o", str(out)]) == 0
    page = out.read_text(encoding="utf-8")
    assert _remote_loads(page) == []
    nb = nbformat.read(executed, as_version=4)
    assert set(_pngs(nb)) <= _page_pngs(page)
    assert "report marker 42.125 kg" in page
    assert SOURCE_MARK in page                                  # code shown by default
    assert "widget-view+json" not in page and "widget-state+json" not in page
    assert _notebooks.WIDGET_NOTE.split(":")[0] in page        # the live view is named, not blank
    assert nbformat.read(executed, as_version=4) == nb          # the notebook is not changed


def test_no_input_hides_code_and_keeps_outputs(executed, tmp_path):
    out = tmp_path / "meeting.html"
    assert main(["report", "--no-execute", "--no-input", str(executed), "-o", str(out)]) == 0
    page = out.read_text(encoding="utf-8")
    assert SOURCE_MARK not in page and "plt.subplots" not in page
    assert "report marker 42.125 kg" in page
    assert set(_pngs(nbformat.read(executed, as_version=4))) <= _page_pngs(page)
    assert _remote_loads(page) == []


def test_no_execute_keeps_the_saved_outputs(executed, tmp_path):
    nb = nbformat.read(executed, as_version=4)
    nb.cells[1].outputs[0]["text"] = "saved output 7.5 kg\n"   # a run would print 42.125 again
    saved = tmp_path / "saved.ipynb"
    nbformat.write(nb, saved)
    _notebooks.write_report(saved, tmp_path / "saved.html", execute=False, no_input=True)
    page = (tmp_path / "saved.html").read_text(encoding="utf-8")
    assert "saved output 7.5 kg" in page and "report marker 42.125 kg" not in page


def test_offline_copy_drops_widget_state_and_keeps_other_parts():
    nb = new_notebook(cells=[new_code_cell("w")])
    nb.metadata["widgets"] = {"application/vnd.jupyter.widget-state+json": {"state": {}}}
    nb.cells[0].outputs = [nbformat.v4.new_output("display_data", data={
        _notebooks.WIDGET_VIEW: {"model_id": "abc"}, "text/plain": "IntSlider(value=3)",
        "image/png": "iVBORw0KGgo="})]
    clean = _notebooks.offline_copy(nb)
    assert "widgets" not in clean.metadata and "widgets" in nb.metadata
    assert clean.cells[0].outputs[0]["data"] == {"text/plain": "IntSlider(value=3)",
                                                 "image/png": "iVBORw0KGgo="}


@pytest.mark.parametrize("name", sorted(p.name for p in (ROOT / "notebooks").glob("*.ipynb")))
def test_saved_review_notebooks_render_offline(name, tmp_path):
    path = ROOT / "notebooks" / name
    out = _notebooks.write_report(path, tmp_path / "r.html", execute=False, no_input=True)
    page = out.read_text(encoding="utf-8")
    assert _remote_loads(page) == []
    assert set(_pngs(nbformat.read(path, as_version=4))) <= _page_pngs(page)
    assert "import inertia_review" not in page


@pytest.mark.browser
def test_report_in_a_browser_with_the_network_blocked(tmp_path):
    """Headless Chromium opens the saved quick review's report from file:// with every non-file
    request aborted: no request is made or fails, no script error, every image is decoded."""
    chromium = Path("/usr/bin/chromium")
    if not chromium.exists():
        pytest.skip(f"{chromium} is missing (apt-get install -y chromium)")
    sync_api = pytest.importorskip("playwright.sync_api")
    path = ROOT / "notebooks" / "01_quick_review.ipynb"
    out = _notebooks.write_report(path, tmp_path / "review.html", execute=False, no_input=True)
    n_png = len(_pngs(nbformat.read(path, as_version=4)))
    assert n_png >= 1
    blocked, failed, errors = [], [], []

    def only_files(route):
        if route.request.url.startswith(("file:", "data:")):
            route.continue_()
        else:
            blocked.append(route.request.url)
            route.abort()

    with sync_api.sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=str(chromium), headless=True,
                                     args=["--no-sandbox", "--disable-gpu", "--headless",
                                           "--disable-background-networking", "--no-first-run"])
        try:
            page = browser.new_page()
            page.route("**/*", only_files)
            page.on("requestfailed", lambda r: failed.append(r.url))
            page.on("pageerror", lambda e: errors.append(str(e)))
            page.goto(out.as_uri(), wait_until="load")
            sizes = page.eval_on_selector_all(
                "img", "els => els.map(e => [e.complete, e.naturalWidth, e.naturalHeight])")
            # printed text (the caution, the records) wraps between words: no word is cut at
            # the right edge, and no output is wider than the page
            wraps = page.eval_on_selector_all(
                ".jp-OutputArea-output pre",
                "els => els.map(e => [getComputedStyle(e).wordBreak, getComputedStyle(e).whiteSpace,"
                " e.scrollWidth <= e.clientWidth + 1])")
        finally:
            browser.close()
    assert wraps and all(w == ["normal", "pre-wrap", True] for w in wraps), wraps
    assert blocked == [] and failed == [] and errors == []
    assert len(sizes) >= n_png
    assert all(done and w > 0 and h > 0 for done, w, h in sizes), sizes


def test_collapsed_record_cells_are_folded_in_the_report(executed, tmp_path):
    """A cell whose outputs are collapsed in the notebook (the nbval-checked record) is folded
    behind a <details> element in the report; other outputs stay open."""
    nb = nbformat.read(executed, as_version=4)
    nb.cells[1].metadata["jupyter"] = {"outputs_hidden": True}
    folded = tmp_path / "folded.ipynb"
    nbformat.write(nb, folded)
    _notebooks.write_report(folded, tmp_path / "folded.html", execute=False)
    page = (tmp_path / "folded.html").read_text(encoding="utf-8")
    details = re.findall(r'<details class="ir-collapsed-record">(.*?)</details>', page, re.S)
    assert len(details) == 1
    assert "report marker 42.125 kg" in details[0]
    assert all(png not in details[0] for png in _pngs(nb))
