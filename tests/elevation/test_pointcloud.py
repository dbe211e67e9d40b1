"""Reading LAS/LAZ into the site frame: round trips, cropping, chunks, dates and bad input."""

from __future__ import annotations

import datetime as dt

import laspy
import numpy as np
import pytest
from scipy.spatial import cKDTree

from layout.elevation import synthetic
from layout.elevation.pointcloud import _z_factor, points_from_arrays, read_points
from layout.errors import InputError
from layout.scene.geodesy import parse_crs

SITE = {"site_latitude": synthetic.DEMO_LATITUDE, "site_longitude": synthetic.DEMO_LONGITUDE}

# LAS 1.4 public header block: the byte layout of ASPRS LAS 1.4 R15 (2019), Table 3, read
# with numpy alone as a second reader beside laspy. PDAL's Python bindings (the second reader
# the issue suggests) need the PDAL C++ library, which neither pip (no wheel) nor this
# machine's Debian release provides; the specification's own layout is the next best thing.
_HEADER = np.dtype([("signature", "S4"), ("source_id", "<u2"), ("encoding", "<u2"),
                    ("guid", "S16"), ("major", "u1"), ("minor", "u1"), ("system", "S32"),
                    ("software", "S32"), ("doy", "<u2"), ("year", "<u2"),
                    ("header_size", "<u2"), ("offset_to_points", "<u4"), ("n_vlr", "<u4"),
                    ("format", "u1"), ("record_length", "<u2"), ("legacy_count", "<u4"),
                    ("legacy_by_return", "<u4", 5), ("scale", "<f8", 3), ("offset", "<f8", 3),
                    ("max_x", "<f8"), ("min_x", "<f8"), ("max_y", "<f8"), ("min_y", "<f8"),
                    ("max_z", "<f8"), ("min_z", "<f8"), ("waveform", "<u8"), ("evlr", "<u8"),
                    ("n_evlr", "<u4"), ("count", "<u8"), ("by_return", "<u8", 15)])
# Point data record format 6 (Table 18): X, Y, Z as scaled int32, then the rest
_FORMAT6 = np.dtype([("X", "<i4"), ("Y", "<i4"), ("Z", "<i4"), ("intensity", "<u2"),
                     ("returns", "u1"), ("flags", "u1"), ("classification", "u1"),
                     ("user", "u1"), ("scan_angle", "<i2"), ("source", "<u2"),
                     ("gps_time", "<f8")])


def test_las_round_trip_through_laspy_and_the_specification_layout(demo_tile):
    path, _, points = demo_tile(suffix=".las")
    raw = path.read_bytes()
    head = np.frombuffer(raw, _HEADER, count=1)[0]
    assert head["signature"] == b"LASF" and (head["major"], head["minor"]) == (1, 4)
    assert head["format"] == 6 and head["record_length"] == _FORMAT6.itemsize
    assert head["count"] == len(points["x"])
    rec = np.frombuffer(raw, _FORMAT6, count=int(head["count"]),
                        offset=int(head["offset_to_points"]))
    z_spec = rec["Z"] * head["scale"][2] + head["offset"][2]
    las = laspy.read(path)
    np.testing.assert_array_equal(np.asarray(las.classification), rec["classification"])
    np.testing.assert_allclose(np.asarray(las.z), z_spec, atol=1e-9)
    # the heights written are the scene's plus the ground's altitude, to the 1 mm scale
    np.testing.assert_allclose(z_spec, points["z"] + synthetic.DEMO_GROUND_ALTITUDE_M,
                               atol=0.0006)
    np.testing.assert_array_equal(rec["classification"], points["classification"])
    assert las.header.parse_crs().to_epsg() == 32632


def test_laz_holds_the_same_points_as_las(demo_tile):
    las = laspy.read(demo_tile(suffix=".las")[0])
    laz = laspy.read(demo_tile(suffix=".laz")[0])
    np.testing.assert_array_equal(np.asarray(las.X), np.asarray(laz.X))
    np.testing.assert_array_equal(np.asarray(las.Z), np.asarray(laz.Z))


def test_points_come_back_to_the_site_frame_within_a_millimetre(demo_tile):
    # generator: site frame -> lon/lat -> UTM 32N; reader: UTM 32N -> site frame (pyproj)
    path, _, points = demo_tile(suffix=".las")
    cloud = read_points(path, radius_m=30.0, **SITE)
    near = points["x"] ** 2 + points["y"] ** 2 <= 30.0 ** 2
    assert len(cloud) == int(near.sum())
    # every point read lies within the LAS scale (1 mm, so 0.5 mm per axis) of one written
    tree = cKDTree(np.column_stack([points["x"][near], points["y"][near]]))
    distance, _ = tree.query(np.column_stack([cloud.x, cloud.y]))
    assert distance.max() < 1e-3
    assert np.hypot(cloud.x, cloud.y).max() <= 30.0


