"""Equal rectangles in a region of the roof plane: a fine lattice, one grid or sliding rows.

Search
------
Candidate positions lie on a fine lattice whose step is ``1/offset_steps`` of the module pitch
(module size plus gap) on each axis, anchored at the lower-left corner of the usable area's
bounding box. Every candidate rectangle is built in one :func:`shapely.box` call over arrays and
tested in one :func:`shapely.covers` call against the prepared usable area. A grid offset
``(i, j)`` is then the subset of candidates whose lattice indices are ``i`` and ``j`` modulo
``offset_steps``; counting fits per offset is a reshape and a sum, so the search over all
``offset_steps²`` grid offsets costs one geometric test per candidate.

``rows="grid"`` keeps one rigid grid and picks the offset with the most modules. Ties go to the
offset whose modules' bounding box is most centred in the usable area's bounding box (smallest
sum of the distances between the two centres along ``u`` and along ``v``), then to the
smallest offset.

``rows="sliding"`` places each row exactly along the eave: rows start on the same lattice
along ``v``, and for each row :func:`row_free_intervals` finds the exact stretches along ``u``
where a module of the row's height fits (the row's band minus the region, one vectorised
:func:`shapely.difference` for all rows). A stretch of length ``L`` holds
``floor((L + gap) / (size + gap))`` modules, the most any placement can put there; they are
centred in the stretch (pushed to one end with ``anchor``). The rows' offset along ``v`` is the
one whose rows hold the most modules in all; where rows from different offsets, at least a row
pitch apart, hold more (a hole or notch favours other heights above and below it), that set of
rows is taken instead (a longest-path recursion over the rows sorted by height). Each connected
piece of the usable area is filled on its own. The pockets the rows leave (beside a ring, in a
notch) are then filled with rows of their own height. Last, the same search runs with the axes
swapped (columns sliding up the slope) and wins when it places more, as on long diagonal faces.

Candidate rectangles are shrunk by :data:`FIT_TOLERANCE_M` on every side before the fit test,
so that a module that fits exactly is not lost to rounding.

Bound
-----
:func:`rectangle_bound` gives the most rectangles that any placement could fit, by area and by
the lines every rectangle must cross, so that a fill's count can be read against it.
"""

from __future__ import annotations

import math

import numpy as np
import shapely

from ..errors import InputError

__all__ = [
    "ANCHORS",
    "FIT_TOLERANCE_M",
    "ROW_MODES",
    "as_region",
    "line_capacity",
    "number_rows",
    "pack_rectangles",
    "rectangle_bound",
    "row_free_intervals",
]

#: Row modes: one rigid grid, or rows sliding independently along the eave.
ROW_MODES = ("grid", "sliding")
#: Slack given to the fit test on every side of a candidate [m].
FIT_TOLERANCE_M = 1e-7
# Outside parts of a row band narrower or lower than this [m] are floating-point slivers.
_SLIVER_M = 1e-9
# Turn of the outline [degrees] above which a vertex is a corner that row offsets are tried at.
_CORNER_TURN_DEG = 10.0


def as_region(usable) -> shapely.Geometry:
    """Accept a shapely geometry or an object with a ``.polygon`` (a usable-area result)."""
    geometry = getattr(usable, "polygon", usable)
    if geometry is None:
        return shapely.Polygon()
    if not isinstance(geometry, shapely.Geometry):
        raise InputError("usable", "must be a shapely geometry in roof-plane coordinates",
                         value=type(geometry).__name__)
    polygons = [g for g in shapely.get_parts(geometry)
                if isinstance(g, (shapely.Polygon, shapely.MultiPolygon)) and not g.is_empty]
    if not polygons:
        return shapely.Polygon()
    return polygons[0] if len(polygons) == 1 else shapely.union_all(polygons)


def _first_last(mask: np.ndarray, axis: int) -> tuple[np.ndarray, np.ndarray]:
    """Index of the first and last True along ``axis`` (0 where there is none)."""
    n = mask.shape[axis]
    first = np.argmax(mask, axis=axis)
    last = n - 1 - np.argmax(np.flip(mask, axis=axis), axis=axis)
    return first, last


