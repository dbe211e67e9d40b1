"""The far horizon from an elevation raster, with the Earth's curvature and refraction.

From an observer at the array, the skyline at each azimuth is the largest elevation angle of
the terrain along that direction, from a near radius (inside it, buildings and trees are
solid obstructions of their own) out to the edge of the raster. Over distance the Earth's
surface falls away below the observer's horizontal, and the air bends the line of sight back
toward the ground a little; the combined correction lowers a point at horizontal distance D
by

    h_cr = (1 - k) · D² / (2 R)

with R = 6 371 km the mean Earth radius and k = 0.14 the coefficient of refraction, which
surveying texts write as h_cr = 0.0675 K² metres with K in kilometres. At 1 km it is 6.8 cm;
at 10 km, 6.75 m (about 0.04° of elevation).

References
----------
.. [1] Ghilani, C. D., Wolf, P. R. (2012). Elementary Surveying: An Introduction to Geomatics,
   13th ed., Pearson, section 4.5.1 (curvature and refraction, h_cr = 0.0675 K²).
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import InputError, check_positive, check_range
from ..scene.obstructions import HorizonProfile
from .raster import SiteRaster

__all__ = ["EARTH_RADIUS_M", "REFRACTION_K", "curvature_refraction_drop", "horizon_from_raster"]

#: Mean radius of the Earth [m] (IUGG mean radius R1 of the GRS 80 ellipsoid).
EARTH_RADIUS_M = 6_371_000.0
#: Coefficient of refraction of the line of sight; 0.14 gives Ghilani & Wolf's 0.0675 K².
REFRACTION_K = 0.14


def curvature_refraction_drop(distance_m, *, k: float = REFRACTION_K,
                              radius_m: float = EARTH_RADIUS_M):
    """How far the Earth's curvature, less refraction, lowers a distant point [m].

    Parameters
    ----------
    distance_m : numeric
        Horizontal distance [m].
    k : float, default 0.14
        Coefficient of refraction.
    radius_m : float, default 6 371 000
        Earth radius [m].

    Returns
    -------
    numeric
        ``(1 - k) · D² / (2 R)`` [m]; 0.0675 m at 1 km with the defaults.

    References
    ----------
    .. [1] Ghilani & Wolf (2012), Elementary Surveying, 13th ed., section 4.5.1.
    """
    d = np.asarray(distance_m, dtype=float)
    return (1.0 - k) * d * d / (2.0 * radius_m)


def horizon_from_raster(raster: SiteRaster, *, ground_level_m: float,
                        observer_height_m: float = 5.0, observer_xy=(0.0, 0.0),
                        near_radius_m: float = 40.0, azimuth_step_deg: float = 2.0,
                        k: float = REFRACTION_K, name: str = "far horizon") -> HorizonProfile:
    """Compute the skyline seen from the observer, beyond ``near_radius_m``.

    Parameters
    ----------
    raster : SiteRaster
        Surface or terrain heights above the datum, site frame.
    ground_level_m : float
        Height of the site's ground above the same datum [m] (the site frame's z = 0).
    observer_height_m : float, default 5
        Height of the observer (the array) above the site's ground [m].
    observer_xy : (float, float), default (0, 0)
        Plan position of the observer [m].
    near_radius_m : float, default 40
        Terrain nearer than this is left out [m].
    azimuth_step_deg : float, default 2
        Azimuth step of the profile [degrees], 0.25 to 10.
    k : float, default 0.14
        Coefficient of refraction (0: curvature alone).
    name : str

    Returns
    -------
    HorizonProfile
        Elevation [degrees] per azimuth; 0 where no terrain rises above the horizontal
        (the skyline is never put below 0: the sky model's horizon).

    References
    ----------
    .. [1] Ghilani & Wolf (2012), Elementary Surveying, 13th ed., section 4.5.1.
    """
    step = check_range("azimuth_step_deg", azimuth_step_deg, 0.25, 10, unit="degrees")
    near = check_positive("near_radius_m", near_radius_m, unit="m")
    far = raster.half_size_m * math.sqrt(2.0)
    if near >= raster.half_size_m:
        raise InputError("near_radius_m", "reaches past the raster", value=near,
                         allowed=f"below {raster.half_size_m:g} m")
    azimuths = np.arange(0.0, 360.0, step)
    distances = np.arange(near, far, raster.cell_m / 2.0)
    eye = ground_level_m + observer_height_m
    drop = curvature_refraction_drop(distances, k=k)
    az = np.radians(azimuths)[:, None]
    x = observer_xy[0] + distances[None, :] * np.sin(az)
    y = observer_xy[1] + distances[None, :] * np.cos(az)
    z = raster.height_at(x.ravel(), y.ravel()).reshape(x.shape)
    angle = np.degrees(np.arctan2(z - eye - drop[None, :], distances[None, :]))
    angle = np.where(np.isfinite(angle), angle, -90.0)
    elevation = np.maximum(angle.max(axis=1), 0.0)
    return HorizonProfile(tuple(azimuths.tolist()), tuple(elevation.tolist()), name=name)
