"""The notebooks' sources: each stored .ipynb is paired with a jupytext percent-format .py, and they agree.

The .py files are what reviewers read and ruff lints; the .ipynb files are what JupyterLab opens
(with jupytext installed, saving either updates the other). ``jupytext --sync notebooks/*.ipynb``
brings a pair back in step after editing one side by hand. A notebook is stored without outputs.
"""

from __future__ import annotations

from pathlib import Path

import jupytext
import nbformat
import pytest

NOTEBOOK_DIR = Path(__file__).resolve().parent.parent / "notebooks"
NOTEBOOKS = sorted(NOTEBOOK_DIR.glob("*.ipynb"))


def _cells(notebook) -> list[tuple[str, str]]:
    return [(cell.cell_type, cell.source.strip()) for cell in notebook.cells]


def test_there_are_notebooks():
    assert len(NOTEBOOKS) >= 5


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_matches_its_percent_source(path):
    source = path.with_suffix(".py")
    assert source.exists(), f"{path.name} has no paired {source.name} (jupytext --set-formats ipynb,py:percent)"
    stored = nbformat.read(path, as_version=4)
    paired = jupytext.read(source)
    assert _cells(stored) == _cells(paired), f"{path.name} and {source.name} differ: run jupytext --sync {path}"
    assert stored.metadata.get("jupytext", {}).get("formats") == "ipynb,py:percent"


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_is_stored_clean(path):
    stored = nbformat.read(path, as_version=4)
    assert not any(cell.get("outputs") or cell.get("execution_count") for cell in stored.cells if cell.cell_type == "code")
