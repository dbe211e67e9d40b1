"""``check``: read a project file and say what it holds; its problems come as an error."""

from __future__ import annotations

from ..project import load_project

__all__ = ["run_check"]


def run_check(project: str) -> None:
    """Load a project file and print one line with what it holds.

    A file with problems raises :class:`layout.project.ProjectFileError`, which lists them all;
    :func:`layout.cli.main` prints the list and exits with status 1.

    Parameters
    ----------
    project : str
        The project file.
    """
    loaded = load_project(project)
    print(f"{project}: no problems; {sum(len(b.faces) for b in loaded.buildings)} "
          f"roof faces, {len(loaded.obstructions)} obstructions, "
          f"{len(loaded.survey)} survey readings")
