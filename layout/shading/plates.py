"""Exact ray test of a plate: a flat polygon in any plane (a roof face, a module).

Method
------
:class:`~layout.scene.obstructions.Plate` (a roof face, a module): ray against the plane, then the
hit point against the polygon's convex parts in the plane's own 2D frame (inclusive edges).
Points within :data:`~layout.scene.obstructions.PLANE_TOLERANCE_M` of a plate's plane are never
shaded by it (the self-shading rule in :mod:`layout.scene.obstructions`); they are dropped before
any ray test, as are (point, sun) pairs whose sun lies on the point's own side of the plane (see
:mod:`layout.shading.hits`). :func:`_plate_kernel` is :func:`_hit_plate` with the point's and
the step's parts tabulated once.
"""

from __future__ import annotations

import functools

import numpy as np

from ..scene.obstructions import PLANE_TOLERANCE_M, Plate
from .convex import _convex_parts


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
