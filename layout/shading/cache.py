"""The per-obstruction hit cache: after an edit, ray-test only the obstructions that changed.

A :class:`ShadeCache` holds the hits of each obstruction for fixed points and sun steps, so
moving one obstruction recomputes only its hits; the combined shade is the same as a full
recompute.
"""

from __future__ import annotations

from collections import OrderedDict

import numpy as np

from ..errors import InputError, check_positive
from ..runtime import parallel_map
from .combine import _check_month, _combine_shaded, _combine_transmitted, _prepare_hits
from .groups import _check_labels, _group_shade_rows, _needs_step_order, _step_window
from .hits import DEFAULT_MAX_PAIRS, BlockedPairs, Facing, ShadeHits, _obstruction_hits
from .plate_sets import PlateSet
from .point_groups import _point_groups
from .rays import RAY_START_M, _check_points, _check_sun
from .sun_sectors import _sun_order

__all__ = ["KEEP_DROPPED", "ShadeCache"]

#: Obstructions whose hits a cache keeps after they leave its list (a moved one's old place).
KEEP_DROPPED = 8

#: Rays (points × sun steps) from which several new obstructions are ray-tested on threads
#: (:func:`layout.runtime.parallel_map`); below it the interpreter's lock makes threads slower.
THREADED_RAYS = 1 << 24


