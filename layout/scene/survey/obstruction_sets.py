"""Obstruction sets of a whole survey: the nominal set at a year, and sets drawn from tolerances.

A set holds one obstruction per survey entry, in the order of the entries. Trees grow by their
own rate (:mod:`layout.scene.survey.growth`); draws come from
:func:`layout.scene.survey.sampling.sample_entry`, one generator serving every entry in order.
"""

from __future__ import annotations

import numpy as np

from ...errors import check_whole
from .entry import SurveyEntry, _check_entries
from .geometry import build_obstruction
from .growth import grown_tree
from .sampling import _check_count, sample_entry

__all__ = ["obstructions_at_year", "sample_obstructions"]


def _check_year(year) -> int:
    return check_whole("year", year, 0, 100, problem="must be a whole number of years")


def sample_obstructions(entries, n: int, seed=None, *, distribution: str = "normal",
                        hemisphere: str = "north") -> list[list]:
    """Draw ``n`` obstruction sets, one obstruction per entry in each set.

    Parameters
    ----------
    entries : sequence of SurveyEntry
        The surveyed obstructions.
    n : int
        Number of sets, at least 1.
    seed : int, numpy.random.Generator or None
        One generator serves all entries, in order, so a seed gives the same sets every time.
    distribution, hemisphere
        As in :func:`~layout.scene.survey.sampling.sample_entry`.

    Returns
    -------
    list of n lists
        Set ``k`` holds the ``k``-th draw of every entry, in the order of ``entries``.
    """
    entries = _check_entries(entries)
    n = _check_count("n", n)
    rng = seed if isinstance(seed, np.random.Generator) else np.random.default_rng(seed)
    per_entry = [sample_entry(e, n, rng, distribution=distribution, hemisphere=hemisphere)
                 for e in entries]
    return [[draws[k] for draws in per_entry] for k in range(n)]


def _grow_set(entries: list[SurveyEntry], obstructions: list, year: int,
              widen_crown: bool = True) -> list:
    if year == 0:
        return list(obstructions)
    return [grown_tree(ob, year, growth=e.growth_m_per_yr, widen_crown=widen_crown)
            if e.kind == "tree" and e.growth_m_per_yr is not None else ob
            for e, ob in zip(entries, obstructions, strict=True)]


def obstructions_at_year(entries, year: int = 0, *, widen_crown: bool = True,
                         hemisphere: str = "north") -> list:
    """Build the nominal obstructions with every tree grown ``year`` years by its own rate.

    Trees without a growth rate, and every other kind, stay as surveyed.

    Parameters
    ----------
    entries : sequence of SurveyEntry
        The surveyed obstructions.
    year : int, default 0
        Years after the survey, 0 to 100.
    widen_crown : bool, keyword-only, default True
        Grow crown radii in proportion to the height (:func:`grown_tree`).
    hemisphere : {"north", "south"}, keyword-only
        For deciduous trees.

    Returns
    -------
    list
        One obstruction per entry, in order.
    """
    entries = _check_entries(entries)
    year = _check_year(year)
    return _grow_set(entries, [build_obstruction(e, hemisphere=hemisphere) for e in entries],
                     year, widen_crown)
