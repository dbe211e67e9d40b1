"""What a report is made of: sections of paragraphs, tables and figures, as plain values.

The section modules turn an evaluation into these values; the HTML and PDF writers only lay
them out, so both formats say the same words and the same numbers. Numbers are formatted here
once (:func:`number`), with the decimals the tables print.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

__all__ = [
    "DASH",
    "Beside",
    "Figure",
    "Paragraph",
    "ReportDocument",
    "Section",
    "Table",
    "number",
]

#: Shown where a figure is undefined (no light, no modules).
DASH = "–"


def number(value, decimals: int = 1, *, thousands: bool = False) -> str:
    """Format a figure as the report prints it.

    Parameters
    ----------
    value : float or None
        The figure; None or NaN prints :data:`DASH`.
    decimals : int, default 1
        Digits after the point.
    thousands : bool, keyword-only, default False
        Group thousands with commas (``12,345``).

    Returns
    -------
    str
    """
    if value is None:
        return DASH
    value = float(value)
    if not math.isfinite(value):
        return DASH
    text = f"{value:,.{decimals}f}" if thousands else f"{value:.{decimals}f}"
    return "0" + text[2:] if text.startswith("-0") and float(text) == 0 else text


@dataclass(frozen=True)
class Paragraph:
    """A paragraph of plain text; ``style`` is ``"body"``, ``"note"`` or ``"lead"``."""

    text: str
    style: str = "body"


@dataclass(frozen=True)
class Table:
    """A table of text cells.

    Attributes
    ----------
    columns : tuple of str
        Column headings.
    rows : tuple of tuple of str
        Cells, already formatted.
    caption : str
        Shown above the table.
    align : str
        One letter per column, ``"l"`` or ``"r"``; default: first column left, others right.
    total_rows : int
        How many of the last rows are totals (drawn bold).
    key : str
        A name tests and writers can find the table by.
    """

    columns: tuple
    rows: tuple
    caption: str = ""
    align: str = ""
    total_rows: int = 0
    key: str = ""

    def alignment(self) -> str:
        """One ``"l"`` or ``"r"`` per column."""
        return self.align or "l" + "r" * (len(self.columns) - 1)


@dataclass(frozen=True)
class Figure:
    """A drawing: ``kind`` names the drawing function, ``data`` is what it draws.

    Attributes
    ----------
    kind : str
        ``"plan"`` or ``"sky"`` (:mod:`layout.report.drawing`).
    data : object
        The drawing's data (:class:`layout.report.plan.PlanDrawing` or
        :class:`layout.report.sky.SkyDrawing`).
    caption : str
        Shown under the figure.
    key : str
        A name tests and writers can find the figure by.
    """

    kind: str
    data: object
    caption: str = ""
    key: str = ""


@dataclass(frozen=True)
class Beside:
    """A figure with a table beside it (the sky chart and its monthly table)."""

    figure: Figure
    table: Table


@dataclass(frozen=True)
class Section:
    """One section of the report: a heading and its blocks, in order.

    Attributes
    ----------
    key : str
        Short name (``"cover"``, ``"layout"``, ``"figures"``, ``"sky"``, ``"obstructions"``,
        ``"comparison"``, ``"assumptions"``, ``"appendix"``).
    title : str
    blocks : tuple
        :class:`Paragraph`, :class:`Table`, :class:`Figure` and :class:`Beside` values.
    new_page : bool
        Start the section on a new page (PDF).
    """

    key: str
    title: str
    blocks: tuple = ()
    new_page: bool = False


@dataclass(frozen=True)
class ReportDocument:
    """A whole report: its title, the sections in order, and the paper it is laid out for.

    Attributes
    ----------
    title : str
    sections : tuple of Section
    paper : str
        ``"a4"`` or ``"letter"``.
    footer : str
        Printed at the foot of every PDF page.
    """

    title: str
    sections: tuple = field(default=())
    paper: str = "a4"
    footer: str = ""

    def section(self, key: str) -> Section:
        """Return the section named ``key``; KeyError when the report has none."""
        for section in self.sections:
            if section.key == key:
                return section
        raise KeyError(key)

    def tables(self) -> list[Table]:
        """Every table, in order (those beside a figure included)."""
        out = []
        for section in self.sections:
            for block in section.blocks:
                if isinstance(block, Table):
                    out.append(block)
                elif isinstance(block, Beside):
                    out.append(block.table)
        return out
