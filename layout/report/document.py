"""A whole report from an evaluation: the sections in order, and the extras it may ask for.

:func:`build_report` assembles the sections from an evaluation and, when given, a shade-loss
band and a comparison; it computes no figure of its own. :func:`prepare_report` runs what a
report needs first (the evaluation, the band over the survey's tolerances, the comparison),
reusing one :class:`~layout.study.analysis.Analysis` so the weather and sun are computed once.
"""

from __future__ import annotations

import datetime as dt
import os
from collections.abc import Callable
from pathlib import Path

from ..errors import InputError
from ..study.analysis import Analysis, Evaluation
from ..study.compare import compare_layouts
from ..study.outlook import shade_loss_range
from .appendix import appendix_section
from .arrays import figures_section
from .assumptions import assumptions_section
from .blocks import ReportDocument
from .comparison import comparison_section
from .cover import cover_section, eaveline_version
from .obstructions import obstructions_section
from .options import ReportOptions, paper_for
from .plan import layout_section
from .sky import sky_section

__all__ = ["build_report", "file_saved_time", "prepare_report"]

Progress = Callable[[str, int, int], None]


def file_saved_time(path) -> dt.datetime | None:
    """When a file was last written, on the computer's clock with its zone; None if missing."""
    try:
        stamp = os.stat(path).st_mtime
    except (OSError, TypeError):
        return None
    return dt.datetime.fromtimestamp(stamp).astimezone()


def build_report(evaluation: Evaluation, *, options: ReportOptions | None = None,
                 source: str | os.PathLike | None = None, loss_range=None, comparison=None,
                 progress: Progress | None = None) -> ReportDocument:
    """Assemble the report of an evaluation.

    Parameters
    ----------
    evaluation : layout.study.analysis.Evaluation
        Every number of the report comes from it (and from the extras below).
    options : ReportOptions, keyword-only, optional
        Paper, the plan's figure, preparer, dates.
    source : str or os.PathLike, keyword-only, optional
        The project file: its name is printed, its modification time is the "last saved".
    loss_range : layout.study.outlook.ShadeLossRange, keyword-only, optional
        The 5–95 % band over the survey's tolerances, when one was computed.
    comparison : layout.study.compare.Comparison, keyword-only, optional
        Portrait against landscape, when asked for.
    progress : callable, keyword-only, optional
        Called as ``progress(label, done, total)`` before each slow part.

    Returns
    -------
    layout.report.blocks.ReportDocument
    """
    if not isinstance(evaluation, Evaluation):
        raise InputError("evaluation", "must be a layout.study.analysis.Evaluation",
                         value=type(evaluation).__name__)
    options = options or ReportOptions()
    project = evaluation.project
    saved = options.saved or (file_saved_time(source) if source is not None else None)
    sections = [
        cover_section(evaluation, report_date=options.report_date or dt.date.today(),
                      saved=saved, source=Path(source).name if source is not None else None),
        layout_section(evaluation, metric=options.plan_metric),
        figures_section(evaluation),
        sky_section(evaluation, progress=progress),
        obstructions_section(evaluation, loss_range=loss_range,
                             range_asked=options.with_range is not None),
    ]
    if comparison is not None:
        sections.append(comparison_section(comparison))
    sections.append(assumptions_section(evaluation, preparer=options.preparer,
                                        licence=options.licence))
    sections.append(appendix_section(evaluation))
    name = project.name or "(unnamed project)"
    return ReportDocument(title=f"Shade report: {name}", sections=tuple(sections),
                          paper=options.paper or paper_for(project.units),
                          footer=f"{name} · eaveline {eaveline_version()} · planning "
                                 "estimates, not a guarantee of yield")


def prepare_report(project, *, options: ReportOptions | None = None,
                   analysis: Analysis | None = None, base_dir=None,
                   source: str | os.PathLike | None = None, loss_range=None,
                   progress: Progress | None = None) -> ReportDocument:
    """Evaluate what a report needs, then assemble it.

    Parameters
    ----------
    project : layout.project.Project
        The project reported.
    options : ReportOptions, keyword-only, optional
        ``with_range`` draws a shade-loss band of that many draws (projects with a survey);
        ``with_compare`` adds portrait against landscape.
    analysis : layout.study.analysis.Analysis, keyword-only, optional
        An analysis to reuse (the planner's); it is left holding ``project``.
    base_dir : str or os.PathLike, keyword-only, optional
        Folder a relative weather file is read from, for a new analysis.
    source : str or os.PathLike, keyword-only, optional
        The project file, as in :func:`build_report`.
    loss_range : layout.study.outlook.ShadeLossRange, keyword-only, optional
        A band already computed for ``project`` (the planner's); used unless ``with_range``
        asks for a new one.
    progress : callable, keyword-only, optional
        Called as ``progress(label, done, total)``.

    Returns
    -------
    layout.report.blocks.ReportDocument
    """
    options = options or ReportOptions()
    if analysis is None:
        analysis = Analysis(project, base_dir=base_dir, progress=progress)
    else:
        analysis.update(project)
    if options.with_range is not None and project.survey:
        samples = options.with_range

        def draws(done: int, total: int) -> None:
            if progress is not None:
                progress(f"shade loss over the survey's tolerances (draw {done + 1} of "
                         f"{total})", done, total)

        loss_range = shade_loss_range(project, samples=samples, analysis=analysis,
                                      progress=draws)
    comparison = None
    if options.with_compare:
        comparison = compare_layouts(project, analysis=analysis, progress=progress)
    analysis.update(project)
    return build_report(analysis.result, options=options, source=source,
                        loss_range=loss_range, comparison=comparison, progress=progress)
