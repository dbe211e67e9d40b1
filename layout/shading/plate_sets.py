"""Plates that share one plane, cast as one: the modules of a rack row.

A rack row of modules lies in one plane; as casters its modules are many small plates, and
culling each of them against every point costs the same as culling the whole row once.
:class:`PlateSet` holds such plates as one caster: it is culled as the convex hull of its
plates (:attr:`PlateSet.hull`, a plate in the same plane), and each candidate ray is then tested
exactly against the plates near the point where it crosses the plane (found on a grid of the
plates' outlines), each by the same operations as :func:`~layout.shading.plates._plate_kernel`
on its own plate. A ray meets the set exactly when it meets one of its plates, so the shade of
every point is the same, bit for bit, as with the plates one by one; only the hits are kept for
the set as a whole (the modules of a layout change together, never one by one).

:func:`module_casters` turns placed modules into these casters: one set per plane (plates of one
shape, convex), any plate left over on its own.
"""

from __future__ import annotations

import functools
from collections import defaultdict
from dataclasses import dataclass
from functools import cached_property

import numpy as np
import shapely

from ..errors import InputError
from ..scene.obstructions import PLANE_TOLERANCE_M, Plate
from ..scene.obstructions_batch import plates_from_corners
from .convex import _convex_outlines
from .plates import _INSIDE_SLACK, _dot3, _hit_plate, _plate_geometry

__all__ = ["PlateSet", "module_casters"]

#: [m] plates whose corners lie this close to one plane are cast as one set
_COPLANAR_M = 1e-12
#: [m] an outline is registered in every grid cell within this distance, against rounding
#: between the set's frame and each plate's own
_GRID_MARGIN_M = 1e-4
#: [m] margin of the sure cases: a cell surely inside a plate, a point surely off the plane
_SURE_M = 1e-6
#: Grid cells across the smaller side of a plate
_CELLS_PER_PLATE = 16
#: Most plates in one set (neighbours along a row)
_SET_SIZE = 32
#: Rays this close to parallel with the plane (|sun · normal|) are tested against every plate
#: of the set: where they cross the plane is too uncertain to pick plates by position.
_GRAZING = 1e-4


@dataclass(frozen=True)
class PlateSet:
    """Plates in one plane, cast as one: a ray meets the set when it meets any of them.

    Parameters
    ----------
    plates : tuple of Plate
        Two or more convex plates of the same number of corners, within 1e-12 m of one plane
        (:func:`module_casters` builds them).
    """

    plates: tuple[Plate, ...]

    def __post_init__(self):
        if len(self.plates) < 2 or not all(isinstance(p, Plate) for p in self.plates):
            raise InputError("plates", "needs two or more plates", value=len(self.plates),
                             allowed="a tuple of Plate objects")
        if _stacked(self) is None:
            raise InputError("plates", "must be convex, of one shape and in one plane",
                             allowed=f"corners within {_COPLANAR_M:g} m of one plane")

    @cached_property
    def hull(self) -> Plate:
        """The convex hull of the plates, a plate in their plane: what culling sees."""
        origin, e1, e2, _ = self.plates[0].frame
        corners = np.vstack([np.asarray(p.corners) for p in self.plates])
        rel = corners - origin
        hull = shapely.convex_hull(shapely.multipoints(np.column_stack([rel @ e1, rel @ e2])))
        ring = shapely.get_coordinates(shapely.orient_polygons(hull).exterior)[:-1]
        return Plate(origin + ring[:, :1] * e1 + ring[:, 1:] * e2, kind="module",
                     name=f"{len(self.plates)} plates in one plane")

    @property
    def bounds(self) -> tuple[float, float, float, float, float, float]:
        """Axis-aligned box ``(xmin, ymin, zmin, xmax, ymax, zmax)`` of all its plates [m]."""
        pts = np.vstack([np.asarray(p.corners) for p in self.plates])
        lo, hi = pts.min(axis=0), pts.max(axis=0)
        return (float(lo[0]), float(lo[1]), float(lo[2]), float(hi[0]), float(hi[1]),
                float(hi[2]))


@functools.lru_cache(maxsize=256)
def _stacked(plate_set: PlateSet):
    """Each plate's kernel terms stacked (P, ...), or None when the plates cannot be a set."""
    # one convex part each, one shape: the edges of all the outlines at once (the values of
    # _plate_geometry, plate by plate)
    parts = _convex_outlines([p.plane_polygon for p in plate_set.plates])
    if parts is None:
        return None
    origin, _, _, normal = plate_set.plates[0].frame
    corners = np.vstack([np.asarray(p.corners) for p in plate_set.plates])
    if np.abs((corners - origin) @ normal).max() > _COPLANAR_M:
        return None
    frames = [p.frame for p in plate_set.plates]
    origins, e1, e2, normals = (np.array([f[k] for f in frames]) for k in range(4))
    part_normal, offset = parts  # (P, K, 2), (P, K)
    return origins, e1, e2, normals, part_normal, offset + _INSIDE_SLACK


