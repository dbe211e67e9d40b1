"""Make a report file from a project: check the path, evaluate, lay out, write atomically."""

from __future__ import annotations

import os
from pathlib import Path

from .document import prepare_report
from .files import check_output, write_bytes_atomic
from .options import ReportOptions

__all__ = ["write_report"]


def write_report(project, path, *, options: ReportOptions | None = None, analysis=None,
                 base_dir=None, source=None, loss_range=None, progress=None) -> Path:
    """Write the shade report of a project as PDF or HTML, chosen by the path's extension.

    The path is checked before any work (:func:`layout.report.files.check_output`); the file
    appears whole or not at all.

    Parameters
    ----------
    project : layout.project.Project
    path : str or os.PathLike
        ``.pdf``, ``.html`` or ``.htm``.
    options : ReportOptions, keyword-only, optional
    analysis, base_dir, source, loss_range, progress
        As in :func:`layout.report.document.prepare_report`.

    Returns
    -------
    pathlib.Path
        The file written.
    """
    target, kind = check_output(path)
    document = prepare_report(project, options=options, analysis=analysis, base_dir=base_dir,
                              source=source, loss_range=loss_range, progress=progress)
    if kind == "pdf":
        from .pdf import render_pdf

        data = render_pdf(document, progress=progress)
    else:
        from .html import render_html

        data = render_html(document, progress=progress).encode("utf-8")
    return write_bytes_atomic(data, os.fspath(target))
