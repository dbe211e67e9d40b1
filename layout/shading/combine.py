"""Combining the hits of every obstruction into the shade of each point at each sun step.

:func:`shaded` tells whether the ray toward the sun meets any obstruction;
:func:`transmitted` how much of the beam gets through: nothing past an opaque solid or below
the far horizon, a tree crown's monthly transmittance through a crown (:func:`_prepare_hits`
attaches that factor to each hit).
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError, check_positive
from ..scene.obstructions import Tree
from .hits import DEFAULT_MAX_PAIRS, ShadeHits, _obstruction_hits
from .point_groups import _point_groups
from .rays import RAY_START_M, _check_points, _check_sun
from .sun_sectors import _sun_order

__all__ = ["shaded", "transmitted"]


def _combine_shaded(n_steps, n_points, hits_list) -> np.ndarray:
    out = np.zeros((n_steps, n_points), dtype=bool)
    flat_out = out.reshape(-1)
    for hits in hits_list:
        flat = hits.step.astype(np.intp)  # a flat index: a quarter faster than out[step, point]
        flat *= n_points
        flat += hits.point
        flat_out[flat] = True
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
        factor = np.take(per_step, hits.step)  # faster than per_step[step] for uint16 steps
        if not hits.crown_only.all():  # a trunk's hits: opaque
            factor[~hits.crown_only] = 0.0
        if not factor.any():
            factor = None
    return (hits.step, hits.point, factor)


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
        Distance along each ray where it starts [m] (see :mod:`layout.shading.rays`).
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
    groups = _point_groups(pts) if cull else None
    hits = [_obstruction_hits(pts, sun_v, ob, start, int(max_pairs), cull, order, None, groups)
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
    groups = _point_groups(pts)
    pairs = [(ob, _obstruction_hits(pts, sun_v, ob, start, int(max_pairs), True, order, None,
                                    groups))
             for ob in obstructions]
    return _combine_transmitted(len(sun_v), len(pts), pairs, m)
