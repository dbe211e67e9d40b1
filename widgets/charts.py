"""Charts of the side panel: the month × hour heat map of shade loss.

The heat map draws :meth:`layout.study.analysis.Evaluation.module_month_hour` (one module) or
:attr:`layout.study.analysis.Evaluation.month_hour` (the whole layout) on the same single-hue scale
as the plan (:data:`widgets.style.FIGURE_SCALE`), with a labelled colour bar. Hours in which the
sun is never up in any month are left out; the remaining cells without a figure (the sun below
the horizon in that month) are drawn in a light grey below the scale's first stop, so that
they recede behind every figure (bqplot draws a cell without a number in ``null_color`` only
when it is JSON ``null``, which a numpy array cannot send; a NaN would come out black).
"""

from __future__ import annotations

import html

import bqplot as bq
import ipywidgets as w
import numpy as np
import pandas as pd

from layout.sky.paths import MONTH_NAMES

from . import style

__all__ = ["HoursHeatMap", "LazyFigure", "daylight_hours", "reveal_figures"]


class LazyFigure(w.Box):
    """A place for a bqplot figure in a tab that may be hidden when the page first draws.

    A figure drawn inside a hidden tab measures zero by zero, and bqplot then sets negative
    sizes on its plot area (errors in the browser's console). The figure is put in its place
    only by :meth:`reveal`, which the planner calls when the tab is opened.
    """

    def __init__(self, figure):
        self.figure = figure
        super().__init__([], layout=w.Layout(width="100%"))

    def reveal(self) -> None:
        """Put the figure on the page (once)."""
        if not self.children:
            self.children = [self.figure]


def reveal_figures(widget) -> None:
    """Reveal every :class:`LazyFigure` inside ``widget`` (a tab's panel being opened)."""
    if isinstance(widget, LazyFigure):
        widget.reveal()
        return
    for child in getattr(widget, "children", ()):
        reveal_figures(child)


def daylight_hours(table: pd.DataFrame) -> list[int]:
    """Hours (columns) of a month × hour table that have a figure in at least one month."""
    finite = np.isfinite(table.to_numpy(dtype=float)).any(axis=0)
    return [int(h) for h, ok in zip(table.columns, finite, strict=True) if ok]


#: Cells where the sun is below the horizon: a light grey that recedes behind every figure.
NIGHT = "#ececec"


class HoursHeatMap(w.VBox):
    """Shade loss by month (rows) and hour of day (columns) as a bqplot ``GridHeatMap``."""

    def __init__(self, *, width_px: int = 520, height_px: int = 330):
        self.row_scale = bq.OrdinalScale(reverse=True)
        self.column_scale = bq.OrdinalScale()
        self.colour_scale = bq.ColorScale(colors=[NIGHT, *style.FIGURE_SCALE], min=0.0)
        self.heat = bq.GridHeatMap(
            color=np.zeros((12, 2)), row=np.arange(1, 13), column=np.array([11, 12]),
            scales={"row": self.row_scale, "column": self.column_scale,
                    "color": self.colour_scale},
            null_color=NIGHT, stroke="white", display_format=None,
            interactions={"hover": "tooltip"},
            tooltip=bq.Tooltip(fields=["row", "column", "color"],
                               labels=["month", "hour", "shade loss %"],
                               formats=["", "", ".1f"]))
        self.colour_axis = bq.ColorAxis(scale=self.colour_scale, side="right",
                                        label="shade loss %", label_offset="44px",
                                        tick_format=".0f", num_ticks=3)
        self.month_axis = bq.Axis(scale=self.row_scale, orientation="vertical", side="left",
                                  label="month", label_offset="40px",
                                  tick_labels={str(m): n for m, n in
                                               enumerate(MONTH_NAMES, start=1)})
        self.figure = bq.Figure(
            marks=[self.heat],
            axes=[bq.Axis(scale=self.column_scale, label="hour of day (site clock)"),
                  self.month_axis, self.colour_axis],
            display_toolbar=False,
            fig_margin={"top": 12, "bottom": 44, "left": 56, "right": 110},
            layout=w.Layout(width="100%", max_width=f"{width_px}px", height=f"{height_px}px"))
        self.figure.add_class("eaveline-hours")
        self.title = w.HTML()
        self.table: pd.DataFrame | None = None
        super().__init__([self.title, LazyFigure(self.figure), w.HTML(
            "<div style='font-size:11px;color:#5d6b6a'>Light grey: the sun is below the "
            "horizon in that month and hour. Hover a cell for its figure.</div>")])

    def show(self, table: pd.DataFrame, *, what: str) -> None:
        """Draw a month × hour shade-loss table [%] (rows month 1-12, columns hour 0-23).

        Parameters
        ----------
        table : pandas.DataFrame
            As :func:`layout.power.metrics.month_hour_loss` returns it.
        what : str
            What the table is of ("module south/r0c3", "the whole layout"), for the title.
        """
        hours = daylight_hours(table) or [11, 12]
        shown = table.reindex(columns=hours)
        self.table = shown
        values = shown.to_numpy(dtype=float)
        finite = values[np.isfinite(values)]
        high = max(float(finite.max()) if len(finite) else 1.0, 1e-6)
        # the scale's stops are evenly spaced: with the night grey one stop below zero, the
        # figure's stops fall on 0 ... high exactly as on the plan
        night = -high / (len(style.FIGURE_SCALE) - 1)
        with self.heat.hold_sync(), self.heat.hold_trait_notifications(), \
                self.colour_scale.hold_sync():  # cross-validation waits for all three
            self.colour_scale.min = night
            self.colour_scale.max = high
            self.heat.row = np.asarray(shown.index, dtype=float)
            self.heat.column = np.asarray(hours, dtype=float)
            self.heat.color = np.where(np.isfinite(values), values, night)
        self.colour_axis.tick_values = np.linspace(0.0, high, 5)
        self.title.value = (f"<div style='font-size:12px;color:{style.INK}'>Shade loss by "
                            f"month and hour: {html.escape(what)}</div>")
