"""Executing review notebooks: rebaselining and self-contained HTML reviews (private)."""

import difflib
from pathlib import Path

from ..model._design_io import write_text_atomic

__all__ = ["execute_notebook", "text_outputs", "rebaseline", "write_report"]


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


def write_report(path, output, *, execute=True):
    """Write a self-contained HTML review of a notebook (images embedded), executed first."""
    import nbformat
    from nbconvert import HTMLExporter

    nb = execute_notebook(path) if execute else nbformat.read(Path(path), as_version=4)
    exporter = HTMLExporter(template_name="lab")
    exporter.embed_images = True
    body, _ = exporter.from_notebook_node(nb)
    write_text_atomic(output, body)
    return Path(output)
