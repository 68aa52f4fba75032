"""The walkthrough notebook runs from top to bottom, on a short window, so it cannot rot."""

from __future__ import annotations

import os

import nbformat
from nbclient import NotebookClient

from tests.conftest import ROOT

NOTEBOOK = ROOT / "notebooks" / "station-choice.ipynb"


def test_walkthrough_notebook_executes(monkeypatch):
    monkeypatch.setenv("PLANNER_NOTEBOOK_DAYS", "1")
    # The kernel is a new process: make the package importable even without an install.
    monkeypatch.setenv("PYTHONPATH", os.pathsep.join(filter(None, [str(ROOT), os.environ.get("PYTHONPATH")])))
    notebook = nbformat.read(NOTEBOOK, as_version=4)
    client = NotebookClient(notebook, timeout=600, kernel_name="python3", resources={"metadata": {"path": str(NOTEBOOK.parent)}})
    client.execute()
    outputs = [o for cell in notebook.cells if cell.cell_type == "code" for o in cell.get("outputs", [])]
    assert not [o for o in outputs if o.get("output_type") == "error"]
    text = "".join(o.get("text", "") for o in outputs if o.get("output_type") == "stream")
    assert "Recommended:" in text  # the recommendation was computed and printed
    images = [o for o in outputs if "image/png" in o.get("data", {})]
    assert len(images) >= 4  # the figures render inline
