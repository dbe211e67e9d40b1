"""Building footprints from building points: where roofs are, as plan polygons.

Points classed as building are binned on a fine grid; the occupied cells are closed (gaps
between scan lines filled), split into connected buildings, and each is traced to a polygon.
The traced outline runs through the outermost points, which lie inside the true roof edge by
about half the spacing of the points (the last pulse to land on a roof falls short of its
edge by a part of the spacing). Most footprints are rectangles: when the traced outline fills
the rectangle fitted to its points almost wholly, the rectangle is kept (an L stays an L).
The rectangle's sides come from the points themselves: its axes follow the outline's dominant
edge direction, and along each axis the points of a rectangle are uniform, so each side is
found by extending the line through two quantiles of the points' coordinate, 0.4 m in from
either side, to 0 % and 100 %, which noise near the edge (up to about 0.13 m, a third of that
depth) does not bias.
"""

from __future__ import annotations

import math

import numpy as np
import shapely
from scipy import ndimage

__all__ = ["footprints_from_points", "rectangle_from_points"]

#: A traced outline that fills this share of its fitted rectangle becomes the rectangle (most
#: houses are rectangles; an L fills at most about three quarters of its rectangle).
RECTANGLE_FILL = 0.9


def _dominant_direction(polygon: shapely.Polygon) -> float:
    """Direction of the outline's edges modulo 90°, weighted by length [radians]."""
    ring = np.asarray(polygon.exterior.coords)
    d = np.diff(ring, axis=0)
    length = np.hypot(d[:, 0], d[:, 1])
    angle = np.arctan2(d[:, 1], d[:, 0]) * 4.0  # modulo 90°: four times the angle
    return float(np.arctan2(np.sum(length * np.sin(angle)), np.sum(length * np.cos(angle)))
                 / 4.0)


def _rectangle(x, y, polygon: shapely.Polygon) -> shapely.Polygon:
    """Rectangle fitted to points uniform over it (quantile extrapolation per axis)."""
    return rectangle_from_points(x, y, math.degrees(_dominant_direction(polygon)))


def rectangle_from_points(x, y, direction_deg: float) -> shapely.Polygon:
    """Fit a rectangle with sides along ``direction_deg`` to points spread evenly over it.

    Parameters
    ----------
    x, y : array_like
        Points, site frame [m].
    direction_deg : float
        Direction of one pair of sides, counter-clockwise from the x axis [degrees]; a
        roof face's eave runs at ``90 - azimuth``.

    Returns
    -------
    shapely.Polygon
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    theta = math.radians(direction_deg)
    c, s = math.cos(theta), math.sin(theta)
    u = x * c + y * s
    v = -x * s + y * c
    sides = []
    for w in (u, v):
        q = float(np.clip(0.4 / max(np.ptp(w), 1e-9), 0.005, 0.1))
        lo, hi = np.quantile(w, [q, 1.0 - q])
        step = (hi - lo) / (1.0 - 2.0 * q)
        sides.append((lo - q * step, hi + q * step))
    (u0, u1), (v0, v1) = sides
    corners = np.array([(u0, v0), (u1, v0), (u1, v1), (u0, v1)])
    return shapely.Polygon(np.column_stack([corners[:, 0] * c - corners[:, 1] * s,
                                            corners[:, 0] * s + corners[:, 1] * c]))


def footprints_from_points(x, y, *, density: float, min_area_m2: float = 10.0,
                           cell_m: float | None = None) -> list[shapely.Polygon]:
    """Plan outlines of the buildings whose roof points are given.

    Parameters
    ----------
    x, y : array_like
        Building points, site frame [m].
    density : float
        Points per m² of the scan.
    min_area_m2 : float, default 10
        Smaller outlines (a shed, a stray cluster) are dropped [m²].
    cell_m : float, optional
        Grid cell [m]; about the point spacing by default.

    Returns
    -------
    list of shapely.Polygon
        Largest first.
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    if len(x) == 0:
        return []
    spacing = 1.0 / math.sqrt(density)
    cell = cell_m or max(0.25, spacing)
    x0, y0 = float(x.min()) - 2 * cell, float(y.min()) - 2 * cell
    nx = int((x.max() - x0) / cell) + 3
    ny = int((y.max() - y0) / cell) + 3
    grid = np.zeros((ny, nx), dtype=bool)
    grid[((y - y0) / cell + 0.5).astype(int), ((x - x0) / cell + 0.5).astype(int)] = True
    closed = ndimage.binary_closing(grid, structure=np.ones((3, 3)), iterations=2)
    closed = ndimage.binary_fill_holes(closed | grid)
    labels, count = ndimage.label(closed)
    out = []
    for k in range(1, count + 1):
        part = labels == k
        if part.sum() * cell * cell < min_area_m2 * 0.5:
            continue
        inside = part[((y - y0) / cell + 0.5).astype(int), ((x - x0) / cell + 0.5).astype(int)]
        hull = shapely.concave_hull(shapely.MultiPoint(np.column_stack([x[inside],
                                                                        y[inside]])),
                                    ratio=0.2)
        if not isinstance(hull, shapely.Polygon) or hull.area < min_area_m2:
            continue
        rect = _rectangle(x[inside], y[inside], hull)
        if hull.area >= RECTANGLE_FILL * rect.area:
            outline = rect
        else:
            outline = hull.buffer(spacing / 4, join_style="mitre").simplify(spacing / 2)
        out.append(shapely.orient_polygons(outline))
    out.sort(key=lambda p: -p.area)
    return out
