"""Points grouped in space, so that an obstruction is culled a group at a time first.

On a large roof most obstructions can reach only some of the points: a module on a rack shades
its neighbours, not the far end of the roof. :func:`_point_groups` buckets the points into
cubes of a fixed size once; :func:`_near_points` then keeps, for one obstruction, the points of
the groups that pass the angular cull (:mod:`layout.shading.culling`) against the
obstruction's bounding box grown by the groups' half extents (a prism over a rectangle). That
test is conservative: if the ray from a point ``p`` meets the obstruction at ``q = p + s d``
(``s > 0``), the ray
from its group's centre ``c`` passes through ``q + (c - p)``, which lies in the box grown by
``|c - p|``, per axis at most the half extent. The points kept then go through the exact
per-point cull and ray tests as before, so the hits are the same, only found sooner.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .culling import _hull_bounds, _sector_spans
from .sun_sectors import _SunOrder

#: Fewest points for which grouping pays; below it every obstruction sees every point.
_MIN_POINTS = 4096
#: Edge of the cubes the points are bucketed into [m].
_CELL_M = 2.0


@dataclass(frozen=True, eq=False)
class _PointGroups:
    """Points bucketed into cubes: members of each group, box centres, largest half extent."""

    members: np.ndarray  # (N,) point indices, grouped
    starts: np.ndarray  # (G + 1,) offsets of each group's members
    centre: np.ndarray  # (G, 3) centre of each group's bounding box [m]
    half: np.ndarray  # (3,) largest half extent of a group's box along x, y, z [m]


def _point_groups(points: np.ndarray, *, cell: float = _CELL_M,
                  min_points: int | None = None) -> _PointGroups | None:
    """Bucket points (N, 3) into cubes of edge ``cell``; None when there are too few points."""
    if len(points) < (_MIN_POINTS if min_points is None else min_points):
        return None
    cube = np.floor((points - points.min(axis=0)) / cell).astype(np.int64)
    size = cube.max(axis=0) + 1
    key = (cube[:, 0] * size[1] + cube[:, 1]) * size[2] + cube[:, 2]
    members = np.argsort(key, kind="stable")
    sorted_key = key[members]
    first = np.flatnonzero(np.r_[True, sorted_key[1:] != sorted_key[:-1]])
    inside = points[members]
    low = np.minimum.reduceat(inside, first, axis=0)
    high = np.maximum.reduceat(inside, first, axis=0)
    return _PointGroups(members, np.r_[first, len(points)], 0.5 * (low + high),
                        (0.5 * (high - low)).max(axis=0))


def _near_points(groups: _PointGroups, sun_order: _SunOrder, obstruction) -> np.ndarray | None:
    """Return the points whose group may see the obstruction; None when every group may.

    The indices come group by group (ascending within each group).

    Only for sun steps that all have an azimuth (no step with the sun straight up or down).
    """
    xmin, ymin, zmin, xmax, ymax, zmax = obstruction.bounds
    hx, hy, hz = groups.half * (1 + 1e-9) + 1e-9
    x0, y0, x1, y1 = xmin - hx, ymin - hy, xmax + hx, ymax + hy
    # the grown box as a prism over its rectangle: for a long rack row far tighter than the
    # cylinder around it, which would take in every group within half the row's length
    box = np.array([(x0, y0), (x1, y0), (x1, y1), (x0, y1)])
    _, span, _, _ = _sector_spans(sun_order, *_hull_bounds(groups.centre, box, zmin - hz,
                                                           zmax + hz))
    keep = np.flatnonzero(span)
    if len(keep) == len(span):
        return None
    starts, stops = groups.starts[keep], groups.starts[keep + 1]
    count = stops - starts
    first = np.cumsum(count) - count
    pos = np.repeat(starts - first, count) + np.arange(int(count.sum()))
    return groups.members[pos]
