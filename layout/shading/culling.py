"""Culling: which sun steps can meet an obstruction, seen from each point.

Each solid lies inside a vertical prism over its plan convex hull (a circle for the round
solids) between its lowest and highest z. Seen from a point, that prism spans an azimuth window
and an elevation band; only sun steps inside both are ray-tested. With the sun steps binned by
azimuth sector and sorted by elevation (:mod:`layout.shading.sun_sectors`), a point's
candidates are one contiguous run per sector its window spans, found by binary search; a point
whose band misses the sun's elevations in all those sectors is dropped at once (a coarse
bounding-cylinder pass first, for blocks and plates). For a plate, each sector's run is also cut
to the elevations on the far side of the plate's plane; for a spheroid crown, to the elevations
of the crown's cap over that sector; for a cone crown, to the heights where the cone is still
as wide as the ray's closest approach to its axis. A run that starts below its sector's
lowest sun (or ends above its highest) takes the sector's end from a table, with no search.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np
import shapely

from ..scene.obstructions import Block, Plate, Tree
from .plates import _plate_geometry, _plate_side
from .sun_sectors import _EL_SHIFT, _SECTORS, _sector, _SunOrder

_ANGLE_MARGIN = 1e-9  # [rad] widening of cull windows against rounding


@functools.lru_cache(maxsize=65536)
def _hull_corners(obstruction) -> np.ndarray:
    """Corners (K, 2) of the plan convex hull, counter-clockwise (two for a vertical plate)."""
    hull = shapely.orient_polygons(shapely.convex_hull(obstruction.footprint_polygon))
    corners = shapely.get_coordinates(hull)
    return corners[:-1] if isinstance(hull, shapely.Polygon) else corners


def _hull_distance(corners: np.ndarray, px: np.ndarray, py: np.ndarray):
    """Plan distance from points to a convex polygon (0 inside) and the inside flags.

    Loops over the few edges with whole-array operations (faster than reducing a small
    trailing axis).
    """
    n_corners = len(corners)
    d2 = np.full(len(px), np.inf)
    inside = np.full(len(px), n_corners >= 3)
    for k in range(n_corners if n_corners >= 3 else 1):
        ax, ay = corners[k]
        bx, by = corners[(k + 1) % n_corners]
        ex, ey = bx - ax, by - ay
        wx, wy = px - ax, py - ay
        t = np.clip((wx * ex + wy * ey) / max(ex * ex + ey * ey, 1e-300), 0.0, 1.0)
        dx, dy = wx - t * ex, wy - t * ey
        np.minimum(d2, dx * dx + dy * dy, out=d2)
        if n_corners >= 3:
            inside &= ex * wy - ey * wx >= 0
    dist = np.sqrt(d2)
    inside |= dist <= 1e-9
    return np.where(inside, 0.0, dist), inside


def _angular_bounds(points, obstruction, *, coarse: bool = False):
    """Azimuth window (centre, half width) and elevation band seen from each point [rad].

    Every direction from a point that meets the obstruction has an azimuth within ``centre ±
    half`` and an elevation within ``el_min .. el_max``. Blocks and plates use their plan
    convex hull (the extreme directions pass through hull corners); the other solids, and
    every solid when ``coarse``, the vertical cylinder around their plan bounding box.
    """
    xmin, ymin, zmin, xmax, ymax, zmax = obstruction.bounds
    if isinstance(obstruction, (Block, Plate)) and not coarse:
        return _hull_bounds(points, _hull_corners(obstruction), zmin, zmax)
    px, py = points[:, 0], points[:, 1]
    cx, cy = 0.5 * (xmin + xmax), 0.5 * (ymin + ymax)
    radius = 0.5 * math.hypot(xmax - xmin, ymax - ymin) if coarse else 0.5 * (xmax - xmin)
    dx, dy = cx - px, cy - py
    dist = np.hypot(dx, dy)
    near = np.maximum(dist - radius, 0.0)
    far = dist + radius
    inside = dist <= radius * (1 + 1e-12)
    with np.errstate(divide="ignore", invalid="ignore"):
        half = np.where(inside, math.pi,
                        np.arcsin(np.clip(radius / dist, 0.0, 1.0)) + _ANGLE_MARGIN)
    center = np.arctan2(dx, dy)
    return (center, half, *_elevation_band(points, near, far, zmin, zmax))


def _elevation_band(points, near, far, zmin, zmax):
    """Return the elevation band [rad] of a solid from ``zmin`` to ``zmax`` [m].

    The solid lies at plan distances from ``near`` to ``far`` [m] of each point.
    """
    up = zmax - points[:, 2]
    down = zmin - points[:, 2]
    el_max = np.arctan2(up, np.where(up > 0, near, far))  # one arctan2 a bound
    el_max += _ANGLE_MARGIN
    el_min = np.arctan2(down, np.where(down >= 0, far, near))
    el_min -= _ANGLE_MARGIN
    return el_min, el_max


def _hull_bounds(points, corners, zmin: float, zmax: float, *, plan=None):
    """Return the angular bounds (as :func:`_angular_bounds`) of a prism over a convex polygon.

    ``corners`` (K, 2) counter-clockwise (two for a vertical plate); the extreme directions
    pass through the corners. ``plan``, a dict if given, receives each point's plan distance
    from the polygon (``near``, 0 inside) [m].
    """
    px, py = points[:, 0], points[:, 1]
    first = np.arctan2(corners[0, 0] - px, corners[0, 1] - py)
    low = np.zeros(len(px))
    high = np.zeros(len(px))
    far2 = (corners[0, 0] - px) ** 2 + (corners[0, 1] - py) ** 2
    for cx_, cy_ in corners[1:]:
        vx, vy = cx_ - px, cy_ - py
        delta = (np.arctan2(vx, vy) - first + math.pi) % (2 * math.pi) - math.pi
        np.minimum(low, delta, out=low)
        np.maximum(high, delta, out=high)
        np.maximum(far2, vx * vx + vy * vy, out=far2)
    center = first + 0.5 * (low + high)
    near, inside = _hull_distance(corners, px, py)
    if plan is not None:
        plan["near"] = near
    half = np.where(inside, math.pi, 0.5 * (high - low) + _ANGLE_MARGIN)
    far = np.sqrt(far2)
    return (center, half, *_elevation_band(points, near, far, zmin, zmax))


def _sector_spans(sun_order: _SunOrder, center, half, el_min, el_max):
    """First sector, sector count and shifted elevation band of each point's window.

    The count is 0 for a point whose band misses every sun elevation in its sectors.
    """
    full = half >= math.pi
    lo_w = (center - half + math.pi) % (2 * math.pi) - math.pi
    hi_w = (center + half + math.pi) % (2 * math.pi) - math.pi
    s_lo = np.where(full, 0, _sector(lo_w))
    s_hi = _sector(hi_w)
    span = np.where(full, _SECTORS, (s_hi - s_lo) % _SECTORS + 1)
    # a window wider than pi - margin can wrap onto its own first sector: take all sectors
    span = np.where(~full & (half > 0.5 * math.pi) & (span == 1), _SECTORS, span)
    e_lo = np.clip(el_min, -0.5 * math.pi, 0.5 * math.pi) + _EL_SHIFT
    e_hi = np.clip(el_max, -0.5 * math.pi, 0.5 * math.pi) + _EL_SHIFT
    last = span - 1
    reach = (e_lo <= e_hi) & (e_hi >= sun_order.range_low[s_lo, last]) \
        & (e_lo <= sun_order.range_high[s_lo, last])
    return s_lo, np.where(reach, span, 0), e_lo, e_hi


@functools.lru_cache(maxsize=65536)
def _plate_sector_limits(plate: Plate) -> tuple[np.ndarray, np.ndarray]:
    """Per azimuth sector, elevation limits (+ shift) from the plate's plane [rad].

    A ray from a point on the upper side of the plane (``normal_z >= 0``) meets the plane only
    when ``d · n < 0``: within a sector that caps its elevation at ``upper[s]``; from the lower
    side it needs ``d · n > 0``, an elevation of at least ``lower[s]``. Exact extremes of
    ``nx sin(az) + ny cos(az)`` over each sector make the limits conservative.
    """
    normal = _plate_geometry(plate)[3]
    nx, ny, nz = normal if normal[2] >= 0 else -normal
    width = 2 * math.pi / _SECTORS
    a0 = -math.pi + width * np.arange(_SECTORS)
    a1 = a0 + width
    amplitude = math.hypot(nx, ny)
    h0 = nx * np.sin(a0) + ny * np.cos(a0)
    h1 = nx * np.sin(a1) + ny * np.cos(a1)
    # h peaks (+amplitude) at azimuth atan2(nx, ny) and dips half a turn later; a sector's
    # extremes are there when they fall inside it, else at its ends
    az_max = math.atan2(nx, ny)  # azimuth where h = +amplitude
    rel_max = (az_max - a0) % (2 * math.pi)
    rel_min = (az_max + math.pi - a0) % (2 * math.pi)
    h_max = np.where(rel_max <= width, amplitude, np.maximum(h0, h1))
    h_min = np.where(rel_min <= width, -amplitude, np.minimum(h0, h1))
    if nz > 1e-12:
        upper = np.arctan2(-h_min, nz)
        lower = np.arctan2(-h_max, nz)
    else:  # vertical plate: the sector is open or closed as a whole
        upper = np.where(h_min < 0, 0.5 * math.pi, -math.inf)
        lower = np.where(h_max > 0, -0.5 * math.pi, math.inf)
    return upper + _ANGLE_MARGIN + _EL_SHIFT, lower - _ANGLE_MARGIN + _EL_SHIFT


def _candidate_ranges(points, sun_order: _SunOrder, obstruction, *, coarse: bool = True):
    """Per point, runs of sector-sorted sun steps that may meet the obstruction.

    Returns ``(point, start, count)`` arrays, one row per (point, azimuth sector) pair the
    point's window spans, each run holding the sector's steps inside the point's elevation
    band (positions in ``sun_order.order``). A point whose band misses every sun elevation in
    its window's sectors gets no run; for blocks and plates a coarse bound (bounding
    cylinder) drops such points before the tighter hull bound is computed, unless
    ``coarse`` is False (points already culled by their group, :mod:`.point_groups`).
    """
    index = np.arange(len(points))
    if coarse and isinstance(obstruction, (Block, Plate)):
        _, span, _, _ = _sector_spans(sun_order,
                                      *_angular_bounds(points, obstruction, coarse=True))
        index = np.flatnonzero(span)
    tighten = None
    if isinstance(obstruction, Plate):
        # the sun must lie on the far side of the plate's plane from the point
        upper, lower = _plate_sector_limits(obstruction)
        normal = _plate_geometry(obstruction)[3]
        side = _plate_side(obstruction, points[index]) * (1.0 if normal[2] >= 0 else -1.0)

        def tighten(local, sector, run_lo, run_hi):
            above = side[local] > 0
            return (np.where(above, run_lo, np.maximum(run_lo, lower[sector])),
                    np.where(above, np.minimum(run_hi, upper[sector]), run_hi))

    return _window_runs(sun_order, index, _angular_bounds(points[index], obstruction), tighten)


def _window_runs(sun_order: _SunOrder, index, bounds, tighten=None):
    """Find the runs of sector-sorted sun steps inside each point's angular window.

    ``bounds`` is ``(centre, half, el_min, el_max)`` per point of ``index`` (as from
    :func:`_angular_bounds`); ``tighten(local, sector, run_lo, run_hi)``, if given, narrows
    the shifted elevation band of each (point, sector) run. Returns ``(point, start, count)``
    as :func:`_candidate_ranges` does.
    """
    s_lo, span, e_lo, e_hi = _sector_spans(sun_order, *bounds)
    total = int(span.sum())
    local = np.repeat(np.arange(len(index)), span)
    sector = np.repeat(s_lo - (np.cumsum(span) - span), span)
    sector += np.arange(total)  # s_lo + 0, 1, ... within each point's window
    sector &= _SECTORS - 1  # wrapped (a power of two)
    run_lo, run_hi = np.repeat(e_lo, span), np.repeat(e_hi, span)
    # a run whose band misses its own sector's sun elevations (a sector the sun never
    # reaches, a band below the sector's lowest sun) holds no step: dropped before the
    # searches, and before tightening
    low, high = sun_order.range_low[sector, 0], sun_order.range_high[sector, 0]
    reach = np.flatnonzero((run_hi >= low) & (run_lo <= high))
    if len(reach) < total:
        local, sector, run_lo, run_hi, low, high = (
            a[reach] for a in (local, sector, run_lo, run_hi, low, high))
    if tighten is not None:
        run_lo, run_hi = tighten(local, sector, run_lo, run_hi)
    start = _run_ends(sun_order, sector, run_lo, run_lo <= low, "left")
    stop = _run_ends(sun_order, sector, run_hi, run_hi >= high, "right")
    count = stop - start
    keep = count > 0
    return index[local[keep]], start[keep], count[keep]


def _run_ends(sun_order: _SunOrder, sector, band, whole, side: str):
    """Sorted positions where shifted elevations ``band`` fall in their sectors' steps.

    As ``np.searchsorted(sun_order.key, sector * 4 + band, side)``; where ``whole`` (the band
    end lies beyond every step of the sector), the sector's own end, from a table, without a
    search: a run from below a sector's lowest sun (a point below the top of a solid) begins
    where the sector begins.
    """
    ends = sun_order.sector_start[sector + (side == "right")]
    search = np.flatnonzero(~whole)
    if len(search):
        sec = sector[search]
        ends[search] = np.searchsorted(sun_order.key, sec * 4.0 + band[search], side=side)
    return ends


def _sector_offsets(center, sector):
    """Azimuth offsets [rad] of each sector's ends from a window's centre, and the smallest.

    Returns ``(d0, d1, d_min)``: the offsets of the sector's two ends (wrapped to
    [-pi, pi)) and the smallest absolute offset within the sector (0 when it holds the
    centre).
    """
    width = 2 * math.pi / _SECTORS
    a0 = -math.pi + width * sector
    d0 = (a0 - center + math.pi) % (2 * math.pi) - math.pi
    d1 = (a0 + width - center + math.pi) % (2 * math.pi) - math.pi
    d_min = np.where((d0 <= 0) & (d1 >= 0), 0.0, np.minimum(np.abs(d0), np.abs(d1)))
    return d0, d1, d_min


#: [rad] widening of a tree crown's cull window: its bounds go through arcsin and arccos
#: near 1, where a rounding error of 1e-16 grows to about 1e-8 rad.
_CROWN_MARGIN = 1e-6


def _crown_ranges(points, sun_order: _SunOrder, tree: Tree):
    """Find the runs of sun steps that may meet a spheroid crown (as :func:`_candidate_ranges`).

    Scaling heights about the crown's centre by ``crown_radius / crown_semi_axis_z`` turns
    the crown into a sphere of radius R, seen from an outside point as a circular cap of
    angular radius ``asin(R / rho)`` around the direction of its centre; the scaling keeps
    azimuths and maps a scaled elevation e' to ``atan(k tan e')`` (k = semi-axis / R),
    monotone, so bounds carry over. Each point gets the cap's azimuth window and elevation
    band; each (point, azimuth sector) run gets the cap's elevation range over that sector:
    at an azimuth offset d from the centre the cap holds the elevations e with
    ``A sin e + B cos e >= cos(ang)`` (A = sin ec, B = cos ec cos d), an interval centred on
    ``psi = atan2(A, B)`` of half width ``acos(cos(ang) / hypot(A, B))``; over a sector, the
    half width is largest at the smallest |d| and psi moves monotonically toward the pole of
    ``sign(A)``, so the sector's range is bounded with psi at the far end.
    """
    radius = tree.crown_radius
    k = tree.crown_semi_axis_z / radius
    cx, cy = tree.center
    dx, dy = cx - points[:, 0], cy - points[:, 1]
    dh = np.hypot(dx, dy)
    hz = (tree.crown_center_z - points[:, 2]) / k
    rho = np.hypot(dh, hz)
    ec = np.arctan2(hz, dh)
    with np.errstate(divide="ignore", invalid="ignore"):
        ang = np.arcsin(np.minimum(radius / rho, 1.0))
        half_cap = np.arcsin(np.minimum(radius / dh, 1.0))
    beside = dh > radius * (1 + 1e-12)  # outside the crown's vertical cylinder
    inside = rho <= radius * (1 + 1e-12)
    center = np.arctan2(dx, dy)
    half = np.where(beside, half_cap + _CROWN_MARGIN, math.pi)

    def true_elevation(scaled):
        return np.arctan(k * np.tan(np.clip(scaled, -0.5 * math.pi, 0.5 * math.pi)))

    el_min = np.where(inside, -0.5 * math.pi, true_elevation(ec - ang)) - _CROWN_MARGIN
    el_max = np.where(inside, 0.5 * math.pi, true_elevation(ec + ang)) + _CROWN_MARGIN
    # the per-point terms of each run, once a point (the same values as per run)
    sin_ec, cos_ec, cos_ang = np.sin(ec), np.cos(ec), np.cos(ang)

    def tighten(local, sector, run_lo, run_hi):
        d0, d1, d_min = _sector_offsets(center[local], sector)
        reach = half_cap[local]
        d_max = np.minimum(np.maximum(np.abs(d0), np.abs(d1)), reach)
        d_min = np.minimum(d_min, reach)
        a_, cos_e = sin_ec[local], cos_ec[local]
        b_near, b_far = cos_e * np.cos(d_min), cos_e * np.cos(d_max)
        width_near = np.arccos(np.clip(cos_ang[local] / np.hypot(a_, b_near), -1.0, 1.0))
        psi_near, psi_far = np.arctan2(a_, b_near), np.arctan2(a_, b_far)
        up = a_ >= 0
        lo = np.where(up, psi_near, psi_far) - width_near
        hi = np.where(up, psi_far, psi_near) + width_near
        use = beside[local]
        lo = np.where(use, true_elevation(lo) - _CROWN_MARGIN + _EL_SHIFT, run_lo)
        hi = np.where(use, true_elevation(hi) + _CROWN_MARGIN + _EL_SHIFT, run_hi)
        return np.maximum(run_lo, lo), np.minimum(run_hi, hi)

    return _window_runs(sun_order, np.arange(len(points)), (center, half, el_min, el_max),
                        tighten)


def _cone_ranges(points, sun_order: _SunOrder, tree: Tree):
    """Find the runs of sun steps that may meet a cone crown (as :func:`_candidate_ranges`).

    The crown's bounding column gives each point its window and band; each (point, azimuth
    sector) run is then capped by the cone's narrowing: a ray whose azimuth is ``d`` off the
    direction of the axis passes no nearer to the axis than ``D sin|d|`` in plan (``D`` the
    point's plan distance from the axis), while the cone's radius there,
    ``R (apex - z) / (apex - base)``, shrinks with the height ``z``: the ray can be inside
    only below ``z_top = apex - (apex - base) D sin|d| / R``, at a plan distance between
    ``D - R`` and ``D + R``. Over a sector the smallest ``|d|`` gives the highest
    ``z_top``, so the run's elevations stop at ``atan2(z_top - z, D - R)`` (``D + R`` when
    ``z_top`` is below the point). Points inside the crown's column keep their runs.
    """
    x0, y0, _, x1, y1, top = tree.bounds
    base = tree.ground_m + tree.crown_base
    column = _Column((x0, y0, base, x1, y1, top))
    center, half, el_min, el_max = _angular_bounds(points, column)
    (cx, cy), radius = tree.center, tree.crown_radius
    dist = np.hypot(cx - points[:, 0], cy - points[:, 1])
    beside = dist > radius * (1 + 1e-9) + 1e-9
    slope = (top - base) / radius  # height lost per metre of radius

    def tighten(local, sector, run_lo, run_hi):
        d_min = _sector_offsets(center[local], sector)[2]
        reach = dist[local]
        up = top - slope * reach * np.sin(np.minimum(d_min, 0.5 * math.pi)) \
            - points[local, 2]
        el = np.arctan2(up, np.where(up > 0, reach - radius, reach + radius))
        el += _CROWN_MARGIN + _EL_SHIFT
        return run_lo, np.where(beside[local], np.minimum(run_hi, el), run_hi)

    return _window_runs(sun_order, np.arange(len(points)), (center, half, el_min, el_max),
                        tighten)


@dataclass(frozen=True)
class _Column:
    """A vertical solid known only by its bounding box (a tree's trunk), for culling."""

    bounds: tuple[float, float, float, float, float, float]


def _expand_runs(point, start, count):
    """Enumerate every (point, sorted sun position) pair of the given runs."""
    total = int(count.sum())
    first = np.cumsum(count) - count
    pt = np.repeat(point, count)
    pos = np.repeat(start - first, count)
    pos += np.arange(total)  # in place: a third large array costs more than the sum
    return pt, pos
