"""Shade per group of points (cells, substrings, modules).

:func:`_group_shade_rows` sums the shaded beam fraction of each group straight from the sparse
hit lists, block by block of sun steps (64 MB dense at most), at only the steps that have
shade; :func:`group_mean` averages any dense per-point values over groups.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError
from .combine import _prepare_hits
from .hits import _step_window_order, _step_windows

__all__ = ["group_mean"]


#: Largest number of (step, point) values held densely at once when summing hits per group.
_DENSE_BLOCK = 1 << 24
#: Most blocks of steps for which each block picks its hits by a mask over their steps; with
#: more, hits are sorted by step once (a cache keeps them sorted, see :func:`_needs_step_order`).
_MASK_BLOCKS = 16


def _blocks(n_rows: int, per: int) -> int:
    return -(-n_rows // per)


def _needs_step_order(n_steps: int, n_points: int) -> bool:
    """Tell whether hits of ``n_points`` points over ``n_steps`` steps are best kept in order.

    True when summing them per group may take more than :data:`_MASK_BLOCKS` blocks of steps;
    a cache then keeps each obstruction's hits in order of their step window
    (:func:`_step_window`).
    """
    return _blocks(n_steps, max(1, _DENSE_BLOCK // max(1, n_points))) > _MASK_BLOCKS


#: Most steps a window (:func:`_step_window`): a few hundred windows for a year of hours.
_MAX_WINDOW = 64


def _step_window(n_points: int) -> int:
    """Return the steps a window holds when hits of ``n_points`` points are kept in order.

    A power of two, at most the steps of a dense block (:data:`_DENSE_BLOCK` values), so
    that blocks of steps can begin and end where windows do, and at most
    :data:`_MAX_WINDOW`.
    """
    per = max(1, _DENSE_BLOCK // max(1, n_points))
    return min(_MAX_WINDOW, 1 << (per.bit_length() - 1))


def _in_window_order(entry, n_steps: int, window: int):
    """Put prepared hits in order of their step window (a counting sort); as given if so."""
    step, point, factor = entry
    order = _step_window_order(step, n_steps, window) if len(step) > 1 else None
    if order is None:
        return entry
    return step[order], point[order], None if factor is None else factor[order]


def _split_entries(n_steps: int, prepared_hits):
    """Split prepared hits (:func:`_prepare_hits`) into the far horizon's steps and the rest.

    Returns ``(horizon, entries)``: the steps below a far horizon (bool, (T,)) and the
    ``(step, point, factor)`` entries of the other obstructions that have hits.
    """
    horizon = np.zeros(n_steps, dtype=bool)
    entries = []
    for entry in prepared_hits:
        if entry is None:
            continue
        if isinstance(entry[0], str):  # ("horizon", blocked_steps)
            horizon |= entry[1]
            continue
        entries.append(entry)
    return horizon, entries


def _rows_with_shade(horizon: np.ndarray, entries) -> np.ndarray:
    """Return the increasing steps with a hit of some entry or below the far horizon."""
    with_shade = horizon.copy()
    for step, _, _ in entries:
        with_shade[step.astype(np.intp, copy=False)] = True  # an intp index sets faster
    return np.flatnonzero(with_shade)


def _row_numbers(n_steps: int, rows: np.ndarray) -> np.ndarray:
    """Return each step's position in ``rows`` (0 for a step not in them), intp (T,)."""
    row_of = np.zeros(n_steps, dtype=np.intp)
    row_of[rows] = np.arange(len(rows))
    return row_of


def _row_blocks(n_steps: int, rows: np.ndarray, per: int, entries, window: int = 1):
    """Yield ``(r0, r1, parts)``: blocks of up to ``per`` rows, each entry's hits at them.

    ``rows`` holds every step with a hit. With one block the entries are given whole. With
    more than :data:`_MASK_BLOCKS` blocks, or hits in order of their windows of ``window``
    steps already (a cache keeps them so), blocks begin and end where windows do, and each
    block's hits are a slice of each entry, found by a binary search of its steps (entries
    not in that order are put in it first, :func:`_in_window_order`); with fewer,
    each block picks its hits by a mask over their steps. A ``window`` above ``per`` is
    taken down to it (:func:`_step_window` gives one that is not).
    """
    n_rows = len(rows)
    if n_rows <= per:
        yield 0, n_rows, entries
        return
    window = min(window, 1 << (per.bit_length() - 1))
    if _blocks(n_rows, per) > _MASK_BLOCKS or all(
            len(step) < 2 or _step_window_order(step, n_steps, window) is None
            for step, _, _ in entries):  # slices
        entries = [_in_window_order(entry, n_steps, window) for entry in entries]
        # blocks of at most per rows, each ending where a window ends: a window holds at
        # most per rows, so every block holds at least one
        row_window = _step_windows(rows, window)
        starts = [0]
        while starts[-1] + per < n_rows:
            cut = starts[-1] + per  # the first row beyond a full block: back to its window
            starts.append(int(np.searchsorted(row_window, row_window[cut], side="left")))
        # where each block's hits begin in each entry, found once: a binary search for the
        # first step of the block's first window is exact on hits in window order (every
        # hit before it is in an earlier window, so its step is smaller), and searches in
        # the steps' own dtype convert none of them; a block ends where the next begins, as
        # the rows hold every step with a hit
        first = row_window[starts] * window
        cuts = [np.r_[np.searchsorted(step, first.astype(step.dtype)), len(step)]
                for step, _, _ in entries]
        starts.append(n_rows)
        for b in range(len(starts) - 1):
            yield starts[b], starts[b + 1], [
                (step[cuts[k][b]:cuts[k][b + 1]], point[cuts[k][b]:cuts[k][b + 1]],
                 None if factor is None else factor[cuts[k][b]:cuts[k][b + 1]])
                for k, (step, point, factor) in enumerate(entries)]
        return
    for r0 in range(0, n_rows, per):
        r1 = min(n_rows, r0 + per)
        parts = []
        for step, point, factor in entries:
            # a few blocks: each picks its hits by their steps, no sort
            kind = step.dtype.type  # bounds in the steps' dtype: no conversion of them
            part = step >= kind(rows[r0]) if r0 else np.ones(len(step), dtype=bool)
            if r1 < n_rows:
                part &= step < kind(rows[r1])
            parts.append((step[part], point[part], None if factor is None else factor[part]))
        yield r0, r1, parts


