"""Beam shading by exact ray tests: which points see the sun, and how much of it.

Frame
-----
Site frame, metres: x east, y north, z up. ``points`` are (N, 3) positions in that frame,
``sun`` is (T, 3) unit vectors toward the sun (see :func:`layout.sun.sun_vectors`). The ray of
point ``n`` at step ``t`` is ``points[n] + s · sun[t]`` for ``s >= ray_start``.

Ray start convention
--------------------
A ray starts a small distance ``ray_start`` (default :data:`RAY_START_M`, 1 µm) along its own
direction, not at the point itself. A point that lies on (or within floating-point noise of) the
surface of a solid, such as a module sample point on a flat roof modelled as a :class:`Block`,
is therefore not shaded by that solid when the sun is on its open side; it is shaded when the
sun is behind the surface it sits on. Solids are closed: a ray that touches a surface meets it.

Method
------
Every obstruction is tested exactly, in closed form, on numpy arrays:

* :class:`~layout.obstructions.Block`: the footprint is split into convex parts (the footprint
  itself if convex, otherwise a constrained Delaunay triangulation); each part with the two
  horizontal planes is a convex polyhedron, clipped against the ray by the Cyrus-Beck method [1].
* :class:`~layout.obstructions.Cylinder` and a tree trunk: ray against a vertical circular
  cylinder (a quadratic in plan) intersected with the slab between base and top.
* Tree crowns: ray against the spheroid (a sphere after scaling z) or the solid cone (a
  quadratic cone inequality intersected with the slab between crown base and apex).
* :class:`~layout.obstructions.HorizonProfile`: the sun's elevation against the skyline at its
  azimuth; it shades every point alike.

Culling: each solid lies inside a vertical circular cylinder (its plan bounding circle between
its lowest and highest z). Seen from a point, that cylinder spans an azimuth window and an
elevation band; only sun steps inside both are ray-tested. The sun steps are sorted by azimuth
once, so each point's window is a contiguous run found by binary search. Work runs in chunks of
at most ``max_pairs`` (step, point) pairs, so memory stays bounded whatever the year and the
array size.

References
----------
.. [1] M. Cyrus and J. Beck, "Generalized two- and three-dimensional clipping", Computers &
   Graphics 3(1):23-28, 1978.
"""

from __future__ import annotations

import functools
import itertools
import math
from dataclasses import dataclass

import numpy as np
import shapely

from .errors import InputError, check_points, check_positive
from .obstructions import Block, Cylinder, HorizonProfile, Tree

__all__ = [
    "RAY_START_M",
    "ShadeCache",
    "ShadeHits",
    "group_mean",
    "obstruction_hits",
    "shaded",
    "transmitted",
]

#: Distance along the ray at which every ray starts [m]; see "Ray start convention" above.
RAY_START_M = 1e-6

#: Default upper bound on (time step, point) pairs handled at once; bounds working memory to
#: roughly a few hundred bytes per pair.
DEFAULT_MAX_PAIRS = 1 << 19

_ANGLE_MARGIN = 1e-9  # [rad] widening of cull windows against rounding


# --------------------------------------------------------------------------- inputs
def _check_points(points) -> np.ndarray:
    return check_points("points", points, dims=3, min_count=0)


def _check_sun(sun) -> np.ndarray:
    array = check_points("sun", sun, dims=3, min_count=0)
    norm = np.linalg.norm(array, axis=1)
    if (norm == 0).any():
        index = int(np.flatnonzero(norm == 0)[0])
        raise InputError(f"sun[{index}]", "is a zero vector", allowed="unit vectors toward the sun")
    return array / norm[:, None]


# --------------------------------------------------------------------------- exact kernels
def _slab(oz, dz, low, high):
    """Ray parameters where ``low <= oz + s dz <= high``: (s_in, s_out); empty when s_in > s_out."""
    with np.errstate(divide="ignore", invalid="ignore"):
        a = (low - oz) / dz
        b = (high - oz) / dz
    s_in = np.where(dz > 0, a, np.where(dz < 0, b, -np.inf))
    s_out = np.where(dz > 0, b, np.where(dz < 0, a, np.inf))
    flat_outside = (dz == 0) & ((oz < low) | (oz > high))
    s_in = np.where(flat_outside, np.inf, s_in)
    return s_in, s_out


