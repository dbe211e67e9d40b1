"""What a clinometer, a tape, a laser rangefinder and a compass reading mean in the site frame.

Formulas of the field methods, each on scalars or arrays: heights by the tangent and the laser
method, how sensitive a height is to its angle, true bearings and positions from a bearing.
The frame and sign conventions are those of :mod:`layout.scene.survey`.

Measuring methods
-----------------
``"tangent"``
    ``distance_m`` is the horizontal distance from the observer to the object's axis (trunk
    centre, chimney centre), by tape or by a rangefinder's horizontal-distance mode. The top is
    at ``d · tan θ_top`` above (or below) the eye. Without a base angle the object stands on
    level ground with the observer, so its height is ``d · tan θ_top + eye height``; with a
    base angle (a tree on a slope, a wall or a chimney above the ground) its height is
    ``d · (tan θ_top − tan θ_base)``. Forestry mensuration, e.g. USDA Forest Service field
    guides; REFERENCES.md "Survey".
``"laser"``
    ``distance_m`` is the slope distance along the line of sight to the top, from a laser
    rangefinder; the top is at ``s · sin θ_top`` above the eye and the horizontal distance is
    ``s · cos θ_top``, which then serves the base and crown-base angles as in the tangent
    method.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = [
    "DEFAULT_EYE_HEIGHT_M",
    "METHODS",
    "elevation_tangent",
    "height_error_from_angle",
    "height_laser",
    "height_per_degree",
    "height_tangent",
    "laser_horizontal_distance",
    "position_from_bearing",
    "true_bearing",
]

#: Eye height of a standing adult [m] when none is given (common practice; measure your own).
DEFAULT_EYE_HEIGHT_M = 1.6

#: Measuring methods (see the module notes).
METHODS = ("tangent", "laser")


def _scalar_or_array(value):
    return float(value) if np.ndim(value) == 0 else value


def elevation_tangent(distance_m, angle_deg, *, eye_height_m=DEFAULT_EYE_HEIGHT_M):
    """Return the height of a sighted point above the observer's ground (tangent method).

    ``z = d · tan θ + eye height``.

    Parameters
    ----------
    distance_m : numeric
        Horizontal distance from the observer to the point [m].
    angle_deg : numeric
        Elevation angle of the point seen from the eye [degrees], positive up.
    eye_height_m : numeric, keyword-only
        Eye height above the observer's ground [m].

    Returns
    -------
    numeric
        Height of the point above the observer's ground [m].
    """
    d = np.asarray(distance_m, dtype=float)
    z = d * np.tan(np.radians(angle_deg)) + np.asarray(eye_height_m, dtype=float)
    return _scalar_or_array(z)


def height_tangent(distance_m, top_angle_deg, *, eye_height_m=DEFAULT_EYE_HEIGHT_M,
                   base_angle_deg=None):
    """Return an object's height by the tangent method.

    Without ``base_angle_deg``: ``H = d · tan θ_top + eye height`` (the object stands on level
    ground with the observer). With it: ``H = d · (tan θ_top − tan θ_base)`` (a tree on a
    slope, a wall or chimney whose foot is above the observer's ground); the eye height then
    cancels.

    Parameters
    ----------
    distance_m : numeric
        Horizontal distance to the object's axis [m].
    top_angle_deg : numeric
        Elevation angle of the top [degrees].
    eye_height_m : numeric, keyword-only
        Eye height above the observer's ground [m]; unused with a base angle.
    base_angle_deg : numeric or None, keyword-only
        Elevation angle of the object's foot [degrees], negative below eye level.

    Returns
    -------
    numeric
        Height from the object's foot to its top [m].

    References
    ----------
    Forestry mensuration, e.g. USDA Forest Service field guides (REFERENCES.md "Survey").
    """
    d = np.asarray(distance_m, dtype=float)
    top = np.tan(np.radians(top_angle_deg))
    if base_angle_deg is None:
        h = d * top + np.asarray(eye_height_m, dtype=float)
    else:
        h = d * (top - np.tan(np.radians(base_angle_deg)))
    return _scalar_or_array(h)


def laser_horizontal_distance(slope_distance_m, angle_deg):
    """Return the horizontal distance of a laser shot: ``s · cos θ`` [m].

    Parameters
    ----------
    slope_distance_m : numeric
        Distance along the line of sight [m].
    angle_deg : numeric
        Elevation angle of the line of sight [degrees].
    """
    s = np.asarray(slope_distance_m, dtype=float)
    return _scalar_or_array(s * np.cos(np.radians(angle_deg)))


def height_laser(slope_distance_m, top_angle_deg, *, eye_height_m=DEFAULT_EYE_HEIGHT_M,
                 base_angle_deg=None):
    """Return an object's height from a laser shot to its top.

    The top is ``s · sin θ_top`` above the eye. Without ``base_angle_deg`` the object stands on
    level ground with the observer: ``H = s · sin θ_top + eye height``. With it, the base is
    found on the horizontal distance ``d = s · cos θ_top``:
    ``H = s · sin θ_top − d · tan θ_base``.

    Parameters
    ----------
    slope_distance_m : numeric
        Laser distance along the line of sight to the top [m].
    top_angle_deg : numeric
        Elevation angle of that line of sight [degrees].
    eye_height_m : numeric, keyword-only
        Eye (instrument) height above the observer's ground [m]; unused with a base angle.
    base_angle_deg : numeric or None, keyword-only
        Elevation angle of the object's foot [degrees].

    Returns
    -------
    numeric
        Height from the object's foot to its top [m].
    """
    s = np.asarray(slope_distance_m, dtype=float)
    top = np.radians(top_angle_deg)
    rise = s * np.sin(top)
    if base_angle_deg is None:
        h = rise + np.asarray(eye_height_m, dtype=float)
    else:
        h = rise - s * np.cos(top) * np.tan(np.radians(base_angle_deg))
    return _scalar_or_array(h)


def height_error_from_angle(distance_m, angle_deg, error_deg):
    """Return the change in a tangent-method height when the angle is off by ``error_deg``.

    ``ΔH = d · (tan(θ + δθ) − tan θ)``.

    Parameters
    ----------
    distance_m : numeric
        Horizontal distance [m].
    angle_deg : numeric
        True elevation angle [degrees].
    error_deg : numeric
        Angle error [degrees].

    Returns
    -------
    numeric
        Height error [m].
    """
    d = np.asarray(distance_m, dtype=float)
    a = np.radians(angle_deg)
    dh = d * (np.tan(a + np.radians(error_deg)) - np.tan(a))
    return _scalar_or_array(dh)


def height_per_degree(distance_m, angle_deg):
    """Return the sensitivity of a tangent-method height to its angle, ``d · sec² θ`` per degree.

    Parameters
    ----------
    distance_m : numeric
        Horizontal distance [m].
    angle_deg : numeric
        Elevation angle [degrees].

    Returns
    -------
    numeric
        ``dH/dθ`` [m per degree]; times a small angle error [degrees] it gives the height error.
    """
    d = np.asarray(distance_m, dtype=float)
    return _scalar_or_array(d / np.cos(np.radians(angle_deg)) ** 2 * (math.pi / 180.0))


def true_bearing(magnetic_bearing_deg, declination_deg):
    """Return the true bearing: ``magnetic bearing + declination``, wrapped to 0..360.

    Parameters
    ----------
    magnetic_bearing_deg : numeric
        Compass bearing, clockwise from magnetic north [degrees].
    declination_deg : numeric
        Magnetic declination [degrees], **east positive, west negative**.

    Returns
    -------
    numeric
        Bearing clockwise from true north [degrees], 0 to below 360.
    """
    b = np.mod(np.asarray(magnetic_bearing_deg, dtype=float)
               + np.asarray(declination_deg, dtype=float), 360.0)
    return _scalar_or_array(b)


def position_from_bearing(distance_m, bearing_deg, *, origin=(0.0, 0.0), declination_deg=0.0):
    """Return the plan position of a point a distance and a bearing away from a known point.

    ``x = x₀ + d · sin β``, ``y = y₀ + d · cos β`` with ``β`` the true bearing
    (:func:`true_bearing`).

    Parameters
    ----------
    distance_m : numeric
        Horizontal distance [m].
    bearing_deg : numeric
        Compass bearing from the known point, clockwise from north [degrees].
    origin : (float, float), keyword-only
        The known point, site frame [m] (x east, y north).
    declination_deg : numeric, keyword-only
        Magnetic declination [degrees], east positive; 0 when the bearing is already true.

    Returns
    -------
    (x, y) : tuple of numeric
        Position in the site frame [m].
    """
    d = np.asarray(distance_m, dtype=float)
    b = np.radians(true_bearing(bearing_deg, declination_deg))
    x = origin[0] + d * np.sin(b)
    y = origin[1] + d * np.cos(b)
    return _scalar_or_array(x), _scalar_or_array(y)
