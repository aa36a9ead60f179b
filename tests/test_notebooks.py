"""Every notebook in notebooks/ runs top to bottom (nbclient), so the examples cannot rot."""

from __future__ import annotations

from pathlib import Path

import nbformat
import pytest
from nbclient import NotebookClient

NOTEBOOKS = sorted((Path(__file__).parent.parent / "notebooks").glob("*.ipynb"))


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_runs(path):
    nb = nbformat.read(path, as_version=4)
    NotebookClient(
        nb, timeout=300, kernel_name="python3", resources={"metadata": {"path": str(path.parent)}}
    ).execute()
    errors = [
        o for c in nb.cells if c.cell_type == "code" for o in c.get("outputs", []) if o.output_type == "error"
    ]
    assert not errors
    widgets = [
        o
        for c in nb.cells
        if c.cell_type == "code"
        for o in c.get("outputs", [])
        if "application/vnd.jupyter.widget-view+json" in o.get("data", {})
    ]
    assert widgets, "the notebook shows no widget"


def test_demo_notebook_says_the_data_are_synthetic():
    text = (Path(__file__).parent.parent / "notebooks" / "demo.ipynb").read_text()
    assert "synthetic" in text.lower()