@functools.lru_cache(maxsize=4096)
def _block_planes(block: Block) -> tuple[np.ndarray, np.ndarray]:
    """Outward edge normals (P, K, 2) and offsets (P, K) of the footprint's convex parts."""
    polygon = block.footprint_polygon
    if polygon.area >= polygon.convex_hull.area * (1 - 1e-12):
        rings = [np.asarray(block.footprint, dtype=float)]
    else:
        parts = shapely.get_parts(shapely.constrained_delaunay_triangles(polygon))
        rings = [shapely.get_coordinates(p)[:-1] for p in parts]
    ring = np.stack(rings)  # (P, K, 2)
    nxt = np.roll(ring, -1, axis=1)
    edge = nxt - ring
    # shoelace: positive for counter-clockwise parts
    area2 = np.sum(ring[..., 0] * nxt[..., 1] - nxt[..., 0] * ring[..., 1], axis=1)
    sign = np.where(area2 > 0, 1.0, -1.0)[:, None]
    normal = np.stack([edge[..., 1] * sign, -edge[..., 0] * sign], axis=-1)
    offset = np.sum(normal * ring, axis=-1)
    return normal, offset


def _hit_block(block: Block, o: np.ndarray, d: np.ndarray, start: float) -> np.ndarray:
    """Exact ray vs closed prism, Cyrus-Beck clipping per convex part [1]."""
    normal, offset = _block_planes(block)
    s_in, s_out = _slab(o[:, 2], d[:, 2], block.base, block.top)
    s_in = np.maximum(s_in, start)
    # (M, P, K): inside the half-plane n·x <= c  <=>  s (n·d) <= c - n·o
    denom = d[:, None, None, 0] * normal[None, ..., 0] + d[:, None, None, 1] * normal[None, ..., 1]
    num = offset[None] - (o[:, None, None, 0] * normal[None, ..., 0]
                          + o[:, None, None, 1] * normal[None, ..., 1])
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = num / denom
    lower = np.where(denom < 0, ratio, np.where((denom == 0) & (num < 0), np.inf, -np.inf))
    upper = np.where(denom > 0, ratio, np.inf)
    lo = np.maximum(lower.max(axis=2), s_in[:, None])
    hi = np.minimum(upper.min(axis=2), s_out[:, None])
    return (lo <= hi).any(axis=1)


def _hit_vertical_cylinder(cx, cy, radius, base, top, o, d, start) -> np.ndarray:
    """Exact ray vs closed finite vertical cylinder."""
    fx, fy = o[:, 0] - cx, o[:, 1] - cy
    a = d[:, 0] ** 2 + d[:, 1] ** 2
    b = fx * d[:, 0] + fy * d[:, 1]
    c = fx * fx + fy * fy - radius * radius
    disc = b * b - a * c
    vertical = a <= 1e-24
    root = np.sqrt(np.maximum(disc, 0.0))
    with np.errstate(divide="ignore", invalid="ignore"):
        s1 = np.where(vertical, np.where(c <= 0, -np.inf, np.inf), (-b - root) / a)
        s2 = np.where(vertical, np.where(c <= 0, np.inf, -np.inf), (-b + root) / a)
    s2 = np.where(~vertical & (disc < 0), -np.inf, s2)
    z_in, z_out = _slab(o[:, 2], d[:, 2], base, top)
    return np.maximum(np.maximum(s1, z_in), start) <= np.minimum(s2, z_out)


