"""Beam shading by exact ray tests: which points see the sun, and how much of it.

Frame
-----
Site frame, metres: x east, y north, z up. ``points`` are (N, 3) positions in that frame,
``sun`` is (T, 3) unit vectors toward the sun (see :func:`layout.sky.sun.sun_vectors`). The ray of
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

* :class:`~layout.scene.obstructions.Block`: the footprint is split into convex parts (the footprint
  itself if convex, otherwise a constrained Delaunay triangulation); each part with the two
  horizontal planes is a convex polyhedron, clipped against the ray by the Cyrus-Beck method [1].
* :class:`~layout.scene.obstructions.Cylinder` and a tree trunk: ray against a vertical circular
  cylinder (a quadratic in plan) intersected with the slab between base and top.
* Tree crowns: ray against the spheroid (a sphere after scaling z) or the solid cone (a
  quadratic cone inequality intersected with the slab between crown base and apex).
* :class:`~layout.scene.obstructions.Plate` (a roof face, a module): ray against the plane, then the
  hit point against the polygon's convex parts in the plane's own 2D frame (inclusive edges).
  Points within :data:`~layout.scene.obstructions.PLANE_TOLERANCE_M` of a plate's plane are never
  shaded by it (the self-shading rule in :mod:`layout.scene.obstructions`); they are dropped before
  any ray test, as are (point, sun) pairs whose sun lies on the point's own side of the plane.
* :class:`~layout.scene.obstructions.HorizonProfile`: the sun's elevation against the skyline at its
  azimuth; it shades every point alike.

Culling: each solid lies inside a vertical prism over its plan convex hull (a circle for the
round solids) between its lowest and highest z. Seen from a point, that prism spans an azimuth
window and an elevation band; only sun steps inside both are ray-tested. The sun steps are
binned once into 128 azimuth sectors and sorted by elevation within each, so a point's
candidates are one contiguous run per sector its window spans, found by binary search; a point
whose band misses the sun's elevations in all those sectors is dropped at once (a coarse
bounding-cylinder pass first, for blocks and plates). For a plate, each sector's run is also
cut to the elevations on the far side of the plate's plane. Blocks and spheroid trees use
kernels that tabulate the per-point and per-step terms once. Work runs in chunks of at most
``max_pairs`` (step, point) pairs, so memory stays bounded whatever the year and the array
size.

Per module
----------
:func:`module_shade` ray-tests the cell sample points of placed modules (``PlacedModule.
cell_points``) against the obstructions and, by default, against every module as a
:class:`~layout.scene.obstructions.Plate` (rows shade rows; a module never shades itself), and
returns the beam shaded fraction per (step, module, cell) and per (step, module, substring)
as float32, tree crowns counted by their monthly transmittance. Hits stay sparse (step, point)
lists per obstruction until they are summed per group in blocks of steps (64 MB dense at most),
so memory grows with the number of hits and the output, not with the number of rays; without a
cache, modules go in chunks of at most ``max_rays`` rays. With a :class:`ShadeCache`, moving
one obstruction recomputes only its hits.

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
from functools import cached_property

import numpy as np
import shapely

from ..errors import InputError, check_points, check_positive
from ..scene.obstructions import PLANE_TOLERANCE_M, Block, Cylinder, HorizonProfile, Plate, Tree

__all__ = [
    "RAY_START_M",
    "Facing",
    "ModuleSamples",
    "ModuleShade",
    "ShadeCache",
    "ShadeHits",
    "group_mean",
    "module_samples",
    "module_shade",
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


def _convex_parts(polygon: shapely.Polygon) -> tuple[np.ndarray, np.ndarray]:
    """Outward edge normals (P, K, 2) and offsets (P, K) of a polygon's convex parts.

    The polygon itself when convex, otherwise its constrained Delaunay triangles; a point
    ``x`` is inside part ``p`` when ``normal[p] @ x <= offset[p]`` for every edge.
    """
    if polygon.area >= polygon.convex_hull.area * (1 - 1e-12):
        rings = [shapely.get_coordinates(polygon.exterior)[:-1]]
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


@functools.lru_cache(maxsize=4096)
def _block_planes(block: Block) -> tuple[np.ndarray, np.ndarray]:
    """Outward edge normals (P, K, 2) and offsets (P, K) of the footprint's convex parts."""
    return _convex_parts(block.footprint_polygon)


@functools.lru_cache(maxsize=65536)
def _plate_geometry(plate: Plate):
    """``(origin, e1, e2, normal, part_normals, part_offsets)`` of a plate (see Plate.frame)."""
    origin, e1, e2, normal = plate.frame
    part_normal, part_offset = _convex_parts(plate.plane_polygon)
    return origin, e1, e2, normal, part_normal, part_offset


def _plate_side(plate: Plate, points: np.ndarray) -> np.ndarray:
    """Signed distance of each point from the plate's plane [m]."""
    origin, _, _, normal, _, _ = _plate_geometry(plate)
    return (points - origin) @ normal


_INSIDE_SLACK = 1e-9  # [m] a hit this close outside a plate's edge still counts (closed plates)


def _dot3(a: np.ndarray, b) -> np.ndarray:
    """Return the dot product of each (n, 3) row with one vector, element by element.

    Unlike a matrix product, the rounding is the same whatever n, so a tabulated kernel and
    the direct test give the same answers bit for bit.
    """
    return a[:, 0] * b[0] + a[:, 1] * b[1] + a[:, 2] * b[2]


def _hit_plate(plate: Plate, o: np.ndarray, d: np.ndarray, start: float) -> np.ndarray:
    """Exact ray vs closed planar polygon; points near its plane are never hit (see notes)."""
    origin, e1, e2, normal, part_normal, part_offset = _plate_geometry(plate)
    rel = o - origin
    dist = _dot3(rel, normal)
    den = _dot3(d, normal)
    with np.errstate(divide="ignore", invalid="ignore"):
        s = -dist * (1.0 / den)
    ok = (np.abs(dist) > PLANE_TOLERANCE_M) & (den != 0) & (s >= start)
    s = np.where(ok, s, 0.0)
    # the hit point in the plate's (u, v) frame, in the operations _plate_kernel tabulates
    u = _dot3(rel, e1) + s * _dot3(d, e1)
    v = _dot3(rel, e2) + s * _dot3(d, e2)
    # (M, P, K): inside every edge of some convex part
    side = (u[:, None, None] * part_normal[None, ..., 0]
            + v[:, None, None] * part_normal[None, ..., 1] <= part_offset[None] + _INSIDE_SLACK)
    return ok & side.all(axis=2).any(axis=1)


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
    if isinstance(obstruction, Plate):
        return _hit_plate(obstruction, o, d, start), np.zeros(len(o), dtype=bool)
    if isinstance(obstruction, Cylinder):
        (cx, cy) = obstruction.center
        hit = _hit_vertical_cylinder(cx, cy, obstruction.radius, obstruction.base,
                                     obstruction.top, o, d, start)
        return hit, np.zeros(len(o), dtype=bool)
    if isinstance(obstruction, Tree):
        (cx, cy) = obstruction.center
        ground = obstruction.ground_m
        if obstruction.crown_base > 0:
            trunk = _hit_vertical_cylinder(cx, cy, obstruction.trunk_radius, ground,
                                           ground + obstruction.crown_base, o, d, start)
        else:
            trunk = np.zeros(len(o), dtype=bool)
        if obstruction.crown_shape == "cone":
            crown = _hit_cone(cx, cy, obstruction.crown_radius, ground + obstruction.crown_base,
                              ground + obstruction.height, o, d, start)
        else:
            crown = _hit_spheroid(cx, cy, obstruction.crown_center_z, obstruction.crown_radius,
                                  obstruction.crown_semi_axis_z, o, d, start)
        return trunk, crown & ~trunk
    raise InputError("obstructions", "contains an unknown obstruction",
                     value=type(obstruction).__name__,
                     allowed="Block, Cylinder, Tree, Plate or HorizonProfile")


