"""Plane fits and segmentation, against numpy.linalg.lstsq and planes of known slope."""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely

from layout.elevation.faces import faces_from_planes, level_eaves
from layout.elevation.planes import Plane, fit_plane, segment_planes
from layout.errors import InputError
from layout.scene.building import gable_roof, hip_roof
from layout.scene.roof import building_to_site


def _plane_points(pitch, azimuth, n=400, noise=0.0, seed=0):
    rng = np.random.default_rng(seed)
    x, y = rng.uniform(-4, 4, n), rng.uniform(-3, 3, n)
    a = math.radians(azimuth)
    slope = math.tan(math.radians(pitch))
    # downhill toward the azimuth: height falls along (sin a, cos a)
    z = 5.0 - slope * (x * math.sin(a) + y * math.cos(a)) + rng.normal(0, noise, n)
    return x, y, z


@pytest.mark.parametrize(("pitch", "azimuth"), [(0.0, 180.0), (18.435, 200.0), (45.0, 37.0),
                                                (30.0, 271.0)])
def test_fit_agrees_with_lstsq_on_the_same_points(pitch, azimuth):
    x, y, z = _plane_points(pitch, azimuth, noise=0.02)
    plane = fit_plane(x, y, z)
    # closed form: z = a x + b y + c by ordinary least squares (numpy.linalg.lstsq)
    (a, b, _), *_ = np.linalg.lstsq(np.column_stack([x, y, np.ones_like(x)]), z, rcond=None)
    assert abs(plane.pitch_deg - math.degrees(math.atan(math.hypot(a, b)))) < 0.05
    if pitch > 0:
        assert abs((plane.azimuth_deg - math.degrees(math.atan2(-a, -b)) + 180) % 360 - 180) < 0.1
        assert abs(plane.pitch_deg - pitch) < 0.2
    np.testing.assert_allclose(plane.height_at(x, y), np.column_stack(
        [x, y, np.ones_like(x)]) @ np.linalg.lstsq(np.column_stack([x, y, np.ones_like(x)]), z,
                                                   rcond=None)[0], atol=0.01)


def test_fit_refuses_too_few_points_and_walls():
    with pytest.raises(InputError, match="at least 3 points"):
        fit_plane([0, 1], [0, 1], [0, 1])
    with pytest.raises(InputError, match="vertical plane"):
        fit_plane([0, 1, 2, 0], [0, 0, 0, 0], [0, 0, 1, 1])


def test_segmentation_of_a_gable_roof_gives_its_two_faces_and_the_ridge():
    # closed-form geometry: a 10 m x 8 m gable at 6:12 (26.565°), ridge along x
    truth = gable_roof(10.0, 8.0, rise_in_12=6, eave_height_m=3.0)
    rng = np.random.default_rng(5)
    x, y = rng.uniform(0, 10, 1200), rng.uniform(0, 8, 1200)
    z = np.zeros_like(x)
    for face in truth.faces:
        inside = shapely.contains_xy(face.plan_polygon, x, y)
        z[inside] = face.height_at(np.column_stack([x[inside], y[inside]]))
    z += rng.normal(0, 0.03, len(z))
    planes, labels = segment_planes(x, y, z, density=15.0)
    assert len(planes) == 2 and (labels >= 0).mean() > 0.97
    for p in planes:
        assert abs(p.pitch_deg - 26.565) < 0.5
    building = faces_from_planes(planes, labels, x, y, z, truth.footprint, spacing_m=0.26)
    for face in building.faces:
        assert face.edge_kinds.count("ridge") == 1 and face.edge_kinds.count("eave") == 1
        assert face.edge_kinds.count("rake") == 2
        assert abs(face.plan_area_m2 - 40.0) < 0.4
        assert abs(face.eave_height_m - 3.0) < 0.05


def _planes_of(building):
    """Exact planes of a building's faces (closed-form geometry)."""
    planes = []
    for face in building.faces:
        c = np.asarray(face.plan_polygon.centroid.coords[0])
        planes.append(Plane(tuple(face.normal), (c[0], c[1], float(face.height_at(c))), 0.0,
                            100))
    return planes


@pytest.mark.parametrize("builder", ["hip", "gable"])
def test_level_eaves_brings_misplaced_eave_sides_to_one_level(builder):
    # closed-form geometry: exact planes of a 12 m x 9 m roof at 30°, eaves at 5 m, turned
    # 23°; the rectangle's sides (south, east, north, west in the building's axes) pushed out
    # by 0.08, -0.05, 0.11 and -0.02 m, as sampling would
    make = hip_roof if builder == "hip" else gable_roof
    rot, origin = 23.0, (-3.0, 2.0)
    truth = make(12.0, 9.0, 30.0, 5.0, rotation_deg=rot, origin=origin)
    south, east, north, west = 0.08, -0.05, 0.11, -0.02
    local = [(-west, -south), (12 + east, -south), (12 + east, 9 + north), (-west, 9 + north)]
    found = shapely.Polygon(building_to_site(local, rot, origin))
    levelled = level_eaves(found, _planes_of(truth))
    back = site_to_building(np.asarray(levelled.exterior.coords)[:-1], rot, origin)
    u0, u1 = back[:, 0].min(), back[:, 0].max()
    v0, v1 = back[:, 1].min(), back[:, 1].max()
    if builder == "hip":
        # four eaves, one level: every side ends at the mean push, (0.08-0.05+0.11-0.02)/4
        mean = (south + east + north + west) / 4
        np.testing.assert_allclose([-u0, u1 - 12, -v0, v1 - 9], mean, atol=1e-9)
    else:
        # gable (ridge along x): the two eaves take their mean push, the rakes stay
        mean = (south + north) / 2
        np.testing.assert_allclose([-v0, v1 - 9], mean, atol=1e-9)
        np.testing.assert_allclose([-u0, u1 - 12], [west, east], atol=1e-9)


def test_level_eaves_leaves_eaves_at_different_heights_alone():
    truth = hip_roof(12.0, 9.0, 30.0, 5.0)
    planes = _planes_of(truth)
    # lower the south face by 0.5 m: its eave is no longer at the others' level
    south = next(i for i, f in enumerate(truth.faces) if abs(f.azimuth_deg - 180) < 1)
    p = planes[south]
    planes[south] = Plane(p.normal, (p.centroid[0], p.centroid[1], p.centroid[2] - 0.5), 0, 1)
    found = shapely.box(-0.1, 0.05, 12.1, 9.0)
    assert level_eaves(found, planes) is found


def site_to_building(points, rotation_deg, origin):
    """Inverse of layout.scene.roof.building_to_site."""
    t = math.radians(rotation_deg)
    p = np.asarray(points, dtype=float) - origin
    return np.column_stack([p[:, 0] * math.cos(t) - p[:, 1] * math.sin(t),
                            p[:, 0] * math.sin(t) + p[:, 1] * math.cos(t)])
