"""The sky seen from one module, on rectangular azimuth / elevation axes.

The chart shows the sun's paths over the year (the 21st of every month, the solstices and the
equinoxes drawn bold) and, below them, the parts of the sky that each obstruction, roof face and
the far horizon hide from the module's centre, each in its own colour with its name. Where a
path runs through a region, the module is shaded at that hour of that part of the year, and the
region's name says by what.

Both inputs come from the core: the sun's paths from :func:`layout.sky.paths.sun_paths` and
the hidden sky from :func:`layout.shading.skyline.skyline_regions`, ray-tested over a grid of
directions (the same exact ray tests the energy model uses). Nothing here computes geometry or
physics of its own.
"""

from __future__ import annotations

import html

import bqplot as bq
import ipywidgets as w
import numpy as np
import pandas as pd

from layout.shading.skyline import SkyRegion, skyline_regions
from layout.sky.paths import KEY_PATHS, MONTH_NAMES, SunPath, sun_paths
from layout.sky.sun import TYPICAL_YEAR

from . import style
from .charts import LazyFigure
from .plan_view import polygon_rings

__all__ = [
    "SkyChart",
    "SkyRegion",
    "SunPath",
    "monthly_html",
    "skyline_regions",
    "sun_paths",
]

def _padded(rings):
    if not rings:
        return np.zeros((0, 0)), np.zeros((0, 0))
    n = max(len(r) for r in rings)
    out = np.array([np.vstack([r, np.repeat(r[-1:], n - len(r), axis=0)]) for r in rings])
    return out[:, :, 0], out[:, :, 1]


def monthly_html(monthly: pd.DataFrame, *, basis: str = "DC") -> str:
    """Return the monthly table of one module (or the layout) as a small HTML table.

    Parameters
    ----------
    monthly : pandas.DataFrame
        From :meth:`layout.study.analysis.Evaluation.module_monthly`: ``energy_kwh``,
        ``energy_unshaded_kwh``, ``shade_loss_pct`` by month 1-12.
    basis : str, keyword-only
        ``"AC"`` or ``"DC"``, shown in the heading.
    """
    rows = []
    for month, r in monthly.iterrows():
        loss = "–" if not np.isfinite(r.shade_loss_pct) else f"{r.shade_loss_pct:.1f}"
        rows.append(f"<tr><td>{MONTH_NAMES[int(month) - 1]}</td>"
                    f"<td style='text-align:right'>{r.energy_kwh:.1f}</td>"
                    f"<td style='text-align:right'>{loss}</td></tr>")
    total = float(monthly["energy_kwh"].sum())
    unshaded = float(monthly["energy_unshaded_kwh"].sum())
    loss = 100.0 * (1.0 - total / unshaded) if unshaded > 0 else float("nan")
    rows.append(f"<tr style='font-weight:bold;border-top:1px solid #ccc'><td>year</td>"
                f"<td style='text-align:right'>{total:.1f}</td>"
                f"<td style='text-align:right'>{loss:.1f}</td></tr>")
    return ("<table class='eaveline-monthly' style='font-size:12px;border-collapse:collapse'>"
            f"<tr><th style='text-align:left'>month</th><th>{html.escape(basis)} kWh</th>"
            "<th>shade loss %</th></tr>" + "".join(rows) + "</table>")


