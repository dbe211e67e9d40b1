"""The shade report: a document a designer hands over, in HTML and in PDF, from an evaluation.

Reports sit above :mod:`layout.study`: they read an evaluation and render it, and compute no
figure of their own. One module per section, then the parts that lay them out:

``colours``
    The planner's palette (also used by :mod:`widgets.style`); imports no plotting library.
``options``
    :class:`ReportOptions`: paper, the plan's figure, the extras, the preparer.
``blocks``
    Paragraphs, tables, figures and sections as plain values; :func:`~blocks.number`.
``cover``, ``plan``, ``arrays``, ``sky``, ``obstructions``, ``comparison``,
``assumptions``, ``appendix``
    The sections, in the order the report prints them.
``document``
    :func:`build_report` (an evaluation → a :class:`~blocks.ReportDocument`) and
    :func:`prepare_report` (a project → the evaluation, band and comparison it asks for).
``drawing``
    The plan and the sky chart with matplotlib (the only place in the core that imports it).
``html``, ``pdf``
    The two formats: Jinja2 with inline SVG, and fpdf2.
``files``
    The output path's checks and the atomic write.

:func:`write_report` runs them all. Importing this package loads neither matplotlib nor fpdf2;
the modules that need them are loaded when a report is made.
"""

from __future__ import annotations

import importlib

from .colours import FIGURE_SCALE, figure_colours
from .files import FORMATS, check_output
from .options import PAPERS, PLAN_METRICS, ReportOptions, paper_for

__all__ = [
    "FIGURE_SCALE",
    "FORMATS",
    "PAPERS",
    "PLAN_METRICS",
    "ReportOptions",
    "build_report",
    "check_output",
    "figure_colours",
    "paper_for",
    "prepare_report",
    "render_html",
    "render_pdf",
    "write_report",
]

_LAZY = {"build_report": "document", "prepare_report": "document", "render_html": "html",
         "render_pdf": "pdf", "write_report": "writer"}


def __getattr__(name: str):
    """Load the modules that import matplotlib, fpdf2 and Jinja2 on first use (PEP 562)."""
    if name in _LAZY:
        module = importlib.import_module(f".{_LAZY[name]}", __name__)
        return getattr(module, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
