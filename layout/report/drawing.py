"""The report's figures drawn with matplotlib: the plan and the sky chart, as SVG or PNG.

Only this package of the core imports matplotlib, and only its object interface
(:class:`matplotlib.figure.Figure`, no pyplot and no global state). The plan is drawn at true
scale with equal axes, north up, with a north arrow and a scale bar in the project's units;
its elements carry SVG ids (``face:<name>``, ``module:<id>``, ``scale-bar``) so that a reader,
or a test, can measure the drawing. The sky chart draws what the planner's sky chart draws.
"""

from __future__ import annotations

import io
import math

import numpy as np
import shapely
from matplotlib.cm import ScalarMappable
from matplotlib.colors import LinearSegmentedColormap, Normalize
from matplotlib.figure import Figure
from matplotlib.patches import FancyArrow, Polygon

from ..sky.paths import KEY_PATHS
from . import colours
from .plan import PLAN_WIDTH_MM, number_font

__all__ = ["SVG_RC", "draw", "figure_png", "figure_svg", "scale_bar_length"]

#: Inches per millimetre.
_MM = 1.0 / 25.4
#: Width of a full-width figure [mm] (fits A4 and Letter inside 15 mm margins).
FULL_WIDTH_MM = PLAN_WIDTH_MM
#: SVG settings: text as text (searchable, small), fixed ids so that output repeats.
SVG_RC = {"svg.fonttype": "none", "svg.hashsalt": "eaveline-report", "font.size": 8.0,
          "font.family": "DejaVu Sans"}


def scale_bar_length(span: float) -> float:
    """Return a round scale-bar length near a quarter of ``span``: 1, 2 or 5 × a power of 10."""
    target = max(float(span) / 4.0, 1e-9)
    power = 10.0 ** math.floor(math.log10(target))
    for step in (5.0, 2.0, 1.0):
        if step * power <= target:
            return step * power
    return power


def _rings(geometry) -> list[np.ndarray]:
    return [np.asarray(r.coords) for r in shapely.get_rings(shapely.get_parts(geometry))]


def _polygons(geometry) -> list:
    return [p for p in shapely.get_parts(geometry)
            if isinstance(p, shapely.Polygon) and not p.is_empty]


def _draw_plan(fig: Figure, drawing) -> None:
    x0, y0, x1, y1 = drawing.bounds()
    pad = 1.0
    ax = fig.add_axes((0.01, 0.1, 0.98, 0.88))
    ax.set_xlim(x0 - pad, x1 + pad)
    ax.set_ylim(y0 - pad - 0.08 * (y1 - y0 + 2 * pad), y1 + pad)
    ax.set_aspect("equal")
    ax.set_axis_off()
    for name, ring in drawing.faces:
        ax.add_patch(Polygon(ring, closed=True, facecolor="#fbfbfb", edgecolor=colours.INK,
                             linewidth=0.9, gid=f"face:{name}", zorder=1))
    for category, zone in drawing.zones:
        style = colours.ZONE_STYLES[category]
        for part in _polygons(zone):
            ax.add_patch(Polygon(np.asarray(part.exterior.coords), closed=True,
                                 facecolor=style["fill"], alpha=style["opacity"],
                                 edgecolor="#8a8a8a", linewidth=0.0,
                                 hatch="////" if style["hatch"] else None, zorder=2))
    font = number_font(drawing, width_in=fig.get_figwidth())
    for number, module_id, corners, colour in drawing.modules:
        ax.add_patch(Polygon(corners, closed=True, facecolor=colour or colours.MODULE_FILL,
                             edgecolor=colours.MODULE_EDGE, linewidth=0.4,
                             gid=f"module:{module_id}", zorder=3))
        if font is not None and drawing.numbered:
            centre = corners.mean(axis=0)
            ax.text(centre[0], centre[1], str(number), ha="center", va="center",
                    fontsize=font, color=colours.INK, zorder=4)
    for corners in drawing.removed:
        ax.add_patch(Polygon(corners, closed=True, fill=False, edgecolor=colours.REMOVED_EDGE,
                             linewidth=0.5, linestyle="--", zorder=3))
    for label, tree, footprint in drawing.obstructions:
        for ring in _rings(footprint):
            ax.add_patch(Polygon(ring, closed=True, zorder=5,
                                 facecolor=colours.TREE_FILL if tree
                                 else colours.ZONE_STYLES["obstruction"]["fill"],
                                 alpha=0.8 if tree else 0.9, linewidth=0.6,
                                 edgecolor=colours.TREE_EDGE if tree else colours.INK))
        point = footprint.representative_point()
        ax.annotate(label, (point.x, point.y), xytext=(0, 7), textcoords="offset points",
                    ha="center", fontsize=6.5, color=colours.INK, zorder=6,
                    bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none",
                          "alpha": 0.8})
    for name, outline in drawing.from_data:
        for ring in _rings(outline):
            ax.add_patch(Polygon(ring, closed=True, fill=False, edgecolor=colours.DATA_EDGE,
                                 linewidth=1.3, linestyle=":", zorder=7, gid=f"data:{name}"))
    _north_arrow(fig)
    _scale_bar(ax, drawing, x0 - pad, y0 - pad - 0.04 * (y1 - y0 + 2 * pad), x1 - x0)
    if drawing.modules and np.isfinite(drawing.vmin):
        bar = fig.add_axes((0.62, 0.045, 0.34, 0.022))
        cmap = LinearSegmentedColormap.from_list("eaveline", colours.FIGURE_SCALE)
        high = drawing.vmax if drawing.vmax > drawing.vmin else drawing.vmin + 1.0
        fig.colorbar(ScalarMappable(norm=Normalize(drawing.vmin, high), cmap=cmap), cax=bar,
                     orientation="horizontal")
        bar.tick_params(labelsize=6.5, length=2)
        bar.set_title(drawing.metric_label, fontsize=7, color=colours.INK, pad=2)


