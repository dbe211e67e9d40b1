"""Rays toward the sun: the frame they live in, where they start, and checks on their input.

Frame
-----
Site frame, metres: x east, y north, z up. ``points`` are (N, 3) positions in that frame,
``sun`` is (T, 3) unit vectors toward the sun (see :func:`layout.sky.sun.sun_vectors`). The ray of
point ``n`` at step ``t`` is ``points[n] + s · sun[t]`` for ``s >= ray_start``.

Ray start convention
--------------------
A ray starts a small distance ``ray_start`` (default :data:`RAY_START_M`, 1 µm) along its own
direction, not at the point itself. A point that lies on (or within floating-point noise of) the
surface of a solid, such as a module sample point on a flat roof modelled as a
:class:`~layout.scene.obstructions.Block`, is therefore not shaded by that solid when the sun is
on its open side; it is shaded when the sun is behind the surface it sits on. Solids are closed:
a ray that touches a surface meets it.

Every exact test of a solid (:mod:`layout.shading.blocks`, :mod:`layout.shading.plates`,
:mod:`layout.shading.round_solids`) follows this frame and convention; :func:`_slab`, the
stretch of a ray between two heights, is the piece the prisms and round solids share.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError, check_points

__all__ = ["RAY_START_M"]


#: Distance along the ray at which every ray starts [m]; see "Ray start convention" above.
RAY_START_M = 1e-6


def _check_points(points) -> np.ndarray:
    return check_points("points", points, dims=3, min_count=0)


def _check_sun(sun) -> np.ndarray:
    array = check_points("sun", sun, dims=3, min_count=0)
    norm = np.linalg.norm(array, axis=1)
    if (norm == 0).any():
        index = int(np.flatnonzero(norm == 0)[0])
        raise InputError(f"sun[{index}]", "is a zero vector", allowed="unit vectors toward the sun")
    return array / norm[:, None]


def _slab(oz, dz, low, high):
    """Ray parameters where ``low <= oz + s dz <= high``: (s_in, s_out); empty when s_in > s_out."""
    with np.errstate(divide="ignore", invalid="ignore"):
        a = (low - oz) / dz
        b = (high - oz) / dz
    s_in = np.where(dz > 0, a, np.where(dz < 0, b, -np.inf))
    s_out = np.where(dz > 0, b, np.where(dz < 0, a, np.inf))
    flat_outside = (dz == 0) & ((oz < low) | (oz > high))
    s_in = np.where(flat_outside, np.inf, s_in)
    return s_in, s_out