def test_chunked_reading_gives_the_same_points_as_one_chunk(demo_tile):
    path = demo_tile()[0]
    whole = read_points(path, radius_m=25.0, **SITE)
    chunked = read_points(path, radius_m=25.0, chunk_points=7_000, **SITE)
    np.testing.assert_array_equal(whole.x, chunked.x)
    np.testing.assert_array_equal(whole.classification, chunked.classification)


def test_acquisition_date_from_gps_time(demo_tile):
    cloud = read_points(demo_tile()[0], radius_m=20.0, **SITE)
    assert cloud.acquired == dt.date(2023, 4, 18)
    assert cloud.acquired_from == "GPS time of the points"
    assert cloud.has_classes


def test_no_crs_is_refused_unless_given(tmp_path):
    scene = synthetic.demo_scene()
    pts = synthetic.sample_points(scene, half_size_m=15.0, density=4.0)
    path = tmp_path / "nocrs.las"
    synthetic.write_las(path, pts, crs=None)
    with pytest.raises(InputError, match="holds no coordinate reference system") as err:
        read_points(path, radius_m=10.0, **SITE)
    assert err.value.field == "crs"
    with pytest.raises(InputError, match="not a coordinate reference system pyproj knows"):
        read_points(path, radius_m=10.0, crs="EPSG:999999", **SITE)
    # given a CRS that puts the tile elsewhere: the message says where the tile is
    with pytest.raises(InputError, match="does not cover the site") as err:
        read_points(path, radius_m=10.0, crs="EPSG:32632", **SITE)
    assert err.value.field == "site"


def test_bad_files_and_radius(tmp_path, demo_tile):
    with pytest.raises(InputError, match="does not exist"):
        read_points(tmp_path / "missing.laz", radius_m=10.0, **SITE)
    junk = tmp_path / "junk.las"
    junk.write_bytes(b"not a point cloud")
    with pytest.raises(InputError, match="not a LAS/LAZ file"):
        read_points(junk, radius_m=10.0, **SITE)
    with pytest.raises(InputError, match="radius_m") as err:
        read_points(demo_tile()[0], radius_m=0.0, **SITE)
    assert "1 to 5000" in str(err.value)


def test_partial_coverage_is_said(demo_tile):
    # the tile is 100 m square about the site; a 70 m circle pokes out of it
    cloud = read_points(demo_tile()[0], radius_m=70.0, **SITE)
    assert 0.5 < cloud.coverage < 0.99
    assert any("covers only" in note for note in cloud.notes)


def test_nan_and_absurd_heights_are_dropped_and_counted():
    x = np.array([0.0, 1.0, 2.0, 3.0, 4.0])
    z = np.array([430.0, np.nan, 1e7, -9999.0, 431.0])
    cloud = points_from_arrays(x, x, z, radius_m=100.0)
    assert len(cloud) == 2
    assert any("no number (NaN)" in n for n in cloud.notes)
    assert any("2 points with heights outside -500 to 9000 m" in n for n in cloud.notes)
    with pytest.raises(InputError, match="no usable point"):
        points_from_arrays([0.0], [0.0], [np.nan])


def test_absurd_heights_in_a_file_are_dropped_with_a_note(tmp_path):
    scene = synthetic.demo_scene()
    pts = synthetic.sample_points(scene, half_size_m=15.0, density=4.0)
    pts["z"][:5] = 20_000.0  # 20 km above the ground: no roof, no tree
    path = tmp_path / "spikes.las"
    synthetic.write_las(path, pts)
    cloud = read_points(path, radius_m=20.0, **SITE)
    assert cloud.z.max() < 500.0
    assert any("5 points with heights outside" in note for note in cloud.notes)


@pytest.mark.parametrize(("crs", "factor"), [
    ("EPSG:32632", 1.0),  # UTM 32N, metres
    ("EPSG:2263", 0.3048006096),  # New York Long Island, US survey feet (EPSG registry)
    ("EPSG:2263+6360", 0.3048006096),  # ... with NAVD88 height in US survey feet
    ("EPSG:4326", 1.0),  # degrees in plan: heights taken as metres
])
def test_height_unit_comes_from_the_crs(crs, factor):
    assert _z_factor(parse_crs(crs)) == pytest.approx(factor, rel=1e-9)
