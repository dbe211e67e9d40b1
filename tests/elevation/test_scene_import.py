"""The whole import on our own scene, against the objects that made the points.

The truth is the generating scene of layout.elevation.synthetic (a hip roof, a chimney, three
trees, a garage). The issue's tolerances: pitch 1°, azimuth 2°, eave height 0.15 m, face area
3 %, tree height 0.3 m, crown radius 0.5 m, chimney height 0.1 m.
"""

from __future__ import annotations

import numpy as np
import pytest

from layout.elevation import (
    PROVENANCE,
    import_elevation,
    points_from_arrays,
    scene_from_points,
    synthetic,
)

SITE = {"site_latitude": synthetic.DEMO_LATITUDE, "site_longitude": synthetic.DEMO_LONGITUDE}


def _angle_diff(a, b):
    return abs((a - b + 180.0) % 360.0 - 180.0)


def _match_faces(found, truth):
    """Pairs (found face, true face) by nearest azimuth; every true face once."""
    pairs = []
    for t in truth.faces:
        f = min(found.faces, key=lambda f: _angle_diff(f.azimuth_deg, t.azimuth_deg))
        pairs.append((f, t))
    assert len({id(f) for f, _ in pairs}) == len(truth.faces)
    return pairs


@pytest.fixture(scope="module", params=[0.0, 37.0], ids=["north-up", "turned-37"])
def imported(request, demo_tile):
    path, scene, _ = demo_tile(rotation_deg=request.param)
    given = import_elevation(path, radius_m=40.0, footprint=scene.house.footprint, **SITE)
    found = import_elevation(path, radius_m=40.0, **SITE)
    return scene, given, found


def _check_faces(found, truth, area_rel):
    assert len(found.faces) == 4
    for f, t in _match_faces(found, truth):
        assert abs(f.pitch_deg - t.pitch_deg) <= 1.0
        assert _angle_diff(f.azimuth_deg, t.azimuth_deg) <= 2.0
        assert abs(f.eave_height_m - t.eave_height_m) <= 0.15
        assert abs(f.true_area_m2 - t.true_area_m2) <= area_rel * t.true_area_m2


def test_roof_faces_with_the_footprint_given(imported):
    scene, result, _ = imported
    _check_faces(result.building, scene.house, 0.03)


def test_roof_faces_with_the_footprint_found_from_the_points(imported):
    scene, _, result = imported
    assert abs(result.footprint.area - scene.house.footprint.area) <= 0.03 * 108.0
    # The 3 % against the generating scene, as with the footprint given. Each side of
    # the found rectangle is placed where roof points give way to ground points (a probit
    # fit, layout.elevation.footprints.fit_sides_to_classes), then the eaves are levelled
    # (layout.elevation.faces.level_eaves). Over 18 scenes (0° and 37°; 8, 12 and 20
    # points/m²; seeds 1 to 3; benchmarks/elevation_accuracy.py) the worst face was 2.9 % off,
    # 3.1 % on the same scenes before the probit fit; with the footprint given, 1.8 %.
    _check_faces(result.building, scene.house, 0.03)


def test_edge_kinds_from_the_neighbouring_planes(imported):
    _, result, _ = imported
    for face in result.building.faces:
        kinds = face.edge_kinds
        assert "eave" in kinds and "hip" in kinds
        assert set(kinds) <= {"eave", "hip", "ridge", "rake"}
    # the two long faces (trapezoids) meet at the ridge; the hip ends have none
    ridges = [f for f in result.building.faces if "ridge" in f.edge_kinds]
    assert len(ridges) == 2


def test_chimney(imported):
    scene, result, _ = imported
    assert len(result.bumps) == 1
    bump = result.bumps[0]
    assert abs(bump.height_above_roof_m - scene.chimney_height_above_roof_m) <= 0.1
    assert abs(bump.block.top - scene.chimney.top) <= 0.1
    true_centre = scene.chimney.footprint_polygon.centroid
    assert bump.block.footprint_polygon.centroid.distance(true_centre) <= 0.3