def _hit_spheroid(cx, cy, cz, radius, semi_z, o, d, start) -> np.ndarray:
    """Exact ray vs closed spheroid, by scaling it to the unit sphere."""
    scale = np.array([radius, radius, semi_z])
    f = (o - np.array([cx, cy, cz])) / scale
    g = d / scale
    a = np.einsum("ij,ij->i", g, g)
    b = np.einsum("ij,ij->i", f, g)
    c = np.einsum("ij,ij->i", f, f) - 1.0
    disc = b * b - a * c
    root = np.sqrt(np.maximum(disc, 0.0))
    s2 = (-b + root) / a
    s1 = (-b - root) / a
    return (disc >= 0) & (np.maximum(s1, start) <= s2)


def _hit_cone(cx, cy, radius, base, apex, o, d, start) -> np.ndarray:
    """Exact ray vs closed solid cone: base disc of ``radius`` at ``base``, apex at ``apex``."""
    k2 = (radius / (apex - base)) ** 2
    fx, fy, fz = o[:, 0] - cx, o[:, 1] - cy, o[:, 2] - apex
    dx, dy, dz = d[:, 0], d[:, 1], d[:, 2]
    # inside the double cone:  A s² + 2 B s + C <= 0
    qa = dx * dx + dy * dy - k2 * dz * dz
    qb = fx * dx + fy * dy - k2 * fz * dz
    qc = fx * fx + fy * fy - k2 * fz * fz
    lo, hi = _slab(o[:, 2], dz, base, apex)
    lo = np.maximum(lo, start)
    scale = dx * dx + dy * dy + k2 * dz * dz
    linear = np.abs(qa) <= 1e-12 * scale
    disc = qb * qb - qa * qc
    root = np.sqrt(np.maximum(disc, 0.0))
    with np.errstate(divide="ignore", invalid="ignore"):
        r1 = (-qb - root) / qa
        r2 = (-qb + root) / qa
        s_lin = -qc / (2 * qb)
    small, big = np.minimum(r1, r2), np.maximum(r1, r2)
    # A > 0: one interval [small, big] when the roots are real
    hit_pos = (disc >= 0) & (np.maximum(lo, small) <= np.minimum(hi, big))
    # A < 0: (-inf, small] U [big, inf), or every s when there is no real root
    hit_neg = (disc < 0) | (lo <= np.minimum(hi, small)) | (np.maximum(lo, big) <= hi)
    # A = 0: a half line (or all / nothing)
    hit_lin = np.where(qb > 0, lo <= np.minimum(hi, s_lin),
                       np.where(qb < 0, np.maximum(lo, s_lin) <= hi, qc <= 0))
    hit = np.where(linear, hit_lin, np.where(qa > 0, hit_pos, hit_neg))
    return hit & (lo <= hi)


def _ray_effect(obstruction, o, d, start) -> tuple[np.ndarray, np.ndarray]:
    """Return (opaque_hit, crown_only_hit) for rays ``o + s d``, ``s >= start``."""
    if isinstance(obstruction, Block):
        return _hit_block(obstruction, o, d, start), np.zeros(len(o), dtype=bool)
    if isinstance(obstruction, Cylinder):
        (cx, cy) = obstruction.center
        hit = _hit_vertical_cylinder(cx, cy, obstruction.radius, obstruction.base,
                                     obstruction.top, o, d, start)
        return hit, np.zeros(len(o), dtype=bool)
    if isinstance(obstruction, Tree):
        (cx, cy) = obstruction.center
        if obstruction.crown_base > 0:
            trunk = _hit_vertical_cylinder(cx, cy, obstruction.trunk_radius, 0.0,
                                           obstruction.crown_base, o, d, start)
        else:
            trunk = np.zeros(len(o), dtype=bool)
        if obstruction.crown_shape == "cone":
            crown = _hit_cone(cx, cy, obstruction.crown_radius, obstruction.crown_base,
                              obstruction.height, o, d, start)
        else:
            crown = _hit_spheroid(cx, cy, obstruction.crown_center_z, obstruction.crown_radius,
                                  obstruction.crown_semi_axis_z, o, d, start)
        return trunk, crown & ~trunk
    raise InputError("obstructions", "contains an unknown obstruction",
                     value=type(obstruction).__name__,
                     allowed="Block, Cylinder, Tree or HorizonProfile")


