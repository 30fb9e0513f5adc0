"""Every notebook in notebooks/ runs from top to bottom without a cell error (nbclient, kernel python3).

Each notebook runs in a fresh temporary working directory, so the files it writes stay out of the
repository; the kernel finds this checkout of edl_solver through PYTHONPATH even where the package is
not installed.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import nbformat
import pytest
from nbclient import NotebookClient

from tests.helpers import ROOT

NOTEBOOKS = sorted((ROOT / "notebooks").glob("*.ipynb"))
#: Seconds per cell; the slowest cell (a 300-case map with its boundary) takes a few seconds warm and a
#: little longer when the numba kernels compile in the fresh kernel process.
CELL_TIMEOUT = 300


def test_there_are_notebooks() -> None:
    assert NOTEBOOKS, f"no notebooks in {ROOT / 'notebooks'}"


@pytest.mark.parametrize("notebook", NOTEBOOKS, ids=[path.stem for path in NOTEBOOKS])
def test_notebook_runs_without_errors(notebook: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    # The kernel is a child process: it inherits this environment, run from this interpreter's folder first.
    monkeypatch.setenv("PYTHONPATH", os.pathsep.join(filter(None, (str(ROOT), os.environ.get("PYTHONPATH")))))
    monkeypatch.setenv("PATH", os.pathsep.join((str(Path(sys.executable).parent), os.environ.get("PATH", ""))))
    document = nbformat.read(notebook, as_version=4)
    client = NotebookClient(document, timeout=CELL_TIMEOUT, kernel_name="python3",
                            resources={"metadata": {"path": str(tmp_path)}})
    client.execute()  # raises CellExecutionError, naming the cell and its traceback, on any error
    code_cells = [cell for cell in document.cells if cell.cell_type == "code"]
    assert code_cells and all(cell.get("execution_count") for cell in code_cells), "a code cell did not run"
    errors = [output for cell in code_cells for output in cell.get("outputs", []) if output.output_type == "error"]
    assert not errors, errors