def _block_kernel(block: Block, pts: np.ndarray, sun_v: np.ndarray, start: float):
    """Build a faster exact kernel for a block over (point, step) index pairs, or None.

    Same test as :func:`_hit_block`, with everything that depends only on the point or only
    on the sun step computed once into per-edge tables, so a pair costs per edge a few
    gathers, two multiplications and a running max/min (``fmax``/``fmin`` skip the NaN that
    marks an edge the ray leaves, resp. enters, through). Applies when every step has the sun
    above the horizon and no sun direction is parallel to a footprint edge (the general case
    of a sun path); otherwise None, and the caller uses :func:`_hit_block`.
    """
    normal, offset = _block_planes(block)
    den = np.einsum("tc,pkc->pkt", sun_v[:, :2], normal)  # (P, K, T)
    if (sun_v[:, 2] <= 0).any() or (den == 0).any():
        return None
    with np.errstate(divide="ignore"):
        inv = 1.0 / den
    inv_enter = np.where(den < 0, inv, np.nan)  # the ray enters the half-plane: lower bound
    inv_leave = np.where(den > 0, inv, np.nan)  # it leaves: upper bound
    room = offset[..., None] - np.einsum("nc,pkc->pkn", pts[:, :2], normal)  # (P, K, N)
    inv_dz = 1.0 / sun_v[:, 2]
    below = block.base - pts[:, 2]
    above = block.top - pts[:, 2]
    n_parts, n_edges = offset.shape

    def kernel(p, st):
        inv_z = inv_dz[st]
        s_in = np.maximum(below[p] * inv_z, start)
        s_out = above[p] * inv_z
        hit = np.zeros(len(p), dtype=bool)
        for i in range(n_parts):
            lo, hi = s_in, s_out
            for k in range(n_edges):
                r = room[i, k][p]
                lo = np.fmax(lo, r * inv_enter[i, k][st])
                hi = np.fmin(hi, r * inv_leave[i, k][st])
            hit |= lo <= hi
        return hit, np.zeros(len(p), dtype=bool)

    return kernel


def _tree_kernels(tree: Tree, pts: np.ndarray, sun_v: np.ndarray, start: float):
    """Build faster exact kernels for a spheroid tree's crown and trunk, or None.

    Returns ``(crown, trunk)``: ``crown(p, st)`` and ``trunk(p, st)`` give, for (point, step)
    index pairs, whether the ray meets the crown, resp. the trunk (same tests as
    :func:`_hit_spheroid` and :func:`_hit_vertical_cylinder`, with the per-point and per-step
    parts tabulated once); ``trunk`` is None for a tree without one (``crown_base`` 0).
    Applies to a spheroid crown when every step has the sun above the horizon and off the
    zenith; otherwise None.
    """
    horizontal = sun_v[:, 0] ** 2 + sun_v[:, 1] ** 2
    if tree.crown_shape != "spheroid" or (sun_v[:, 2] <= 0).any() or (horizontal <= 1e-24).any():
        return None
    cx, cy = tree.center
    # crown: the spheroid scaled to the unit sphere
    scale = np.array([tree.crown_radius, tree.crown_radius, tree.crown_semi_axis_z])
    f = (pts - np.array([cx, cy, tree.crown_center_z])) / scale  # (N, 3)
    g = sun_v / scale  # (T, 3)
    fx, fy, fz = f.T.copy()
    gx, gy, gz = g.T.copy()
    ga = np.einsum("ij,ij->i", g, g)
    fc = np.einsum("ij,ij->i", f, f) - 1.0
    # Every point at least 2 ray starts outside the crown (scaled): the two roots of a ray
    # have one sign, that of -b, and the far one is at least sqrt(c / a) >= 2 start, so a
    # ray meets the crown exactly when b < 0 and the discriminant is not negative.
    outside = bool((fc >= 4.0 * float(ga.max()) * start * start).all()) if len(fc) else True

    def crown(p, st):
        a = ga[st]
        b = fx[p] * gx[st]
        b += fy[p] * gy[st]
        b += fz[p] * gz[st]
        c = fc[p]
        if outside:
            hit = b * b >= a * c
            hit &= b < 0
            return hit
        disc = b * b - a * c
        hit = disc >= 0
        hit &= (-b + np.sqrt(np.maximum(disc, 0.0))) >= start * a
        return hit

    if tree.crown_base <= 0:
        return crown, None
    # trunk: vertical cylinder from the ground to crown_base
    tx, ty = pts[:, 0] - cx, pts[:, 1] - cy
    tc = tx * tx + ty * ty - tree.trunk_radius ** 2
    dx, dy = sun_v[:, 0].copy(), sun_v[:, 1].copy()
    inv_dz = 1.0 / sun_v[:, 2]
    below = tree.ground_m - pts[:, 2]
    above = tree.ground_m + tree.crown_base - pts[:, 2]

    def trunk(p, st):
        a2 = horizontal[st]
        b2 = tx[p] * dx[st] + ty[p] * dy[st]
        disc2 = b2 * b2 - a2 * tc[p]
        root = np.sqrt(np.maximum(disc2, 0.0))
        inv_z = inv_dz[st]
        lo = np.maximum(np.maximum((-b2 - root) / a2, below[p] * inv_z), start)
        hi = np.minimum((-b2 + root) / a2, above[p] * inv_z)
        return (disc2 >= 0) & (lo <= hi)

    return crown, trunk


