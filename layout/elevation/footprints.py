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

A quantile uses only the count of the points beyond it, so it places a side to about
``L / sqrt(N q)`` (0.05 m at 12 points/m² on a 12 m × 9 m roof): the points' outline is
unbiased but scattered. Where the points around a roof are classed too (ground beside the
walls, building on the roof), :func:`fit_sides_to_classes` places each side again from the
points within half a metre of it, as the line where a point is as likely to be roof as
ground: the 50 % point of a probit fit of the class against the distance across the side
(Finney 1971), which uses every point near the edge and halves that scatter.

References
----------
.. [1] Finney, D. J. (1971). Probit Analysis, 3rd ed. Cambridge University Press, chapter 4
   (maximum-likelihood fit of a normal sigmoid; its 50 % point).
"""

from __future__ import annotations

import math

import numpy as np
import shapely
from scipy import ndimage, optimize, special

__all__ = ["fit_sides_to_classes", "footprints_from_points", "rectangle_from_points"]

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


def _probit_edge(across, inside, *, start: float, band_m: float) -> float | None:
    """50 % point of a probit fit of ``inside`` on ``across`` (outward distance) [m].

    Maximises ``sum(log Phi((e - d) / s))`` over the roof points and ``log Phi((d - e) / s)``
    over the others (Finney 1971, ch. 4), for the edge ``e`` and its blur ``s`` (the
    points' plan scatter; at least 1 cm, so classes that change sharply put the edge midway
    across the gap). None when the fit fails or lands outside the band.
    """
    sign = np.where(inside, 1.0, -1.0)

    def cost(params):
        edge, log_s = params
        s = math.exp(log_s)
        t = sign * (edge - across) / s
        log_cdf = special.log_ndtr(t)
        ratio = np.exp(-0.5 * t * t - log_cdf) / math.sqrt(2.0 * math.pi)  # phi / Phi
        d_edge = -float(np.sum(ratio * sign)) / s
        d_log_s = float(np.sum(ratio * t))
        return -float(np.sum(log_cdf)), np.array([d_edge, d_log_s])

    result = optimize.minimize(cost, np.array([start, math.log(0.1)]), jac=True,
                               method="L-BFGS-B",
                               bounds=[(start - band_m, start + band_m),
                                       (math.log(0.01), math.log(1.0))])
    edge = float(result.x[0])
    if not result.success or abs(edge - start) >= band_m - 1e-6:
        return None
    return edge


def fit_sides_to_classes(rectangle: shapely.Polygon, x, y, roof, ground, *,
                         band_m: float = 0.5, min_points: int = 10) -> shapely.Polygon:
    """Place each side of a rectangle found from roof points where roof gives way to ground.

    For each side, the points within ``band_m`` across it (and more than ``band_m`` from
    its ends, away from the other sides) are either roof or ground; the side moves to the
    50 % point of a probit fit of the class against the distance across the side
    (Finney 1971). Other points (vegetation, a wall, noise) are left out: a crown over the
    eave hides the edge rather than marking it. A side with fewer than ``min_points`` roof
    or ground points about it (a party wall, a garden under a tree) stays where it was.

    Parameters
    ----------
    rectangle : shapely.Polygon
        Four corners, e.g. from :func:`rectangle_from_points` [m].
    x, y : array_like
        Points about the building, site frame [m].
    roof, ground : array_like of bool
        Which points are the roof's, and which the ground's (LAS class 6 and 2).
    band_m : float, default 0.5
        Half-width of the strip about each side that is fitted [m].
    min_points : int, default 10
        Fewest roof and fewest ground points in a strip for a fit.

    Returns
    -------
    shapely.Polygon
        The rectangle with its sides moved; the one given when it has not four corners.

    References
    ----------
    .. [1] Finney, D. J. (1971). Probit Analysis, 3rd ed. Cambridge University Press, ch. 4.
    """
    corners = np.asarray(rectangle.exterior.coords)[:-1]
    if len(corners) != 4:
        return rectangle
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    roof = np.asarray(roof, dtype=bool)
    ground = np.asarray(ground, dtype=bool)
    d = corners[1] - corners[0]
    c, s = d / np.hypot(*d)
    u, v = x * c + y * s, -x * s + y * c
    cu, cv = corners @ np.array([c, s]), corners @ np.array([-s, c])
    sides = [float(cu.min()), float(cu.max()), float(cv.min()), float(cv.max())]
    box = ((u > sides[0] - band_m) & (u < sides[1] + band_m) & (v > sides[2] - band_m)
           & (v < sides[3] + band_m) & (roof | ground))
    u, v, roof = u[box], v[box], roof[box]
    for k in range(4):
        across, along = (u, v) if k < 2 else (v, u)
        lo, hi = (sides[2], sides[3]) if k < 2 else (sides[0], sides[1])
        outward = 1.0 if k % 2 else -1.0
        dist = outward * (across - sides[k])  # positive outside the rectangle
        near = (np.abs(dist) < band_m) & (along > lo + band_m) & (along < hi - band_m)
        if min(int(np.sum(near & roof)), int(np.sum(near & ~roof))) < min_points:
            continue
        edge = _probit_edge(dist[near], roof[near], start=0.0, band_m=band_m)
        if edge is not None:
            sides[k] += outward * edge
    u0, u1, v0, v1 = sides
    local = np.array([(u0, v0), (u1, v0), (u1, v1), (u0, v1)])
    return shapely.orient_polygons(shapely.Polygon(
        np.column_stack([local[:, 0] * c - local[:, 1] * s, local[:, 0] * s + local[:, 1] * c])))


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
