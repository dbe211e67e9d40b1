"""Execute every example notebook end to end, as a new user would run them."""

from pathlib import Path

import nbformat
import pytest
from nbclient import NotebookClient

NOTEBOOKS = sorted((Path(__file__).resolve().parents[1] / "example_notebooks").glob("*.ipynb"))


@pytest.mark.notebooks
@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_runs_without_errors(path):
    notebook = nbformat.read(path, as_version=4)
    # Run in the notebook's own folder, as a user opening it would, so that it finds its data
    # files (example_notebooks/data/); the notebooks write nothing there.
    client = NotebookClient(notebook, timeout=600, kernel_name="python3",
                            resources={"metadata": {"path": str(path.parent)}})
    client.execute()  # raises CellExecutionError naming the failing cell
    outputs = [o for cell in notebook.cells if cell.cell_type == "code" for o in cell.outputs]
    assert not [o for o in outputs if o.get("output_type") == "error"]
    assert outputs, "the notebook printed nothing"


def test_there_are_example_notebooks():
    assert NOTEBOOKS
