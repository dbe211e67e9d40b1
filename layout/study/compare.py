"""Layouts side by side: portrait against landscape, with and without the worst modules.

A designer's question before a quote: which orientation gives more energy on this roof, and
what do the worst-placed modules cost? :func:`compare_layouts` refills the project once per
orientation (the fill options otherwise unchanged, the user's removals kept), evaluates each
fill, then drops the modules below the TSRF threshold (:func:`drop_worst`) and evaluates again,
since under the string model removing a module changes the strings and so the other modules'
energy. The rows of :attr:`Comparison.table` are built by
:func:`layout.power.metrics.comparison_table` from each option's totals.

All options are evaluated with one :class:`layout.study.analysis.Analysis`, so the weather, the sun
path and the best-orientation search (the slowest part of a small evaluation) run once.

"Drop the worst" removes, in one pass, every module that fails a limit in the evaluation it is
given; it does not iterate (a module that falls below a limit only after others were removed
stays). The TSRF threshold defaults to the project's ``energy.tsrf_threshold_pct`` (75 %:
incentive programmes commonly ask 75-80 % per module, common practice).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace

import pandas as pd

from ..errors import InputError
from ..fill.faces import FILL_ORIENTATIONS
from ..power.metrics import comparison_table, worst_modules
from .analysis import Analysis, Evaluation, evaluate

__all__ = [
    "COMPARED_ORIENTATIONS",
    "Comparison",
    "Dropped",
    "LayoutOption",
    "compare_layouts",
    "drop_worst",
]

#: Orientations :func:`compare_layouts` fills by default.
COMPARED_ORIENTATIONS = ("portrait", "landscape", "mixed")

#: Suffix of the name of an option with its worst modules dropped.
WITHOUT_WORST = "without the worst"


@dataclass(frozen=True, eq=False)
class Dropped:
    """A project with its worst modules removed, and its new evaluation. Computed, never saved.

    Attributes
    ----------
    project : layout.project.Project
        The project with the dropped modules added to its removals.
    evaluation : layout.study.analysis.Evaluation
        A full evaluation of :attr:`project` (strings re-formed without the dropped modules).
    dropped : tuple of str
        Ids of the modules removed, in table order; empty when none failed a limit (then
        :attr:`project` is the project given and :attr:`evaluation` the evaluation given).
    limits : dict
        The limits applied: ``min_tsrf_pct`` [%], ``min_energy_kwh`` [kWh],
        ``max_shade_loss_pct`` [%], each a number or None.
    """

    project: object
    evaluation: Evaluation
    dropped: tuple[str, ...]
    limits: dict

    @property
    def totals(self) -> dict:
        """Totals without the dropped modules (:func:`layout.power.metrics.layout_totals`)."""
        return self.evaluation.totals


def _limits(project, min_tsrf_pct, min_energy_kwh, max_shade_loss_pct) -> dict:
    if min_tsrf_pct is None and min_energy_kwh is None and max_shade_loss_pct is None:
        min_tsrf_pct = project.energy.tsrf_threshold_pct
    return {"min_tsrf_pct": min_tsrf_pct, "min_energy_kwh": min_energy_kwh,
            "max_shade_loss_pct": max_shade_loss_pct}


def drop_worst(project, evaluation: Evaluation, *, min_tsrf_pct: float | None = None,
               min_energy_kwh: float | None = None, max_shade_loss_pct: float | None = None,
               analysis: Analysis | None = None, base_dir=None) -> Dropped:
    """Remove the modules that fail a limit and evaluate the layout that remains.

    Parameters
    ----------
    project : layout.project.Project
        The project ``evaluation`` was computed for.
    evaluation : layout.study.analysis.Evaluation
        Its evaluation; the limits are applied to :attr:`Evaluation.table`.
    min_tsrf_pct : float, keyword-only, optional
        Drop modules with TSRF below this [%], 0 to 100. When no limit is given at all, the
        project's ``energy.tsrf_threshold_pct`` is used.
    min_energy_kwh : float, keyword-only, optional
        Drop modules whose annual energy is below this [kWh].
    max_shade_loss_pct : float, keyword-only, optional
        Drop modules whose shade loss is above this [%], 0 to 100.
    analysis : layout.study.analysis.Analysis, keyword-only, optional
        An analysis to re-evaluate with (its weather is kept); it is left holding the returned
        project. Default: a fresh evaluation.
    base_dir : str or os.PathLike, keyword-only, optional
        Folder a relative weather file is read from, for a fresh evaluation.

    Returns
    -------
    Dropped

    Raises
    ------
    InputError
        If ``evaluation`` belongs to another project, or a limit is out of range.
    """
    if not isinstance(evaluation, Evaluation):
        raise InputError("evaluation", "must be a layout.study.analysis.Evaluation",
                         value=type(evaluation).__name__)
    if evaluation.project is not project and evaluation.project != project:
        raise InputError("evaluation", "was computed for another project",
                         allowed="the evaluation of the project given")
    limits = _limits(project, min_tsrf_pct, min_energy_kwh, max_shade_loss_pct)
    ids = worst_modules(evaluation.table, **limits)
    if not ids:
        return Dropped(project=project, evaluation=evaluation, dropped=(), limits=limits)
    removed = evaluation.layout.remove(ids).removed
    trimmed = project.with_changes(removed=removed)
    if analysis is not None:
        analysis.update(trimmed, remember=False)
        result = analysis.result
    else:
        result = evaluate(trimmed, base_dir=base_dir)
    return Dropped(project=trimmed, evaluation=result, dropped=ids, limits=limits)


@dataclass(frozen=True, eq=False)
class LayoutOption:
    """One layout of a comparison. Computed, never saved.

    Attributes
    ----------
    name : str
        Row name: the orientation, or ``"<orientation> without the worst"``.
    orientation : str
        Fill orientation: "portrait", "landscape" or "mixed".
    project : layout.project.Project
        The project refilled in this orientation (with the dropped modules removed).
    evaluation : layout.study.analysis.Evaluation
    dropped : tuple of str
        Modules dropped as the worst (empty for the full fill).
    """

    name: str
    orientation: str
    project: object
    evaluation: Evaluation
    dropped: tuple[str, ...] = ()


@dataclass(frozen=True, eq=False)
class Comparison:
    """Layouts side by side. Computed, never saved.

    Attributes
    ----------
    options : tuple of LayoutOption
        In row order.
    table : pandas.DataFrame
        Indexed by option name: ``orientation``, ``dropped`` (modules dropped as the worst),
        then the columns of :func:`layout.power.metrics.comparison_table` (``modules``,
        ``power_kwp``, ``energy_kwh``, ``specific_yield_kwh_per_kwp``, ``shade_loss_pct``,
        ``tsrf_mean_pct``, ``modules_below_tsrf``, ``energy_unshaded_kwh``,
        ``solar_access_mean_pct``). ``attrs``: ``tsrf_threshold_pct``, ``energy_basis``.
    limits : dict
        The limits "without the worst" applied (see :class:`Dropped`).
    """

    options: tuple[LayoutOption, ...]
    table: pd.DataFrame
    limits: dict

    def option(self, name: str) -> LayoutOption:
        """Return the option called ``name`` (a row of :attr:`table`)."""
        for option in self.options:
            if option.name == name:
                return option
        raise InputError("name", "is not an option of this comparison", value=name,
                         allowed=", ".join(o.name for o in self.options))

    @property
    def caveat(self) -> str:
        """What the weather of the comparison means for its figures."""
        return self.options[0].evaluation.weather.caveat if self.options else ""


def _check_orientations(orientations) -> tuple[str, ...]:
    if isinstance(orientations, str):
        orientations = (orientations,)
    orientations = tuple(orientations)
    if not orientations or any(o not in FILL_ORIENTATIONS for o in orientations) \
            or len(set(orientations)) != len(orientations):
        raise InputError("orientations", "must name different fill orientations",
                         value=list(orientations), allowed=", ".join(FILL_ORIENTATIONS))
    return orientations


def compare_layouts(project, *, orientations: Sequence[str] = COMPARED_ORIENTATIONS,
                    without_worst: bool = True, min_tsrf_pct: float | None = None,
                    min_energy_kwh: float | None = None,
                    max_shade_loss_pct: float | None = None,
                    analysis: Analysis | None = None, base_dir=None,
                    progress: Callable[[str, int, int], None] | None = None) -> Comparison:
    """Fill the project in each orientation, evaluate, and drop the worst modules of each.

    Parameters
    ----------
    project : layout.project.Project
        The project; only its ``fill.orientation`` (and removals, for the options without the
        worst) change between options.
    orientations : sequence of str, keyword-only, default ("portrait", "landscape", "mixed")
        Fill orientations to compare, in row order.
    without_worst : bool, keyword-only, default True
        Add, after each orientation, the same fill without its worst modules
        (:func:`drop_worst`); its row repeats the full fill's figures when no module fails.
    min_tsrf_pct, min_energy_kwh, max_shade_loss_pct : float, keyword-only, optional
        Limits of "the worst", as in :func:`drop_worst` (default: TSRF below the project's
        ``energy.tsrf_threshold_pct``).
    analysis : layout.study.analysis.Analysis, keyword-only, optional
        An analysis to evaluate the options with (its weather is reused); it is brought back
        to the project it held before returning. Default: a new one.
    base_dir : str or os.PathLike, keyword-only, optional
        Folder a relative weather file is read from (for a new analysis).
    progress : callable, keyword-only, optional
        Called as ``progress(label, done, total)``; ``label`` names the option and the stage.

    Returns
    -------
    Comparison
    """
    orientations = _check_orientations(orientations)
    limits = _limits(project, min_tsrf_pct, min_energy_kwh, max_shade_loss_pct)
    worst_modules(pd.DataFrame(columns=["tsrf_pct", "energy_kwh", "shade_loss_pct"]),
                  **limits)  # check the limits before any work
    variants = len(orientations) * (2 if without_worst else 1)
    where = {"option": "", "index": 0}

    def report(label: str, done: int, total: int) -> None:
        if progress is not None:
            progress(f"{where['option']}: {label}", where["index"] * total + done,
                     variants * total)

    held = analysis.project if analysis is not None else None
    previous = analysis.progress if analysis is not None else None
    options: list[LayoutOption] = []
    try:
        for orientation in orientations:
            variant = project.with_changes(fill=replace(project.fill, orientation=orientation))
            where.update(option=orientation, index=len(options))
            if analysis is None:
                analysis = Analysis(variant, base_dir=base_dir, progress=report)
            else:
                analysis.progress = report
                analysis.update(variant, remember=False)
            full = analysis.result
            options.append(LayoutOption(orientation, orientation, variant, full))
            if without_worst:
                name = f"{orientation} {WITHOUT_WORST}"
                where.update(option=name, index=len(options))
                trimmed = drop_worst(variant, full, analysis=analysis, **limits)
                options.append(LayoutOption(name, orientation, trimmed.project,
                                            trimmed.evaluation, trimmed.dropped))
    finally:
        if held is not None:
            analysis.progress = None
            analysis.update(held)
            analysis.progress = previous
    table = comparison_table({o.name: o.evaluation.totals for o in options})
    table.insert(0, "dropped", [len(o.dropped) for o in options])
    table.insert(0, "orientation", [o.orientation for o in options])
    return Comparison(options=tuple(options), table=table, limits=limits)