def _lattice_fits(region, size_u, size_v, pitch_u, pitch_v, steps):
    """Fit test of every candidate on the fine lattice; returns (fits, u0, v0, du, dv).

    ``fits`` has shape (rows, columns), both multiples of ``steps`` (padded with False). A
    candidate ``[u, u + size_u] × [v, v + size_v]`` fits when its lattice row's free
    intervals (:func:`row_free_intervals`, one band per row, not one box per candidate) hold
    ``[u + tol, u + size_u - tol]``, as :func:`shapely.covers` would find it.
    """
    u_lo, v_lo, u_hi, v_hi = region.bounds
    du, dv = pitch_u / steps, pitch_v / steps
    tol = FIT_TOLERANCE_M
    span_u, span_v = u_hi - u_lo - size_u + 2 * tol, v_hi - v_lo - size_v + 2 * tol
    if span_u < 0 or span_v < 0:
        return np.zeros((0, 0), bool), u_lo, v_lo, du, dv
    nu = math.floor(span_u / du) + 1
    nv = math.floor(span_v / dv) + 1
    us = u_lo + np.arange(nu) * du
    vs = v_lo + np.arange(nv) * dv
    padded = np.zeros((-(-nv // steps) * steps, -(-nu // steps) * steps), dtype=bool)
    first, last = us + tol, us + size_u - tol  # each candidate's extent along u
    for row, free in enumerate(row_free_intervals(region, vs, size_v)):
        if len(free):
            # the one interval that can hold a candidate: the last to start at or before it
            k = np.searchsorted(free[:, 0], first, side="right") - 1
            padded[row, :nu] = (k >= 0) & (last <= free[np.maximum(k, 0), 1])
    return padded, u_lo, v_lo, du, dv


def _anchor_cost(lo, hi, box_lo, box_hi, anchor: str):
    """How far an extent ``lo..hi`` sits from where ``anchor`` wants it in ``box_lo..box_hi``."""
    if anchor == "centre":
        return np.abs(0.5 * (lo + hi) - 0.5 * (box_lo + box_hi))
    if anchor == "low":
        return lo - box_lo
    return box_hi - hi


def _pack_sliding(region, size_u, size_v, gap_u, gap_v, steps, anchor) -> np.ndarray:
    """Sliding rows in each connected piece, then rows in the pockets they leave."""
    rects = [_pack_sliding_rows(piece, size_u, size_v, gap_u, gap_v, steps, anchor)
             for piece in shapely.get_parts(region)]
    out = np.concatenate(rects, axis=0) if rects else np.zeros((0, 4))
    return _fill_pockets(region, out, size_u, size_v, gap_u, gap_v, steps, anchor)


def _pack_grid(region, size_u, size_v, gap_u, gap_v, steps, anchor) -> np.ndarray:
    """One rigid grid: the lattice offset (i, j) that fits the most rectangles."""
    fits, u_lo, v_lo, du, dv = _lattice_fits(region, size_u, size_v, size_u + gap_u,
                                             size_v + gap_v, steps)
    if not fits.any():
        return np.zeros((0, 4))
    anchor_u, anchor_v = anchor
    nv, nu = fits.shape
    big_r, big_c = nv // steps, nu // steps
    bu0, bv0, bu1, bv1 = region.bounds
    f4 = fits.reshape(big_r, steps, big_c, steps)  # (R, j, C, i)
    count = f4.sum(axis=(0, 2))  # (j, i)
    c_first, c_last = _first_last(f4.any(axis=0), axis=1)  # (j, i)
    r_first, r_last = _first_last(f4.any(axis=2), axis=0)  # (j, i)
    jj, ii = np.meshgrid(np.arange(steps), np.arange(steps), indexing="ij")
    u_min = u_lo + (c_first * steps + ii) * du
    u_max = u_lo + (c_last * steps + ii) * du + size_u
    v_min = v_lo + (r_first * steps + jj) * dv
    v_max = v_lo + (r_last * steps + jj) * dv + size_v
    cost = (_anchor_cost(u_min, u_max, bu0, bu1, anchor_u)
            + _anchor_cost(v_min, v_max, bv0, bv1, anchor_v))
    cost = np.where(count == count.max(), np.round(cost, 9), np.inf)
    j, i = np.unravel_index(int(np.argmin(cost)), count.shape)
    big_rows, big_cols = np.nonzero(f4[:, j, :, i])
    u_min = u_lo + (big_cols * steps + i) * du
    v_min = v_lo + (big_rows * steps + j) * dv
    return np.stack([u_min, v_min, u_min + size_u, v_min + size_v], axis=1)


def row_free_intervals(region, v_starts, size_v: float) -> list[np.ndarray]:
    """Exact stretches along ``u`` where a rectangle of height ``size_v`` fits, per row.

    Parameters
    ----------
    region : shapely.Polygon or shapely.MultiPolygon
        The region in roof-plane coordinates [m].
    v_starts : array_like of float, shape (n,)
        Lower edge ``v`` of each row [m].
    size_v : float
        Height of the rows [m].

    Returns
    -------
    list of numpy.ndarray, each shape (k, 2)
        For each row, the free intervals ``(u_start, u_end)`` [m], sorted along ``u``: a
        rectangle ``[u0, u1] × [v, v + size_v]`` lies in the region exactly when ``[u0, u1]``
        lies in one of them (up to :data:`FIT_TOLERANCE_M` on every side).

    Notes
    -----
    The row's band, lowered and raised by the tolerance, minus the region leaves the parts of
    the band outside it. Each part is connected and spans the band's whole height wherever a
    rectangle of the band's height would meet it, so it blocks exactly the ``u`` range of its
    bounding box; the free intervals are the gaps between the merged blocked ranges. One
    vectorised :func:`shapely.difference` serves all rows.
    """
    v_starts = np.asarray(v_starts, dtype=float)
    if len(v_starts) == 0:
        return []
    tol = FIT_TOLERANCE_M
    u_lo, _, u_hi, _ = region.bounds
    margin = 1.0 + size_v  # the band reaches past the region on both sides: always blocked there
    bands = shapely.box(u_lo - margin, v_starts + tol, u_hi + margin, v_starts + size_v - tol)
    shapely.prepare(region)
    outside = shapely.difference(bands, region)
    parts, index = shapely.get_parts(outside, return_index=True)
    bounds = shapely.bounds(parts)
    # floating-point slivers along an edge the band shares with the region block nothing
    real = ((bounds[:, 2] - bounds[:, 0]) > _SLIVER_M) & ((bounds[:, 3] - bounds[:, 1]) > _SLIVER_M)
    index, lo, hi = index[real], bounds[real, 0], bounds[real, 2]
    order = np.lexsort((lo, index))
    index, lo, hi = index[order], lo[order], hi[order]
    out = []
    for row in range(len(v_starts)):
        sel = slice(*np.searchsorted(index, [row, row + 1]))
        row_lo, row_hi = lo[sel], hi[sel]
        # blocked ranges merged: a free stretch opens where a range starts beyond the reach
        # of all ranges before it
        reach = np.maximum.accumulate(row_hi)
        gaps = row_lo[1:] > reach[:-1]
        out.append(np.stack([reach[:-1][gaps], row_lo[1:][gaps]], axis=1))
    return out


def _corners(region) -> np.ndarray:
    """Vertices where the outline turns by more than :data:`_CORNER_TURN_DEG`, shape (n, 2).

    The many short sides of a clearance ring's rounded ends (a polygon standing in for an arc)
    turn a few degrees each and are left out: offsets at each of them would multiply the work
    for gains of a fraction of a millimetre.
    """
    found = []
    for ring in shapely.get_rings(region):
        xy = shapely.get_coordinates(ring)[:-1]
        if len(xy) < 3:
            continue
        before = xy - np.roll(xy, 1, axis=0)
        after = np.roll(xy, -1, axis=0) - xy
        turn = np.abs(np.arctan2(before[:, 0] * after[:, 1] - before[:, 1] * after[:, 0],
                                 np.einsum("ij,ij->i", before, after)))
        found.append(xy[turn > math.radians(_CORNER_TURN_DEG)])
    return np.concatenate(found) if found else np.zeros((0, 2))


def _row_offsets(region, size_v: float, pitch_v: float, steps: int) -> np.ndarray:
    """Offsets of the first row above the region's lowest point to try, in [0, pitch_v) [m].

    How many modules a set of rows holds changes only where a row's lower or upper edge
    crosses a vertex of the region, so the best offset is among those where an edge touches a
    vertex (taken modulo the row pitch). The corners (:func:`_corners`) are tried, and the
    lattice ``pitch_v / steps`` beside them, which also serves the tie rule.
    """
    _, v_lo, _, _ = region.bounds
    corners_v = _corners(region)[:, 1] - v_lo
    events = np.mod(np.concatenate([corners_v, corners_v - size_v]), pitch_v)
    lattice = np.arange(steps) * (pitch_v / steps)
    offsets = np.unique(np.round(np.concatenate([lattice, events]), 9))
    return offsets[offsets < pitch_v]


def _best_row_set(v_starts: np.ndarray, counts: np.ndarray, pitch_v: float) -> np.ndarray:
    """Rows, at least a pitch apart, that hold the most modules in all; returns their indices.

    A longest-path recursion over the rows sorted by height: the best set ending with row
    ``i`` is row ``i`` on top of the best set among the rows at least ``pitch_v`` below it.
    """
    order = np.argsort(v_starts, kind="stable")
    v, c = v_starts[order], counts[order]
    below = np.searchsorted(v, v - pitch_v + 1e-9, side="right") - 1  # last row a pitch below
    best = np.zeros(len(v))
    best_upto = np.zeros(len(v))  # best set among rows 0..i
    arg_upto = np.zeros(len(v), dtype=int)
    for i in range(len(v)):
        j = below[i]
        best[i] = c[i] + (best_upto[j] if j >= 0 else 0.0)
        if i and best_upto[i - 1] >= best[i]:
            best_upto[i], arg_upto[i] = best_upto[i - 1], arg_upto[i - 1]
        else:
            best_upto[i], arg_upto[i] = best[i], i
    chosen = []
    i = arg_upto[-1] if len(v) else -1
    while i >= 0 and best[i] > 0:
        chosen.append(i)
        j = below[i]
        i = arg_upto[j] if j >= 0 and best_upto[j] > 0 else -1
    return order[np.array(chosen[::-1], dtype=int)]


def _pack_sliding_rows(region, size_u, size_v, gap_u, gap_v, steps, anchor) -> np.ndarray:
    """Rows at the best offset up the slope; in each row, the most its free stretches hold."""
    tol = FIT_TOLERANCE_M
    pitch_u, pitch_v = size_u + gap_u, size_v + gap_v
    u_lo, v_lo, u_hi, v_hi = region.bounds
    if v_hi - v_lo - size_v + 2 * tol < 0 or u_hi - u_lo - size_u + 2 * tol < 0:
        return np.zeros((0, 4))
    offsets = _row_offsets(region, size_v, pitch_v, steps)
    n_rows = np.floor((v_hi - v_lo - offsets - size_v + 2 * tol) / pitch_v).astype(int) + 1
    n_rows = np.maximum(n_rows, 0)
    which = np.repeat(np.arange(len(offsets)), n_rows)  # the offset of each row
    k = np.arange(len(which)) - np.repeat(np.cumsum(n_rows) - n_rows, n_rows)
    v_starts = v_lo + offsets[which] + k * pitch_v
    anchor_u, anchor_v = anchor
    placed_u = []
    for free in row_free_intervals(region, v_starts, size_v):
        width = free[:, 1] - free[:, 0]
        n = np.maximum(np.floor((width + 2 * tol + gap_u) / pitch_u).astype(int), 0)
        group = n * size_u + np.maximum(n - 1, 0) * gap_u
        slack = width - group
        if anchor_u == "low":
            start = np.where(slack >= 0, free[:, 0], free[:, 0] + slack / 2)
        elif anchor_u == "high":
            start = np.where(slack >= 0, free[:, 1] - group, free[:, 0] + slack / 2)
        else:
            start = free[:, 0] + slack / 2
        placed_u.append(np.concatenate(
            [s + np.arange(c) * pitch_u for s, c in zip(start, n, strict=True)] or [np.zeros(0)]))
    per_row = np.array([len(u) for u in placed_u], dtype=int)
    total = np.bincount(which, weights=per_row, minlength=len(offsets))
    if total.max() == 0:
        return np.zeros((0, 4))
    # tie rule: the rows that hold modules, placed as the anchor wants them up the slope
    used = per_row > 0
    low = np.full(len(offsets), np.inf)
    high = np.full(len(offsets), -np.inf)
    np.minimum.at(low, which[used], v_starts[used])
    np.maximum.at(high, which[used], v_starts[used] + size_v)
    empty = ~np.isfinite(low)  # offsets whose rows hold nothing: never chosen (total < max)
    low[empty], high[empty] = v_lo, v_hi
    cost = np.round(_anchor_cost(low, high, v_lo, v_hi, anchor_v), 9)
    best = int(np.argmin(np.where(total == total.max(), cost, np.inf)))
    rows = np.flatnonzero(which == best)
    # rows need not share one phase: where a hole or notch favours other heights above and
    # below it, a set of rows from different offsets can hold more
    mixed = _best_row_set(v_starts, per_row, pitch_v)
    if per_row[mixed].sum() > total[best]:
        rows = mixed
    u_min = np.concatenate([placed_u[r] for r in rows])
    v_min = np.repeat(v_starts[rows], per_row[rows])
    return np.stack([u_min, v_min, u_min + size_u, v_min + size_v], axis=1)


def line_capacity(region, v_levels, size_u: float, gap_u: float) -> np.ndarray:
    """Most rectangles that can cross each horizontal line of a region side by side.

    Parameters
    ----------
    region : shapely.Polygon or shapely.MultiPolygon
        The region [m].
    v_levels : array_like of float, shape (n,)
        Heights ``v`` of the lines [m].
    size_u, gap_u : float
        Rectangle length along the line and least gap between neighbours on it [m].

    Returns
    -------
    numpy.ndarray of int, shape (n,)
        For each line, the sum over the stretches where it runs inside the region of
        ``floor((L + gap_u) / (size_u + gap_u))``: rectangles inside the region that cross the
        line each lie along it in one stretch, side by side and ``gap_u`` apart, so no more
        of them can cross it.
    """
    v_levels = np.asarray(v_levels, dtype=float)
    if len(v_levels) == 0:
        return np.zeros(0, dtype=int)
    u_lo, _, u_hi, _ = region.bounds
    starts = np.stack([np.full_like(v_levels, u_lo - 1.0), v_levels], axis=1)
    ends = np.stack([np.full_like(v_levels, u_hi + 1.0), v_levels], axis=1)
    chords = shapely.intersection(shapely.linestrings(np.stack([starts, ends], axis=1)), region)
    parts, index = shapely.get_parts(chords, return_index=True)
    bounds = shapely.bounds(parts)
    real = np.isfinite(bounds[:, 0])  # lines that miss the region give empty parts
    bounds, index = bounds[real], index[real]
    if len(index) == 0:
        return np.zeros(len(v_levels), dtype=int)
    # pieces of one chord that touch are one stretch: merge them (a part that starts beyond the
    # reach of the parts before it on its line opens a new stretch)
    shift = (u_hi - u_lo + 4.0) * index  # lines laid end to end with room between them
    lo, hi = bounds[:, 0] + shift, bounds[:, 2] + shift
    order = np.argsort(lo, kind="stable")
    lo, hi, index = lo[order], hi[order], index[order]
    reach = np.maximum.accumulate(hi)
    opens = np.r_[True, lo[1:] > reach[:-1] + _SLIVER_M]
    stretch_hi = np.maximum.reduceat(hi, np.flatnonzero(opens))
    fits = np.floor((stretch_hi - lo[opens] + gap_u) / (size_u + gap_u) + 1e-9)
    return np.bincount(index[opens], weights=fits, minlength=len(v_levels)).astype(int)


def _crossing_bound(region, size_u: float, size_v: float, gap_u: float, offsets: int) -> int:
    """Bound from lines along ``u`` spaced ``size_v`` apart (see :func:`rectangle_bound`)."""
    _, v_lo, _, v_hi = region.bounds
    n_lines = math.floor((v_hi - v_lo) / size_v) + 2
    corners = np.mod(_corners(region)[:, 1] - v_lo, size_v)
    starts = np.unique(np.concatenate([np.arange(offsets) * (size_v / offsets), corners]))
    starts = starts[starts < size_v]
    v = v_lo + starts[:, None] + np.arange(n_lines)[None, :] * size_v  # (offsets, lines)
    per_line = line_capacity(region, v.ravel(), size_u, gap_u)
    return int(per_line.reshape(v.shape).sum(axis=1).min())


def rectangle_bound(usable, size_u: float, size_v: float, *, gap_u: float = 0.0,
                    gap_v: float = 0.0, offsets: int = 64) -> int:
    """Most equal axis-aligned rectangles any placement could fit in a region (upper bound).

    Parameters
    ----------
    usable : shapely geometry or usable-area result
        Region (Polygon or MultiPolygon) [m].
    size_u, size_v : float
        Rectangle size along ``u`` and ``v`` [m].
    gap_u, gap_v : float, default 0
        Least clear gap between rectangles side by side along ``u`` and one above the other
        along ``v`` [m].
    offsets : int, default 64
        Positions of the family of lines tried per rectangle height (more give a bound as
        tight or tighter; each one alone is a valid bound).

    Returns
    -------
    int
        The smallest of three bounds, none of which any placement of the rectangles in the
        region (rows or not, same orientation, same gaps) can exceed:

        * area: ``floor(region area / (size_u · size_v))``;
        * lines along ``u``: lines ``v = c + k · size_v`` (every whole ``k``) are one
          rectangle height apart, so each rectangle ``[v, v + size_v)`` crosses exactly one
          of them. Along that line it lies in one stretch where the line is inside the
          region, and rectangles crossing the same line sit side by side, at least ``gap_u``
          apart, so a stretch of length ``L`` meets at most ``floor((L + gap_u) / (size_u +
          gap_u))`` of them. The sum over the lines bounds the count for every ``c``; the
          least sum over the ``c`` tried is taken;
        * lines along ``v``, the same with the axes swapped.

    Notes
    -----
    The rectangles' slack of :data:`FIT_TOLERANCE_M` is given to the region (grown by it)
    before the lines are cut, so a fill's count never exceeds its bound by rounding. The
    bound is reached where the region is a rectangle whose sides are whole numbers of
    rectangle pitches (plus one gap's fewer); on sloping edges it stays above the best fill.
    """
    region = as_region(usable)
    if region.is_empty:
        return 0
    for name, value in (("size_u", size_u), ("size_v", size_v)):
        if not value > 0:
            raise InputError(name, "must be positive", value=value, allowed="> 0 m")
    grown = shapely.buffer(region, FIT_TOLERANCE_M, join_style="mitre")
    by_area = math.floor(region.area / (size_u * size_v) + 1e-9)
    along_u = _crossing_bound(grown, size_u, size_v, gap_u, offsets)
    swapped = shapely.transform(grown, lambda xy: xy[:, ::-1])
    along_v = _crossing_bound(swapped, size_v, size_u, gap_v, offsets)
    return int(min(by_area, along_u, along_v))


def _fill_pockets(region, rects, size_u, size_v, gap_u, gap_v, steps, anchor,
                  passes: int = 2) -> np.ndarray:
    """Add rows in what the rows leave: pockets beside holes and notches, at their own heights.

    Rows share their heights across the whole region, so a pocket above a chimney's ring or in
    a notch, between two rows, can hold a module that no row reaches. The region minus the
    placed rectangles grown by the gaps is filled again with sliding rows, piece by piece
    (pieces with no room for one rectangle are skipped without a search), until nothing is
    added or after ``passes`` rounds.
    """
    tol = FIT_TOLERANCE_M
    for _ in range(passes):
        if len(rects) == 0:
            break
        grown = shapely.box(rects[:, 0] - gap_u, rects[:, 1] - gap_v, rects[:, 2] + gap_u,
                            rects[:, 3] + gap_v)
        rest = as_region(shapely.difference(region, shapely.union_all(grown)))
        pieces = [p for p in shapely.get_parts(rest) if not p.is_empty]
        if not pieces:
            break
        # a rectangle holds a disc of half its shorter side: a piece that the disc's erosion
        # empties has no room for one
        roomy = ~shapely.is_empty(shapely.buffer(pieces, -(0.5 * min(size_u, size_v) - tol),
                                                 quad_segs=2))
        extra = [_pack_sliding_rows(p, size_u, size_v, gap_u, gap_v, steps, anchor)
                 for p, ok in zip(pieces, roomy, strict=True) if ok]
        extra = [e for e in extra if len(e)]
        if not extra:
            break
        rects = np.concatenate([rects, *extra], axis=0)
    return rects


ANCHORS = ("centre", "low", "high")


def pack_rectangles(usable, size_u: float, size_v: float, *, gap_u: float = 0.0,
                    gap_v: float = 0.0, rows: str = "grid", offset_steps: int = 8,
                    anchor: tuple[str, str] = ("centre", "centre"),
                    columns: bool = True) -> np.ndarray:
    """Place as many equal axis-aligned rectangles as fit inside a region.

    Parameters
    ----------
    usable : shapely geometry
        Region to fill (Polygon or MultiPolygon) [m].
    size_u, size_v : float
        Rectangle size along ``u`` and ``v`` [m].
    gap_u, gap_v : float, default 0
        Clear gap between neighbours along ``u`` and between rows along ``v`` [m].
    rows : {"grid", "sliding"}, default "grid"
        Search mode, see the module docstring.
    offset_steps : int, default 8
        Offsets tried per pitch on each axis.
    anchor : (str, str), default ("centre", "centre")
        Tie rule along ``u`` and along ``v`` among offsets that fit equally many: ``"centre"``
        centres the rectangles' bounding box in the region's (for sliding rows along ``u``:
        on the span where that row can hold rectangles), ``"low"`` pushes it toward the
        smaller coordinate, ``"high"`` toward the larger. With two centred axes the offset
        with the smallest sum of the two centre distances wins; remaining ties go to the
        smallest offset.
    columns : bool, default True
        With sliding rows, also try the same search with the axes swapped (columns that slide
        up the slope, each at its own height) and keep it when it places more. Rack rows pass
        False: their rows must stay rows.

    Returns
    -------
    numpy.ndarray, shape (n, 4)
        ``(u_min, v_min, u_max, v_max)`` of each rectangle [m], sorted by ``v`` then ``u``.
    """
    region = as_region(usable)
    if region.is_empty:
        return np.zeros((0, 4))
    if rows not in ROW_MODES:
        raise InputError("rows", "unknown row mode", value=rows, allowed=", ".join(ROW_MODES))
    if len(anchor) != 2 or any(a not in ANCHORS for a in anchor):
        raise InputError("anchor", "must be two of centre, low, high", value=anchor,
                         allowed="(u anchor, v anchor), each centre, low or high")
    if rows == "grid":
        out = _pack_grid(region, size_u, size_v, gap_u, gap_v, offset_steps, tuple(anchor))
    else:
        out = _pack_sliding(region, size_u, size_v, gap_u, gap_v, offset_steps, tuple(anchor))
        if columns:
            # the same search with the axes swapped: columns sliding up the slope, each at its
            # own height, fit more on long diagonal faces; they are kept only when they hold more
            swapped = shapely.transform(region, lambda xy: xy[:, ::-1])
            by_columns = _pack_sliding(swapped, size_v, size_u, gap_v, gap_u, offset_steps,
                                       tuple(anchor[::-1]))
            if len(by_columns) > len(out):
                out = by_columns[:, [1, 0, 3, 2]]
    order = np.lexsort((out[:, 0], np.round(out[:, 1], 6)))
    return out[order]


def number_rows(rects: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Sort rectangles by (v_min, u_min) and number rows and columns; returns order, row, col."""
    if len(rects) == 0:
        empty = np.zeros(0, dtype=int)
        return empty, empty, empty
    v_key = np.round(rects[:, 1], 6)
    order = np.lexsort((rects[:, 0], v_key))
    _, row = np.unique(v_key[order], return_inverse=True)
    starts = np.r_[0, np.flatnonzero(np.diff(row)) + 1]
    column = np.arange(len(order)) - np.repeat(starts, np.diff(np.r_[starts, len(order)]))
    return order, row.astype(int), column.astype(int)