@functools.lru_cache(maxsize=256)
def _grid(plate_set: PlateSet):
    """Build a fine grid over the set's plane: the plates near each cell, and its status.

    Returns ``(u0, v0, cell, nu, nv, start, members, status)`` in the hull's in-plane frame:
    cell ``(i, j)`` (``i`` along the hull frame's e1) holds the plates whose outline comes
    within :data:`_GRID_MARGIN_M` of it, ``members[start[key]:start[key + 1]]`` with
    ``key = i * nv + j``; ``status[key]`` is 0 when no plate does (a crossing there misses
    them all), 1 when the cell grown by :data:`_SURE_M` lies inside one plate shrunk by as
    much (a crossing there meets it), 2 otherwise (each plate is tested exactly).
    """
    origin, e1, e2, _, _, _ = _plate_geometry(plate_set.hull)
    outlines = []
    for plate in plate_set.plates:
        rel = np.asarray(plate.corners) - origin
        outlines.append(np.column_stack([_dot3(rel, e1), _dot3(rel, e2)]))
    outlines = np.array(outlines)  # (P, K, 2)
    low, high = outlines.min(axis=1), outlines.max(axis=1)
    size = np.minimum(np.median(high[:, 0] - low[:, 0]), np.median(high[:, 1] - low[:, 1]))
    cell = float(size) / _CELLS_PER_PLATE
    low, high = low - _GRID_MARGIN_M, high + _GRID_MARGIN_M
    u0, v0 = low[:, 0].min(), low[:, 1].min()
    nu = int((high[:, 0].max() - u0) // cell) + 1
    nv = int((high[:, 1].max() - v0) // cell) + 1
    # each plate's edges as half-planes n · x <= c in the hull frame (counter-clockwise)
    ring, nxt = outlines, np.roll(outlines, -1, axis=1)
    area2 = np.sum(ring[..., 0] * nxt[..., 1] - nxt[..., 0] * ring[..., 1], axis=1)
    sign = np.where(area2 > 0, 1.0, -1.0)[:, None]
    edge = nxt - ring
    normal = np.stack([edge[..., 1] * sign, -edge[..., 0] * sign], axis=-1)
    normal /= np.linalg.norm(normal, axis=-1, keepdims=True)
    offset = np.sum(normal * ring, axis=-1)
    # the cells each plate's box covers, plate by plate, each box row by row (i, then j)
    i0, i1 = ((low[:, 0] - u0) // cell).astype(int), ((high[:, 0] - u0) // cell).astype(int)
    j0, j1 = ((low[:, 1] - v0) // cell).astype(int), ((high[:, 1] - v0) // cell).astype(int)
    wide = j1 - j0 + 1
    boxed = (i1 - i0 + 1) * wide  # cells of each plate's box
    plates = np.repeat(np.arange(len(outlines)), boxed)
    local = np.arange(int(boxed.sum())) - np.repeat(np.cumsum(boxed) - boxed, boxed)
    across = np.repeat(wide, boxed)
    keys = (np.repeat(i0, boxed) + local // across) * nv + np.repeat(j0, boxed) + local % across
    order = np.argsort(keys, kind="stable")
    keys, members = keys[order], plates[order]
    count = np.bincount(keys, minlength=nu * nv)
    start = np.r_[0, np.cumsum(count)]
    # a cell is surely inside a plate when its corners, grown by _SURE_M, are inside by as much
    cu, cv = keys // nv, keys % nv
    inside = np.ones(len(keys), dtype=bool)
    n, c = normal[members], offset[members]  # each cell's plate's edges
    for du, dv in ((0, 0), (1, 0), (0, 1), (1, 1)):
        x = u0 + (cu + du) * cell + (2 * du - 1) * _SURE_M
        y = v0 + (cv + dv) * cell + (2 * dv - 1) * _SURE_M
        inside &= (n[..., 0] * x[:, None] + n[..., 1] * y[:, None] <= c - _SURE_M).all(axis=1)
    status = np.where(count > 0, 2, 0).astype(np.int8)
    status[keys[inside]] = 1
    return u0, v0, cell, nu, nv, start, members, status


def _plate_set_kernel(plate_set: PlateSet, pts: np.ndarray, sun_v: np.ndarray, start: float):
    """Build the exact kernel of a plate set over (point, step) index pairs.

    Where the ray crosses the set's plane (in the hull's frame) picks a grid cell
    (:func:`_grid`). A crossing in an empty cell misses every plate; one in a cell surely
    inside a plate meets it, when the point is surely off the plane and the crossing surely
    beyond the ray start. The other pairs, and every pair whose ray is nearly parallel to
    the plane, are tested against each plate near the cell (every plate, for those) with the
    operations of :func:`~layout.shading.plates._plate_kernel`, terms gathered per plate.

    Why the sure cases are sure: the plates lie within 1e-12 m of the hull's plane and their
    normals agree to rounding, so for a ray at least :data:`_GRAZING` from parallel the
    crossing each plate's own test computes lies within about 1e-8 m of the one computed
    here, far inside the margins :data:`_SURE_M` and :data:`_GRID_MARGIN_M`.
    """
    origin, e1, e2, normal, _, _ = _plate_geometry(plate_set.hull)
    rel = pts - origin
    dist, u_pt, v_pt = _dot3(rel, normal), _dot3(rel, e1), _dot3(rel, e2)
    sure_off = np.abs(dist) > PLANE_TOLERANCE_M + _SURE_M
    u0, v0, cell, nu, nv, cell_start, members, status = _grid(plate_set)
    origins, pe1, pe2, normals, part_normal, limit = _stacked(plate_set)
    n_plates, n_edges = limit.shape
    grazing, inv_den, u_step, v_step, step_inv, step_cross, step_du, step_dv = \
        _step_terms(plate_set, sun_v)
    px, py, pz = (pts[:, k].copy() for k in range(3))
    ox, oy, oz = origins.T.copy()
    nx, ny, nz = normals.T.copy()
    ax, ay, az = pe1.T.copy()
    bx, by, bz = pe2.T.copy()
    edge_x = [part_normal[:, k, 0].copy() for k in range(n_edges)]
    edge_y = [part_normal[:, k, 1].copy() for k in range(n_edges)]
    edge_limit = [limit[:, k].copy() for k in range(n_edges)]

    def exact(p, st, every, key):
        """Each pair against the plates of its cell (every plate when ``every``)."""
        count = np.where(every, n_plates, cell_start[key + 1] - cell_start[key])
        pair = np.repeat(np.arange(len(p)), count)
        hit = np.zeros(len(p), dtype=bool)
        if not len(pair):
            return hit
        offset = np.arange(len(pair)) - np.repeat(np.cumsum(count) - count, count)
        plate = np.where(every[pair], offset, members[np.minimum(
            cell_start[key][pair] + offset, len(members) - 1)])
        pp = p[pair]
        flat = st[pair] * n_plates + plate
        rx, ry, rz = px[pp] - ox[plate], py[pp] - oy[plate], pz[pp] - oz[plate]
        d = rx * nx[plate] + ry * ny[plate] + rz * nz[plate]
        with np.errstate(invalid="ignore"):
            t = -d * step_inv[flat]
        ok = (np.abs(d) > PLANE_TOLERANCE_M) & step_cross[flat] & (t >= start)
        t = np.where(ok, t, 0.0)
        u = (rx * ax[plate] + ry * ay[plate] + rz * az[plate]) + t * step_du[flat]
        v = (rx * bx[plate] + ry * by[plate] + rz * bz[plate]) + t * step_dv[flat]
        for k in range(n_edges):
            ok &= u * edge_x[k][plate] + v * edge_y[k][plate] <= edge_limit[k][plate]
        hit[pair[ok]] = True
        return hit

    # the grid's status with a border of empty cells, so that a crossing off the grid needs
    # no test of its own: cell (i, j) is padded[(i + 1) * (nv + 2) + j + 1], i and j clipped
    padded = np.zeros((nu + 2, nv + 2), dtype=np.int8)
    padded[1:-1, 1:-1] = status.reshape(nu, nv)
    padded = padded.ravel()
    # the crossing in grid cells, u = u_cell(p) + (-dist(p)) * u_step(st): the same point as
    # (u_pt + s du - u0) / cell to rounding (1e-13 cells), far inside the grid's margins
    back = -dist
    u_cell, v_cell = (u_pt - u0) / cell, (v_pt - v0) / cell

    def kernel(p, st):
        dp = back.take(p)
        s = dp * inv_den.take(st)  # where the ray crosses the plane (0 when grazing)
        i = np.clip(np.floor(u_cell.take(p) + dp * u_step.take(st)), -1, nu)
        j = np.clip(np.floor(v_cell.take(p) + dp * v_step.take(st)), -1, nv)
        state = padded.take(((i + 1) * (nv + 2) + (j + 1)).astype(np.intp))
        every = grazing.take(st)
        sure = (state == 1) & (s > start + _SURE_M) & sure_off.take(p) & ~every
        check = np.flatnonzero(((state != 0) & (s > 0) & ~sure) | every)
        if len(check):
            i, j = i[check], j[check]
            on_grid = (i >= 0) & (i < nu) & (j >= 0) & (j < nv)
            key = np.where(on_grid, i * nv + j, 0).astype(np.intp)
            sure[check] = exact(p[check], st[check], every[check], key)
        return sure, np.zeros(len(p), dtype=bool)

    return kernel


#: The last plate set's per-step terms, ``(plate_set, sun, terms)``: the near and the far
#: points of one set (hits.py, _split_hits) are ray-tested one after the other.
_LAST_STEPS: list = [None]


def _step_terms(plate_set: PlateSet, sun_v: np.ndarray):
    """Terms of a plate set's kernel that depend only on the sun step.

    ``(grazing, inv_den, u_step, v_step)`` per step for the crossing of the hull's plane in
    grid cells, and the plates' own terms per (step, plate), flat, as
    :func:`~layout.shading.plates._plate_kernel` tabulates them (``step_inv``,
    ``step_cross``, ``step_du``, ``step_dv``). The last set's are kept for the same ``sun``
    array (the same object).
    """
    last = _LAST_STEPS[0]
    if last is not None and last[0] is plate_set and last[1] is sun_v:
        return last[2]
    _, e1, e2, normal, _, _ = _plate_geometry(plate_set.hull)
    cell = _grid(plate_set)[2]
    _, pe1, pe2, normals, _, _ = _stacked(plate_set)
    den = _dot3(sun_v, normal)
    du, dv = _dot3(sun_v, e1), _dot3(sun_v, e2)
    grazing = np.abs(den) < _GRAZING
    with np.errstate(divide="ignore"):
        inv_den = np.where(grazing, 0.0, 1.0 / den)
    step_den = np.stack([_dot3(sun_v, n) for n in normals], axis=1)  # (T, P)
    with np.errstate(divide="ignore"):
        step_inv = (1.0 / step_den).ravel()
    terms = (grazing, inv_den, inv_den * du / cell, inv_den * dv / cell, step_inv,
             (step_den != 0).ravel(), np.stack([_dot3(sun_v, a) for a in pe1], axis=1).ravel(),
             np.stack([_dot3(sun_v, b) for b in pe2], axis=1).ravel())
    _LAST_STEPS[0] = (plate_set, sun_v, terms)
    return terms


def _hit_plate_set(plate_set: PlateSet, o: np.ndarray, d: np.ndarray, start: float):
    """Exact ray vs a plate set, the direct way: any of its plates (:func:`_hit_plate`)."""
    hit = np.zeros(len(o), dtype=bool)
    for plate in plate_set.plates:
        hit |= _hit_plate(plate, o, d, start)
    return hit


def module_casters(modules) -> tuple:
    """Return the modules as casters: one :class:`PlateSet` per plane, lone plates as they are.

    Parameters
    ----------
    modules : sequence of layout.fill.placed.PlacedModule

    Returns
    -------
    tuple of PlateSet and Plate
        Together they shade exactly as ``Plate.from_module(m)`` for every module. The last
        few answers are kept (the sun and the sky-view stages ask for the same modules).
    """
    return _module_casters(tuple(modules))


@functools.lru_cache(maxsize=8)
def _module_casters(modules: tuple) -> tuple:
    corners = [m.corners_3d for m in modules]
    if len({len(c) for c in corners}) == 1:  # one corner count: validated in a batch
        plates = plates_from_corners(corners, kind="module", names=[m.id for m in modules])
    else:
        plates = [Plate.from_module(m) for m in modules]
    groups: dict = defaultdict(list)
    for plate in plates:
        origin, _, _, normal = plate.frame
        if normal[2] < 0 or (normal[2] == 0 and (normal[1] < 0 or
                                                  (normal[1] == 0 and normal[0] < 0))):
            normal = -normal
        key = (*np.round(normal, 9), round(float(origin @ normal), 6),
               len(plate.corners))
        groups[key].append(plate)
    out = []
    for members in groups.values():
        # runs of neighbours along the plane's longest extent: a set's hull stays close to its
        # plates, so culling by the hull stays tight
        origin, e1, e2, _ = members[0].frame
        centre = np.array([np.asarray(p.corners).mean(axis=0) - origin for p in members])
        along = centre @ (e1 if np.ptp(centre @ e1) >= np.ptp(centre @ e2) else e2)
        ordered = [members[k] for k in np.argsort(along, kind="stable")]
        for k in range(0, len(ordered), _SET_SIZE):
            run = tuple(ordered[k:k + _SET_SIZE])
            if len(run) >= 2:
                try:
                    out.append(PlateSet(run))
                    continue
                except InputError:
                    pass
            out.extend(run)
    return tuple(out)
