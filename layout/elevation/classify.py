"""Classes for points that came without them: ground, building, vegetation.

Used only when a file carries no ASPRS classes. Ground is what lies within a few decimetres of
the ground model (:mod:`layout.elevation.terrain`). Points higher than ``OBJECT_M`` are
grouped into objects (connected cells of a 1 m grid), and each object is told a roof or a
crown by what a pulse finds there: a roof is a hard surface, so in any one cell every return
comes from its top; a crown lets part of the pulses in, so some of its returns lie well below
the highest one of their cell. An object where more than ``PENETRATION_SHARE`` of the points
lie ``PENETRATION_M`` or more below their cell's top is vegetation. This is the canopy's
penetration (the gap fraction) that multiple-return discrimination of vegetation rests on,
read from the points' heights alone.

References
----------
.. [1] Axelsson, P. (1999). Processing of laser scanner data: algorithms and applications.
   ISPRS Journal of Photogrammetry and Remote Sensing 54(2-3), 138-147 (vegetation told from
   buildings by the laser's penetration of the canopy).
"""

from __future__ import annotations

import numpy as np
from scipy import ndimage

from .pointcloud import CLASS_BUILDING, CLASS_GROUND

__all__ = ["classify_points"]

CLASS_UNCLASSIFIED = 1
CLASS_HIGH_VEGETATION = 5

#: Heights above ground [m]: below ``GROUND_M`` ground, above ``OBJECT_M`` a roof or a crown.
GROUND_M = 0.3
OBJECT_M = 1.5
#: Depth below the cell's highest return that counts as a pulse inside a crown [m]: more than
#: a 1 m cell of a 45° roof spans.
PENETRATION_M = 1.5
#: Share of such returns above which an object is vegetation; a roof has almost none (the
#: cells on its edge that reach down a wall), a broadleaf crown in leaf some tenths.
PENETRATION_SHARE = 0.04


def classify_points(x, y, z, height, *, cell_m: float = 1.0) -> np.ndarray:
    """ASPRS classes from geometry alone: 2 ground, 6 building, 5 vegetation, 1 other.

    Parameters
    ----------
    x, y, z : array_like
        Points, site frame [m].
    height : array_like
        Height above the ground under each point [m].
    cell_m : float, default 1
        Grid cell [m].

    Returns
    -------
    numpy.ndarray of uint8

    References
    ----------
    .. [1] Axelsson (1999), ISPRS J. Photogramm. Remote Sens. 54:138 (canopy penetration).
    """
    x, y, z, h = (np.asarray(a, dtype=float) for a in (x, y, z, height))
    cls = np.full(len(x), CLASS_UNCLASSIFIED, dtype=np.uint8)
    cls[h < GROUND_M] = CLASS_GROUND
    high = np.flatnonzero(h >= OBJECT_M)
    if len(high) == 0:
        return cls
    cols = ((x[high] - x[high].min()) / cell_m).astype(int)
    rows = ((y[high] - y[high].min()) / cell_m).astype(int)
    shape = (rows.max() + 1, cols.max() + 1)
    top = np.full(shape, -np.inf)
    np.maximum.at(top, (rows, cols), z[high])
    labels, _ = ndimage.label(np.isfinite(top), structure=np.ones((3, 3)))
    owner = labels[rows, cols]
    deep = (top[rows, cols] - z[high]) >= PENETRATION_M
    count = np.bincount(owner)
    share = np.bincount(owner, weights=deep) / np.maximum(count, 1)
    vegetation = share[owner] > PENETRATION_SHARE
    cls[high[vegetation]] = CLASS_HIGH_VEGETATION
    cls[high[~vegetation]] = CLASS_BUILDING
    return cls
