"""Shade loss as a range and over the years: survey tolerances, tree growth, leaves.

Three questions a surveyor's numbers leave open, answered through one
:class:`layout.study.analysis.Analysis` that is kept across the evaluations, so that each one only
ray-tests the obstructions that changed:

:func:`shade_loss_range`
    How much do the tolerances of the field readings move the annual shade loss? The surveyed
    obstructions are drawn from their tolerances (:func:`layout.scene.survey.sample_obstructions`),
    every draw is evaluated, and the percentiles per module and in total are reported with the
    sample count, the seed and the sampling error of the percentiles.
:func:`growth_outlook`
    How does the loss grow as the trees grow over the system's life? Every year of the life is
    evaluated with every tree grown by its own rate, and the energy lost to shade is summed.
:func:`leaf_effect`
    What do the leafless months of deciduous trees give back? Month by month, the loss as
    modelled beside the loss with see-through crowns made opaque all year and made clear.

How a sampled project is built
------------------------------
A project's surveyed obstructions stand in its scene after its own obstructions
(:attr:`layout.project.Project.scene_obstructions`). A *sampled project* is the project with
the survey readings replaced by the obstructions one draw gives: those obstructions are
appended to :attr:`~layout.project.Project.obstructions` and the survey is emptied, so each one
stands in the scene exactly once, in the same place of the caster order as the nominal one
(:func:`with_surveyed`). With the nominal obstructions (no draw) this scene is the project's
own, so the nominal figures are those of the project itself. The sampled project keeps
everything else (roofs, modules, removals, energy options); it is built only to be evaluated,
and its document would lose the readings, so it is never saved in place of the project.

Year convention
---------------
Operating year ``y`` (1 = the first year after the survey) is evaluated with every tree as it
stands ``y`` years after the survey (:func:`layout.scene.survey.grown_tree`, each tree's own
``growth_m_per_yr``), held for the whole year: a conservative choice by half a year of growth.
Year 0 is the scene as surveyed. Module degradation is not modelled unless asked for
(``degradation_pct_per_yr``, off by default).

Modules, each importing only from those above it: :mod:`.records` (results as plain data),
:mod:`.percentiles` (order-statistic intervals of a percentile), :mod:`.projects` (the projects
an outlook evaluates), :mod:`.loss_range`, :mod:`.growth`, :mod:`.leaves`.
"""

from .growth import GrowthOutlook, growth_outlook
from .leaves import LeafEffect, leaf_effect
from .loss_range import ShadeLossRange, shade_loss_range
from .percentiles import DEFAULT_CONFIDENCE, DEFAULT_SAMPLES, percentile_label, percentile_ranks
from .projects import project_at_year, sampled_projects, with_surveyed

__all__ = [
    "DEFAULT_CONFIDENCE",
    "DEFAULT_SAMPLES",
    "GrowthOutlook",
    "LeafEffect",
    "ShadeLossRange",
    "growth_outlook",
    "leaf_effect",
    "percentile_label",
    "percentile_ranks",
    "project_at_year",
    "sampled_projects",
    "shade_loss_range",
    "with_surveyed",
]