class ShadeCache:
    """Per-obstruction ray hits for a fixed set of points and sun steps.

    Holds one :class:`ShadeHits` per obstruction, keyed by the obstruction's value (the
    obstruction types are frozen and hashable). :meth:`update` with a new list recomputes only
    the obstructions that are new or changed (a moved, resized, added one) and sets deleted
    ones aside (the last :data:`KEEP_DROPPED`, for an undo that brings one back); the combined
    result is the same as a full recompute. Each obstruction's hits are kept compact
    (:meth:`ShadeHits.compact`: uint16 steps, no crown flags for a solid), which on a roof of
    thousands of modules and a hundred million hits saves a third of their memory, and, where
    shade is summed in many blocks of steps (:func:`_needs_step_order`), in order of their
    windows of a few steps (:func:`_step_window`), so that no evaluation orders them again.
    Rack rows (:class:`PlateSet`, a layout's module casters, which change together) are
    tested together, each skipping the pairs the rows before it blocked; when any of them
    changes, all are tested again (:meth:`_test_all`).

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
        As in :func:`layout.shading.shaded`.
    threads : int, keyword-only, optional
        Threads that ray-test new obstructions; default: :func:`layout.runtime.worker_threads`
        from :data:`THREADED_RAYS` rays on, else one.
    """

    def __init__(self, points, sun, obstructions=(), *, month=None, normals=None,
                 ray_start: float = RAY_START_M, max_pairs: int = DEFAULT_MAX_PAIRS,
                 threads: int | None = None):
        self.points = _check_points(points)
        self.sun = _check_sun(sun)
        self.facing = None
        if normals is not None:
            normals = np.asarray(normals, dtype=float)
            if normals.shape != self.points.shape:
                raise InputError("normals", "needs one (x, y, z) normal per point",
                                 value=normals.shape, allowed=str(self.points.shape))
            self.facing = Facing.from_normals(self.sun, normals, self.points)
        self.month = None if month is None else _check_month(month, len(self.sun))
        self.ray_start = check_positive("ray_start", ray_start, unit="m")
        self.max_pairs = int(max_pairs)
        self.threads = threads
        self._order = _sun_order(self.sun)
        self._groups = _point_groups(self.points)
        self._sorted = _needs_step_order(len(self.sun), len(self.points))
        self._window = _step_window(len(self.points))
        self._hits: dict = {}
        self._prepared: dict = {}
        self._together: tuple = ()  # rack rows whose hits were found together
        # hits of obstructions lately dropped from the list, newest last: an undo that puts a
        # moved obstruction back finds its hits here
        self._dropped: OrderedDict = OrderedDict()
        self.obstructions: tuple = ()
        self.update(obstructions)

    def update(self, obstructions) -> int:
        """Set the obstruction list; return how many obstructions had to be ray-tested."""
        obstructions = tuple(obstructions)
        # rack rows tested together keep only their union: all again if any of them changed
        # (compared as a tuple: the same objects compare at once, where hashing a set of
        # rows takes milliseconds on a large roof at every update)
        rows = tuple(ob for ob in obstructions if isinstance(ob, PlateSet))
        same_rows = rows == self._together
        new: dict = {}
        untested = []
        for ob in obstructions:
            if ob in new:
                continue
            if ob in self._hits and (same_rows or not isinstance(ob, PlateSet)):
                new[ob] = self._hits[ob]
            elif ob in self._dropped:
                new[ob] = self._dropped.pop(ob)
            else:
                new[ob] = None
                untested.append(ob)
        threads = self.threads
        if threads is None:
            threads = None if len(self.points) * len(self.sun) >= THREADED_RAYS else 1
        new.update(self._test_all(untested, threads))
        computed = len(untested)
        for ob, hits in self._hits.items():
            if ob not in new and not isinstance(ob, PlateSet):  # a row's hits are partial
                self._dropped[ob] = hits
        while len(self._dropped) > KEEP_DROPPED:
            self._dropped.popitem(last=False)
        self._hits, self._together = new, rows
        tested = set(untested)  # a row tested again may hold other (partial) hits
        self._prepared = {ob: self._prepared[ob] for ob in new
                          if ob in self._prepared and ob not in tested}
        self.obstructions = obstructions
        return computed

    def _test_all(self, untested: list, threads) -> dict:
        """Ray-test the obstructions ``untested``; their compact hits by obstruction.

        Rack rows (:class:`PlateSet`, the module casters of a layout, which change together)
        are tested one after another, nearest the points first along the sun (ascending
        along the year's mean horizontal sun direction), each skipping the pairs the rows
        before it blocked (:class:`BlockedPairs`): a row's hits leave those out, and only the
        union of the rows' hits is whole. The rest are tested one by one, the rows' sequence
        on a thread beside them. On the 5,000-module warehouse of
        ``benchmarks/warehouse.py`` the rows' tests took 17.6-17.9 s on one thread without
        the skip and 15.8-17.2 s with it, their module shade 1.9-2.2 s and 1.3-1.6 s.
        """
        rows = [ob for ob in untested if isinstance(ob, PlateSet)]
        if len(rows) < 2 or self.facing is None:
            return dict(zip(untested, parallel_map(self._test, untested, threads=threads),
                            strict=True))
        toward = self.sun[:, :2].mean(axis=0)
        toward = toward / max(float(np.hypot(*toward)), 1e-300)
        rows.sort(key=lambda row: float(np.asarray(row.hull.corners)[:, :2].mean(axis=0)
                                        @ toward))
        facing = self.facing.skipping(BlockedPairs.none(len(self.sun), len(self.points)))
        others = [ob for ob in untested if not isinstance(ob, PlateSet)]

        def test(item):
            if item is None:  # the rows, in turn
                return [self._test(row, facing) for row in rows]
            return self._test(item)

        found = parallel_map(test, [None, *others], threads=threads)
        return {**dict(zip(rows, found[0], strict=True)),
                **dict(zip(others, found[1:], strict=True))}

    def _test(self, obstruction, facing: Facing | None = None) -> ShadeHits:
        """Ray-test one obstruction from every point at every step; its compact hits."""
        return _obstruction_hits(self.points, self.sun, obstruction, self.ray_start,
                                 self.max_pairs, True, self._order,
                                 self.facing if facing is None else facing,
                                 self._groups).compact(len(self.sun), sort=self._sorted,
                                                     window=self._window)

    def hits(self, obstruction) -> ShadeHits:
        """Return the cached hits of one obstruction in the current list (compact form).

        A rack row's (:class:`PlateSet`) leave out the pairs rows tested before it blocked
        (:meth:`_test_all`); the rows' union is whole.
        """
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

    def group_shade_rows(self, labels, *, n_groups: int | None = None, reduce=None):
        """Return the shaded beam fraction per group at only the steps that have shade.

        Parameters
        ----------
        labels, n_groups
            As in :meth:`group_shade`.
        reduce : callable, keyword-only, optional
            Called as ``reduce(rows, r0, r1, block)`` with the (G, r1 - r0) float32 values at
            ``rows[r0:r1]``, block by block, instead of holding them all; ``values`` is then
            None.

        Returns
        -------
        rows : numpy.ndarray of int, shape (R,)
            Increasing sun steps (rows of :attr:`sun`) where some ray is blocked; at the
            others no group has shade.
        values : numpy.ndarray of float32, shape (G, R), or None
            Shaded fraction of each group at those steps, group-major (None with
            ``reduce``).
        """
        lab, g = _check_labels(labels, len(self.points), n_groups)
        return _group_shade_rows(len(self.sun), len(self.points), self.prepared_hits(), lab, g,
                                 reduce=reduce)

    def prepared_hits(self) -> list:
        """Return each obstruction's hits with their beam factors (:func:`_prepare_hits`).

        The factors are attached once per obstruction and kept with its hits.
        """
        prepared = []
        for ob in self.obstructions:
            if ob not in self._prepared:
                self._prepared[ob] = _prepare_hits(ob, self._hits[ob], self.month)
            prepared.append(self._prepared[ob])
        return prepared
