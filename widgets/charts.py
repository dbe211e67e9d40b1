"""Charts of the side panel: the month × hour heat map of shade loss.

The heat map draws :meth:`layout.study.analysis.Evaluation.module_month_hour` (one module) or
:attr:`layout.study.analysis.Evaluation.month_hour` (the whole layout) on the same single-hue scale
as the plan (:data:`widgets.style.FIGURE_SCALE`), with a labelled colour bar. Hours in which the
sun is never up in any month are left out; the remaining cells without a figure (the sun below
the horizon in that month) are drawn in a neutral grey that is not on the scale.
"""

from __future__ import annotations

import html

import bqplot as bq
import ipywidgets as w
import numpy as np
import pandas as pd

from . import style

__all__ = ["HoursHeatMap", "daylight_hours"]


def daylight_hours(table: pd.DataFrame) -> list[int]:
    """Hours (columns) of a month × hour table that have a figure in at least one month."""
    finite = np.isfinite(table.to_numpy(dtype=float)).any(axis=0)
    return [int(h) for h, ok in zip(table.columns, finite, strict=True) if ok]


class HoursHeatMap(w.VBox):
    """Shade loss by month (rows) and hour of day (columns) as a bqplot ``GridHeatMap``."""

    def __init__(self, *, width_px: int = 520, height_px: int = 330):
        self.row_scale = bq.OrdinalScale(reverse=True)
        self.column_scale = bq.OrdinalScale()
        self.colour_scale = bq.ColorScale(colors=list(style.FIGURE_SCALE), min=0.0)
        self.heat = bq.GridHeatMap(
            color=np.zeros((12, 2)), row=np.arange(1, 13), column=np.array([11, 12]),
            scales={"row": self.row_scale, "column": self.column_scale,
                    "color": self.colour_scale},
            null_color=style.NO_FIGURE, stroke="white", display_format=None,
            interactions={"hover": "tooltip"},
            tooltip=bq.Tooltip(fields=["row", "column", "color"],
                               labels=["month", "hour", "shade loss %"],
                               formats=["", "", ".1f"]))
        self.colour_axis = bq.ColorAxis(scale=self.colour_scale, side="right",
                                        label="shade loss [%]")
        self.figure = bq.Figure(
            marks=[self.heat],
            axes=[bq.Axis(scale=self.column_scale, label="hour of day (site clock)"),
                  bq.Axis(scale=self.row_scale, orientation="vertical", side="left",
                          label="month"),
                  self.colour_axis],
            display_toolbar=False,
            fig_margin={"top": 12, "bottom": 44, "left": 48, "right": 80},
            layout=w.Layout(width=f"{width_px}px", height=f"{height_px}px"))
        self.figure.add_class("eaveline-hours")
        self.title = w.HTML()
        self.table: pd.DataFrame | None = None
        super().__init__([self.title, self.figure, w.HTML(
            "<div style='font-size:11px;color:#5d6b6a'>Grey: the sun is below the horizon "
            "in that month and hour. Hover a cell for its figure.</div>")])

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
        high = float(finite.max()) if len(finite) else 1.0
        with self.heat.hold_sync(), self.heat.hold_trait_notifications(), \
                self.colour_scale.hold_sync():  # cross-validation waits for all three
            self.colour_scale.min = 0.0
            self.colour_scale.max = max(high, 1e-6)
            self.heat.row = np.asarray(shown.index, dtype=float)
            self.heat.column = np.asarray(hours, dtype=float)
            self.heat.color = values
        self.title.value = (f"<div style='font-size:12px;color:{style.INK}'>Shade loss by "
                            f"month and hour: {html.escape(what)}</div>")
