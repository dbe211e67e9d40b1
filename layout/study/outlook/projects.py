"""The projects an outlook evaluates: the survey as obstructions, a year of growth, draws.

Part of :mod:`layout.study.outlook`, whose notes say how a sampled project is built and
which year is which.
"""

from __future__ import annotations

import numpy as np

from ...errors import InputError, check_whole
from ...scene.obstructions import Tree
from ...scene.survey import (
    grown_tree,
    sample_obstructions,
)
from ..analysis import Analysis
from .percentiles import DEFAULT_SAMPLES


# --------------------------------------------------------------------------- projects
def _hemisphere(project) -> str:
    return "north" if project.site.latitude >= 0 else "south"


def with_surveyed(project, surveyed=None):
    """Return the project with its surveyed obstructions made plain obstructions.

    Parameters
    ----------
    project : layout.project.Project
    surveyed : sequence or None
        One obstruction per survey entry, in the order of ``project.survey`` (a draw from
        :func:`layout.scene.survey.sample_obstructions`); None takes the nominal ones.

    Returns
    -------
    layout.project.Project
        ``obstructions`` = the project's obstructions followed by ``surveyed``, ``survey``
        empty: the same scene order as the project's own
        :attr:`~layout.project.Project.scene_obstructions`.
    """
    if surveyed is None:
        surveyed = project.scene_obstructions[len(project.obstructions):]
    surveyed = tuple(surveyed)
    if len(surveyed) != len(project.survey):
        raise InputError("surveyed", "needs one obstruction per survey entry",
                         value=len(surveyed), allowed=str(len(project.survey)))
    return project.with_changes(obstructions=project.obstructions + surveyed, survey=())


def _grow_all(obstructions, year: float, widen_crown: bool) -> tuple:
    return tuple(grown_tree(ob, year, widen_crown=widen_crown)
                 if isinstance(ob, Tree) and ob.growth_m_per_yr > 0 and year > 0 else ob
                 for ob in obstructions)


def check_year(field: str, year) -> int:
    """Check an operating year, a whole number 0 to 100; errors name ``field``."""
    return check_whole(field, year, 0, 100, problem="must be a whole number of years")


def project_at_year(project, year: int, *, widen_crown: bool = True, surveyed=None):
    """Return the project as it stands ``year`` years after the survey.

    Every :class:`~layout.scene.obstructions.Tree` of the scene, surveyed or entered, grows by its
    own ``growth_m_per_yr`` (:func:`layout.scene.survey.grown_tree`); other obstructions stay.

    Parameters
    ----------
    project : layout.project.Project
    year : int
        Years after the survey, 0 to 100.
    widen_crown : bool, keyword-only, default True
        Crowns widen in proportion to the height.
    surveyed : sequence or None, keyword-only
        As in :func:`with_surveyed`.

    Returns
    -------
    layout.project.Project
        Survey made plain obstructions (:func:`with_surveyed`), trees grown.
    """
    year = check_year("year", year)
    flat = with_surveyed(project, surveyed)
    if year == 0:
        return flat
    return flat.with_changes(obstructions=_grow_all(flat.obstructions, year, widen_crown))


def sampled_projects(project, samples: int = DEFAULT_SAMPLES, *, seed: int | None = 0,
                     distribution: str = "normal", year: int = 0,
                     widen_crown: bool = True) -> list:
    """Return the projects of ``samples`` draws of the survey readings.

    The draws are those of :func:`layout.scene.survey.loss_range` with the same seed: one generator
    ``numpy.random.default_rng(seed)`` serves every entry in order
    (:func:`layout.scene.survey.sample_obstructions`).

    Parameters
    ----------
    project : layout.project.Project
        With at least one survey entry.
    samples : int, default :data:`DEFAULT_SAMPLES`
        Number of draws, at least 1.
    seed : int or None, keyword-only, default 0
        Seed of the generator.
    distribution : {"normal", "uniform"}, keyword-only
        As in :func:`layout.scene.survey.sample_readings`.
    year : int, keyword-only, default 0
        Years of tree growth applied to every draw (:func:`project_at_year`).
    widen_crown : bool, keyword-only, default True
        As in :func:`project_at_year`.

    Returns
    -------
    list of layout.project.Project
    """
    if not project.survey:
        raise InputError("project.survey", "has no entries to sample",
                         allowed="one or more survey entries")
    rng = np.random.default_rng(seed)
    sets = sample_obstructions(project.survey, samples, rng, distribution=distribution,
                               hemisphere=_hemisphere(project))
    return [project_at_year(project, year, widen_crown=widen_crown, surveyed=s) for s in sets]


def analysis_for(project, analysis, base_dir):
    """Return ``analysis`` brought to ``project``, or a new Analysis of it."""
    if analysis is None:
        return Analysis(project, base_dir=base_dir)
    if not isinstance(analysis, Analysis):
        raise InputError("analysis", "is not an Analysis", value=type(analysis).__name__)
    return analysis


def tree_labels(obstructions) -> list[tuple[int, str]]:
    """Return (index, label) of each tree: its name, or 'tree N' when unnamed or repeated."""
    trees = [(i, ob) for i, ob in enumerate(obstructions) if isinstance(ob, Tree)]
    names = [ob.name for _, ob in trees]
    return [(i, ob.name if ob.name and names.count(ob.name) == 1 else f"tree {i}")
            for i, ob in trees]