def _tree_kernel(tree: Tree, pts: np.ndarray, sun_v: np.ndarray, start: float):
    """Build a faster exact kernel for a whole tree over (point, step) index pairs, or None.

    Returns ``(opaque, crown_only)`` per pair, as :func:`_ray_effect` does; see
    :func:`_tree_kernels` for when it applies.
    """
    kernels = _tree_kernels(tree, pts, sun_v, start)
    if kernels is None:
        return None
    crown_kernel, trunk_kernel = kernels

    def kernel(p, st):
        crown = crown_kernel(p, st)
        if trunk_kernel is None:
            return np.zeros(len(p), dtype=bool), crown
        trunk = trunk_kernel(p, st)
        return trunk, crown & ~trunk

    return kernel


def _plate_kernel(plate: Plate, pts: np.ndarray, sun_v: np.ndarray, start: float):
    """Build a faster exact kernel for a plate over (point, step) index pairs.

    Same test as :func:`_hit_plate`, with the point's and the step's parts of the plane
    crossing and of the (u, v) coordinates computed once: a pair costs a few gathers, one
    multiplication for the ray parameter, two for the hit point and two per edge.
    """
    origin, e1, e2, normal, part_normal, part_offset = _plate_geometry(plate)
    rel = pts - origin
    dist = _dot3(rel, normal)
    u0, v0 = _dot3(rel, e1), _dot3(rel, e2)
    den = _dot3(sun_v, normal)
    with np.errstate(divide="ignore"):
        inv_den = 1.0 / den
    du, dv = _dot3(sun_v, e1), _dot3(sun_v, e2)
    off_plane = np.abs(dist) > PLANE_TOLERANCE_M
    crossing = den != 0
    limit = part_offset + _INSIDE_SLACK
    n_parts, n_edges = part_offset.shape

    def kernel(p, st):
        with np.errstate(invalid="ignore"):
            s = -dist[p] * inv_den[st]
        ok = off_plane[p] & crossing[st] & (s >= start)
        s = np.where(ok, s, 0.0)
        u = u0[p] + s * du[st]
        v = v0[p] + s * dv[st]
        inside = np.zeros(len(p), dtype=bool)
        for i in range(n_parts):
            part = np.ones(len(p), dtype=bool)
            for k in range(n_edges):
                nx, ny = part_normal[i, k]
                part &= u * nx + v * ny <= limit[i, k]
            inside |= part
        return ok & inside, np.zeros(len(p), dtype=bool)

    return kernel


def _kernel_cost(obstruction) -> int:
    if isinstance(obstruction, Block):
        normal, _ = _block_planes(obstruction)
        return 4 * normal.shape[0] * normal.shape[1] + 8
    if isinstance(obstruction, Plate):
        normal = _plate_geometry(obstruction)[4]
        return 2 * normal.shape[0] * normal.shape[1] + 16
    return 24


# --------------------------------------------------------------------------- culling
#: Number of equal azimuth sectors the sun steps are binned into for culling.
_SECTORS = 128
_EL_SHIFT = 2.0  # [rad] elevation + 2 lies in (0, 4): sector · 4 + it is a sortable key


@dataclass(frozen=True)
class _SunOrder:
    """Sun steps binned by azimuth sector and sorted by elevation within each sector.

    A point's candidate steps for an obstruction (an azimuth window times an elevation band)
    are then one contiguous run per sector the window spans, found by binary search on
    ``key``, with no step outside the elevation band.
    """

    order: np.ndarray  # sorted position -> original step
    key: np.ndarray  # sorted keys: sector * 4 + elevation + 2
    elevation: np.ndarray  # per original step [rad]
    zenith_steps: np.ndarray  # steps with an undefined azimuth (sun straight up or down)
    range_low: np.ndarray  # (S, S): lowest elevation + 2 over sectors s .. s + n (circular)
    range_high: np.ndarray  # (S, S): highest elevation + 2 over the same sectors


def _sector(angle):
    """Azimuth sector of angles in [-pi, pi] [rad]."""
    return np.clip(((angle + math.pi) * (_SECTORS / (2 * math.pi))).astype(np.intp), 0,
                   _SECTORS - 1)


def _sun_order(sun: np.ndarray) -> _SunOrder:
    horizontal = np.hypot(sun[:, 0], sun[:, 1])
    azimuth = np.arctan2(sun[:, 0], sun[:, 1])
    elevation = np.arcsin(np.clip(sun[:, 2], -1.0, 1.0))
    defined = horizontal > 1e-12
    steps = np.flatnonzero(defined)
    sector = _sector(azimuth[steps])
    shifted = elevation[steps] + _EL_SHIFT
    key = sector * 4.0 + shifted
    sort = np.argsort(key, kind="stable")
    low = np.full(_SECTORS, np.inf)
    high = np.full(_SECTORS, -np.inf)
    np.minimum.at(low, sector, shifted)
    np.maximum.at(high, sector, shifted)
    # range tables over circular runs of sectors: [s, n] covers sectors s .. s + n
    index = (np.arange(_SECTORS)[:, None] + np.arange(_SECTORS)[None, :]) % _SECTORS
    range_low = np.minimum.accumulate(low[index], axis=1)
    range_high = np.maximum.accumulate(high[index], axis=1)
    return _SunOrder(steps[sort], key[sort], elevation, np.flatnonzero(~defined), range_low,
                     range_high)


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
    px, py = points[:, 0], points[:, 1]
    if isinstance(obstruction, (Block, Plate)) and not coarse:
        corners = _hull_corners(obstruction)
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
        half = np.where(inside, math.pi, 0.5 * (high - low) + _ANGLE_MARGIN)
        far = np.sqrt(far2)
    else:
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
    up = zmax - points[:, 2]
    down = zmin - points[:, 2]
    el_max = np.where(up > 0, np.arctan2(up, near), np.arctan2(up, far)) + _ANGLE_MARGIN
    el_min = np.where(down >= 0, np.arctan2(down, far), np.arctan2(down, near)) - _ANGLE_MARGIN
    return center, half, el_min, el_max


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


