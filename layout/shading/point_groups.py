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

For a plate set (a rack row, long beside a group), :func:`_split_groups` goes one step
further: the points of a group far from it take the runs of sun steps of the group's centre
toward the grown box, by the same argument a superset of each point's own, so that one cull
serves the whole group; only the groups near it are culled point by point.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .culling import _hull_bounds, _sector_spans, _window_runs
from .sun_sectors import _SunOrder

#: Fewest points for which grouping pays; below it every obstruction sees every point.
_MIN_POINTS = 4096
#: Edge of the cubes the points are bucketed into [m].
_CELL_M = 2.0
#: A group is far from an obstruction when its centre lies more than this many times the
#: groups' largest plan half extent from the obstruction's grown box, in plan: its points
#: then take the group's runs of sun steps instead of their own.
_FAR = 8.0


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


def _grown_box_bounds(groups: _PointGroups, obstruction, plan=None):
    """Angular bounds of the obstruction's box, grown by the groups' half extents, per group.

    As :func:`~layout.shading.culling._hull_bounds` gives them from each group's centre.
    """
    xmin, ymin, zmin, xmax, ymax, zmax = obstruction.bounds
    hx, hy, hz = groups.half * (1 + 1e-9) + 1e-9
    x0, y0, x1, y1 = xmin - hx, ymin - hy, xmax + hx, ymax + hy
    # the grown box as a prism over its rectangle: for a long rack row far tighter than the
    # cylinder around it, which would take in every group within half the row's length
    box = np.array([(x0, y0), (x1, y0), (x1, y1), (x0, y1)])
    return _hull_bounds(groups.centre, box, zmin - hz, zmax + hz, plan=plan)


def _members(groups: _PointGroups, keep: np.ndarray) -> np.ndarray:
    """Return the points of the groups ``keep``, group by group."""
    starts, stops = groups.starts[keep], groups.starts[keep + 1]
    count = stops - starts
    first = np.cumsum(count) - count
    pos = np.repeat(starts - first, count) + np.arange(int(count.sum()))
    return groups.members[pos]


def _split_groups(groups: _PointGroups, sun_order: _SunOrder, obstruction):
    """Split the points whose group may see the obstruction into near and far ones.

    Returns ``(near, far, far_runs)``: the points of the groups near the obstruction (culled
    one by one afterwards), those of the far groups, and the far points' candidate runs
    ``(point, start, count)`` (``point`` indexing ``far``), each point taking the runs of its
    group's centre toward the grown box, which hold every sun step any point of the group
    can meet the obstruction at (module docstring). Far from it, a group's window and band
    are hardly wider than its points' own, and one cull serves all its points.

    Only for sun steps that all have an azimuth.
    """
    plan: dict = {}
    bounds = _grown_box_bounds(groups, obstruction, plan)
    span = _sector_spans(sun_order, *bounds)[1]
    far_off = plan["near"] > _FAR * float(groups.half[:2].max())
    near_ids = np.flatnonzero((span > 0) & ~far_off)
    far_ids = np.flatnonzero((span > 0) & far_off)
    group, start, count = _window_runs(sun_order, far_ids,
                                       tuple(b[far_ids] for b in bounds))
    # each run of a far group, once per member point (numbered within ``far``)
    size = groups.starts[far_ids + 1] - groups.starts[far_ids]
    first = np.cumsum(size) - size
    rank = np.searchsorted(far_ids, group)  # the run's group among the far ones
    times = size[rank]
    total = int(times.sum())
    point = np.repeat(first[rank] - (np.cumsum(times) - times), times) + np.arange(total)
    return (_members(groups, near_ids), _members(groups, far_ids),
            (point, np.repeat(start, times), np.repeat(count, times)))


def _near_points(groups: _PointGroups, sun_order: _SunOrder, obstruction) -> np.ndarray | None:
    """Return the points whose group may see the obstruction; None when every group may.

    The indices come group by group (ascending within each group).

    Only for sun steps that all have an azimuth (no step with the sun straight up or down).
    """
    _, span, _, _ = _sector_spans(sun_order, *_grown_box_bounds(groups, obstruction))
    keep = np.flatnonzero(span)
    if len(keep) == len(span):
        return None
    return _members(groups, keep)
