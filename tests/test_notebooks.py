"""Every notebook runs top to bottom on the demo data (nbclient, a fresh kernel each)."""

from __future__ import annotations

from pathlib import Path

import nbformat
import pytest
from nbclient import NotebookClient

NOTEBOOKS = sorted((Path(__file__).parent.parent / "notebooks").glob("*.ipynb"))


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_runs(path, tmp_path, monkeypatch):
    monkeypatch.setenv("MPLBACKEND", "Agg")
    notebook = nbformat.read(path, as_version=4)
    assert not any(cell.get("outputs") for cell in notebook.cells if cell.cell_type == "code"), "store notebooks clean"
    client = NotebookClient(notebook, timeout=180, kernel_name="python3", resources={"metadata": {"path": str(tmp_path)}})
    # nbclient's stand-in Output widget replies on the shell channel while the cell waits, which can
    # hang an ipywidgets interact cell (nbclient issue 312); without the registry the callbacks'
    # output and errors land in the cell's own outputs, where the check below sees them.
    client.widget_registry = {}
    client.execute()
    errors = [o for c in notebook.cells if c.cell_type == "code" for o in c.outputs if o.output_type == "error"]
    assert not errors
    # warnings reach the reader as status lines (headingref.workbench.with_warnings), not raw stderr blocks
    stderr = [o.text for c in notebook.cells if c.cell_type == "code" for o in c.outputs
              if o.output_type == "stream" and o.name == "stderr"]
    assert not stderr, stderr


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_opens_with_your_inputs(path):
    """The first code cell is the one a user edits, under a "Your inputs" heading (issue 15)."""
    cells = nbformat.read(path, as_version=4).cells
    first_code = next(i for i, c in enumerate(cells) if c.cell_type == "code")
    assert any(c.cell_type == "markdown" and "## Your inputs" in c.source for c in cells[:first_code])
    assert "import ipywidgets" not in cells[first_code].source and "=" in cells[first_code].source