def _north_arrow(fig: Figure) -> None:
    """North arrow in the band under the plan (the plan is drawn north up)."""
    fig.add_artist(FancyArrow(0.47, 0.012, 0.0, 0.07, width=0.004, head_width=0.016,
                              head_length=0.025, length_includes_head=True,
                              color=colours.INK, transform=fig.transFigure))
    fig.text(0.485, 0.03, "N", ha="left", va="center", fontsize=9, fontweight="bold",
             color=colours.INK)


def _scale_bar(ax, drawing, x: float, y: float, span_m: float) -> None:
    unit, unit_m = drawing.unit
    length = scale_bar_length(span_m / unit_m)
    end = x + length * unit_m
    ax.plot([x, end], [y, y], color=colours.INK, linewidth=2.0, solid_capstyle="butt",
            gid="scale-bar", zorder=7)
    for at in (x, end):
        ax.plot([at, at], [y - 0.12, y + 0.12], color=colours.INK, linewidth=0.8, zorder=7)
    ax.text(end + 0.2, y, f"{length:g} {unit}", va="center", fontsize=7, color=colours.INK,
            gid="scale-bar-label")


def _draw_sky(fig: Figure, drawing) -> None:
    ax = fig.add_axes((0.12, 0.14, 0.85, 0.8))
    ax.set_xlim(0.0, 360.0)
    ax.set_ylim(0.0, 90.0)
    ax.set_xticks(np.arange(0, 361, 45))
    ax.set_yticks(np.arange(0, 91, 15))
    ax.grid(color="#eeeeee", linewidth=0.5)
    ax.set_xlabel("sun azimuth [degrees, 180 = south]", fontsize=7)
    ax.set_ylabel("elevation [degrees]", fontsize=7)
    ax.tick_params(labelsize=6.5)
    for k, region in enumerate(drawing.regions):
        colour = colours.CASTER_COLOURS[k % len(colours.CASTER_COLOURS)]
        for part in _polygons(region.outline):
            ax.add_patch(Polygon(np.asarray(part.exterior.coords), closed=True,
                                 facecolor=colour, alpha=0.55, edgecolor="#5d5d5d",
                                 linewidth=0.5))
        ax.text(float(np.clip(region.top_azimuth_deg, 25.0, 335.0)),
                min(region.top_deg + 2.0, 88.0), region.label, ha="center", fontsize=6,
                color=colours.INK)
    for path in drawing.paths:
        key = path.month in KEY_PATHS
        ax.plot(path.azimuth_deg, path.elevation_deg,
                color=colours.FIGURE_SCALE[5] if key else "#9fb3b1",
                linewidth=1.4 if key else 0.6)
        if key and np.isfinite(path.elevation_deg).any():
            top = int(np.nanargmax(path.elevation_deg))
            ax.text(path.azimuth_deg[top] + 4.0, path.elevation_deg[top] + 1.5,
                    KEY_PATHS[path.month], fontsize=6, fontweight="bold",
                    color=colours.FIGURE_SCALE[6])
    june = next((p for p in drawing.paths if p.month == 6), None)
    if june is not None:
        for hour in range(5, 21):
            at = np.flatnonzero(np.isclose(june.hours, hour))
            if len(at) and np.isfinite(june.elevation_deg[at[0]]):
                ax.text(june.azimuth_deg[at[0]], june.elevation_deg[at[0]] + 2.5, f"{hour}h",
                        ha="center", fontsize=5.5, color="#5d6b6a")


def draw(figure_block, *, width_mm: float = FULL_WIDTH_MM) -> Figure:
    """Draw a :class:`layout.report.blocks.Figure` on a new matplotlib figure.

    Parameters
    ----------
    figure_block : layout.report.blocks.Figure
        ``kind`` ``"plan"`` or ``"sky"``.
    width_mm : float, keyword-only
        Width of the figure [mm]; the height follows the drawing.

    Returns
    -------
    matplotlib.figure.Figure
    """
    width = width_mm * _MM
    if figure_block.kind == "plan":
        x0, y0, x1, y1 = figure_block.data.bounds()
        aspect = (y1 - y0 + 2.0) / max(x1 - x0 + 2.0, 1e-6)
        fig = Figure(figsize=(width, float(np.clip(width * aspect * 1.12 + 0.5, 2.5, 8.0))))
        _draw_plan(fig, figure_block.data)
    elif figure_block.kind == "sky":
        fig = Figure(figsize=(width, width * 0.62))
        _draw_sky(fig, figure_block.data)
    else:
        raise ValueError(f"unknown figure kind {figure_block.kind!r}")
    return fig


def figure_svg(figure_block, *, width_mm: float = FULL_WIDTH_MM) -> str:
    """Return a figure as SVG text (no XML header), ready to embed in HTML."""
    import matplotlib

    with matplotlib.rc_context(SVG_RC):
        fig = draw(figure_block, width_mm=width_mm)
        out = io.StringIO()
        fig.savefig(out, format="svg", metadata={"Date": None, "Creator": "eaveline"})
    text = out.getvalue()
    return text[text.index("<svg"):]


def figure_png(figure_block, *, width_mm: float = FULL_WIDTH_MM, dpi: int = 200) -> bytes:
    """Return a figure as PNG bytes at ``dpi`` dots per inch."""
    import matplotlib

    with matplotlib.rc_context({**SVG_RC, "svg.fonttype": "path"}):
        fig = draw(figure_block, width_mm=width_mm)
        out = io.BytesIO()
        fig.savefig(out, format="png", dpi=dpi)
    return out.getvalue()