def _kernel_cost(obstruction) -> int:
    if isinstance(obstruction, Block):
        normal, _ = _block_planes(obstruction)
        return 4 * normal.shape[0] * normal.shape[1] + 8
    return 24


# --------------------------------------------------------------------------- culling
@dataclass(frozen=True)
class _SunOrder:
    """Sun steps sorted by azimuth, for window look-ups."""

    order: np.ndarray  # sorted position -> original step
    azimuth: np.ndarray  # sorted azimuths [rad], -pi..pi, atan2(x, y)
    elevation: np.ndarray  # per original step [rad]
    zenith_steps: np.ndarray  # steps with an undefined azimuth (sun straight up or down)
    el_low: float  # lowest and highest elevation of the steps with an azimuth [rad]
    el_high: float


def _sun_order(sun: np.ndarray) -> _SunOrder:
    horizontal = np.hypot(sun[:, 0], sun[:, 1])
    azimuth = np.arctan2(sun[:, 0], sun[:, 1])
    elevation = np.arcsin(np.clip(sun[:, 2], -1.0, 1.0))
    defined = horizontal > 1e-12
    steps = np.flatnonzero(defined)
    order = steps[np.argsort(azimuth[steps], kind="stable")]
    el = elevation[steps]
    return _SunOrder(order, azimuth[order], elevation, np.flatnonzero(~defined),
                     float(el.min()) if len(el) else 0.0, float(el.max()) if len(el) else 0.0)


def _angular_bounds(points, obstruction):
    """Azimuth window (centre, half width) and elevation band seen from each point [rad].

    Every direction from a point that meets the obstruction has an azimuth within ``centre ±
    half`` and an elevation within ``el_min .. el_max``. Blocks use their convex hull (the
    extreme directions pass through hull corners); the other solids their bounding cylinder.
    """
    xmin, ymin, zmin, xmax, ymax, zmax = obstruction.bounds
    px, py = points[:, 0], points[:, 1]
    if isinstance(obstruction, Block):
        hull = shapely.convex_hull(obstruction.footprint_polygon)
        corners = shapely.get_coordinates(hull)[:-1]
        vx = corners[None, :, 0] - px[:, None]
        vy = corners[None, :, 1] - py[:, None]
        angle = np.arctan2(vx, vy)
        delta = (angle - angle[:, :1] + math.pi) % (2 * math.pi) - math.pi
        low, high = delta.min(axis=1), delta.max(axis=1)
        center = angle[:, 0] + 0.5 * (low + high)
        xy = shapely.points(points[:, :2])
        inside = shapely.distance(hull, xy) <= 1e-9
        half = np.where(inside, math.pi, 0.5 * (high - low) + _ANGLE_MARGIN)
        near = shapely.distance(obstruction.footprint_polygon, xy)
        far = np.sqrt((vx * vx + vy * vy).max(axis=1))
    else:
        cx, cy, radius = 0.5 * (xmin + xmax), 0.5 * (ymin + ymax), 0.5 * (xmax - xmin)
        dx, dy = cx - px, cy - py
        dist = np.hypot(dx, dy)
        near = np.maximum(dist - radius, 0.0)
        far = dist + radius
        inside = dist <= radius * (1 + 1e-12)
        with np.errstate(divide="ignore", invalid="ignore"):
            half = np.where(inside, math.pi,
                            np.arcsin(np.clip(radius / dist, 0.0, 1.0)) + _ANGLE_MARGIN)
        center = np.arctan2(dx, dy)
    up = zmax - points[:, 2]
    down = zmin - points[:, 2]
    el_max = np.where(up > 0, np.arctan2(up, near), np.arctan2(up, far)) + _ANGLE_MARGIN
    el_min = np.where(down >= 0, np.arctan2(down, far), np.arctan2(down, near)) - _ANGLE_MARGIN
    return center, half, el_min, el_max


