"""The most equal rectangles on a grid of positions, by integer programming: a reference fill.

The fill of :mod:`layout.fill.packing` places rows. This module answers a different question
with a general solver, so that the fill can be measured against it: over every position on a
fine grid (not rows: any mix of heights and offsets), which set of non-overlapping rectangles,
each inside the region, is the largest? It is slow (seconds for a roof face of 30 modules) and
serves checks and benchmarks, not the planner.

Model
-----
Candidates are the grid positions ``(u_lo + i·step_u, v_lo + j·step_v)`` whose rectangle lies in
the region (the same fit test as the fill, :data:`layout.fill.packing.FIT_TOLERANCE_M`). Each
candidate is a binary variable. Grow every rectangle by the gaps into the half-open box
``[u, u + size_u + gap_u) × [v, v + size_v + gap_v)``: two candidates clash exactly when their
grown boxes meet, and then both contain the grid point made of the larger of their ``u`` and
the larger of their ``v``. So "at most one grown box contains each grid point" forbids every
clash and nothing else (clique constraints, one per grid point). To keep the matrix small, the
sum over the grown boxes that contain a point is written as a sum of window sums along ``u``,
one auxiliary variable per row and column. The lines of :func:`layout.fill.packing.rectangle_bound`
are added as valid inequalities (each line's crossing rectangles at most its stretches hold);
they change no integer solution and tighten the linear relaxation.

References
----------
.. [1] Huangfu, Q. and Hall, J. A. J. (2018). Parallelizing the dual revised simplex method.
   Mathematical Programming Computation 10, 119-142 (HiGHS, the solver behind
   :func:`scipy.optimize.milp`).
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
import shapely

from ..errors import InputError
from .packing import FIT_TOLERANCE_M, as_region, line_capacity

__all__ = ["GridOptimum", "grid_optimum"]


@dataclass(frozen=True)
class GridOptimum:
    """The solver's answer.

    Attributes
    ----------
    rects : numpy.ndarray, shape (n, 4)
        ``(u_min, v_min, u_max, v_max)`` of the rectangles of the best placement found [m].
    proven : bool
        True when the solver proved it the most the grid holds; False when it stopped at the
        time limit (``rects`` is then the best it found and ``upper`` its proven bound).
    upper : int
        The solver's upper bound on the grid's optimum (equal to ``len(rects)`` when proven).
    candidates : int
        Grid positions where a rectangle fits.
    seconds : float
        Solver wall time [s].
    """

    rects: np.ndarray
    proven: bool
    upper: int
    candidates: int
    seconds: float

    @property
    def count(self) -> int:
        """Number of rectangles placed."""
        return len(self.rects)


def _milp():
    try:
        from scipy.optimize import milp
    except ImportError as err:  # scipy older than 1.9 has no MILP solver
        raise InputError("solver", "scipy.optimize.milp is missing; the grid optimum needs "
                         "SciPy 1.9 or newer (pip install 'scipy>=1.9')") from err
    return milp


def _line_rows(region, cand_i, cand_j, origin, steps, sizes, gaps, width):
    """Return the line inequalities along ``u`` and along ``v``: (sparse rows, capacities)."""
    grown = shapely.buffer(region, FIT_TOLERANCE_M, join_style="mitre")
    swapped = shapely.transform(grown, lambda xy: xy[:, ::-1])
    blocks, caps = [], []
    n = len(cand_i)
    for across, lines_region, a in ((cand_j, grown, 1), (cand_i, swapped, 0)):
        # lines halfway between grid levels: a candidate at index j crosses the line at
        # index q when j <= q and (q - j + 1/2)·step < size
        reach = math.ceil(sizes[a] / steps[a] - 0.5)
        level = (across[:, None] + np.arange(reach)).ravel()
        levels, row = np.unique(level, return_inverse=True)
        capacity = line_capacity(lines_region, origin[a] + (levels + 0.5) * steps[a],
                                 sizes[1 - a], gaps[1 - a])
        blocks.append(sp.coo_matrix((np.ones(len(level)), (row.ravel(),
                                                            np.repeat(np.arange(n), reach))),
                                    shape=(len(levels), width)))
        caps.append(capacity)
    return sp.vstack(blocks), np.concatenate(caps).astype(float)


def grid_optimum(usable, size_u: float, size_v: float, *, gap_u: float = 0.0,
                 gap_v: float = 0.0, per_pitch: int = 12, time_limit_s: float = 60.0
                 ) -> GridOptimum:
    """Most rectangles on a grid of positions, exactly, by mixed-integer programming.

    Parameters
    ----------
    usable, size_u, size_v, gap_u, gap_v
        The region and the rectangles, as in :func:`layout.fill.packing.rectangle_bound`
        (lengths in m).
    per_pitch : int, default 12
        Grid positions per pitch (size plus gap) on each axis: the grid step is
        ``(size + gap) / per_pitch``, anchored at the region's lower-left bounding-box corner.
    time_limit_s : float, default 60
        Solver time limit [s].

    Returns
    -------
    GridOptimum
        The placement, whether it is proven best on the grid, and the solver's bound.

    Raises
    ------
    InputError
        If SciPy's MILP solver is missing, or a size or ``per_pitch`` is out of range.
    """
    milp = _milp()
    from scipy.optimize import Bounds, LinearConstraint

    if not (isinstance(per_pitch, int) and 1 <= per_pitch <= 64):
        raise InputError("per_pitch", "must be a whole number in range", value=per_pitch,
                         allowed="1 to 64")
    for name, value in (("size_u", size_u), ("size_v", size_v)):
        if not value > 0:
            raise InputError(name, "must be positive", value=value, allowed="> 0 m")
    region = as_region(usable)
    empty = GridOptimum(np.zeros((0, 4)), True, 0, 0, 0.0)
    if region.is_empty:
        return empty
    pitch_u, pitch_v = size_u + gap_u, size_v + gap_v
    step_u, step_v = pitch_u / per_pitch, pitch_v / per_pitch
    tol = FIT_TOLERANCE_M
    u_lo, v_lo, u_hi, v_hi = region.bounds
    n_i = math.floor((u_hi - u_lo - size_u + 2 * tol) / step_u) + 1
    n_j = math.floor((v_hi - v_lo - size_v + 2 * tol) / step_v) + 1
    if n_i <= 0 or n_j <= 0:
        return empty
    ii, jj = np.meshgrid(np.arange(n_i), np.arange(n_j))
    us, vs = u_lo + ii.ravel() * step_u, v_lo + jj.ravel() * step_v
    shapely.prepare(region)
    fits = shapely.covers(region, shapely.box(us + tol, vs + tol, us + size_u - tol,
                                              vs + size_v - tol))
    cand_i, cand_j = ii.ravel()[fits], jj.ravel()[fits]
    n = len(cand_i)
    if n == 0:
        return empty
    k = per_pitch  # grown boxes span exactly k grid steps on each axis

    # window sums along u: s[j, p] = sum of x at row j, columns p-k+1 .. p
    windows = np.stack([np.repeat(cand_j, k), (cand_i[:, None] + np.arange(k)).ravel()], axis=1)
    windows, owner = np.unique(windows, axis=0, return_inverse=True)
    m = len(windows)
    x_of = np.repeat(np.arange(n), k)
    # equality rows: s_w - sum_{x in w} x = 0
    eq = sp.coo_matrix((np.r_[np.ones(m), -np.ones(n * k)],
                        (np.r_[np.arange(m), owner.ravel()], np.r_[n + np.arange(m), x_of])),
                       shape=(m, n + m))
    # clique rows: at grid point (p, q), sum of s[j, p] for j = q-k+1 .. q <= 1
    points = np.stack([np.repeat(windows[:, 1], k),
                       (windows[:, 0][:, None] + np.arange(k)).ravel()], axis=1)  # (p, q)
    points, point_of = np.unique(points, axis=0, return_inverse=True)
    s_of = np.repeat(np.arange(m), k)
    cliques = sp.coo_matrix((np.ones(m * k), (point_of.ravel(), n + s_of)),
                            shape=(len(points), n + m))
    rows = [eq, cliques]
    lower = [np.zeros(m), np.full(len(points), -np.inf)]
    upper = [np.zeros(m), np.ones(len(points))]
    cut, capacity = _line_rows(region, cand_i, cand_j, (u_lo, v_lo), (step_u, step_v),
                               (size_u, size_v), (gap_u, gap_v), n + m)
    rows.append(cut)
    lower.append(np.full(len(capacity), -np.inf))
    upper.append(capacity)
    matrix = sp.vstack(rows).tocsr()
    cost = np.r_[-np.ones(n), np.zeros(m)]
    integrality = np.r_[np.ones(n), np.zeros(m)]
    start = time.perf_counter()
    result = milp(cost, integrality=integrality, bounds=Bounds(0, np.r_[np.ones(n), np.ones(m)]),
                  constraints=LinearConstraint(matrix, np.concatenate(lower),
                                               np.concatenate(upper)),
                  options={"time_limit": float(time_limit_s), "disp": False})
    seconds = time.perf_counter() - start
    if result.x is None:
        raise InputError("grid_optimum", f"the solver found no placement ({result.message})")
    chosen = result.x[:n] > 0.5
    u0, v0 = u_lo + cand_i[chosen] * step_u, v_lo + cand_j[chosen] * step_v
    rects = np.stack([u0, v0, u0 + size_u, v0 + size_v], axis=1)
    proven = result.status == 0
    dual = getattr(result, "mip_dual_bound", None)
    bound = len(rects) if proven or dual is None else math.floor(-dual + 1e-6)
    return GridOptimum(rects, proven, int(bound), n, seconds)
