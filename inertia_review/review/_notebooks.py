"""Executing review notebooks: rebaselining and self-contained HTML reviews (private)."""

import difflib
from pathlib import Path

from ..model._design_io import write_text_atomic

__all__ = ["execute_notebook", "text_outputs", "rebaseline", "write_report", "offline_copy"]


def execute_notebook(path, *, timeout=600, kernel_name="python3"):
    """Run every cell of a notebook (in its own folder) and return the executed notebook.

    No per-cell timing metadata is recorded (``record_timing=False``).
    """
    import nbformat
    from nbclient import NotebookClient

    path = Path(path)
    nb = nbformat.read(path, as_version=4)
    # record_timing=False: no per-cell execution timestamps, so saved notebooks diff cleanly
    client = NotebookClient(nb, timeout=timeout, kernel_name=kernel_name, record_timing=False,
                            resources={"metadata": {"path": str(path.parent.resolve())}})
    client.execute()
    return nb


def text_outputs(nb):
    """The text of every cell's outputs, one string per code cell (images left out)."""
    out = []
    for cell in nb.cells:
        if cell.cell_type != "code":
            continue
        parts = []
        for output in cell.get("outputs", []):
            if output.get("output_type") == "stream":
                parts.append(output.get("text", ""))
            elif "data" in output and "text/plain" in output["data"]:
                parts.append(output["data"]["text/plain"])
            elif output.get("output_type") == "error":
                parts.append(f"{output.get('ename')}: {output.get('evalue')}")
        out.append("".join(parts))
    return out


def rebaseline(path, *, accept=True, stream=print):
    """Re-execute a notebook, show what changed in the checked outputs, then save it.

    Only cells marked ``# NBVAL_CHECK_OUTPUT`` are compared (those nbval guards). With
    ``accept=False`` nothing is written. Returns the list of changed cell numbers.
    """
    import nbformat

    path = Path(path)
    old = nbformat.read(path, as_version=4)
    new = execute_notebook(path)
    old_text, new_text = text_outputs(old), text_outputs(new)
    code_cells = [c for c in new.cells if c.cell_type == "code"]
    changed = []
    for i, cell in enumerate(code_cells):
        if "NBVAL_CHECK_OUTPUT" not in cell.source:
            continue
        before = old_text[i] if i < len(old_text) else ""
        if before != new_text[i]:
            changed.append(i)
            stream(f"--- cell {i} (checked output) changed:")
            for line in difflib.unified_diff(before.splitlines(), new_text[i].splitlines(),
                                             "accepted", "new", lineterm="", n=1):
                stream(line)
    if not changed:
        stream(f"{path}: no checked output changed")
    if accept:
        write_text_atomic(path, nbformat.writes(new))
        stream(f"{path}: saved with the new outputs ({len(changed)} checked cell(s) changed)")
    return changed


WIDGET_VIEW = "application/vnd.jupyter.widget-view+json"
WIDGET_NOTE = ("[live widget view: it needs a running Jupyter kernel and is not part of this "
               "offline report; the notebook's snapshot cells show its state]")

# The lab template without anything fetched from the network: no require.js, no MathJax, no
# mermaid and no widget manager (all of them are script tags pointing at a CDN).
_OFFLINE_TEMPLATE = """{%- extends 'lab/index.html.j2' -%}
{%- block html_head_js -%}{%- endblock html_head_js -%}
{%- block jupyter_widgets -%}{%- endblock jupyter_widgets -%}
{%- block html_head_js_mathjax -%}{%- endblock html_head_js_mathjax -%}
{%- block html_head_js_mermaidjs -%}{%- endblock html_head_js_mermaidjs -%}
{%- block extra_css -%}
{{ super() }}
<style>
/* printed text (cautions, records) wraps between words, not inside them */
.jp-OutputArea-output pre { white-space: pre-wrap !important; word-break: normal !important; overflow-wrap: break-word !important; }
</style>
{%- endblock extra_css -%}
{%- block outputs -%}
{%- if cell.metadata.get('jupyter', {}).get('outputs_hidden') -%}
<details class="ir-collapsed-record"><summary>checked record (collapsed in the notebook; click to
expand)</summary>{{ super() }}</details>
{%- else -%}{{ super() }}{%- endif -%}
{%- endblock outputs -%}
"""


def offline_copy(nb):
    """A copy of the notebook without live widget state, for a report that opens offline.

    Each widget-view output loses its ``application/vnd.jupyter.widget-view+json`` part (which
    only a widget manager loaded from the network could draw); its other parts (images, HTML,
    text) stay, and a view that had nothing else becomes a short text note. The notebook's
    widget state (``metadata.widgets``) is dropped.
    """
    import copy

    nb = copy.deepcopy(nb)
    nb.metadata.pop("widgets", None)
    for cell in nb.cells:
        for output in cell.get("outputs", []):
            data = output.get("data")
            if not data or WIDGET_VIEW not in data:
                continue
            del data[WIDGET_VIEW]
            if set(data) <= {"text/plain"}:          # the bare widget repr says nothing offline
                data.clear()
                data["text/plain"] = WIDGET_NOTE
    return nb


def _strip_style_comments(html):
    """Drop the comments of inline ``<style>`` blocks (the theme's credits carry web addresses)."""
    import re

    comment = re.compile(r"/\*.*?\*/", re.S)
    return re.sub(r"(<style[^>]*>)(.*?)(</style>)",
                  lambda m: m.group(1) + comment.sub("", m.group(2)) + m.group(3), html, flags=re.S)


def write_report(path, output, *, execute=True, no_input=False):
    """Write a self-contained HTML review of a notebook that opens offline.

    Parameters
    ----------
    path : path-like
        The notebook (``.ipynb``).
    output : path-like
        The HTML file to write (atomically).
    execute : bool
        Run the notebook in a fresh kernel first (default); ``False`` renders the saved
        notebook with its saved outputs as they are.
    no_input : bool
        Hide the code cells' sources and prompts (a page for a review meeting).

    Images are embedded as data URIs; no script, style or font is loaded from the network
    (no require.js, MathJax, mermaid or widget manager); live widget views are replaced as in
    :func:`offline_copy`. TeX in Markdown cells is therefore shown as typed. The notebook
    file itself is not changed.
    """
    import jinja2
    import nbformat
    from nbconvert import HTMLExporter

    nb = execute_notebook(path) if execute else nbformat.read(Path(path), as_version=4)
    exporter = HTMLExporter(template_name="lab",
                            extra_loaders=[jinja2.DictLoader({"offline.html.j2": _OFFLINE_TEMPLATE})],
                            template_file="offline.html.j2")
    exporter.embed_images = True
    if no_input:
        exporter.exclude_input = True
        exporter.exclude_input_prompt = True
        exporter.exclude_output_prompt = True
    body, _ = exporter.from_notebook_node(offline_copy(nb))
    write_text_atomic(output, _strip_style_comments(body))
    return Path(output)