def _candidate_ranges(points, sun_order: _SunOrder, obstruction):
    """Per point, runs of azimuth-sorted sun positions that may meet the obstruction.

    Returns ``(point, start, count)`` arrays (one row per run, up to two runs per point when the
    window wraps round north-south) and the elevation band ``(el_min, el_max)`` per point.
    """
    center, half, el_min, el_max = _angular_bounds(points, obstruction)
    az = sun_order.azimuth
    n_sun = len(az)
    full = half >= math.pi
    lo_angle = center - half
    hi_angle = center + half
    # wrap into [-pi, pi): a window may split into [lo, pi] and [-pi, hi]
    lo_w = (lo_angle + math.pi) % (2 * math.pi) - math.pi
    hi_w = (hi_angle + math.pi) % (2 * math.pi) - math.pi
    wraps = lo_w > hi_w
    first_lo = np.searchsorted(az, lo_w, side="left")
    first_hi = np.searchsorted(az, hi_w, side="right")
    start_a = np.where(full, 0, first_lo)
    count_a = np.where(full, n_sun, np.where(wraps, n_sun - first_lo, first_hi - first_lo))
    start_b = np.zeros_like(start_a)
    count_b = np.where(wraps & ~full, first_hi, 0)
    index = np.arange(len(points))
    point = np.concatenate([index, index])
    start = np.concatenate([start_a, start_b])
    count = np.concatenate([count_a, count_b])
    # a point whose elevation band misses every sun elevation needs no run at all
    if n_sun:
        reach = np.concatenate([(el_max >= sun_order.el_low) & (el_min <= sun_order.el_high)] * 2)
    else:
        reach = np.zeros(len(point), dtype=bool)
    keep = (count > 0) & reach
    return (point[keep], start[keep], count[keep]), (el_min, el_max)


def _expand_runs(point, start, count):
    """Enumerate every (point, sorted sun position) pair of the given runs."""
    total = int(count.sum())
    first = np.cumsum(count) - count
    pt = np.repeat(point, count)
    pos = np.repeat(start - first, count) + np.arange(total)
    return pt, pos


# --------------------------------------------------------------------------- per obstruction
@dataclass(frozen=True)
class ShadeHits:
    """Where one obstruction meets the rays of a fixed set of points and sun steps.

    Attributes
    ----------
    step : numpy.ndarray of int32, shape (H,)
        Sun step of each hit.
    point : numpy.ndarray of int32, shape (H,)
        Point of each hit.
    crown_only : numpy.ndarray of bool, shape (H,)
        True where the ray meets only a tree crown (the beam is dimmed by the crown's
        transmittance); False where it meets an opaque surface.
    blocked_steps : numpy.ndarray of bool, shape (T,) or None
        For a far horizon: steps at which the sun is below the skyline for every point.
    """

    step: np.ndarray
    point: np.ndarray
    crown_only: np.ndarray
    blocked_steps: np.ndarray | None = None

    def __len__(self) -> int:
        return len(self.step)


def obstruction_hits(points, sun, obstruction, *, ray_start: float = RAY_START_M,
                     max_pairs: int = DEFAULT_MAX_PAIRS, cull: bool = True) -> ShadeHits:
    """Ray-test one obstruction against every (sun step, point) pair.

    Parameters
    ----------
    points : array_like, shape (N, 3)
        Points in the site frame [m].
    sun : array_like, shape (T, 3)
        Vectors toward the sun in the site frame (normalised here).
    obstruction : Block, Cylinder, Tree or HorizonProfile
        The obstruction.
    ray_start : float, keyword-only, default :data:`RAY_START_M`
        Distance along each ray where it starts [m].
    max_pairs : int, keyword-only
        Largest number of (step, point) pairs handled at once; bounds memory.
    cull : bool, keyword-only, default True
        Skip pairs whose sun lies outside the obstruction's angular bounds seen from the point.
        The result is the same either way; False is for checking.

    Returns
    -------
    ShadeHits
        The hits, sorted by step then point.
    """
    pts = _check_points(points)
    sun_v = _check_sun(sun)
    start = check_positive("ray_start", ray_start, unit="m")
    return _obstruction_hits(pts, sun_v, obstruction, start, int(max_pairs), cull, None)


