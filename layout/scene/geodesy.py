"""Longitude and latitude to the site frame and back: an azimuthal equidistant projection.

The site frame is x east, y north, metres, with its origin at the site's (latitude,
longitude). Points are mapped by the azimuthal equidistant projection centred on the site,
on the WGS 84 ellipsoid, through PROJ (``+proj=aeqd``): distances and bearings from the site
are true, and within a few hundred metres of it every length and area is true to far better
than a millimetre per metre. Footprint files (GeoJSON, issue 13) and elevation data (LAS,
GeoTIFF) both come into the site frame through this module.

Heights are not changed: z stays the height the caller gives.

References
----------
.. [1] Snyder, J. P. (1987). Map Projections: A Working Manual. U.S. Geological Survey
   Professional Paper 1395, pp. 191-202 (azimuthal equidistant projection).
.. [2] PROJ contributors. PROJ coordinate transformation software, ``aeqd`` operation.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
import pyproj
from pyproj.exceptions import CRSError

from ..errors import InputError, check_range

__all__ = [
    "lonlat_to_site",
    "parse_crs",
    "site_crs",
    "site_to_lonlat",
    "to_site_transformer",
]


def _check_site(latitude, longitude) -> tuple[float, float]:
    lat = check_range("latitude", latitude, -90, 90, unit="degrees")
    lon = check_range("longitude", longitude, -180, 180, unit="degrees")
    return lat, lon


@lru_cache(maxsize=64)
def _site_crs(lat: float, lon: float) -> pyproj.CRS:
    return pyproj.CRS.from_proj4(
        f"+proj=aeqd +lat_0={lat!r} +lon_0={lon!r} +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs")


def site_crs(latitude: float, longitude: float) -> pyproj.CRS:
    """Return the site frame as a pyproj CRS: azimuthal equidistant about the site, metres.

    Parameters
    ----------
    latitude, longitude : float
        The site origin [degrees north, degrees east] on WGS 84.

    Returns
    -------
    pyproj.CRS
        ``+proj=aeqd`` centred on the site, x east and y north in metres.

    References
    ----------
    .. [1] Snyder (1987), USGS Professional Paper 1395, azimuthal equidistant projection.
    """
    return _site_crs(*_check_site(latitude, longitude))


@lru_cache(maxsize=64)
def _lonlat_transformer(lat: float, lon: float) -> pyproj.Transformer:
    return pyproj.Transformer.from_crs("EPSG:4326", _site_crs(lat, lon), always_xy=True)


def lonlat_to_site(lon, lat, *, site_latitude: float, site_longitude: float):
    """Map WGS 84 longitude and latitude to the site frame (x east, y north).

    Parameters
    ----------
    lon, lat : numeric
        Longitude [degrees east] and latitude [degrees north] of the points.
    site_latitude, site_longitude : float
        The site origin [degrees].

    Returns
    -------
    x, y : numpy.ndarray or float
        Site-frame coordinates [m]; float for scalar input.

    References
    ----------
    .. [1] Snyder (1987), USGS Professional Paper 1395, azimuthal equidistant projection.
    """
    lat0, lon0 = _check_site(site_latitude, site_longitude)
    x, y = _lonlat_transformer(lat0, lon0).transform(np.asarray(lon, float), np.asarray(lat, float))
    return _out(x), _out(y)


def site_to_lonlat(x, y, *, site_latitude: float, site_longitude: float):
    """Map site-frame points (x east, y north) [m] back to WGS 84 longitude and latitude.

    Parameters
    ----------
    x, y : numeric
        Site-frame coordinates [m].
    site_latitude, site_longitude : float
        The site origin [degrees].

    Returns
    -------
    lon, lat : numpy.ndarray or float
        Longitude [degrees east] and latitude [degrees north].
    """
    lat0, lon0 = _check_site(site_latitude, site_longitude)
    lon, lat = _lonlat_transformer(lat0, lon0).transform(
        np.asarray(x, float), np.asarray(y, float), direction="INVERSE")
    return _out(lon), _out(lat)


def _out(values):
    arr = np.asarray(values, dtype=float)
    return float(arr) if arr.ndim == 0 else arr


def parse_crs(value, *, field: str = "crs") -> pyproj.CRS:
    """Read a CRS the user or a file gives ("EPSG:2056", a WKT string, a pyproj CRS).

    Raises
    ------
    InputError
        Naming ``field`` when pyproj does not know the CRS.
    """
    if isinstance(value, pyproj.CRS):
        return value
    try:
        return pyproj.CRS.from_user_input(value)
    except (CRSError, TypeError, ValueError) as err:
        text = str(value)
        raise InputError(field, f"is not a coordinate reference system pyproj knows ({err})",
                         value=text if len(text) < 80 else text[:77] + "...",
                         allowed="an EPSG code such as EPSG:32632, or WKT") from None


def to_site_transformer(crs, *, site_latitude: float, site_longitude: float
                        ) -> pyproj.Transformer:
    """Return a transformer from ``crs`` (x, y in its own axes) to the site frame, x and y first.

    Parameters
    ----------
    crs : str or pyproj.CRS
        The source coordinate reference system (of a file).
    site_latitude, site_longitude : float
        The site origin [degrees].

    Returns
    -------
    pyproj.Transformer
        ``transform(x, y)`` gives site x, y [m]; inverse direction gives ``crs`` coordinates.
    """
    source = parse_crs(crs)
    lat0, lon0 = _check_site(site_latitude, site_longitude)
    source_2d = source.sub_crs_list[0] if source.is_compound else source
    return pyproj.Transformer.from_crs(source_2d, _site_crs(lat0, lon0), always_xy=True)