def _group_shade_rows(n_steps, n_points, prepared_hits, labels, n_groups, *, rows=None,
                      out=None, reduce=None):
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
    reduce : callable, optional
        Instead of holding every value: called as ``reduce(rows, r0, r1, block)`` with the
        values at ``rows[r0:r1]`` (a float32 (G, r1 - r0) block, overwritten afterwards),
        block by block in order; the values are then not kept (None is returned for them).

    Returns
    -------
    rows : numpy.ndarray of int, shape (R,)
        Increasing sun steps; at every other step no group has shade.
    values : numpy.ndarray of float32, shape (G, R), or None
        Shaded fraction of each group at those steps, group-major so that reductions over
        groups (cells of a substring, say) run over whole contiguous rows. Rays met by
        several obstructions multiply their transmittances. Empty groups give NaN. None with
        ``reduce``.

    Notes
    -----
    Block by block of the rows (at most :data:`_DENSE_BLOCK` values, 64 MB), the beam fraction
    of every point is built densely (point-major, so one point's hits fall close together),
    the hits are scattered into it, and the points are averaged per group. When every group
    is one point, the values themselves hold the beam (one block, no memory beside the
    output). With a few blocks each block picks its hits by a mask over their steps; with
    more, hits are sorted by step (hits already in step order are left as they are). With
    ``reduce`` only one block of values is held.
    """
    horizon, prepared = _split_entries(n_steps, prepared_hits)
    if rows is None:
        rows = _rows_with_shade(horizon, prepared)
    n_rows = len(rows)
    if reduce is not None:
        values = None
    else:
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
    row_of = _row_numbers(n_steps, rows)
    per = max(1, _DENSE_BLOCK // max(1, n_points))
    if direct and values is not None and values.flags.c_contiguous:
        per = n_rows  # the values block is the beam: no block beside it, however large
    blocked = row_of[np.flatnonzero(horizon)]  # columns below the far horizon
    # one point a group and only opaque hits: the block holds the shade itself (0 or 1,
    # exactly 1 - beam), with no pass to turn beam into shade
    as_shade = direct and all(factor is None for _, _, factor in prepared)
    for r0, r1, parts in _row_blocks(n_steps, rows, per, prepared,
                                     _step_window(n_points)):
        width = r1 - r0
        whole = direct and width == n_rows and values is not None \
            and values.flags.c_contiguous
        beam = values if whole else np.empty((n_points, width), dtype=np.float32)
        beam.fill(0.0 if as_shade else 1.0)
        flat_beam = beam.reshape(-1)
        for step, point, factor in parts:
            flat = point.astype(np.intp) * width
            flat += np.take(row_of, step)  # faster than row_of[step] for uint16 steps
            if r0:
                flat -= r0
            if factor is None:
                flat_beam[flat] = 1.0 if as_shade else 0.0
            else:
                flat_beam[flat] *= factor  # each (step, point) once per obstruction
        block = beam if direct and reduce is not None else \
            np.empty((n_groups, width), dtype=np.float32) if reduce is not None \
            else values[:, r0:r1]
        if as_shade:
            if not whole and block is not beam:  # else the block is the beam's memory
                block[:] = beam
        elif direct:
            np.subtract(np.float32(1.0), beam, out=block)
        elif regular:
            lit = beam.reshape(n_groups, size, r1 - r0).sum(axis=1)
            block[:] = np.float32(1.0) - lit * np.float32(1.0 / size)
        else:
            lit = np.add.reduceat(beam if perm is None else beam[perm], starts, axis=0)
            block[:] = np.nan
            block[present] = np.float32(1.0) - lit / counts[present][:, None]
        if reduce is not None:
            inside = blocked[(blocked >= r0) & (blocked < r1)]
            block[:, inside - r0] = 1.0
            block[counts == 0] = np.nan
            reduce(rows, r0, r1, block)
    if values is not None:
        values[:, blocked] = 1.0
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
        Per step and point, e.g. the output of :func:`~layout.shading.transmitted` or
        :func:`~layout.shading.shaded`.
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
