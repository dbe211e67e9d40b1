"""The far horizon from a raster, against closed-form geometry on a sphere."""

from __future__ import annotations

import math

import numpy as np
import pytest
import rasterio
from rasterio.transform import Affine

from layout.elevation import synthetic
from layout.elevation.horizon import curvature_refraction_drop, horizon_from_raster
from layout.elevation.raster import read_raster
from layout.errors import InputError
from layout.scene.geodesy import site_crs

LAT, LON = synthetic.DEMO_LATITUDE, synthetic.DEMO_LONGITUDE


def test_curvature_and_refraction_drop_is_the_surveying_formula():
    # Ghilani & Wolf, Elementary Surveying (13th ed.), section 4.5.1: h_cr = 0.0675 K² m
    for km in (1.0, 3.0, 10.0):
        assert curvature_refraction_drop(km * 1000.0) == pytest.approx(0.0675 * km ** 2,
                                                                       rel=2e-3)
    assert curvature_refraction_drop(1000.0, k=0.0) == pytest.approx(1e6 / (2 * 6_371_000))


def _write(path, z, half, res, crs, nodata=None):
    n = z.shape[0]
    with rasterio.open(path, "w", driver="GTiff", width=n, height=n, count=1, dtype="float32",
                       crs=crs, transform=Affine(res, 0.0, -half, 0.0, -res, half),
                       nodata=nodata) as dst:
        dst.write(z.astype(np.float32), 1)


@pytest.fixture(scope="module")
def step_raster(tmp_path_factory):
    """A plateau 200 m above the site, from 8 km to the south onward (10 m cells)."""
    half, res, ground = 9000.0, 10.0, 430.0
    n = int(2 * half / res)
    ys = half - (np.arange(n) + 0.5) * res
    z = np.where(ys[:, None] <= -8000.0, ground + 200.0, ground) * np.ones((1, n))
    path = tmp_path_factory.mktemp("raster") / "step.tif"
    _write(path, z, half, res, site_crs(LAT, LON).to_wkt())
    return path


def test_distant_ridge_against_closed_form_geometry_on_the_sphere(step_raster):
    raster = read_raster(step_raster, site_latitude=LAT, site_longitude=LON, radius_m=9000.0)
    D, H, h = 8000.0, 200.0, 6.0
    horizon = horizon_from_raster(raster, ground_level_m=430.0, observer_height_m=h,
                                  near_radius_m=100.0, azimuth_step_deg=1.0)
    # exact elevation angle of a point at height H and arc distance D seen from height h on
    # a sphere of effective radius R/(1-k) (refraction as a larger Earth, Ghilani & Wolf 4.5)
    R = 6_371_000.0 / (1 - 0.14)
    exact = math.degrees(math.atan2((R + H) * math.cos(D / R) - (R + h),
                                    (R + H) * math.sin(D / R)))
    flat = math.degrees(math.atan2(H - h, D))
    assert abs(horizon.elevation_at(180.0) - exact) < 0.003
    assert flat - exact > 0.025  # the correction matters here, and the check can tell
    assert horizon.elevation_at(0.0) == 0.0


def test_demo_hills_raise_the_horizon_to_the_south_south_east(tmp_path):
    scene = synthetic.demo_scene()
    path = tmp_path / "dsm.tif"
    synthetic.write_surface_geotiff(path, scene, half_size_m=2500.0, resolution_m=10.0)
    raster = read_raster(path, site_latitude=LAT, site_longitude=LON, radius_m=2500.0)
    horizon = horizon_from_raster(raster, ground_level_m=430.0, observer_height_m=7.6,
                                  near_radius_m=60.0)
    peak = horizon.azimuth_deg[int(np.argmax(horizon.elevation_deg))]
    assert abs(peak - 160.0) <= 4.0
    # crest 120 m at 1500 m from an eye 7.6 m up: atan(112.4 / 1500) = 4.29°, a little more
    # from the nearer slope of the ridge
    assert 4.0 < max(horizon.elevation_deg) < 5.0


def test_raster_bad_input(tmp_path):
    z = np.full((50, 50), 430.0)
    z[20:25, 20:25] = -9999.0
    holes = tmp_path / "holes.tif"
    _write(holes, z, 250.0, 10.0, site_crs(LAT, LON).to_wkt(), nodata=-9999.0)
    raster = read_raster(holes, site_latitude=LAT, site_longitude=LON, radius_m=200.0)
    assert np.isnan(raster.heights).any()
    assert any("has no data" in n for n in raster.notes)
    nocrs = tmp_path / "nocrs.tif"
    _write(nocrs, z, 250.0, 10.0, None)
    with pytest.raises(InputError, match="holds no coordinate reference system") as err:
        read_raster(nocrs, site_latitude=LAT, site_longitude=LON)
    assert err.value.field == "crs"
    with pytest.raises(InputError, match="does not cover the site"):
        read_raster(holes, site_latitude=LAT + 1.0, site_longitude=LON, radius_m=200.0)
    with pytest.raises(InputError, match="does not exist"):
        read_raster(tmp_path / "none.tif", site_latitude=LAT, site_longitude=LON)
    with pytest.raises(InputError, match="near_radius_m"):
        horizon_from_raster(raster, ground_level_m=430.0, near_radius_m=500.0)
