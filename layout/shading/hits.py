"""Where one obstruction meets the rays: its hits as sparse (step, point) lists.

:func:`obstruction_hits` ray-tests one obstruction against every (sun step, point) pair that
culling leaves (:mod:`layout.shading.culling`), with the tabulated kernel of its family where
one applies, and returns the hits (:class:`ShadeHits`). A
:class:`~layout.scene.obstructions.HorizonProfile` is tested by the sun's elevation against the
skyline at its azimuth; it shades every point alike. :class:`Facing` tells which steps light the
front of each point's surface, so that rays carrying no beam are not tested. Work runs in
chunks of at most ``max_pairs`` (step, point) pairs, so memory stays bounded whatever the year
and the array size.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from ..errors import check_positive
from ..scene.obstructions import PLANE_TOLERANCE_M, Block, HorizonProfile, Plate, Tree
from .blocks import _block_kernel
from .culling import _candidate_ranges, _Column, _cone_ranges, _crown_ranges, _expand_runs
from .plate_sets import PlateSet, _plate_set_kernel
from .plates import _plate_geometry, _plate_kernel, _plate_side
from .point_groups import _near_points, _split_groups
from .ray_tests import _check_solid, _kernel_cost, _ray_effect
from .rays import RAY_START_M, _check_points, _check_sun
from .round_solids import _cone_tree_kernels, _tree_kernel, _tree_kernels
from .sun_sectors import _sun_order, _SunOrder

__all__ = ["DEFAULT_MAX_PAIRS", "BlockedPairs", "Facing", "ShadeHits", "obstruction_hits"]


#: Default upper bound on (time step, point) pairs handled at once; bounds working memory to
#: roughly a few hundred bytes per pair.
DEFAULT_MAX_PAIRS = 1 << 19
#: Most candidate pairs expanded from their runs at once: arrays of a few hundred kilobytes
#: are reused by the allocator, while fresh ones of megabytes cost their page faults (about
#: a millisecond each for 266,000 pairs of the demo's tree).
_GROUP_PAIRS = 1 << 15


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

    def compact(self, n_steps: int, *, sort: bool = True, window: int = 1) -> ShadeHits:
        """Return the same hits as a cache keeps them: in fewer bytes, in order of step.

        Steps become uint16 when ``n_steps`` is at most 65,535, and crown flags that are all
        False become one shared read-only False; 6 bytes a hit instead of 9. With ``sort``,
        hits come in order of their window of ``window`` steps (``step // window``; 1: by
        step), each window's hits in the order found (:func:`_step_window_order`). With
        ``sort`` False the order is kept.
        """
        step, point, crown = self.step, self.point, self.crown_only
        opaque = crown.strides == (0,) or not crown.any()
        small = n_steps <= 65535
        if sort and len(step) > 1:
            if opaque and small and len(step) > _COMPACT_CHUNK:
                # millions of hits: put in order a chunk at a time, straight into the kept
                # arrays (the same order; no whole-size temporaries, each fresh memory)
                step, point = _window_order_by_chunks(step, point, n_steps, window)
            else:
                order = _step_window_order(step, n_steps, window)
                if order is not None:
                    step, point = step[order], point[order]
                    if not opaque:
                        crown = crown[order]
        if small:
            step = step.astype(np.uint16, copy=False)
        if opaque:
            crown = np.broadcast_to(np.False_, crown.shape)
        return ShadeHits(step, point, crown, self.blocked_steps)


def _step_windows(step: np.ndarray, window: int) -> np.ndarray:
    """Return the window of each step (``step // window``, a power of two), in its dtype."""
    shift = int(window).bit_length() - 1
    return step >> shift if shift else step


def _step_window_order(step: np.ndarray, n_steps: int, window: int):
    """Return the stable order that puts hits in order of their step window, or None.

    None when they are in that order already. The order is numpy's radix sort of a one- or
    two-byte key (windows of ``window`` steps, a power of two, are a few hundred at most for
    a year of hours). On the 5,000-module warehouse of ``benchmarks/warehouse.py`` (windows of
    32 steps) the cache's ordering took 1.5 s of CPU time against 5.0 s for a sort of the
    (step, point) pairs; each window's hits keep the order they were found in (point by
    point, close in memory).
    """
    if window & (window - 1):
        raise ValueError(f"window must be a power of two, not {window}")
    n_windows = -(-n_steps // window)
    kind = np.uint8 if n_windows <= 256 else np.uint16 if n_windows <= 65536 else np.int64
    key = _step_windows(step, window).astype(kind, copy=False)
    if (key[1:] >= key[:-1]).all():
        return None
    return np.argsort(key, kind="stable")


#: Hits put in order of their step window at once by :meth:`ShadeHits.compact`; more go a
#: chunk of this many at a time (:func:`_window_order_by_chunks`).
_COMPACT_CHUNK = 1 << 20


def _window_order_by_chunks(step: np.ndarray, point: np.ndarray, n_steps: int, window: int):
    """Return ``(step, point)`` in the order :func:`_step_window_order` gives, made by chunks.

    A counting sort: the hits of each window are counted, then each chunk of
    :data:`_COMPACT_CHUNK` hits is put in order on its own (a stable sort of a small key) and
    written where its windows' places begin, chunk after chunk, so that every window holds
    its hits in the order found, as a stable sort of all of them would. Steps come back as
    uint16 (``n_steps`` at most 65,535), points as int32.
    """
    n_windows = -(-n_steps // window)
    kind = np.uint8 if n_windows <= 256 else np.uint16
    chunks = range(0, len(step), _COMPACT_CHUNK)

    def keys(lo: int) -> np.ndarray:
        return _step_windows(step[lo:lo + _COMPACT_CHUNK], window).astype(kind, copy=False)

    counts = [np.bincount(keys(lo), minlength=n_windows) for lo in chunks]
    cursor = np.cumsum(np.sum(counts, axis=0)) - np.sum(counts, axis=0)  # each window's start
    out_step = np.empty(len(step), dtype=np.uint16)
    out_point = np.empty(len(point), dtype=np.int32)
    for lo, count in zip(chunks, counts, strict=True):
        key = keys(lo)
        order = np.argsort(key, kind="stable")
        sorted_key = key[order]
        first = np.cumsum(count) - count  # where each window begins in the sorted chunk
        places = cursor[sorted_key] + (np.arange(len(order)) - first[sorted_key])
        out_step[places] = step[lo:lo + _COMPACT_CHUNK][order]
        out_point[places] = point[lo:lo + _COMPACT_CHUNK][order]
        cursor += count
    return out_step, out_point


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
    normals : numpy.ndarray, shape (K, 3), optional
        The normal of each orientation, as ``lit`` was computed with it; with it an
        obstruction wholly behind a point's surface is not ray-tested from that point
        (:func:`_in_front`).
    heights : numpy.ndarray, shape (N,), optional
        Each point's height along its surface's normal (``normal · point``) [m], which
        :func:`_in_front` compares with each obstruction's reach; computed once here instead
        of for every obstruction.
    point_ids : numpy.ndarray of int, shape (N,), optional
        Each point's number among all the points of :attr:`blocked`.
    blocked : BlockedPairs, optional
        (step, point) pairs already found blocked by other casters: not tested again, and
        each opaque hit found is added (:class:`_HitList`).
    """

    lit: np.ndarray
    group: np.ndarray
    normals: np.ndarray | None = None
    heights: np.ndarray | None = None
    point_ids: np.ndarray | None = None
    blocked: BlockedPairs | None = None

    @classmethod
    def from_normals(cls, sun, normals, points=None) -> Facing:
        """Build the table from unit vectors toward the sun (T, 3) and point normals (N, 3).

        With the points (N, 3) [m], their :attr:`heights` too.
        """
        rounded = np.round(np.asarray(normals, dtype=float), 9).reshape(-1, 3)
        # the distinct rows, in the order of np.unique(axis=0), found by a lexicographic
        # sort of the columns (an order of magnitude faster on a roof of many modules)
        order = np.lexsort(rounded.T[::-1])
        ranked = rounded[order]
        first = np.r_[True, (ranked[1:] != ranked[:-1]).any(axis=1)]
        group = np.empty(len(rounded), dtype=np.intp)
        group[order] = np.cumsum(first) - 1
        lit = np.asarray(sun, dtype=float) @ ranked[first].T > 0.0
        normals = ranked[first]
        heights = None if points is None \
            else _heights(np.asarray(points, dtype=float), normals, group)
        return cls(lit=lit, group=group, normals=normals, heights=heights)

    def lit_at(self, step, point) -> np.ndarray:
        """Whether the sun of each ``step`` lights the front of the surface of each ``point``."""
        if self.lit.shape[1] == 1:
            return np.take(self.lit[:, 0], step)  # faster than fancy indexing
        return self.lit[step, np.take(self.group, point)]

    def subset(self, index) -> Facing:
        """Return the same table for the points ``index`` only."""
        return Facing(self.lit, self.group[index], self.normals,
                      None if self.heights is None else self.heights[index],
                      None if self.point_ids is None else self.point_ids[index], self.blocked)

    def skipping(self, blocked: BlockedPairs) -> Facing:
        """Return the same table that skips, and adds to, the pairs ``blocked`` holds."""
        return Facing(self.lit, self.group, self.normals, self.heights,
                      np.arange(len(self.group)), blocked)


@dataclass(frozen=True, eq=False)
class BlockedPairs:
    """(step, point) pairs known to be blocked by an opaque caster, one bit each.

    The module casters of a layout (its rack rows, :class:`PlateSet`) change together, so
    only the union of their hits matters: tested one after another, each skips the pairs
    the ones before it blocked (a ray blocked once is blocked), which the shade keeps exact.

    Attributes
    ----------
    bits : numpy.ndarray of uint8, shape (ceil(T · N / 8),)
        Bit ``step · N + point``, set when the pair is blocked.
    n_points : int
        N.
    """

    bits: np.ndarray
    n_points: int

    @classmethod
    def none(cls, n_steps: int, n_points: int) -> BlockedPairs:
        """Return an empty set for ``n_steps`` steps and ``n_points`` points."""
        return cls(np.zeros(-(-n_steps * n_points // 8), dtype=np.uint8), int(n_points))

    def _bits_of(self, step, point_ids):
        flat = step.astype(np.int64) * self.n_points + point_ids
        return flat >> 3, (flat & 7).astype(np.uint8)

    def free(self, step, point_ids) -> np.ndarray:
        """Whether each (step, point) pair is not known to be blocked."""
        byte, bit = self._bits_of(step, point_ids)
        return (np.take(self.bits, byte) >> bit) & 1 == 0

    def add(self, step, point_ids) -> None:
        """Mark the (step, point) pairs blocked."""
        byte, bit = self._bits_of(step, point_ids)
        np.bitwise_or.at(self.bits, byte, np.left_shift(np.uint8(1), bit))


#: [m] How far behind a point's surface an obstruction's box must lie, all of it, to be left
#: untested from that point: far above the rounding of the distances, far below any size.
_BEHIND_MARGIN_M = 1e-9


def _in_front(pts, facing: Facing, obstruction) -> np.ndarray | None:
    """Return the points that may see ``obstruction`` in front of their surface, or None (all).

    A ray is tested only while the sun is in front of the point's surface
    (``sun · n > 0``, :class:`Facing`), so every point ``p + t · sun`` it reaches lies in front
    of the surface's plane through ``p`` (``n · (x − p) = t · (sun · n) > 0``). An
    obstruction whose bounding box lies wholly behind that plane (every corner ``c`` with
    ``n · (c − p) <= 0``, by a margin) can therefore never be hit from ``p``: the far slope of a
    gable seen from the near one, the rack rows behind a tilted module. Exact, with the same
    normals that decide which steps are lit.
    """
    if facing.normals is None:
        return None
    corners = _solid_corners(obstruction)
    reach = (facing.normals @ corners.T).max(axis=1)  # farthest corner along each normal
    heights = facing.heights if facing.heights is not None \
        else _heights(pts, facing.normals, facing.group)
    ahead = np.flatnonzero(reach[facing.group] - heights > -_BEHIND_MARGIN_M)
    return None if len(ahead) == len(pts) else ahead


def _heights(pts: np.ndarray, normals: np.ndarray, group: np.ndarray) -> np.ndarray:
    """Each point's height along the normal of its surface group, ``normal · point`` [m]."""
    return np.einsum("ij,ij->i", pts, normals[group])


def _solid_corners(obstruction) -> np.ndarray:
    """Points in space whose convex hull holds the obstruction [m], (K, 3).

    A plate's corners (a plate set's hull), a block's footprint at its base and top, else
    the corners of the bounding box. (:func:`layout.shading.culling._hull_corners` is the
    plan hull of a footprint, for the angular cull.)
    """
    if isinstance(obstruction, PlateSet):
        obstruction = obstruction.hull
    if isinstance(obstruction, Plate):
        return np.asarray(obstruction.corners, dtype=float)
    if isinstance(obstruction, Block):
        ring = np.asarray(obstruction.footprint, dtype=float)
        return np.vstack([np.column_stack([ring, np.full(len(ring), z)])
                          for z in (obstruction.base, obstruction.top)])
    x0, y0, z0, x1, y1, z1 = obstruction.bounds
    return np.array(list(itertools.product((x0, x1), (y0, y1), (z0, z1))), dtype=float)


class _HitList:
    """Collects the hits of one obstruction as its candidate pairs are ray-tested."""

    def __init__(self, effect, facing, sub):
        self.effect = effect  # effect(p, st) -> (opaque or None, crown_only or None)
        self.facing = facing
        self.sub = sub
        self.steps, self.points, self.crowns = [], [], []

    def test(self, pt, st):
        blocked = None
        if self.facing is not None:  # rays of back-lit points carry no beam: not tested
            keep = self.facing.lit_at(st, pt)
            if not keep.all():
                pt, st = pt[keep], st[keep]
            blocked, ids = self.facing.blocked, self.facing.point_ids
        if blocked is not None and len(pt):  # pairs another caster blocked: not again
            keep = blocked.free(st, ids[pt])
            if not keep.all():
                pt, st = pt[keep], st[keep]
        for i in range(0, len(pt), self.sub):
            p, s = pt[i:i + self.sub], st[i:i + self.sub]
            opaque, crown = self.effect(p, s)
            if blocked is not None and opaque is not None:
                blocked.add(s[opaque], ids[p[opaque]])
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
        group = (np.cumsum(run_count) - 1) // max(1, min(max_pairs, _GROUP_PAIRS))
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
                      facing=None, groups=None, coarse=True, runs=None) -> ShadeHits:
    # runs: candidate runs (point, start, count) found already (points far from the
    # obstruction, culled a group at a time: point_groups._split_groups)
    empty = np.zeros(0, dtype=np.int32)
    if isinstance(obstruction, HorizonProfile):
        blocked = np.asarray(obstruction.blocks_vectors(sun_v), dtype=bool) if len(sun_v) \
            else np.zeros(0, dtype=bool)
        return ShadeHits(empty, empty, np.zeros(0, dtype=bool), blocked)
    if len(pts) == 0 or len(sun_v) == 0:
        _check_solid(obstruction)
        return ShadeHits(empty, empty, np.zeros(0, dtype=bool))
    if cull and groups is not None:
        # whole groups of points out of the obstruction's reach are dropped first
        if sun_order is None:
            sun_order = _sun_order(sun_v)
        if not len(sun_order.zenith_steps):
            _check_solid(obstruction)
            if isinstance(obstruction, PlateSet):  # a rack row: long, seen from far
                return _split_hits(pts, sun_v, obstruction, start, max_pairs, sun_order,
                                   facing, groups)
            near = _near_points(groups, sun_order, obstruction)
            if near is not None:
                sub_facing = None if facing is None else facing.subset(near)
                # only the points of the groups kept: for a plate the group cull has done
                # what the coarse per-point pass would (it drops under 1 % of them on rack
                # roofs); for a small block the coarse pass still drops a quarter
                hits = _obstruction_hits(pts[near], sun_v, obstruction, start, max_pairs, cull,
                                         sun_order, sub_facing,
                                         coarse=not isinstance(obstruction, Plate))
                return _renumbered(hits, near)
    if cull and facing is not None:
        ahead = _in_front(pts, facing, obstruction)  # the rest have it behind their surface
        if ahead is not None:
            if not len(ahead):
                _check_solid(obstruction)
                return ShadeHits(empty, empty, np.zeros(0, dtype=bool))
            hits = _obstruction_hits(pts[ahead], sun_v, obstruction, start, max_pairs, cull,
                                     sun_order, facing.subset(ahead), coarse=coarse,
                                     runs=_runs_kept(runs, ahead, len(pts)))
            return _renumbered(hits, ahead)
    side = None
    # a plate set is culled as its hull, a plate in the same plane (plate_sets.py)
    cull_as = obstruction.hull if isinstance(obstruction, PlateSet) else obstruction
    if isinstance(cull_as, Plate):
        # self-shading rule: points in the plate's plane are never shaded by it (for a set,
        # its kernel applies the rule plate by plate: the hull keeps a hair more points)
        dist = _plate_side(cull_as, pts)
        tolerance = PLANE_TOLERANCE_M * (1.0 if cull_as is obstruction else 1.0 - 1e-6)
        active = np.flatnonzero(np.abs(dist) > tolerance)
        if not len(active):  # every point in the plane (modules flush on a face)
            return ShadeHits(empty, empty, np.zeros(0, dtype=bool))
        if len(active) < len(pts):
            sub_facing = None if facing is None else facing.subset(active)
            hits = _obstruction_hits(pts[active], sun_v, obstruction, start, max_pairs, cull,
                                     sun_order, sub_facing, coarse=coarse,
                                     runs=_runs_kept(runs, active, len(pts)))
            return _renumbered(hits, active)
        # a ray meets the plane only when the sun lies on the far side from the point
        side = (dist > 0, sun_v @ _plate_geometry(cull_as)[3] < 0)
    sub = max(256, max_pairs // _kernel_cost(obstruction))
    order = None
    if cull:
        order = sun_order if sun_order is not None else _sun_order(sun_v)
        if isinstance(obstruction, Tree):
            kernels = _tree_kernels(obstruction, pts, sun_v, start)
            if kernels is None:
                kernels = _cone_tree_kernels(obstruction, pts, sun_v, start)
            if kernels is not None:
                return _tree_hits(pts, obstruction, kernels, order, facing, max_pairs, sub)

    fast = None
    if isinstance(obstruction, Block):
        fast = _block_kernel(obstruction, pts, sun_v, start)
    elif isinstance(obstruction, Plate):
        fast = _plate_kernel(obstruction, pts, sun_v, start)
    elif isinstance(obstruction, PlateSet):
        fast = _plate_set_kernel(obstruction, pts, sun_v, start)
    elif isinstance(obstruction, Tree):
        fast = _tree_kernel(obstruction, pts, sun_v, start)

    def effect(p, st):
        if fast is not None:
            return fast(p, st)
        return _ray_effect(obstruction, pts[p], sun_v[st], start)

    found = _HitList(effect, facing, sub)
    if cull:
        if runs is None:
            runs = _candidate_ranges(pts, order, cull_as, coarse=coarse and (
                groups is None or not isinstance(cull_as, Plate)))
        found.test_runs(order, runs, max_pairs, side)
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


def _renumbered(hits: ShadeHits, index: np.ndarray) -> ShadeHits:
    """Return the hits of a subset of points with each point renumbered ``index[point]``.

    The hits come from a call on ``points[index]`` and are used by no one else: their point
    array, int32 and its own, is renumbered in place, so that an obstruction with millions
    of hits makes no array of their size for it (one would be fresh memory, page faults and
    all, at every level of culling).
    """
    point = hits.point
    if point.dtype == np.int32 and point.flags.owndata and point.flags.writeable:
        # a chunk at a time: numpy's take or fancy indexing would make an index array of
        # the whole size (intp) for it
        index = index.astype(np.int32, copy=False)
        for lo in range(0, len(point), _COMPACT_CHUNK):
            chunk = point[lo:lo + _COMPACT_CHUNK]
            chunk[...] = index[chunk]
        return hits
    return ShadeHits(hits.step, index[point].astype(np.int32), hits.crown_only)


def _runs_kept(runs, index, n_points: int):
    """Return the candidate runs of the points ``index`` only, renumbered, or None."""
    if runs is None:
        return None
    local = np.full(n_points, -1)
    local[index] = np.arange(len(index))
    renumbered = local[runs[0]]
    keep = renumbered >= 0
    return renumbered[keep], runs[1][keep], runs[2][keep]


def _split_hits(pts, sun_v, obstruction, start, max_pairs, sun_order, facing, groups):
    """Hits of a block, plate or plate set, its points culled by group first.

    The groups near the obstruction have their points culled one by one; the far ones
    a group at a time, each of their points taking its group's runs
    (:func:`~layout.shading.point_groups._split_groups`).
    """
    near, far, far_runs = _split_groups(groups, sun_order, obstruction)
    parts = []
    for index, runs in ((near, None), (far, far_runs)):
        if len(index):
            sub_facing = None if facing is None else facing.subset(index)
            hits = _obstruction_hits(pts[index], sun_v, obstruction, start, max_pairs, True,
                                     sun_order, sub_facing, coarse=False, runs=runs)
            parts.append(_renumbered(hits, index))
    if not parts:
        empty = np.zeros(0, dtype=np.int32)
        return ShadeHits(empty, empty, np.zeros(0, dtype=bool))
    return ShadeHits(*(np.concatenate([getattr(h, k) for h in parts])
                       for k in ("step", "point", "crown_only")))


def _tree_hits(pts, tree: Tree, kernels, order: _SunOrder, facing, max_pairs: int,
               sub: int) -> ShadeHits:
    """Hits of a tree, its crown and its trunk culled apart.

    The crown's candidates come from its own cap (:func:`_crown_ranges`) for a spheroid, from
    the crown's bounding column narrowed sector by sector (:func:`_cone_ranges`) for a cone;
    the trunk's from its thin column, so a point above the crown base never tests the trunk
    and a low sun below the crown never tests the crown.
    A ray through both is blocked by the trunk.
    """
    crown_kernel, trunk_kernel = kernels
    crown = _HitList(lambda p, st: (None, crown_kernel(p, st)), facing, sub)
    if tree.crown_shape == "cone":
        crown_runs = _cone_ranges(pts, order, tree)
    else:
        crown_runs = _crown_ranges(pts, order, tree)
    crown.test_runs(order, crown_runs, max_pairs)
    in_crown = crown.result()
    if trunk_kernel is None:
        return in_crown
    (x, y), r = tree.center, tree.trunk_radius
    top = tree.ground_m + tree.crown_base
    column = _Column((x - r, y - r, tree.ground_m, x + r, y + r, top))
    trunk = _HitList(lambda p, st: (trunk_kernel(p, st), None), facing, sub)
    # the kernels need the sun above the horizon: a ray from above the trunk's top only
    # rises, and never meets it (points on a roof, a tree's trunk below its crown)
    low = np.flatnonzero(pts[:, 2] <= top)
    if len(low):
        index, start, count = _candidate_ranges(pts[low], order, column)
        trunk.test_runs(order, (low[index], start, count), max_pairs)
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
