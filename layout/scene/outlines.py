"""Outlines drawn corner by corner on the plan: checks, snapping, and the roof face they make.

A designer draws a footprint or a roof face by clicking its corners on the plan. Before a face
is built from the corners, :func:`check_outline_drawing` says what is wrong with them in the
user's terms (too few corners, an edge shorter than :data:`MIN_EDGE_M`, edges that cross, no
area), and :func:`snap_corners` pulls each corner onto a corner of the roof already drawn when
it falls within a tolerance, so that faces drawn one by one share their edges exactly.
"""

from __future__ import annotations

import math

import numpy as np
import shapely

from ..errors import InputError, check_points
from .roof import RoofFace

__all__ = ["MIN_EDGE_M", "check_outline_drawing", "downslope_azimuth", "face_from_drawing",
           "snap_corners"]

#: Shortest edge a drawn outline may have [m]: shorter ones are a double click, not a wall.
MIN_EDGE_M = 0.1


def check_outline_drawing(corners) -> np.ndarray:
    """Check corners clicked on the plan; return them as an (n, 2) array [m].

    Parameters
    ----------
    corners : array_like, shape (n, 2)
        Corners in order, x east and y north [m]; the outline closes from the last back to
        the first (a repeated first corner at the end is dropped).

    Raises
    ------
    InputError
        ``outline``: fewer than three corners, an edge shorter than :data:`MIN_EDGE_M` (naming
        the edge), edges that cross each other, or no area.
    """
    points = np.asarray(corners, dtype=float).reshape(-1, 2) if len(corners) else np.zeros((0, 2))
    if len(points) > 1 and np.allclose(points[0], points[-1]):
        points = points[:-1]
    if len(points) < 3:
        raise InputError("outline", "needs at least three corners", value=len(points),
                         allowed="3 or more corners")
    points = check_points("outline", points, dims=2, min_count=3)
    lengths = np.linalg.norm(np.roll(points, -1, axis=0) - points, axis=1)
    short = np.flatnonzero(lengths < MIN_EDGE_M)
    if short.size:
        i = int(short[0])
        raise InputError("outline", f"edge {i + 1} (corner {i + 1} to corner "
                         f"{(i + 1) % len(points) + 1}) is too short", value=f"{lengths[i]:.3f} m",
                         allowed=f"at least {MIN_EDGE_M} m")
    ring = shapely.LinearRing(points)
    if not ring.is_simple:
        raise InputError("outline", "crosses itself", allowed="edges that meet only at their "
                         "corners (click the corners in order around the outline)")
    if shapely.Polygon(points).area < 1e-6:
        raise InputError("outline", "has no area", allowed="corners that enclose a surface")
    return points


def snap_corners(corners, targets, tolerance_m: float) -> np.ndarray:
    """Move each corner onto the nearest target point within ``tolerance_m``.

    Parameters
    ----------
    corners : array_like, shape (n, 2)
        Corners as clicked [m].
    targets : array_like, shape (m, 2)
        Corners already on the plan (the faces drawn before) [m].
    tolerance_m : float
        How far a corner may be pulled [m].

    Returns
    -------
    numpy.ndarray, shape (n, 2)
        The corners, snapped where a target was near enough.
    """
    points = np.asarray(corners, dtype=float).reshape(-1, 2).copy()
    targets = np.asarray(targets, dtype=float).reshape(-1, 2)
    if len(points) == 0 or len(targets) == 0:
        return points
    distance = np.linalg.norm(points[:, None, :] - targets[None, :, :], axis=2)
    nearest = distance.argmin(axis=1)
    close = distance[np.arange(len(points)), nearest] <= tolerance_m
    points[close] = targets[nearest[close]]
    return points


def downslope_azimuth(corners, eave_edge: int = 0) -> float:
    """Direction a face slopes toward when ``eave_edge`` is its eave [degrees from north].

    The slope runs at right angles to the eave, from the rest of the outline toward the eave
    (water runs off over the eave). Corners in either winding.
    """
    points = check_outline_drawing(corners)
    a, b = points[eave_edge], points[(eave_edge + 1) % len(points)]
    direction = b - a
    normal = np.array([direction[1], -direction[0]])  # one of the two normals
    centre = np.asarray(shapely.Polygon(points).centroid.coords[0])
    if np.dot(centre - 0.5 * (a + b), normal) > 0:
        normal = -normal  # point away from the inside: downhill, over the eave
    return float(math.degrees(math.atan2(normal[0], normal[1])) % 360.0)


def face_from_drawing(corners, pitch_deg: float, eave_height_m: float, *, name: str = "",
                      azimuth_deg: float | None = None, eave_edge: int = 0) -> RoofFace:
    """Build the roof face a drawn outline makes.

    Parameters
    ----------
    corners : array_like, shape (n, 2)
        The outline's corners on the plan [m] (checked with :func:`check_outline_drawing`).
    pitch_deg : float
        Slope [degrees], 0 to 75 (0 for a flat roof).
    eave_height_m : float
        Height of the face's lowest point above ground [m].
    name : str, optional
        The face's name.
    azimuth_deg : float, optional
        Direction the slope faces [degrees]; by default at right angles to edge
        ``eave_edge``, away from the outline (:func:`downslope_azimuth`).
    eave_edge : int, default 0
        The edge taken as the eave when no azimuth is given (edge 0 runs from the first
        corner clicked to the second).
    """
    points = check_outline_drawing(corners)
    if azimuth_deg is None:
        azimuth_deg = downslope_azimuth(points, eave_edge) if pitch_deg > 0 else 180.0
    return RoofFace(tuple(map(tuple, points)), pitch_deg, azimuth_deg, eave_height_m, name=name)
