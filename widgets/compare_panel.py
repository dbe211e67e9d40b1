"""The Compare tab: portrait, landscape and mixed fills side by side, as a table and bars.

:class:`ComparePanel` renders a :class:`layout.study.compare.Comparison` the planner made with
:func:`layout.study.compare.compare_layouts`; its button asks the planner for a new one.
"""

from __future__ import annotations

import html
from collections.abc import Callable

import bqplot as bq
import ipywidgets as w

from . import style
from .charts import LazyFigure

__all__ = ["ComparePanel", "comparison_table"]


def shown_options(table):
    """Return the options worth a row of their own.

    A "without the worst" option that dropped nothing repeats the option above it and is left
    out.
    """
    repeat = table.index.str.endswith("without the worst") & (table["dropped"] == 0)
    return table[~repeat]


def comparison_table(table, *, current: str) -> str:
    """Return the comparison table (one row per option) as HTML, ``current`` in bold."""
    table = shown_options(table)
    rows = []
    for option, r in table.iterrows():
        weight = "bold" if option == current else "normal"
        rows.append(
            f"<tr style='font-weight:{weight}'><td>{html.escape(option)}</td>"
            f"<td style='text-align:right'>{int(r.modules)}</td>"
            f"<td style='text-align:right'>{r.power_kwp:.2f}</td>"
            f"<td style='text-align:right'>{r.energy_kwh:,.0f}</td>"
            f"<td style='text-align:right'>{r.specific_yield_kwh_per_kwp:,.0f}</td>"
            f"<td style='text-align:right'>{r.shade_loss_pct:.2f}</td>"
            f"<td style='text-align:right'>{r.tsrf_mean_pct:.1f}</td>"
            f"<td style='text-align:right'>{int(r.dropped)}</td></tr>")
    basis = html.escape(str(table.attrs.get("energy_basis", "DC")))
    head = "".join(f"<th style='padding:0 4px'>{h}</th>" for h in (
        "modules", "kWp", f"kWh/yr ({basis})", "kWh/kWp", "shade loss %", "mean TSRF %",
        "dropped"))
    return ("<div style='overflow-x:auto'><table style='font-size:12px;border-collapse:collapse;"
            "white-space:nowrap'><tr><th style='text-align:left'>layout</th>" + head + "</tr>"
            + "".join(rows) + "</table></div>")


class ComparePanel(w.VBox):
    """The Compare tab: the options' table, their annual energy as bars, and a rerun button.

    Attributes
    ----------
    compare_html : ipywidgets.HTML
        The table of options.
    compare_bars : bqplot.Bars
        Annual energy [kWh] of each option.
    compare_button : ipywidgets.Button
        **Compare again**: calls the callbacks from :meth:`on_run`.
    compare_note : ipywidgets.HTML
        What "dropped" means, or that the project changed since the comparison.
    """

    def __init__(self):
        self.compare_html = w.HTML()
        self.compare_html.add_class("eaveline-compare-table")
        # horizontal bars: the options' names read along their own rows, never crowded
        x = bq.OrdinalScale(reverse=True)
        y = bq.LinearScale(min=0.0)
        self.compare_bars = bq.Bars(x=[], y=[], scales={"x": x, "y": y},
                                    orientation="horizontal",
                                    colors=[style.FIGURE_SCALE[4]], padding=0.25)
        self.compare_figure = bq.Figure(
            marks=[self.compare_bars],
            axes=[bq.Axis(scale=x, orientation="vertical", side="left"),
                  bq.Axis(scale=y, label="annual energy [kWh]", tick_format=",.0f",
                          num_ticks=4)],
            fig_margin={"top": 10, "bottom": 44, "left": 180, "right": 24},
            display_toolbar=False,
            layout=w.Layout(width="100%", max_width="560px", height="240px"))
        self.compare_figure.add_class("eaveline-compare-chart")
        self.compare_button = w.Button(description="Compare again",
                                       layout=w.Layout(width="auto", flex="0 0 auto"))
        self.compare_note = w.HTML()
        super().__init__([
            w.HTML("<div style='font-size:12px;color:#5d6b6a'>The same faces, setbacks, gaps "
                   "and removals filled in each orientation, each also without its modules "
                   "below the TSRF threshold; every option evaluated like the plan.</div>"),
            self.compare_html, LazyFigure(self.compare_figure),
            w.HBox([self.compare_button, self.compare_note],
                   layout=w.Layout(align_items="center"))])

    def on_run(self, callback: Callable) -> None:
        """Call ``callback()`` when **Compare again** is pressed."""
        self.compare_button.on_click(lambda _: callback())

    def show(self, comparison, *, current: str) -> None:
        """Show a comparison; ``current`` is the project's own orientation (in bold)."""
        table = shown_options(comparison.table)
        self.compare_html.value = comparison_table(table, current=current)
        with self.compare_bars.hold_sync():
            self.compare_bars.x = list(table.index)
            self.compare_bars.y = table["energy_kwh"].astype(float).tolist()
        threshold = comparison.limits.get("min_tsrf_pct")
        none_dropped = len(table) < len(comparison.table)
        self.compare_note.value = (
            f"<span style='font-size:11px;color:#5d6b6a'>Dropped: modules below "
            f"{threshold:g} % TSRF"
            + (" (options with none below it are shown once)" if none_dropped else "")
            + f". {html.escape(comparison.caveat)}</span>"
            if threshold is not None else "")

    def show_stale(self) -> None:
        """Say the project changed since the comparison shown."""
        self.compare_note.value = (
            "<span style='font-size:12px;color:#2b7c79'>The project changed: press "
            "<b>Compare again</b> to refill and evaluate every option.</span>")
