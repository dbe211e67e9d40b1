"""The project a command works on: a file or the bundled demo, with its command-line overrides."""

from __future__ import annotations

import os
from dataclasses import replace
from pathlib import Path

from ..errors import InputError
from ..project import Project, demo_project_path, load_project

__all__ = ["load_command_project", "with_overrides"]


def load_command_project(path: str | None, demo: bool) -> tuple[Project, Path]:
    """Load the project file, or the demo project; exactly one of the two must be asked for.

    Parameters
    ----------
    path : str or None
        The project file the command line names.
    demo : bool
        ``--demo``: the bundled demo project.

    Returns
    -------
    tuple of (Project, pathlib.Path)
        The project and the folder its relative paths are taken from.
    """
    if demo == (path is not None):
        raise InputError("project", "give a project file or --demo (one of the two)")
    source = demo_project_path() if demo else Path(path)
    return load_project(source), source.parent


def with_overrides(project: Project, *, weather: str | None = None,
                   shade_model: str | None = None) -> Project:
    """Return the project with ``--weather`` and ``--shade-model`` in place of its own.

    Parameters
    ----------
    project : Project
    weather : str, keyword-only, optional
        A weather file; a relative path is taken from the working directory.
    shade_model : str, keyword-only, optional
        A name of :data:`layout.power.electrical.SHADE_MODELS`.

    Returns
    -------
    Project
        ``project`` itself when nothing is overridden.
    """
    energy = project.energy
    if weather:
        energy = replace(energy, weather_file=os.fspath(Path(weather).expanduser().resolve()))
    if shade_model:
        energy = replace(energy, electrical=replace(energy.electrical, shade_model=shade_model))
    return project.with_changes(energy=energy) if energy is not project.energy else project
