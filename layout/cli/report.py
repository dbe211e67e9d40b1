"""``report``: the shade report of a project, written as PDF or HTML.

The output path is checked before any work (a known extension, a folder that exists and can be
written to); the report is written to a temporary name beside it and renamed into place, so a
failure leaves no partial file. Progress goes to standard error on a terminal; the path
written is printed on standard output.
"""

from __future__ import annotations

import os

from ..errors import InputError
from ..project import demo_project_path
from ..report import ReportOptions, check_output, write_report
from .progress import terminal_progress
from .project_input import load_command_project, with_overrides

__all__ = ["run_report"]

#: The command-line option of each report setting.
_OPTIONS = {"output": "-o", "with_range": "--with-range", "paper": "--paper",
            "plan_metric": "--metric", "preparer": "--preparer", "licence": "--licence"}


def run_report(project: str | None, *, output: str, demo: bool = False,
               weather: str | None = None, shade_model: str | None = None,
               paper: str | None = None, with_range: int | None = None,
               with_compare: bool = False, metric: str = "shade_loss_pct",
               preparer: str = "", licence: str = "") -> None:
    """Write the shade report of a project (``report``) and print the path written.

    Parameters
    ----------
    project, demo, weather, shade_model
        The project file or ``--demo``, and ``--weather`` and ``--shade-model`` in place of
        the project's own: :mod:`layout.cli.project_input` applies them.
    output : str, keyword-only
        ``-o``: the report file, ``.pdf`` or ``.html``.
    paper : {"a4", "letter"} or None, keyword-only
        ``--paper``; None picks by the project's units.
    with_range : int or None, keyword-only
        ``--with-range N``: the shade-loss band from N draws of the survey's readings.
    with_compare : bool, keyword-only
        ``--with-compare``: portrait against landscape.
    metric : str, keyword-only
        ``--metric``: the figure the plan colours modules by.
    preparer, licence : str, keyword-only
        Printed in the preparer's fields; blank lines to fill in by hand otherwise.
    """
    try:  # before any work, naming the options as they were typed
        options = ReportOptions(paper=paper, plan_metric=metric, with_range=with_range,
                                with_compare=with_compare, preparer=preparer, licence=licence)
        check_output(output)
    except InputError as err:
        option = _OPTIONS.get(err.field, err.field)
        raise InputError(option, err.problem, value=err.value, allowed=err.allowed) from None
    loaded, folder = load_command_project(project, demo)
    loaded = with_overrides(loaded, weather=weather, shade_model=shade_model)
    source = demo_project_path() if demo else project
    with terminal_progress() as progress:
        written = write_report(loaded, output, options=options, base_dir=folder,
                               source=source, progress=progress)
    print(os.fspath(written))
