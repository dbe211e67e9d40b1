"""Execute every example notebook end to end, as a new user would run them, and the planner's.

The planner notebook is package data of ``widgets`` (``python -m widgets`` serves it with
Voila); it is run here from where the package keeps it, found the way the command finds it.
"""

from pathlib import Path

import nbformat
import pytest
from nbclient import NotebookClient

from widgets.__main__ import planner_notebook

EXAMPLES = sorted((Path(__file__).resolve().parents[1] / "example_notebooks").glob("*.ipynb"))
PLANNER = Path(str(planner_notebook()))  # the package is a folder: this is the file itself
NOTEBOOKS = [*EXAMPLES, PLANNER]


@pytest.mark.notebooks
@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_runs_without_errors(path):
    notebook = nbformat.read(path, as_version=4)
    # Run in the notebook's own folder, as a user opening it would (and as Voila runs the
    # planner), so that it finds its data files (example_notebooks/data/); the notebooks
    # write nothing there.
    client = NotebookClient(notebook, timeout=600, kernel_name="python3",
                            resources={"metadata": {"path": str(path.parent)}})
    client.execute()  # raises CellExecutionError naming the failing cell
    outputs = [o for cell in notebook.cells if cell.cell_type == "code" for o in cell.outputs]
    assert not [o for o in outputs if o.get("output_type") == "error"]
    assert outputs, "the notebook printed nothing"


def test_there_are_example_notebooks_and_the_planner_is_packaged():
    assert EXAMPLES
    assert PLANNER.is_file()
    assert PLANNER.parent.parent.name == "widgets"
    assert not (PLANNER.parents[2] / "example_notebooks" / "planner.ipynb").exists()


def test_the_planner_notebook_works_in_the_folder_the_command_names(tmp_path, monkeypatch):
    # Voila starts the kernel in the notebook's folder (inside the installed package); the
    # notebook must move to the folder python -m widgets was started in, which it is told
    # through EAVELINE_WORKDIR, so that relative paths typed in the planner land there.
    monkeypatch.setenv("EAVELINE_WORKDIR", str(tmp_path))
    notebook = nbformat.read(PLANNER, as_version=4)
    notebook.cells.append(nbformat.v4.new_code_cell("import os; print(os.getcwd())"))
    client = NotebookClient(notebook, timeout=600, kernel_name="python3",
                            resources={"metadata": {"path": str(PLANNER.parent)}})
    client.execute()
    printed = notebook.cells[-1].outputs[0]["text"].strip()
    assert Path(printed).resolve() == tmp_path.resolve()
