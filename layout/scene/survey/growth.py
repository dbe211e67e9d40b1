"""Tree growth: growth classes and rates, and a surveyed tree as it stands years later.

Growth classes (REFERENCES.md "tree growth classes", state forestry extension tables, common
practice): slow ≤ 0.30 m/yr (12 in), medium 0.30–0.61 m/yr (12–24 in), fast ≥ 0.61 m/yr
(24 in). :data:`GROWTH_CLASS_RATES_M_PER_YR` takes the middle of a one-foot-wide band for each
class: 6, 18 and 30 inches a year (0.152, 0.457, 0.762 m/yr); the fast class has no upper
limit, so its band is taken as wide as the others. Give a number for a known species. Growth is
linear over the years asked for, optionally capped at a mature height.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

from ...errors import InputError, check_range
from ...units import FOOT_M, INCH_M
from ..obstructions import Tree

__all__ = [
    "GROWTH_CLASS_LIMITS_M_PER_YR",
    "GROWTH_CLASS_RATES_M_PER_YR",
    "PROJECTION_YEARS",
    "SYSTEM_LIFE_YEARS",
    "grown_tree",
    "growth_class",
    "growth_rate",
    "projected_trees",
]

#: Life of a PV system over which tree growth is projected [years] (common practice: the usual
#: module power warranty).
SYSTEM_LIFE_YEARS = 25

#: Years after the survey at which trees are projected by default.
PROJECTION_YEARS = (1, 10, SYSTEM_LIFE_YEARS)

#: Class limits of tree growth [m/yr]: slow up to 1 ft/yr, fast from 2 ft/yr (REFERENCES.md
#: "tree growth classes": 0.30 and 0.61 m/yr, state forestry extension tables).
GROWTH_CLASS_LIMITS_M_PER_YR = (1.0 * FOOT_M, 2.0 * FOOT_M)

#: Representative growth rate per class [m/yr]: the middle of a one-foot band, 6, 18, 30 in/yr.
GROWTH_CLASS_RATES_M_PER_YR = {"slow": 6.0 * INCH_M, "medium": 18.0 * INCH_M,
                               "fast": 30.0 * INCH_M}

_MAX_GROWTH_M_PER_YR = 3.0


def _check_growth(value):
    if value is None:
        return None
    if isinstance(value, str):
        key = value.strip().lower()
        if key not in GROWTH_CLASS_RATES_M_PER_YR:
            raise InputError("growth_m_per_yr", "is not a growth class or a rate", value=value,
                             allowed="slow, medium, fast, or 0 to 3 m/yr")
        return key
    if isinstance(value, bool):
        raise InputError("growth_m_per_yr", "must be a number or a class", value=value,
                         allowed="slow, medium, fast, or 0 to 3 m/yr")
    return check_range("growth_m_per_yr", value, 0.0, _MAX_GROWTH_M_PER_YR, unit="m/yr")


def growth_rate(growth) -> float:
    """Return a growth rate in m/yr from a class name or a number.

    Parameters
    ----------
    growth : {"slow", "medium", "fast"} or float
        A growth class (:data:`GROWTH_CLASS_RATES_M_PER_YR`) or a rate [m/yr], 0 to 3.

    Returns
    -------
    float
        Height growth [m/yr].
    """
    value = _check_growth(growth)
    if value is None:
        raise InputError("growth_m_per_yr", "is missing", allowed="slow, medium, fast, or m/yr")
    return GROWTH_CLASS_RATES_M_PER_YR[value] if isinstance(value, str) else value


def growth_class(rate_m_per_yr) -> str:
    """Return the growth class of a rate: ``"slow"``, ``"medium"`` or ``"fast"``.

    Slow up to 1 ft/yr (0.3048 m), fast from 2 ft/yr (0.6096 m), medium between
    (:data:`GROWTH_CLASS_LIMITS_M_PER_YR`).

    Parameters
    ----------
    rate_m_per_yr : float
        Height growth [m/yr].
    """
    rate = growth_rate(rate_m_per_yr)
    slow_max, fast_min = GROWTH_CLASS_LIMITS_M_PER_YR
    if rate <= slow_max:
        return "slow"
    return "fast" if rate >= fast_min else "medium"


def grown_tree(tree: Tree, years, *, growth=None, widen_crown: bool = True,
               max_height_m: float | None = None) -> Tree:
    """Return a tree as it stands ``years`` after it was surveyed.

    The height grows linearly by ``rate · years``, up to ``max_height_m`` if given; the crown
    radius grows in proportion to the height (the tree keeps its width-to-height ratio) unless
    ``widen_crown`` is False; the crown base, trunk, position, transmittance and name stay.

    Parameters
    ----------
    tree : Tree
        The tree as surveyed.
    years : float
        Years after the survey, 0 to 100.
    growth : {"slow", "medium", "fast"} or float or None, keyword-only
        Growth class or rate [m/yr] (:func:`growth_rate`); None (the default) takes the
        tree's own ``growth_m_per_yr``.
    widen_crown : bool, keyword-only, default True
        Scale the crown radius with the height.
    max_height_m : float or None, keyword-only
        Mature height the tree does not outgrow [m]; a tree already taller keeps its height.
        None takes the tree's own ``mature_height_m`` (no cap when that is None too).

    Returns
    -------
    Tree
    """
    if not isinstance(tree, Tree):
        raise InputError("tree", "is not a Tree", value=type(tree).__name__)
    years = check_range("years", years, 0.0, 100.0, unit="years")
    rate = tree.growth_m_per_yr if growth is None else growth_rate(growth)
    height = tree.height + rate * years
    if max_height_m is None:
        max_height_m = tree.mature_height_m
    if max_height_m is not None:
        cap = check_range("max_height_m", max_height_m, 0.0, 200.0, unit="m", low_open=True)
        height = min(height, max(cap, tree.height))
    radius = tree.crown_radius * height / tree.height if widen_crown else tree.crown_radius
    return replace(tree, height=height, crown_radius=radius)


def projected_trees(tree: Tree, *, growth, years: Sequence[int] = PROJECTION_YEARS,
                    widen_crown: bool = True, max_height_m: float | None = None
                    ) -> dict[int, Tree]:
    """Return the tree at each of ``years`` after the survey (default 1, 10 and 25).

    Parameters
    ----------
    tree : Tree
        The tree as surveyed.
    growth : {"slow", "medium", "fast"} or float, keyword-only
        Growth class or rate [m/yr].
    years : sequence of int, keyword-only
        Years after the survey.
    widen_crown, max_height_m
        As in :func:`grown_tree`.

    Returns
    -------
    dict of int to Tree
    """
    return {int(y): grown_tree(tree, y, growth=growth, widen_crown=widen_crown,
                               max_height_m=max_height_m) for y in years}
