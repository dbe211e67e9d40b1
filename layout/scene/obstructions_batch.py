"""Many plates at once: the modules of a roof as validated :class:`Plate` objects, in a batch.

Building a :class:`~layout.scene.obstructions.Plate` checks its corners and computes its frame
with a few dozen small numpy operations, about 0.4 ms a plate; a roof of 5,000 modules spent
seconds there. :func:`plates_from_corners` makes the same checks and the same frames for a
whole stack of plates of one corner count with whole-array operations, in the operations and
memory order of the one-by-one constructor (so every sum is taken in the same order), and the
few dot products the frame takes one plate at a time with the same call as
``numpy.linalg.norm`` makes. The plates are equal to ``Plate(corners, kind=..., name=...)``
field for field and frame for frame, bit for bit; a plate that fails a check, or comes within
a factor of two of failing one, is built by the one-by-one constructor, which raises the
same error as before.
"""

from __future__ import annotations

import math

import numpy as np
import shapely

from ..errors import InputError
from .obstructions import PLANE_TOLERANCE_M, PLATE_KINDS, Plate, _check_text

__all__ = ["plates_from_corners"]


def plates_from_corners(corners, *, kind: str, names) -> list[Plate]:
    """Build validated plates from a stack of corner lists of one length.

    Parameters
    ----------
    corners : array_like, shape (M, K, 3)
        The corners of each plate, site frame [m], in order, not closed.
    kind : str
        One of :data:`~layout.scene.obstructions.PLATE_KINDS`, for every plate.
    names : sequence of str, length M
        Each plate's name.

    Returns
    -------
    list of Plate
        Equal, frames included, to ``Plate(corners[m], kind=kind, name=names[m])``.
    """
    corners, names = list(corners), list(names)
    if len(names) != len(corners):
        raise InputError("names", "needs one name per plate", value=len(names),
                         allowed=f"{len(corners)} names")
    try:
        pts = np.asarray(corners, dtype=float)
    except (TypeError, ValueError):  # ragged or not numbers: the one-by-one checks say so
        pts = None
    if pts is None or pts.ndim != 3 or pts.shape[2] != 3 or pts.shape[1] < 3 \
            or kind not in PLATE_KINDS:
        return [Plate(c, kind=kind, name=n) for c, n in zip(corners, names, strict=True)]
    with np.errstate(invalid="ignore", divide="ignore"):  # a bad plate: built one by one
        return _plates(pts, kind, names)


def _plates(pts: np.ndarray, kind: str, names: list) -> list[Plate]:
    """Build the plates of :func:`plates_from_corners` from an (M, K, 3) array."""
    n_plates, n_corners, _ = pts.shape
    sure = _surely_valid(pts)
    # as Plate.__post_init__: the mean of the corners, then Newell's sums over the corners
    # taken in order (a (K, 3) C-ordered product reduced over its first axis, the memory
    # order of the (3, K) transposed product the one-by-one code reduces over its second)
    origin = np.add.reduce(pts, axis=1) / n_corners
    rel = pts - origin[:, None, :]
    nxt = np.concatenate([rel[:, 1:], rel[:, :1]], axis=1)
    newell = np.add.reduce((rel[:, :, [1, 2, 0]] - nxt[:, :, [1, 2, 0]])
                           * (rel[:, :, [2, 0, 1]] + nxt[:, :, [2, 0, 1]]), axis=1)
    length = np.array([math.sqrt(v.dot(v)) for v in newell])  # as numpy.linalg.norm
    sure &= 0.5 * length >= 2e-6  # twice the smallest area
    safe = np.where(length > 0, length, 1.0)
    normal = newell / safe[:, None]
    # off the plane: the one-by-one check allows half the tolerance; half of that is sure
    deviation = np.abs(np.einsum("mkj,mj->mk", rel, normal)).max(axis=1)
    sure &= deviation <= 0.25 * PLANE_TOLERANCE_M
    # the frame (obstructions._plate_frame): e1 along the corner farthest from the first
    reach = np.sqrt(np.add.reduce((pts - pts[:, :1]) ** 2, axis=2))
    far = pts[np.arange(n_plates), np.argmax(reach, axis=1)] - pts[:, 0]
    along = np.array([e.dot(n) for e, n in zip(far, normal, strict=True)])
    e1 = far - along[:, None] * normal
    e1 /= np.array([math.sqrt(v.dot(v)) for v in e1])[:, None]
    e2 = np.column_stack([normal[:, 1] * e1[:, 2] - normal[:, 2] * e1[:, 1],
                          normal[:, 2] * e1[:, 0] - normal[:, 0] * e1[:, 2],
                          normal[:, 0] * e1[:, 1] - normal[:, 1] * e1[:, 0]])
    # simple outlines: the in-plane corners as Plate.plane_polygon makes them (the same
    # products, one plate at a time), the polygons made at once
    check = np.flatnonzero(sure)  # the others (not a number, say) are built one by one
    plane = np.empty((len(check), n_corners, 2))
    for i, m in enumerate(check):
        plane[i, :, 0] = rel[m] @ e1[m]
        plane[i, :, 1] = rel[m] @ e2[m]
    polygons = np.full(n_plates, None, dtype=object)
    polygons[check] = shapely.polygons(plane)
    sure[check] = shapely.is_valid(polygons[check])
    out = []
    for m, name in enumerate(names):
        if not sure[m]:
            out.append(Plate(pts[m], kind=kind, name=name))
            continue
        plate = object.__new__(Plate)
        object.__setattr__(plate, "corners", tuple(map(tuple, pts[m].tolist())))
        object.__setattr__(plate, "kind", kind)
        object.__setattr__(plate, "name", _check_text("name", name))
        plate.__dict__["frame"] = (origin[m], e1[m], e2[m], normal[m])
        plate.__dict__["plane_polygon"] = polygons[m]
        out.append(plate)
    return out


def _surely_valid(pts: np.ndarray) -> np.ndarray:
    """Tell which plates surely pass the corner checks: finite, not closed, no repeats."""
    finite = np.isfinite(pts).all(axis=(1, 2))
    closed = np.abs(pts[:, 0] - pts[:, -1]).max(axis=1) <= 2e-9
    rounded = np.round(pts, 9)
    repeated = np.zeros(len(pts), dtype=bool)
    for i in range(pts.shape[1]):
        for j in range(i + 1, pts.shape[1]):
            # twice the rounding's reach: a pair the one-by-one check might call equal
            repeated |= (np.abs(rounded[:, i] - rounded[:, j]) <= 2e-9).all(axis=1)
    return finite & ~closed & ~repeated