def _candidate_ranges(points, sun_order: _SunOrder, obstruction):
    """Per point, runs of sector-sorted sun steps that may meet the obstruction.

    Returns ``(point, start, count)`` arrays, one row per (point, azimuth sector) pair the
    point's window spans, each run holding the sector's steps inside the point's elevation
    band (positions in ``sun_order.order``). A point whose band misses every sun elevation in
    its window's sectors gets no run; for blocks and plates a coarse bound (bounding
    cylinder) drops such points before the tighter hull bound is computed.
    """
    index = np.arange(len(points))
    if isinstance(obstruction, (Block, Plate)):
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
    within = np.arange(total) - np.repeat(np.cumsum(span) - span, span)
    sector = (s_lo[local] + within) % _SECTORS
    run_lo, run_hi = e_lo[local], e_hi[local]
    if tighten is not None:
        run_lo, run_hi = tighten(local, sector, run_lo, run_hi)
    base = sector * 4.0
    start = np.searchsorted(sun_order.key, base + run_lo, side="left")
    stop = np.searchsorted(sun_order.key, base + run_hi, side="right")
    count = stop - start
    keep = count > 0
    return index[local[keep]], start[keep], count[keep]


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

    def tighten(local, sector, run_lo, run_hi):
        width = 2 * math.pi / _SECTORS
        a0 = -math.pi + width * sector
        d0 = (a0 - center[local] + math.pi) % (2 * math.pi) - math.pi
        d1 = (a0 + width - center[local] + math.pi) % (2 * math.pi) - math.pi
        d_min = np.where((d0 <= 0) & (d1 >= 0), 0.0, np.minimum(np.abs(d0), np.abs(d1)))
        reach = half_cap[local]
        d_max = np.minimum(np.maximum(np.abs(d0), np.abs(d1)), reach)
        d_min = np.minimum(d_min, reach)
        e = ec[local]
        a_, cos_e = np.sin(e), np.cos(e)
        b_near, b_far = cos_e * np.cos(d_min), cos_e * np.cos(d_max)
        width_near = np.arccos(np.clip(np.cos(ang[local]) / np.hypot(a_, b_near), -1.0, 1.0))
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


