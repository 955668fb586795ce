"""The walkthrough notebook runs from top to bottom (so it never rots)."""

import os

import pytest

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
NOTEBOOKS = os.path.join(ROOT, "notebooks")


@pytest.mark.parametrize("name", sorted(f for f in os.listdir(NOTEBOOKS) if f.endswith(".ipynb")))
def test_notebook_executes(name, monkeypatch):
    # the kernel imports this checkout's poreprobe, as the tests do (not another install)
    monkeypatch.setenv(
        "PYTHONPATH", os.pathsep.join(filter(None, [ROOT, os.environ.get("PYTHONPATH")]))
    )
    nbformat = pytest.importorskip("nbformat")
    nbclient = pytest.importorskip("nbclient")
    nb = nbformat.read(os.path.join(NOTEBOOKS, name), as_version=4)
    client = nbclient.NotebookClient(
        nb, timeout=300, kernel_name="python3", resources={"metadata": {"path": NOTEBOOKS}}
    )
    client.execute()
    errors = [
        out
        for cell in nb.cells
        if cell.cell_type == "code"
        for out in cell.get("outputs", [])
        if out.get("output_type") == "error"
    ]
    assert not errors
    text = "".join(
        out.get("text", "")
        for cell in nb.cells
        if cell.cell_type == "code"
        for out in cell.get("outputs", [])
    )
    assert "narrowest" in text and "pS" in text
