"""The site frame from longitude and latitude: checked against pyproj's geodesic (Karney)."""

from __future__ import annotations

import numpy as np
import pyproj
import pytest
import shapely

from layout.errors import InputError
from layout.scene.geodesy import (
    lonlat_to_site,
    parse_crs,
    site_to_lonlat,
    to_site_transformer,
)

SITE = {"site_latitude": 47.3, "site_longitude": 8.5}
GEOD = pyproj.Geod(ellps="WGS84")  # Karney (2013) geodesics, J. Geodesy 87:43


@pytest.mark.parametrize("lat0", [0.0, 47.3, -33.9, 69.6])
def test_round_trip_within_a_millimetre(lat0):
    rng = np.random.default_rng(3)
    x, y = rng.uniform(-2000, 2000, 200), rng.uniform(-2000, 2000, 200)
    lon, lat = site_to_lonlat(x, y, site_latitude=lat0, site_longitude=8.5)
    x2, y2 = lonlat_to_site(lon, lat, site_latitude=lat0, site_longitude=8.5)
    assert np.max(np.hypot(x2 - x, y2 - y)) < 1e-3


def test_origin_is_the_site_and_scalars_stay_scalars():
    x, y = lonlat_to_site(8.5, 47.3, **SITE)
    assert isinstance(x, float) and abs(x) < 1e-9 and abs(y) < 1e-9


def test_building_sized_polygon_lengths_and_area_against_the_geodesic():
    # a 30 m × 18 m L-shaped building 150 m from the site, turned 23°
    local = np.array([(0, 0), (30, 0), (30, 18), (12, 18), (12, 9), (0, 9)], float)
    t = np.radians(23.0)
    rot = local @ np.array([[np.cos(t), np.sin(t)], [-np.sin(t), np.cos(t)]]) + (120.0, -90.0)
    lon, lat = site_to_lonlat(rot[:, 0], rot[:, 1], **SITE)
    geod_area, geod_perimeter = GEOD.polygon_area_perimeter(lon, lat)
    plan = shapely.Polygon(rot)
    assert abs(plan.area - abs(geod_area)) / abs(geod_area) <= 1e-3
    assert abs(plan.length - geod_perimeter) / geod_perimeter <= 1e-3
    for i in range(len(rot)):
        j = (i + 1) % len(rot)
        _, _, d = GEOD.inv(lon[i], lat[i], lon[j], lat[j])
        assert abs(np.hypot(*(rot[j] - rot[i])) - d) / d <= 1e-3
    # distances and azimuths from the site itself are true in the azimuthal equidistant map
    az, _, d = GEOD.inv(np.full(len(lon), 8.5), np.full(len(lon), 47.3), lon, lat)
    np.testing.assert_allclose(d, np.hypot(rot[:, 0], rot[:, 1]), rtol=1e-9, atol=1e-6)
    np.testing.assert_allclose(np.radians(az), np.arctan2(rot[:, 0], rot[:, 1]), atol=1e-9)


def test_utm_to_site_agrees_with_lonlat_path():
    utm = pyproj.Transformer.from_crs("EPSG:4326", "EPSG:32632", always_xy=True)
    e, n = utm.transform(8.501, 47.3005)
    x, y = to_site_transformer("EPSG:32632", **SITE).transform(e, n)
    x2, y2 = lonlat_to_site(8.501, 47.3005, **SITE)
    assert abs(x - x2) < 1e-6 and abs(y - y2) < 1e-6


def test_unknown_crs_and_bad_site():
    with pytest.raises(InputError, match="pyproj knows") as err:
        parse_crs("EPSG:999999")
    assert err.value.field == "crs"
    with pytest.raises(InputError, match="latitude"):
        lonlat_to_site(0.0, 0.0, site_latitude=91.0, site_longitude=0.0)