@dataclass(frozen=True)
class _Column:
    """A vertical solid known only by its bounding box (a tree's trunk), for culling."""

    bounds: tuple[float, float, float, float, float, float]


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
    obstruction : Block, Cylinder, Tree, Plate or HorizonProfile
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
        The hits, each (step, point) pair once, in no particular order (the same order for the
        same input).
    """
    pts = _check_points(points)
    sun_v = _check_sun(sun)
    start = check_positive("ray_start", ray_start, unit="m")
    return _obstruction_hits(pts, sun_v, obstruction, start, int(max_pairs), cull, None)


@dataclass(frozen=True, eq=False)
class Facing:
    """Which sun steps light the front of each point's surface.

    Points on a module see beam light only while the sun is in front of the module's plane;
    rays from a point whose surface faces away from the sun carry no beam, so they need no
    ray test and count as unshaded. Surfaces are grouped by normal (all the points of one
    module plane share one), so the table stays small.

    Attributes
    ----------
    lit : numpy.ndarray of bool, shape (T, K)
        True where the sun is in front of surface orientation k (``sun · normal > 0``).
    group : numpy.ndarray of int, shape (N,)
        Surface orientation of each point.
    """

    lit: np.ndarray
    group: np.ndarray

    @classmethod
    def from_normals(cls, sun, normals) -> Facing:
        """Build the table from unit vectors toward the sun (T, 3) and point normals (N, 3)."""
        normals = np.asarray(normals, dtype=float)
        unique, group = np.unique(np.round(normals, 9), axis=0, return_inverse=True)
        lit = np.asarray(sun, dtype=float) @ unique.T > 0.0
        return cls(lit=lit, group=group.reshape(-1).astype(np.intp))

    def lit_at(self, step, point) -> np.ndarray:
        """Whether the sun of each ``step`` lights the front of the surface of each ``point``."""
        if self.lit.shape[1] == 1:
            return self.lit[:, 0][step]
        return self.lit[step, self.group[point]]

    def subset(self, index) -> Facing:
        """Return the same table for the points ``index`` only."""
        return Facing(self.lit, self.group[index])


class _HitList:
    """Collects the hits of one obstruction as its candidate pairs are ray-tested."""

    def __init__(self, effect, facing, sub):
        self.effect = effect  # effect(p, st) -> (opaque or None, crown_only or None)
        self.facing = facing
        self.sub = sub
        self.steps, self.points, self.crowns = [], [], []

    def test(self, pt, st):
        if self.facing is not None:  # rays of back-lit points carry no beam: not tested
            keep = self.facing.lit_at(st, pt)
            if not keep.all():
                pt, st = pt[keep], st[keep]
        for i in range(0, len(pt), self.sub):
            p, s = pt[i:i + self.sub], st[i:i + self.sub]
            opaque, crown = self.effect(p, s)
            hit = crown if opaque is None else opaque if crown is None else opaque | crown
            count = int(hit.sum())
            self.steps.append(s[hit].astype(np.int32))
            self.points.append(p[hit].astype(np.int32))
            self.crowns.append(np.ones(count, dtype=bool) if opaque is None
                               else np.zeros(count, dtype=bool) if crown is None
                               else crown[hit])

    def test_runs(self, order: _SunOrder, runs, max_pairs: int, side=None):
        """Test every pair of the candidate runs, in groups of about ``max_pairs`` pairs."""
        run_pt, run_start, run_count = runs
        group = (np.cumsum(run_count) - 1) // max(1, max_pairs)
        bounds = [0, *(np.flatnonzero(np.diff(group)) + 1).tolist(), len(run_pt)]
        for a, b in itertools.pairwise(bounds):
            if b <= a:
                continue
            pt, pos = _expand_runs(run_pt[a:b], run_start[a:b], run_count[a:b])
            st = order.order[pos]
            if side is not None:
                side_pt, side_sun = side
                keep = side_pt[pt] == side_sun[st]
                pt, st = pt[keep], st[keep]
            self.test(pt, st)

    def result(self) -> ShadeHits:
        if not self.steps:
            empty = np.zeros(0, dtype=np.int32)
            return ShadeHits(empty, empty, np.zeros(0, dtype=bool))
        return ShadeHits(np.concatenate(self.steps), np.concatenate(self.points),
                         np.concatenate(self.crowns))


def _obstruction_hits(pts, sun_v, obstruction, start, max_pairs, cull, sun_order,
                      facing=None) -> ShadeHits:
    empty = np.zeros(0, dtype=np.int32)
    if isinstance(obstruction, HorizonProfile):
        blocked = np.asarray(obstruction.blocks_vectors(sun_v), dtype=bool) if len(sun_v) \
            else np.zeros(0, dtype=bool)
        return ShadeHits(empty, empty, np.zeros(0, dtype=bool), blocked)
    if len(pts) == 0 or len(sun_v) == 0:
        _ray_effect(obstruction, np.zeros((0, 3)), np.zeros((0, 3)), start)  # type check
        return ShadeHits(empty, empty, np.zeros(0, dtype=bool))
    side = None
    if isinstance(obstruction, Plate):
        # self-shading rule: points in the plate's plane are never shaded by it
        dist = _plate_side(obstruction, pts)
        active = np.flatnonzero(np.abs(dist) > PLANE_TOLERANCE_M)
        if len(active) < len(pts):
            sub_facing = None if facing is None else facing.subset(active)
            hits = _obstruction_hits(pts[active], sun_v, obstruction, start, max_pairs, cull,
                                     sun_order, sub_facing)
            return ShadeHits(hits.step, active[hits.point].astype(np.int32), hits.crown_only)
        # a ray meets the plane only when the sun lies on the far side from the point
        side = (dist > 0, sun_v @ _plate_geometry(obstruction)[3] < 0)
    sub = max(256, max_pairs // _kernel_cost(obstruction))
    order = None
    if cull:
        order = sun_order if sun_order is not None else _sun_order(sun_v)
        if isinstance(obstruction, Tree):
            kernels = _tree_kernels(obstruction, pts, sun_v, start)
            if kernels is not None:
                return _tree_hits(pts, obstruction, kernels, order, facing, max_pairs, sub)

    fast = None
    if isinstance(obstruction, Block):
        fast = _block_kernel(obstruction, pts, sun_v, start)
    elif isinstance(obstruction, Plate):
        fast = _plate_kernel(obstruction, pts, sun_v, start)
    elif isinstance(obstruction, Tree):
        fast = _tree_kernel(obstruction, pts, sun_v, start)

    def effect(p, st):
        if fast is not None:
            return fast(p, st)
        return _ray_effect(obstruction, pts[p], sun_v[st], start)

    found = _HitList(effect, facing, sub)
    if cull:
        found.test_runs(order, _candidate_ranges(pts, order, obstruction), max_pairs, side)
        if len(order.zenith_steps):
            found.test(np.repeat(np.arange(len(pts)), len(order.zenith_steps)),
                       np.tile(order.zenith_steps, len(pts)))
    else:
        per = max(1, max_pairs // len(pts))
        for t0 in range(0, len(sun_v), per):
            st_block = np.arange(t0, min(t0 + per, len(sun_v)))
            found.test(np.tile(np.arange(len(pts)), len(st_block)),
                       np.repeat(st_block, len(pts)))
    return found.result()


def _tree_hits(pts, tree: Tree, kernels, order: _SunOrder, facing, max_pairs: int,
               sub: int) -> ShadeHits:
    """Hits of a spheroid tree, its crown and its trunk culled apart.

    The crown's candidates come from its own cap (:func:`_crown_ranges`), the trunk's from its
    thin column, so a point above the crown base never tests the trunk and a low sun below
    the crown never tests the crown. A ray through both is blocked by the trunk.
    """
    crown_kernel, trunk_kernel = kernels
    crown = _HitList(lambda p, st: (None, crown_kernel(p, st)), facing, sub)
    crown.test_runs(order, _crown_ranges(pts, order, tree), max_pairs)
    in_crown = crown.result()
    if trunk_kernel is None:
        return in_crown
    (x, y), r = tree.center, tree.trunk_radius
    column = _Column((x - r, y - r, tree.ground_m, x + r, y + r,
                      tree.ground_m + tree.crown_base))
    trunk = _HitList(lambda p, st: (trunk_kernel(p, st), None), facing, sub)
    trunk.test_runs(order, _candidate_ranges(pts, order, column), max_pairs)
    on_trunk = trunk.result()
    if not len(on_trunk):
        return in_crown
    n = len(pts)
    trunk_key = np.sort(on_trunk.step.astype(np.int64) * n + on_trunk.point)
    crown_key = in_crown.step.astype(np.int64) * n + in_crown.point
    where = np.minimum(np.searchsorted(trunk_key, crown_key), len(trunk_key) - 1)
    only = trunk_key[where] != crown_key
    return ShadeHits(np.concatenate([on_trunk.step, in_crown.step[only]]),
                     np.concatenate([on_trunk.point, in_crown.point[only]]),
                     np.concatenate([on_trunk.crown_only, in_crown.crown_only[only]]))


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
        entry = _prepare_hits(obstruction, hits, month, dtype=np.float64)
        if entry is None:
            continue
        if isinstance(entry[0], str):  # ("horizon", blocked_steps)
            out[entry[1]] = 0.0
            continue
        step, point, factor = entry
        if factor is None:
            out[step, point] = 0.0
        else:
            out[step, point] *= factor
    return out


#: Largest number of (step, point) values held densely at once when summing hits per group.
_DENSE_BLOCK = 1 << 24


def _prepare_hits(obstruction, hits: ShadeHits, month, dtype=np.float32):
    """Attach to one obstruction's hits the beam fraction let through at each.

    Returns ``("horizon", blocked_steps)`` for a far horizon, None when nothing is hit, else
    ``(step, point, factor)`` in the hits' order: ``factor`` is 0 where an opaque surface is
    met and the crown's monthly transmittance where only a crown is, or None when every hit
    is opaque.
    """
    if hits.blocked_steps is not None:
        return ("horizon", hits.blocked_steps)
    if not len(hits):
        return None
    factor = None
    if isinstance(obstruction, Tree) and obstruction.transmittance is not None \
            and hits.crown_only.any():
        if month is None:
            raise InputError("month", "is needed for a tree with a crown transmittance",
                             allowed="one month number (1-12) per sun step")
        per_step = obstruction.monthly_transmittance.astype(dtype)[month - 1]
        factor = per_step[hits.step]
        factor[~hits.crown_only] = 0.0
        if not factor.any():
            factor = None
    return (hits.step, hits.point, factor)


def _sorted_by_step(entry, n_steps: int):
    """Sort prepared hits by step (a radix sort for up to 65,536 steps)."""
    step, point, factor = entry
    key = step.astype(np.uint16) if n_steps <= 65536 else step
    order = np.argsort(key, kind="stable")
    return step[order], point[order], None if factor is None else factor[order]


def _group_shade_rows(n_steps, n_points, prepared_hits, labels, n_groups, *, rows=None,
                      out=None):
    """Shaded beam fraction per group of points at the steps where some ray is blocked.

    Parameters
    ----------
    n_steps, n_points : int
        Sun steps and points the hits refer to.
    prepared_hits : sequence
        One entry per obstruction, from :func:`_prepare_hits`.
    labels : numpy.ndarray of int, shape (N,)
        Group of each point, 0 to ``n_groups - 1``.
    n_groups : int
    rows : numpy.ndarray of int, optional
        Increasing steps to give values for (a superset of the steps with hits, e.g. every
        step); default: exactly the steps with a hit or below the far horizon.
    out : numpy.ndarray of float32, shape (G, len(rows)), optional
        Receives the values (a view is fine).

    Returns
    -------
    rows : numpy.ndarray of int, shape (R,)
        Increasing sun steps; at every other step no group has shade.
    values : numpy.ndarray of float32, shape (G, R)
        Shaded fraction of each group at those steps, group-major so that reductions over
        groups (cells of a substring, say) run over whole contiguous rows. Rays met by
        several obstructions multiply their transmittances. Empty groups give NaN.

    Notes
    -----
    Block by block of the rows (at most :data:`_DENSE_BLOCK` values, 64 MB), the beam fraction
    of every point is built densely (point-major, so one point's hits fall close together),
    the hits are scattered into it, and the points are averaged per group. Hits need sorting
    by step only when there is more than one block.
    """
    horizon = np.zeros(n_steps, dtype=bool)
    prepared = []
    for entry in prepared_hits:
        if entry is None:
            continue
        if isinstance(entry[0], str):  # ("horizon", blocked_steps)
            horizon |= entry[1]
            continue
        prepared.append(entry)
    if rows is None:
        with_shade = horizon.copy()
        for step, _, _ in prepared:
            with_shade[step] = True
        rows = np.flatnonzero(with_shade)
    n_rows = len(rows)
    values = np.empty((n_groups, n_rows), dtype=np.float32) if out is None else out
    if n_rows == 0 or n_groups == 0:
        return rows, values
    counts = np.bincount(labels, minlength=n_groups)
    perm = None if (np.diff(labels) >= 0).all() else np.argsort(labels, kind="stable")
    lab = labels if perm is None else labels[perm]
    starts = np.flatnonzero(np.r_[True, lab[1:] != lab[:-1]]) if n_points else np.zeros(0, int)
    present = lab[starts]
    # the common layouts: groups 0..G-1 in order, each of k points (k sample points a cell)
    size = n_points // n_groups
    regular = (len(present) == n_groups and size * n_groups == n_points
               and np.array_equal(starts, np.arange(n_groups) * size))
    direct = regular and size == 1  # one point a group: the beam block is the values block
    row_of = np.zeros(n_steps, dtype=np.intp)  # step -> its column in the values
    row_of[rows] = np.arange(n_rows)
    per = max(1, _DENSE_BLOCK // max(1, n_points))
    if n_rows > per:
        prepared = [_sorted_by_step(entry, n_steps) for entry in prepared]
    for r0 in range(0, n_rows, per):
        r1 = min(n_rows, r0 + per)
        width = r1 - r0
        whole = direct and width == n_rows and values.flags.c_contiguous
        beam = values if whole else np.empty((n_points, width), dtype=np.float32)
        beam.fill(1.0)
        flat_beam = beam.reshape(-1)
        for step, point, factor in prepared:
            part = slice(None)
            if n_rows > per:
                part = slice(*np.searchsorted(step, [rows[r0], rows[r1 - 1] + 1]))
            flat = point[part].astype(np.intp) * width
            flat += row_of[step[part]]
            if r0:
                flat -= r0
            if factor is None:
                flat_beam[flat] = 0.0
            else:
                np.multiply.at(flat_beam, flat, factor[part])
        if direct:
            np.subtract(np.float32(1.0), beam, out=values[:, r0:r1])
        elif regular:
            lit = beam.reshape(n_groups, size, r1 - r0).sum(axis=1)
            values[:, r0:r1] = np.float32(1.0) - lit * np.float32(1.0 / size)
        else:
            lit = np.add.reduceat(beam if perm is None else beam[perm], starts, axis=0)
            values[:, r0:r1] = np.nan
            values[present, r0:r1] = np.float32(1.0) - lit / counts[present][:, None]
    values[:, row_of[np.flatnonzero(horizon)]] = 1.0
    values[counts == 0] = np.nan
    return rows, values


def _group_shade(n_steps, n_points, pairs, labels, n_groups, month) -> np.ndarray:
    """Shaded beam fraction per (step, group) from sparse hits, float32 (T, G).

    The dense form of :func:`_group_shade_rows`: zero at the steps without a blocked ray,
    NaN for an empty group.
    """
    prepared = [_prepare_hits(ob, hits, month) for ob, hits in pairs]
    rows, values = _group_shade_rows(n_steps, n_points, prepared, labels, n_groups)
    out = np.zeros((n_steps, n_groups), dtype=np.float32)
    out[rows] = values.T
    out[:, np.bincount(labels, minlength=n_groups) == 0] = np.nan
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
    obstructions : sequence of Block, Cylinder, Tree, Plate or HorizonProfile
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
    obstructions : sequence of Block, Cylinder, Tree, Plate or HorizonProfile
        The obstructions.
    month : array_like of int, shape (T,), keyword-only, optional
        Calendar month (1-12) of each sun step, e.g. :attr:`layout.sky.sun.SunSample.month`.
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
    normals : array_like, shape (N, 3), keyword-only, optional
        Front normal of the surface each point lies on. When given, a step at which the sun
        is behind a point's surface (``sun · normal <= 0``) is not ray-tested for that point
        and counts as unshaded: the surface receives no beam then, shaded or not
        (:class:`Facing`).
    ray_start, max_pairs
        As in :func:`shaded`.
    """

    def __init__(self, points, sun, obstructions=(), *, month=None, normals=None,
                 ray_start: float = RAY_START_M, max_pairs: int = DEFAULT_MAX_PAIRS):
        self.points = _check_points(points)
        self.sun = _check_sun(sun)
        self.facing = None
        if normals is not None:
            normals = np.asarray(normals, dtype=float)
            if normals.shape != self.points.shape:
                raise InputError("normals", "needs one (x, y, z) normal per point",
                                 value=normals.shape, allowed=str(self.points.shape))
            self.facing = Facing.from_normals(self.sun, normals)
        self.month = None if month is None else _check_month(month, len(self.sun))
        self.ray_start = check_positive("ray_start", ray_start, unit="m")
        self.max_pairs = int(max_pairs)
        self._order = _sun_order(self.sun)
        self._hits: dict = {}
        self._prepared: dict = {}
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
                                            self.max_pairs, True, self._order, self.facing)
                computed += 1
        self._hits = new
        self._prepared = {ob: self._prepared[ob] for ob in new if ob in self._prepared}
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

    def group_shade(self, labels, *, n_groups: int | None = None) -> np.ndarray:
        """Return the shaded beam fraction per step and group of points, float32 (T, G).

        Equal to ``1 - group_mean(self.transmitted(), labels)`` (to float32 rounding), but
        summed from the sparse hits without a dense (T, N) array.

        Parameters
        ----------
        labels : array_like of int, shape (N,)
            Group of each point (cell, substring, module), 0 to ``n_groups - 1``.
        n_groups : int, keyword-only, optional
            Number of groups; default ``labels.max() + 1``. Empty groups give NaN.
        """
        lab, g = _check_labels(labels, len(self.points), n_groups)
        rows, values = self.group_shade_rows(lab, n_groups=g)
        out = np.zeros((len(self.sun), g), dtype=np.float32)
        out[rows] = values.T
        out[:, np.bincount(lab, minlength=g) == 0] = np.nan
        return out

    def group_shade_rows(self, labels, *, n_groups: int | None = None):
        """Return the shaded beam fraction per group at only the steps that have shade.

        Parameters
        ----------
        labels, n_groups
            As in :meth:`group_shade`.

        Returns
        -------
        rows : numpy.ndarray of int, shape (R,)
            Increasing sun steps (rows of :attr:`sun`) where some ray is blocked; at the
            others no group has shade.
        values : numpy.ndarray of float32, shape (G, R)
            Shaded fraction of each group at those steps, group-major.
        """
        lab, g = _check_labels(labels, len(self.points), n_groups)
        prepared = []
        for ob in self.obstructions:  # factors attached once per obstruction, kept with hits
            if ob not in self._prepared:
                self._prepared[ob] = _prepare_hits(ob, self._hits[ob], self.month)
            prepared.append(self._prepared[ob])
        return _group_shade_rows(len(self.sun), len(self.points), prepared, lab, g)


