"""Strings on the plan: a line through each string's module centres, its label at the start.

:class:`StringLines` adds its marks to a :class:`widgets.plan_view.PlanView`'s figure, under the
module click targets (so clicks still reach the modules), and redraws them from plain data:
the strings as lists of module ids and each module's plan centre. Each string gets its own
line style, a dash pattern and a colour taken in turn (four dash patterns, six colours of the
Okabe–Ito palette, which stays apart for colour-blind readers), and its label (``S1``, …) at
its first module. A string being drawn is shown thin and dotted, labelled ``new``.
"""

from __future__ import annotations

import bqplot as bq
import numpy as np

from . import style
from .plan_scene import padded_rings, unit_factor

__all__ = ["LINE_STYLES", "STRING_COLOURS", "StringLines", "string_style"]

#: Dash patterns, one bqplot ``Lines`` mark each.
LINE_STYLES = ("solid", "dashed", "dash_dotted", "dotted")

#: Colours of the strings (Okabe & Ito, "Color Universal Design", 2002).
STRING_COLOURS = ("#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9")


def string_style(index: int) -> tuple[str, str]:
    """Return the (dash pattern, colour) of string ``index``; 24 strings before a repeat."""
    return (LINE_STYLES[index % len(LINE_STYLES)],
            STRING_COLOURS[(index // len(LINE_STYLES)) % len(STRING_COLOURS)])


def _path(module_ids, centres) -> np.ndarray:
    """Plan centres [m] of the modules, shape (n, 2); a single module is drawn as a point."""
    path = np.array([centres[m] for m in module_ids if m in centres], dtype=float)
    path = path.reshape(-1, 2)
    return np.vstack([path, path]) if len(path) == 1 else path  # bqplot squeezes one point


class StringLines:
    """The string marks of one plan.

    Parameters
    ----------
    plan : widgets.plan_view.PlanView
        The plan to draw on; the marks go in just under its module click targets.

    Attributes
    ----------
    line_marks : list of bqplot.Lines
        One mark per dash pattern, each holding the strings drawn in it.
    label_mark : bqplot.Label
        ``S1``, ``S2``, … at each string's first module.
    draft_mark : bqplot.Lines
        The string being drawn.
    shown : tuple of tuple of str
        The strings drawn, in order.
    """

    def __init__(self, plan):
        scales = {"x": plan.x_scale, "y": plan.y_scale}
        self.line_marks = [bq.Lines(x=[], y=[], scales=scales, line_style=dash,
                                    stroke_width=2.4, colors=[STRING_COLOURS[0]])
                           for dash in LINE_STYLES]
        self.draft_mark = bq.Lines(x=[], y=[], scales=scales, line_style="dotted",
                                   stroke_width=1.4, colors=[style.INK])
        self.label_mark = bq.Label(x=[], y=[], text=[], scales=scales, colors=[style.INK],
                                   font_weight="bold", default_size=12, x_offset=4, y_offset=-6)
        marks = list(plan.figure.marks)
        at = marks.index(plan.module_targets)
        plan.figure.marks = (marks[:at] + self.line_marks + [self.draft_mark, self.label_mark]
                             + marks[at:])
        self.shown: tuple[tuple[str, ...], ...] = ()

    def show(self, strings, centres: dict, *, units: str = "metric", draft=()) -> None:
        """Draw ``strings`` (module ids) through ``centres`` (id → plan (x, y) [m]).

        Module ids without a centre (taken out, or no longer placed) are skipped.
        """
        k = unit_factor(units)
        strings = tuple(tuple(s) for s in strings or ())
        paths = [_path(s, centres) for s in strings]
        with self.label_mark.hold_sync():
            for j, mark in enumerate(self.line_marks):
                which = [i for i in range(len(paths)) if i % len(LINE_STYLES) == j
                         and len(paths[i])]
                with mark.hold_sync():
                    mark.x, mark.y = padded_rings([paths[i] for i in which], k)
                    mark.colors = [string_style(i)[1] for i in which] or [STRING_COLOURS[0]]
            starts = [(i, p[0]) for i, p in enumerate(paths) if len(p)]
            draft_path = _path(draft, centres)
            self.draft_mark.x, self.draft_mark.y = padded_rings(
                [draft_path] if len(draft_path) else [], k)
            labels = [f"S{i + 1}" for i, _ in starts] + (["new"] if len(draft_path) else [])
            points = [p for _, p in starts] + ([draft_path[0]] if len(draft_path) else [])
            self.label_mark.x = [float(p[0] * k) for p in points]
            self.label_mark.y = [float(p[1] * k) for p in points]
            self.label_mark.text = labels
        self.shown = strings