class SkyChart(w.HBox):
    """Sun paths and the skyline seen from one module, with its monthly figures beside them.

    Call :meth:`show` with the site, the casters, the module's centre and its monthly table.
    """

    def __init__(self, *, width_px: int = 400, height_px: int = 300):
        self.x_scale = bq.LinearScale(min=0.0, max=360.0)
        self.y_scale = bq.LinearScale(min=0.0, max=90.0)
        scales = {"x": self.x_scale, "y": self.y_scale}
        self.region_marks = bq.Lines(x=[], y=[], scales=scales, close_path=True, fill="inside",
                                     colors=[style.INK], fill_colors=[], fill_opacities=[],
                                     stroke_width=0.8)
        self.region_labels = bq.Label(x=[], y=[], text=[], scales=scales, colors=[style.INK],
                                      default_size=10, align="middle")
        self.month_marks = bq.Lines(x=[], y=[], scales=scales, colors=["#9fb3b1"],
                                    stroke_width=0.8)
        self.key_marks = bq.Lines(x=[], y=[], scales=scales, colors=[style.FIGURE_SCALE[5]],
                                  stroke_width=2.0)
        self.key_labels = bq.Label(x=[], y=[], text=[], scales=scales,
                                   colors=[style.FIGURE_SCALE[6]], default_size=10,
                                   align="start", font_weight="bold")
        self.hour_labels = bq.Label(x=[], y=[], text=[], scales=scales, colors=["#5d6b6a"],
                                    default_size=9, align="middle")
        self.x_axis = bq.Axis(scale=self.x_scale, label="sun azimuth [degrees, 180 = south]",
                              tick_values=np.arange(0, 361, 45), grid_color="#eeeeee")
        self.y_axis = bq.Axis(scale=self.y_scale, orientation="vertical", side="left",
                              label="elevation [degrees]", tick_values=np.arange(0, 91, 15),
                              grid_color="#eeeeee")
        self.figure = bq.Figure(
            marks=[self.region_marks, self.month_marks, self.key_marks, self.region_labels,
                   self.key_labels, self.hour_labels],
            axes=[self.x_axis, self.y_axis], display_toolbar=False,
            fig_margin={"top": 12, "bottom": 44, "left": 52, "right": 10},
            layout=w.Layout(width=f"{width_px}px", height=f"{height_px}px"))
        self.figure.add_class("eaveline-sky")
        self.title = w.HTML()
        self.table = w.HTML()
        self.table.add_class("eaveline-sky-table")
        self.regions: list[SkyRegion] = []
        self.paths: list[SunPath] = []
        self._paths_for = None
        super().__init__([w.VBox([self.title, LazyFigure(self.figure)]), self.table])

    def show(self, *, site, casters, point, module_id: str, monthly: pd.DataFrame,
             year: int = TYPICAL_YEAR, basis: str = "DC") -> None:
        """Draw the chart for one module.

        Parameters
        ----------
        site : layout.scene.site.Site
            For the sun's paths.
        casters : sequence
            Everything that can shade the module (:func:`layout.power.energy.scene_casters`).
        point : array_like, shape (3,)
            The module's centre, site frame [m].
        module_id : str
            Shown in the title.
        monthly : pandas.DataFrame
            The module's monthly figures (:meth:`layout.study.analysis.Evaluation.module_monthly`).
        year : int, keyword-only
            Calendar year of the sun paths.
        basis : str, keyword-only
            Energy basis of the monthly table, "AC" or "DC".
        """
        if self._paths_for != (site, year):
            self.paths = sun_paths(site, year=year)
            self._paths_for = (site, year)
            self._draw_paths()
        self.regions = skyline_regions(point, casters)
        rings, fills, lx, ly, lt = [], [], [], [], []
        for k, region in enumerate(self.regions):
            colour = style.CASTER_COLOURS[k % len(style.CASTER_COLOURS)]
            for ring in polygon_rings(region.outline):
                rings.append(ring)
                fills.append(colour)
            lx.append(float(np.clip(region.top_azimuth_deg, 25.0, 335.0)))  # inside the axes
            ly.append(min(region.top_deg + 2.0, 88.0))
            lt.append(region.label)
        x, y = _padded(rings)
        with self.region_marks.hold_sync(), self.region_labels.hold_sync():
            self.region_marks.x, self.region_marks.y = x, y
            self.region_marks.colors = ["#5d5d5d"] * max(len(rings), 1)
            self.region_marks.fill_colors = fills
            self.region_marks.fill_opacities = [0.55] * len(fills)
            self.region_labels.x, self.region_labels.y = lx, ly
            self.region_labels.text = lt
        self.title.value = (f"<div style='font-size:12px;color:{style.INK}'>Sky seen from "
                            f"module <b>{html.escape(module_id)}</b>: the sun is hidden where "
                            "a path crosses a shaded region.</div>")
        self.table.value = monthly_html(monthly, basis=basis)

    def _draw_paths(self) -> None:
        months = [p for p in self.paths if p.month not in KEY_PATHS]
        keys = [p for p in self.paths if p.month in KEY_PATHS]
        mx, my = _padded([np.column_stack([p.azimuth_deg, p.elevation_deg]) for p in months])
        kx, ky = _padded([np.column_stack([p.azimuth_deg, p.elevation_deg]) for p in keys])
        labels_x, labels_y, labels = [], [], []
        for p in keys:
            top = int(np.nanargmax(p.elevation_deg))
            labels_x.append(float(p.azimuth_deg[top]) + 4.0)
            labels_y.append(float(p.elevation_deg[top]) + 1.5)
            labels.append(KEY_PATHS[p.month])
        hx, hy, ht = [], [], []
        june = next(p for p in self.paths if p.month == 6)
        for hour in range(5, 21):  # clock hours along the longest day
            at = np.flatnonzero(np.isclose(june.hours, hour))
            if len(at) and np.isfinite(june.elevation_deg[at[0]]):
                hx.append(float(june.azimuth_deg[at[0]]))
                hy.append(float(june.elevation_deg[at[0]]) + 2.5)
                ht.append(f"{hour}h")
        with self.month_marks.hold_sync(), self.key_marks.hold_sync(), \
                self.key_labels.hold_sync(), self.hour_labels.hold_sync():
            self.month_marks.x, self.month_marks.y = mx, my
            self.key_marks.x, self.key_marks.y = kx, ky
            self.key_labels.x, self.key_labels.y, self.key_labels.text = (labels_x, labels_y,
                                                                          labels)
            self.hour_labels.x, self.hour_labels.y, self.hour_labels.text = hx, hy, ht