# --------------------------------------------------------------------------- aggregation
def _check_labels(labels, n_points: int, n_groups) -> tuple[np.ndarray, int]:
    lab = np.asarray(labels)
    if lab.shape != (n_points,) or not np.issubdtype(lab.dtype, np.integer):
        raise InputError("labels", "needs one whole-number group per point",
                         allowed=f"{n_points} whole numbers")
    if len(lab) and lab.min() < 0:
        raise InputError("labels", "must not be negative", value=int(lab.min()), allowed=">= 0")
    g = int(n_groups) if n_groups is not None else (int(lab.max()) + 1 if len(lab) else 0)
    if len(lab) and lab.max() >= g:
        raise InputError("labels", "is out of range", value=int(lab.max()),
                         allowed=f"0 to {g - 1}")
    return lab.astype(np.intp), g


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
    if v.ndim != 2:
        raise InputError("values", "must be a (steps, points) array", value=v.shape)
    lab, g = _check_labels(labels, v.shape[1], n_groups)
    counts = np.bincount(lab, minlength=g).astype(float)
    order = np.argsort(lab, kind="stable")
    sums = np.zeros((v.shape[0], g))
    present = np.flatnonzero(counts)
    if len(present):
        starts = np.concatenate([[0], np.cumsum(counts[present])[:-1]]).astype(np.intp)
        sums[:, present] = np.add.reduceat(v[:, order], starts, axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return sums / counts


# --------------------------------------------------------------------------- per module
@dataclass(frozen=True)
class ModuleSamples:
    """Sample points of placed modules, labelled by module, cell and substring.

    Attributes
    ----------
    module_ids : tuple of str
        Id of each module, in the order given.
    points : numpy.ndarray, shape (N, 3)
        Sample points on the module planes, site frame [m], grouped by module then cell.
    module, cell, substring : numpy.ndarray of int, shape (N,)
        Module (position in ``module_ids``), cell and substring (bypass diode) of each point.
    n_cells, n_substrings : int
        Cells and substrings per module.
    normals : numpy.ndarray, shape (N, 3)
        Front normal of the module each point lies on.
    """

    module_ids: tuple[str, ...]
    points: np.ndarray
    module: np.ndarray
    cell: np.ndarray
    substring: np.ndarray
    n_cells: int
    n_substrings: int
    normals: np.ndarray

    @property
    def cell_group(self) -> np.ndarray:
        """Flat cell label of each point, ``module · n_cells + cell``."""
        return self.module * self.n_cells + self.cell


def module_samples(modules, spec, *, samples_per_cell: int = 1) -> ModuleSamples:
    """Collect the cell sample points of placed modules.

    Parameters
    ----------
    modules : sequence of layout.fill.placement.PlacedModule
        The modules, all of type ``spec``.
    spec : layout.scene.modules.ModuleSpec
        The module type; gives cells and substrings.
    samples_per_cell : int, keyword-only, default 1
        Points per cell, a perfect square (see ``PlacedModule.cell_points``).

    Returns
    -------
    ModuleSamples
        Points and labels.
    """
    modules = tuple(modules)
    pts, mod, cell, sub, normal = [], [], [], [], []
    for k, m in enumerate(modules):
        if not hasattr(m, "cell_points"):
            raise InputError(f"modules[{k}]", "is not a placed module", value=type(m).__name__,
                             allowed="layout.fill.placement.PlacedModule")
        p, c, s = m.cell_points(spec, samples_per_cell)
        pts.append(p)
        cell.append(c)
        sub.append(s)
        mod.append(np.full(len(p), k))
        normal.append(np.broadcast_to(np.asarray(m.normal, dtype=float), (len(p), 3)))
    if not modules:
        raise InputError("modules", "is empty", allowed="one or more placed modules")
    return ModuleSamples(tuple(m.id for m in modules), np.vstack(pts),
                         np.concatenate(mod).astype(np.intp), np.concatenate(cell).astype(np.intp),
                         np.concatenate(sub).astype(np.intp), int(spec.cell_count),
                         int(spec.bypass_diodes), np.vstack(normal))


@dataclass(frozen=True, eq=False)
class ModuleShade:
    """Beam shaded fraction of placed modules per sun step, by cell and by substring.

    Values are float32 fractions from 0 (no shade) to 1 (all of the beam blocked); a tree
    crown blocks ``1 - transmittance`` of the beam where it is met. Only the steps at which
    some ray is blocked are held (:attr:`steps`), cell-major (:attr:`by_cell`); the dense
    per-step arrays are built when first asked for. float32 keeps the arrays at 4 bytes a
    value (a year of 4,400 sun-up hours for 500 modules of 60 cells is at most 0.5 GB) and
    carries about 7 significant digits, far below the sampling error of a few points a cell.

    Attributes
    ----------
    module_ids : tuple of str
        Id of each module.
    steps : numpy.ndarray of int, shape (R,)
        Increasing sun steps (rows of the sun vectors given) at which some cell may be
        shaded; at every other step no cell is.
    by_cell : numpy.ndarray of float32, shape (M, C, R)
        Shaded fraction of each module's cells at :attr:`steps` (mean over a cell's sample
        points).
    n_steps : int
        Number of sun steps T.
    cell_substring : numpy.ndarray of int, shape (C,)
        Substring (bypass diode) of each cell.
    cell : numpy.ndarray of float32, shape (T, M, C)
        Shaded fraction of each cell at every step.
    substring : numpy.ndarray of float32, shape (T, M, S)
        Shaded fraction of each bypass-diode substring (mean over its cells).
    """

    module_ids: tuple[str, ...]
    steps: np.ndarray
    by_cell: np.ndarray
    n_steps: int
    cell_substring: np.ndarray

    @cached_property
    def cell(self) -> np.ndarray:
        """Shaded fraction of each cell, float32 (T, M, C)."""
        n_mod, n_cells, _ = self.by_cell.shape
        if len(self.steps) == self.n_steps:  # every step held
            return self.by_cell.transpose(2, 0, 1)
        out = np.zeros((self.n_steps, n_mod, n_cells), dtype=np.float32)
        out[self.steps] = self.by_cell.transpose(2, 0, 1)
        return out

    @cached_property
    def substring(self) -> np.ndarray:
        """Shaded fraction of each substring, float32 (T, M, S) (mean over its cells)."""
        n_mod = self.by_cell.shape[0]
        labels = np.asarray(self.cell_substring)
        per = np.bincount(labels)
        out = np.zeros((self.n_steps, n_mod, len(per)), dtype=np.float32)
        for s, count in enumerate(per):
            if count:
                cells = self.by_cell[:, labels == s, :]
                out[self.steps, :, s] = (cells.sum(axis=1, dtype=np.float64) / count).T
        return out

    @property
    def module(self) -> np.ndarray:
        """Shaded fraction of each whole module, float32 (T, M) (cells have equal areas)."""
        out = np.zeros((self.n_steps, self.by_cell.shape[0]), dtype=np.float32)
        out[self.steps] = self.by_cell.mean(axis=1, dtype=np.float64).T
        return out


#: Default largest number of rays (sun steps × sample points) handled per chunk of modules in
#: :func:`module_shade`; bounds the memory of the sparse hit lists.
DEFAULT_MAX_RAYS = 1 << 26


def module_shade(modules, spec, sun, obstructions, *, samples_per_cell: int = 1, month=None,
                 include_modules: bool = True, cache: ShadeCache | None = None,
                 samples: ModuleSamples | None = None,
                 ray_start: float = RAY_START_M, max_pairs: int = DEFAULT_MAX_PAIRS,
                 max_rays: int = DEFAULT_MAX_RAYS) -> ModuleShade:
    """Compute the beam shaded fraction of each module per sun step, by cell and substring.

    Parameters
    ----------
    modules : sequence of layout.fill.placement.PlacedModule
        The modules, all of type ``spec``.
    spec : layout.scene.modules.ModuleSpec
        The module type.
    sun : array_like, shape (T, 3)
        Vectors toward the sun, site frame (e.g. ``SunSample.vectors``).
    obstructions : sequence of Block, Cylinder, Tree, Plate or HorizonProfile
        Everything that can shade the modules, roof faces of the building included (as
        :class:`~layout.scene.obstructions.Plate`).
    samples_per_cell : int, keyword-only, default 1
        Sample points per cell, a perfect square.
    month : array_like of int, shape (T,), keyword-only, optional
        Month (1-12) of each step; needed when a tree has a crown transmittance.
    include_modules : bool, keyword-only, default True
        Add every module as a :class:`~layout.scene.obstructions.Plate` caster, so rows shade rows.
        A module never shades itself (its points lie in its own plane).
    cache : ShadeCache, keyword-only, optional
        A cache built on ``module_samples(modules, spec, samples_per_cell=...)``'s points and
        normals and the same ``sun``: it is updated with the casters (only new or changed
        ones are ray-tested) and keeps its hits for the next call. Memory is then that of the
        cache.
    samples : ModuleSamples, keyword-only, optional
        The modules' sample points, when already made by ``module_samples(modules, spec,
        samples_per_cell=...)`` (saves making them again).
    ray_start, max_pairs
        As in :func:`shaded`.
    max_rays : int, keyword-only
        Without a cache, modules are handled in chunks of at most this many rays (steps ×
        points, at least one module a chunk), so the sparse hit lists stay bounded.

    Returns
    -------
    ModuleShade
        Shaded fractions by cell and substring, float32. At a step when the sun is behind a
        module's plane the module gets no beam, shaded or not: its cells are not ray-tested
        then and count as unshaded (:class:`Facing`).
    """
    modules = tuple(modules)
    if samples is None:
        samples = module_samples(modules, spec, samples_per_cell=samples_per_cell)
    elif samples.module_ids != tuple(m.id for m in modules) \
            or samples.n_cells != spec.cell_count \
            or len(samples.points) != len(modules) * spec.cell_count * samples_per_cell:
        raise InputError("samples", "were made for other modules or another sampling",
                         allowed="module_samples(modules, spec, samples_per_cell=...)")
    sun_v = _check_sun(sun)
    start = check_positive("ray_start", ray_start, unit="m")
    m = None if month is None else _check_month(month, len(sun_v))
    casters = list(obstructions)
    if include_modules:
        casters += [Plate.from_module(mod) for mod in modules]
    n_mod, n_cells = len(modules), samples.n_cells
    if cache is not None:
        if cache.points.shape != samples.points.shape \
                or not np.array_equal(cache.points, samples.points):
            raise InputError("cache", "was built on other points",
                             allowed="a ShadeCache on module_samples(...).points")
        if cache.sun.shape != sun_v.shape or not np.allclose(cache.sun, sun_v, atol=1e-12):
            raise InputError("cache", "was built for other sun steps", allowed="the same sun")
        if cache.facing is None:
            raise InputError("cache", "was built without the modules' normals",
                             allowed="ShadeCache(samples.points, sun, normals=samples.normals)")
        cache.update(casters)
        steps, values = cache.group_shade_rows(samples.cell_group, n_groups=n_mod * n_cells)
    else:
        order = _sun_order(sun_v)
        facing = Facing.from_normals(sun_v, samples.normals)
        steps = np.arange(len(sun_v))  # chunks of modules: every step held
        values = np.empty((n_mod * n_cells, len(sun_v)), dtype=np.float32)
        per_module = len(samples.points) // n_mod
        chunk = max(1, int(max_rays) // max(1, per_module * len(sun_v)))
        for m0 in range(0, n_mod, chunk):
            m1 = min(n_mod, m0 + chunk)
            sel = slice(m0 * per_module, m1 * per_module)
            pts = samples.points[sel]
            sub_facing = facing.subset(np.arange(len(samples.points))[sel])
            prepared = [_prepare_hits(ob, _obstruction_hits(pts, sun_v, ob, start,
                                                            int(max_pairs), True, order,
                                                            sub_facing), m)
                        for ob in casters]
            labels = samples.cell_group[sel] - m0 * n_cells
            _group_shade_rows(len(sun_v), len(pts), prepared, labels, (m1 - m0) * n_cells,
                              rows=steps, out=values[m0 * n_cells:m1 * n_cells])
    cell_substring = np.asarray(spec.substring_of_cell(np.arange(n_cells)), dtype=np.intp)
    return ModuleShade(samples.module_ids, steps, values.reshape(n_mod, n_cells, len(steps)),
                       len(sun_v), cell_substring)
