"""Plain-text layout of what the commands print: aligned tables, numbers, bulleted lines."""

from __future__ import annotations

import math
import textwrap
from collections.abc import Iterable, Sequence

__all__ = ["bullets", "number", "text_table"]


def text_table(headers: Sequence[str], rows: Sequence[Sequence], aligns: str = "") -> str:
    """Return rows as an indented table with a ruled header, each column as wide as it needs.

    Parameters
    ----------
    headers : sequence of str
        Column headings.
    rows : sequence of sequences
        The cells, one sequence per row; each cell is printed with ``str``.
    aligns : str, optional
        One letter per column, ``"l"`` (left) or ``"r"`` (right); default the first column
        left and the others right.

    Returns
    -------
    str
        The table's lines, each indented by two spaces.
    """
    cells = [[str(h) for h in headers]] + [[str(c) for c in row] for row in rows]
    widths = [max(len(row[i]) for row in cells) for i in range(len(headers))]
    aligns = aligns or "l" + "r" * (len(headers) - 1)
    lines = []
    for n, row in enumerate(cells):
        parts = [c.ljust(w) if a == "l" else c.rjust(w) for c, w, a in zip(row, widths, aligns,
                                                                            strict=True)]
        lines.append("  " + "  ".join(parts).rstrip())
        if n == 0:
            lines.append("  " + "  ".join("-" * w for w in widths))
    return "\n".join(lines)


def number(value, digits: int = 1, *, thousands: bool = False) -> str:
    """Return a figure with ``digits`` decimals; an undefined one (None, NaN) as a dash.

    Parameters
    ----------
    value : float or None
    digits : int, optional
        Decimals shown; default 1.
    thousands : bool, keyword-only, optional
        Group thousands with commas.

    Returns
    -------
    str
    """
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "–"
    return f"{value:,.{digits}f}" if thousands else f"{value:.{digits}f}"


def bullets(lines: Iterable[str]) -> list[str]:
    """Return each line as a bulleted paragraph wrapped at 96 characters.

    Parameters
    ----------
    lines : iterable of str

    Returns
    -------
    list of str
        One wrapped paragraph per line, ``"  - "`` first and continuation lines indented.
    """
    return [textwrap.fill(line, 96, initial_indent="  - ", subsequent_indent="    ")
            for line in lines]