def test_trees(imported):
    scene, result, _ = imported
    assert len(result.trees) == 3
    for truth in scene.trees:
        tree = min(result.trees, key=lambda t: np.hypot(t.center[0] - truth.center[0],
                                                        t.center[1] - truth.center[1]))
        assert np.hypot(tree.center[0] - truth.center[0],
                        tree.center[1] - truth.center[1]) <= 0.5
        assert abs(tree.height - truth.height) <= 0.3
        assert abs(tree.crown_radius - truth.crown_radius) <= 0.5
        assert abs(tree.ground_m - truth.ground_m) <= 0.1
        assert truth.crown_base - 0.5 <= tree.crown_base <= truth.crown_base + 2.5


def test_garage_as_a_neighbouring_block(imported):
    scene, result, _ = imported
    assert len(result.neighbours) == 1
    garage = result.neighbours[0]
    assert abs(garage.top - scene.garage.top) <= 0.15
    overlap = garage.footprint_polygon.intersection(scene.garage.footprint_polygon).area
    assert overlap >= 0.85 * scene.garage.footprint_polygon.area


def test_rotation_invariance_of_pitches(demo_tile):
    # the same scene turned by 37°: the same pitches, azimuths turned by 37°
    north = import_elevation(demo_tile(0.0)[0], radius_m=40.0, **SITE).building
    turned = import_elevation(demo_tile(37.0)[0], radius_m=40.0, **SITE).building
    for f in north.faces:
        g = min(turned.faces, key=lambda g: _angle_diff(g.azimuth_deg, f.azimuth_deg + 37.0))
        assert abs(f.pitch_deg - g.pitch_deg) <= 1.0
        assert _angle_diff(g.azimuth_deg, f.azimuth_deg + 37.0) <= 2.0


def test_provenance_and_date_in_the_summary(imported):
    _, result, _ = imported
    text = "\n".join(result.summary())
    assert PROVENANCE in text and "2023-04-18" in text
    assert any("trees may have grown" in n for n in result.notes)
    assert len(result.obstructions()) == 1 + 3 + 1


def test_unclassified_file_still_gives_the_roof_and_trees(demo_tile):
    path, scene, _ = demo_tile(classified=False)
    result = import_elevation(path, radius_m=40.0, **SITE)
    assert any("no point classes" in n for n in result.notes)
    assert len(result.building.faces) == 4
    for f, t in _match_faces(result.building, scene.house):
        assert abs(f.pitch_deg - t.pitch_deg) <= 1.0
    heights = sorted(t.height for t in result.trees)
    assert len(heights) == 3
    np.testing.assert_allclose(heights, sorted(t.height for t in scene.trees), atol=0.3)


def test_partial_import_says_what_it_could_not_find(demo_tile):
    # only ground and trees near the site: no building points at all
    points = demo_tile()[2]
    keep = points["classification"] != synthetic.CLASS_BUILDING
    cloud = points_from_arrays(points["x"][keep], points["y"][keep],
                               points["z"][keep] + 430.0, points["classification"][keep],
                               radius_m=40.0)
    result = scene_from_points(cloud)
    assert result.building is None
    assert any("no building at the site" in m for m in result.missing)
    assert len(result.trees) == 3


def test_import_with_a_surface_raster_adds_the_far_horizon(demo_tile, tmp_path):
    path, scene, _ = demo_tile()
    surface = tmp_path / "dsm.tif"
    synthetic.write_surface_geotiff(surface, scene, half_size_m=2500.0, resolution_m=10.0)
    result = import_elevation(path, radius_m=40.0, surface=surface, **SITE)
    horizon = result.horizon
    assert horizon is not None and horizon in result.obstructions()
    peak = horizon.azimuth_deg[int(np.argmax(horizon.elevation_deg))]
    assert abs(peak - scene.ridge.azimuth_deg) <= 4.0
    # crest 120 m at 1.5 km seen from the ridge of the roof (7.6 m): about 4.3°
    assert 4.0 < max(horizon.elevation_deg) < 4.6
    assert any(line.startswith("far horizon beyond 40 m") for line in result.found)