def _obstruction_hits(pts, sun_v, obstruction, start, max_pairs, cull, sun_order) -> ShadeHits:
    empty = np.zeros(0, dtype=np.int32)
    if isinstance(obstruction, HorizonProfile):
        blocked = np.asarray(obstruction.blocks_vectors(sun_v), dtype=bool) if len(sun_v) \
            else np.zeros(0, dtype=bool)
        return ShadeHits(empty, empty, np.zeros(0, dtype=bool), blocked)
    if len(pts) == 0 or len(sun_v) == 0:
        _ray_effect(obstruction, np.zeros((0, 3)), np.zeros((0, 3)), start)  # type check
        return ShadeHits(empty, empty, np.zeros(0, dtype=bool))
    sub = max(256, max_pairs // _kernel_cost(obstruction))
    steps, points_, crowns = [], [], []

    def test(pt, st):
        for i in range(0, len(pt), sub):
            p, s = pt[i:i + sub], st[i:i + sub]
            opaque, crown = _ray_effect(obstruction, pts[p], sun_v[s], start)
            hit = opaque | crown
            steps.append(s[hit].astype(np.int32))
            points_.append(p[hit].astype(np.int32))
            crowns.append(crown[hit])

    if cull:
        order = sun_order if sun_order is not None else _sun_order(sun_v)
        (run_pt, run_start, run_count), (el_min, el_max) = _candidate_ranges(
            pts, order, obstruction)
        # split the runs into groups of about max_pairs pairs
        group = (np.cumsum(run_count) - 1) // max(1, max_pairs)
        bounds = [0, *(np.flatnonzero(np.diff(group)) + 1).tolist(), len(run_pt)]
        for a, b in itertools.pairwise(bounds):
            if b <= a:
                continue
            pt, pos = _expand_runs(run_pt[a:b], run_start[a:b], run_count[a:b])
            st = order.order[pos]
            elev = order.elevation[st]
            keep = (elev >= el_min[pt]) & (elev <= el_max[pt])
            test(pt[keep], st[keep])
        if len(order.zenith_steps):
            pt = np.repeat(np.arange(len(pts)), len(order.zenith_steps))
            st = np.tile(order.zenith_steps, len(pts))
            test(pt, st)
    else:
        per = max(1, max_pairs // len(pts))
        for t0 in range(0, len(sun_v), per):
            st_block = np.arange(t0, min(t0 + per, len(sun_v)))
            pt = np.tile(np.arange(len(pts)), len(st_block))
            st = np.repeat(st_block, len(pts))
            test(pt, st)
    step = np.concatenate(steps) if steps else empty
    point = np.concatenate(points_) if points_ else empty
    crown = np.concatenate(crowns) if crowns else np.zeros(0, dtype=bool)
    order_ = np.lexsort((point, step))
    return ShadeHits(step[order_], point[order_], crown[order_])


# --------------------------------------------------------------------------- combining
def _combine_shaded(n_steps, n_points, hits_list) -> np.ndarray:
    out = np.zeros((n_steps, n_points), dtype=bool)
    for hits in hits_list:
        out[hits.step, hits.point] = True
        if hits.blocked_steps is not None:
            out[hits.blocked_steps] = True
    return out


def _check_month(month, n_steps) -> np.ndarray:
    m = np.asarray(month)
    if m.shape != (n_steps,) or not np.issubdtype(m.dtype, np.integer) \
            or (m < 1).any() or (m > 12).any():
        raise InputError("month", "needs one month number (1-12) per sun step",
                         allowed=f"{n_steps} whole numbers from 1 to 12")
    return m.astype(np.intp)


def _combine_transmitted(n_steps, n_points, pairs, month) -> np.ndarray:
    out = np.ones((n_steps, n_points))
    for obstruction, hits in pairs:
        if hits.blocked_steps is not None:
            out[hits.blocked_steps] = 0.0
            continue
        factor = np.zeros(len(hits))
        if isinstance(obstruction, Tree) and obstruction.transmittance is not None \
                and hits.crown_only.any():
            if month is None:
                raise InputError("month", "is needed for a tree with a crown transmittance",
                                 allowed="one month number (1-12) per sun step")
            tau = obstruction.monthly_transmittance
            factor = np.where(hits.crown_only, tau[month[hits.step] - 1], 0.0)
        out[hits.step, hits.point] *= factor
    return out


def shaded(points, sun, obstructions, *, ray_start: float = RAY_START_M,
           max_pairs: int = DEFAULT_MAX_PAIRS, cull: bool = True) -> np.ndarray:
    """Tell, for every sun step and point, whether the ray toward the sun meets an obstruction.

    Parameters
    ----------
    points : array_like, shape (N, 3)
        Points in the site frame (x east, y north, z up) [m].
    sun : array_like, shape (T, 3)
        Unit vectors toward the sun in the same frame (normalised here).
    obstructions : sequence of Block, Cylinder, Tree or HorizonProfile
        The obstructions. A tree crown counts as met whatever its transmittance.
    ray_start : float, keyword-only, default :data:`RAY_START_M`
        Distance along each ray where it starts [m] (see the module notes).
    max_pairs : int, keyword-only
        Largest number of (step, point) pairs handled at once; bounds memory.
    cull : bool, keyword-only, default True
        Use angular-bounds culling (same result, faster).

    Returns
    -------
    numpy.ndarray of bool, shape (T, N)
        True where the ray from the point toward the sun meets an obstruction.
    """
    pts = _check_points(points)
    sun_v = _check_sun(sun)
    start = check_positive("ray_start", ray_start, unit="m")
    order = _sun_order(sun_v)
    hits = [_obstruction_hits(pts, sun_v, ob, start, int(max_pairs), cull, order)
            for ob in obstructions]
    return _combine_shaded(len(sun_v), len(pts), hits)


def transmitted(points, sun, obstructions, *, month=None, ray_start: float = RAY_START_M,
                max_pairs: int = DEFAULT_MAX_PAIRS) -> np.ndarray:
    """Return the fraction of the beam that reaches each point at each sun step.

    Opaque solids and the far horizon let nothing through; a tree crown lets through its
    monthly transmittance; rays through several crowns multiply their transmittances.

    Parameters
    ----------
    points : array_like, shape (N, 3)
        Points in the site frame [m].
    sun : array_like, shape (T, 3)
        Vectors toward the sun in the same frame.
    obstructions : sequence of Block, Cylinder, Tree or HorizonProfile
        The obstructions.
    month : array_like of int, shape (T,), keyword-only, optional
        Calendar month (1-12) of each sun step, e.g. :attr:`layout.sun.SunSample.month`.
        Needed when a tree has a transmittance.
    ray_start, max_pairs
        As in :func:`shaded`.

    Returns
    -------
    numpy.ndarray of float, shape (T, N)
        Beam fraction reaching the point [fraction, 0 to 1].
    """
    pts = _check_points(points)
    sun_v = _check_sun(sun)
    start = check_positive("ray_start", ray_start, unit="m")
    m = None if month is None else _check_month(month, len(sun_v))
    order = _sun_order(sun_v)
    pairs = [(ob, _obstruction_hits(pts, sun_v, ob, start, int(max_pairs), True, order))
             for ob in obstructions]
    return _combine_transmitted(len(sun_v), len(pts), pairs, m)


# --------------------------------------------------------------------------- cache
class ShadeCache:
    """Per-obstruction ray hits for a fixed set of points and sun steps.

    Holds one :class:`ShadeHits` per obstruction, keyed by the obstruction's value (the
    obstruction types are frozen and hashable). :meth:`update` with a new list recomputes only
    the obstructions that are new or changed (a moved, resized, added one) and forgets deleted
    ones; the combined result is the same as a full recompute.

    Parameters
    ----------
    points : array_like, shape (N, 3)
        Points in the site frame [m].
    sun : array_like, shape (T, 3)
        Vectors toward the sun.
    obstructions : sequence, optional
        Initial obstructions.
    month : array_like of int, shape (T,), keyword-only, optional
        Month of each sun step, for tree transmittance.
    ray_start, max_pairs
        As in :func:`shaded`.
    """

    def __init__(self, points, sun, obstructions=(), *, month=None,
                 ray_start: float = RAY_START_M, max_pairs: int = DEFAULT_MAX_PAIRS):
        self.points = _check_points(points)
        self.sun = _check_sun(sun)
        self.month = None if month is None else _check_month(month, len(self.sun))
        self.ray_start = check_positive("ray_start", ray_start, unit="m")
        self.max_pairs = int(max_pairs)
        self._order = _sun_order(self.sun)
        self._hits: dict = {}
        self.obstructions: tuple = ()
        self.update(obstructions)

    def update(self, obstructions) -> int:
        """Set the obstruction list; return how many obstructions had to be ray-tested."""
        obstructions = tuple(obstructions)
        new: dict = {}
        computed = 0
        for ob in obstructions:
            if ob in new:
                continue
            if ob in self._hits:
                new[ob] = self._hits[ob]
            else:
                new[ob] = _obstruction_hits(self.points, self.sun, ob, self.ray_start,
                                            self.max_pairs, True, self._order)
                computed += 1
        self._hits = new
        self.obstructions = obstructions
        return computed

    def hits(self, obstruction) -> ShadeHits:
        """Return the cached hits of one obstruction in the current list."""
        return self._hits[obstruction]

    def shaded(self) -> np.ndarray:
        """Return the combined boolean shade (T, N), as :func:`shaded` would return it."""
        return _combine_shaded(len(self.sun), len(self.points),
                               [self._hits[ob] for ob in self.obstructions])

    def transmitted(self) -> np.ndarray:
        """Return the combined beam fraction (T, N), as :func:`transmitted` would return it."""
        return _combine_transmitted(len(self.sun), len(self.points),
                                    [(ob, self._hits[ob]) for ob in self.obstructions],
                                    self.month)


# --------------------------------------------------------------------------- aggregation
def group_mean(values, labels, *, n_groups: int | None = None) -> np.ndarray:
    """Average per-point values over groups of points (cells, substrings, modules).

    Parameters
    ----------
    values : array_like, shape (T, N)
        Per step and point, e.g. the output of :func:`transmitted` or :func:`shaded`.
    labels : array_like of int, shape (N,)
        Group of each point, 0 to ``n_groups - 1``.
    n_groups : int, keyword-only, optional
        Number of groups; default ``labels.max() + 1``. Empty groups give NaN.

    Returns
    -------
    numpy.ndarray of float, shape (T, n_groups)
        Mean over the points of each group. ``1 - group_mean(transmitted(...), labels)`` is the
        beam shaded fraction of each group.
    """
    v = np.asarray(values, dtype=float)
    lab = np.asarray(labels)
    if v.ndim != 2 or lab.shape != (v.shape[1],) or not np.issubdtype(lab.dtype, np.integer):
        raise InputError("labels", "needs one whole-number group per point",
                         allowed=f"{v.shape[-1] if v.ndim else 0} whole numbers")
    if len(lab) and lab.min() < 0:
        raise InputError("labels", "must not be negative", value=int(lab.min()), allowed=">= 0")
    g = int(n_groups) if n_groups is not None else (int(lab.max()) + 1 if len(lab) else 0)
    if len(lab) and lab.max() >= g:
        raise InputError("labels", "is out of range", value=int(lab.max()),
                         allowed=f"0 to {g - 1}")
    counts = np.bincount(lab, minlength=g).astype(float)
    order = np.argsort(lab, kind="stable")
    sums = np.zeros((v.shape[0], g))
    present = np.flatnonzero(counts)
    if len(present):
        starts = np.concatenate([[0], np.cumsum(counts[present])[:-1]]).astype(np.intp)
        sums[:, present] = np.add.reduceat(v[:, order], starts, axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return sums / counts
