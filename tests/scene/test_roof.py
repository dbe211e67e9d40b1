"""Tests for layout.scene.roof: pitch, the plan / roof-plane / 3D maps, edge kinds, validation.

Outside references used here:
- REFERENCES.md "roof pitch": atan(r/12): 4:12 → 18.435°, 6:12 → 26.565°, 12:12 → 45°; slope
  length factor √(1 + (r/12)²): 6:12 → 1.1180 (geometry);
- REFERENCES.md "plan vs true area": plan area = true area × cos(pitch) (geometry);
- pvlib.irradiance.aoi for the face normal, and Reda & Andreas (2004), NREL/TP-560-34302: a 30°
  slope rotated 10° east of south sees the sun at zenith 50.11162°, azimuth 194.34024° at an
  incidence angle of 25.18700°;
- the roof-plane frame is an isometry of the tilted plane (true lengths), checked by distances.
"""

import json
import math

import numpy as np
import pvlib
import pytest
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st

from layout.errors import InputError
from layout.scene.roof import EDGE_KINDS, RoofFace, building_to_site, classify_edges
from layout.units import pitch_from_rise, rise_from_pitch, slope_length_factor

RECT = [(0.0, 0.0), (10.0, 0.0), (10.0, 4.0), (0.0, 4.0)]


def sun_vector(zenith, azimuth):
    """Unit vector toward the sun, x east, y north, z up (REFERENCES.md pvlib gotchas)."""
    z, a = np.radians(zenith), np.radians(azimuth)
    return np.array([np.sin(z) * np.sin(a), np.sin(z) * np.cos(a), np.cos(z)])


# --------------------------------------------------------------------------- pitch
@pytest.mark.parametrize("rise, degrees", [(4, 18.435), (6, 26.565), (12, 45.0)])
def test_rise_in_12_to_degrees(rise, degrees):
    # REFERENCES.md "roof pitch" (geometry), printed to 3 decimals
    assert pitch_from_rise(rise) == pytest.approx(degrees, abs=5e-4)
    assert rise_from_pitch(pitch_from_rise(rise)) == pytest.approx(rise, rel=1e-12)
    face = RoofFace.from_rise(RECT, rise, 180.0, 3.0)
    assert face.pitch_deg == pytest.approx(degrees, abs=5e-4)


def test_slope_length_factor():
    # REFERENCES.md "roof pitch": √(1 + (6/12)²) = 1.1180 for a 6:12 roof
    assert slope_length_factor(pitch_from_rise(6)) == pytest.approx(1.1180, abs=5e-5)
    rises = np.array([0.0, 2.0, 4.0, 6.0, 9.0, 12.0])
    factors = slope_length_factor(pitch_from_rise(rises))
    assert isinstance(factors, np.ndarray)
    np.testing.assert_allclose(factors, np.sqrt(1 + (rises / 12) ** 2), rtol=1e-12)
    # the same factor turns a run into true length on a face: a 6:12 face 4 m deep in plan
    face = RoofFace.from_rise(RECT, 6, 180.0)
    rake = face.edges[1]
    assert rake.true_length_m == pytest.approx(4.0 * 1.1180, abs=5e-4)
    assert rake.plan_length_m == pytest.approx(4.0, abs=1e-12)


def test_rise_out_of_range_names_the_field():
    for bad in (-1, 45, float("nan")):
        with pytest.raises(InputError) as err:
            pitch_from_rise(bad)
        assert err.value.field == "rise_in_12"


# --------------------------------------------------------------------------- maps
def polygon_outline(draw_angles, radius, centre):
    angles = np.sort(np.asarray(draw_angles))
    return [(centre[0] + radius * math.cos(a), centre[1] + radius * math.sin(a)) for a in angles]


def well_spread(angles):
    """Corners at least 0.2 rad apart and no gap of half a turn: a convex, non-thin polygon."""
    ring = np.sort(angles)
    gaps = np.diff([*ring, ring[0] + 2 * math.pi])
    return gaps.min() > 0.2 and gaps.max() < math.pi - 0.1


outlines = st.builds(
    polygon_outline,
    st.lists(st.floats(0, 2 * math.pi - 1e-3), min_size=3, max_size=7, unique=True).filter(
        well_spread),
    st.floats(1.0, 20.0),
    st.tuples(st.floats(-50, 50), st.floats(-50, 50)),
)
pitches = st.floats(0.0, 75.0)
azimuths = st.floats(0.0, 360.0)
heights = st.floats(0.0, 30.0)


@settings(max_examples=60, deadline=None)
@given(outlines, pitches, azimuths, heights)
def test_plan_area_is_true_area_times_cos_pitch(outline, pitch, azimuth, eave):
    face = RoofFace(outline, pitch, azimuth, eave)
    # REFERENCES.md "plan vs true area": plan area = true area × cos(pitch)
    assert face.plan_area_m2 == pytest.approx(face.true_area_m2 * math.cos(math.radians(pitch)),
                                              rel=1e-9)
    assert face.plan_area_m2 == pytest.approx(shapely.Polygon(outline).area, rel=1e-12)


@settings(max_examples=60, deadline=None)
@given(outlines, pitches, azimuths, heights)
def test_round_trips_and_true_lengths(outline, pitch, azimuth, eave):
    face = RoofFace(outline, pitch, azimuth, eave)
    xy = np.asarray(outline)
    uv = face.plan_to_roof(xy)
    np.testing.assert_allclose(face.roof_to_plan(uv), xy, atol=1e-9)
    p3 = face.roof_to_3d(uv)
    np.testing.assert_allclose(p3[:, :2], xy, atol=1e-9)
    np.testing.assert_allclose(face.plan_to_3d(xy), p3, atol=1e-9)
    # the origin of (u, v) sits at the lowest, left-most extent of the face
    assert uv.min(axis=0) == pytest.approx([0.0, 0.0], abs=1e-9)
    # the lowest corner is at eave height; every point lies on one plane with the face normal
    assert p3[:, 2].min() == pytest.approx(eave, abs=1e-9)
    np.testing.assert_allclose((p3 - p3[0]) @ face.normal, 0.0, atol=1e-8)
    # (u, v) are true lengths: distances on the roof equal distances in 3D (an isometry)
    d_roof = np.linalg.norm(uv[:, None] - uv[None], axis=-1)
    d_3d = np.linalg.norm(p3[:, None] - p3[None], axis=-1)
    np.testing.assert_allclose(d_roof, d_3d, atol=1e-8)
    # height grows along v by sin(pitch): v is measured up the slope
    np.testing.assert_allclose(p3[:, 2] - eave, uv[:, 1] * math.sin(math.radians(pitch)),
                               atol=1e-9)


def test_roof_frame_axes_for_a_south_face():
    face = RoofFace(RECT, 30.0, 180.0, 3.0)
    # facing uphill (north) from below, u grows to the right (east); v grows up the slope
    np.testing.assert_allclose(face.along_eave, [1.0, 0.0], atol=1e-15)
    np.testing.assert_allclose(face.downslope, [0.0, -1.0], atol=1e-15)
    uv = face.plan_to_roof(np.array([[10.0, 4.0]]))[0]
    assert uv == pytest.approx([10.0, 4.0 / math.cos(math.radians(30))], abs=1e-12)
    assert face.height_at(np.array([5.0, 4.0])) == pytest.approx(3 + 4 * math.tan(math.radians(30)))
    assert face.ridge_height_m == pytest.approx(3 + 4 * math.tan(math.radians(30)), abs=1e-12)


@pytest.mark.parametrize("pitch, azimuth", [(30, 180), (18.435, 135), (45, 250), (0, 90), (60, 10)])
def test_normal_matches_pvlib_aoi(pitch, azimuth):
    face = RoofFace(RECT, pitch, azimuth)
    zenith = np.array([10.0, 40.0, 65.0, 80.0])
    sun_az = np.array([100.0, 180.0, 230.0, 300.0])
    ours = np.degrees(np.arccos(np.clip(
        np.array([sun_vector(z, a) @ face.normal for z, a in zip(zenith, sun_az, strict=True)]),
        -1, 1)))
    # pvlib.irradiance.aoi: angle of incidence for surface_tilt, surface_azimuth
    np.testing.assert_allclose(ours, pvlib.irradiance.aoi(pitch, azimuth, zenith, sun_az),
                               atol=1e-9)


def test_normal_matches_spa_report_incidence():
    # Reda & Andreas (2004), NREL/TP-560-34302, example: 30° slope, rotated 10° east of south
    # (γ = −10°, negative east), zenith 50.11162°, azimuth 194.34024° → incidence 25.18700°
    face = RoofFace(RECT, 30.0, 170.0)
    cos_theta = sun_vector(50.11162, 194.34024) @ face.normal
    assert math.degrees(math.acos(cos_theta)) == pytest.approx(25.18700, abs=1e-4)


# --------------------------------------------------------------------------- building axes
def test_building_to_site_rotation():
    # rotation is the compass direction of the local y axis, clockwise from north
    local = np.array([[0.0, 1.0], [1.0, 0.0]])
    east = building_to_site(local, 90.0)
    np.testing.assert_allclose(east, [[1.0, 0.0], [0.0, -1.0]], atol=1e-15)
    turned = building_to_site(local, -20.0, origin=(5.0, 7.0))
    y_axis = turned[0] - [5.0, 7.0]
    assert math.degrees(math.atan2(y_axis[0], y_axis[1])) == pytest.approx(-20.0, abs=1e-12)
    # a rotation keeps lengths and angles
    pts = np.random.default_rng(0).uniform(-10, 10, (6, 2))
    moved = building_to_site(pts, 37.0, origin=(1.0, -2.0))
    np.testing.assert_allclose(np.linalg.norm(moved[:, None] - moved[None], axis=-1),
                               np.linalg.norm(pts[:, None] - pts[None], axis=-1), atol=1e-12)


@pytest.mark.parametrize("rotation, local, true", [
    (0.0, 180.0, 180.0), (-20.0, 180.0, 160.0), (200.0, 180.0, 20.0), (90.0, 90.0, 180.0),
    (-20.0, 0.0, 340.0),
])
def test_building_axes_give_true_azimuths(rotation, local, true):
    face = RoofFace.from_building_axes(RECT, 25.0, local, 3.0, rotation_deg=rotation,
                                       origin=(2.0, 3.0))
    assert face.azimuth_deg == pytest.approx(true, abs=1e-12)
    # the downhill direction in the site frame is the true azimuth
    d = face.downslope
    assert math.degrees(math.atan2(d[0], d[1])) % 360 == pytest.approx(true % 360, abs=1e-9)
    # the face still slopes down toward its eave: edge 0 of RECT in local axes is the low one
    # when the local azimuth is 180
    if local == 180.0:
        assert face.edge_kinds == ("eave", "rake", "ridge", "rake")
    assert face.true_area_m2 == pytest.approx(40.0 / math.cos(math.radians(25.0)), rel=1e-12)


def test_from_building_axes_checks_its_own_fields():
    with pytest.raises(InputError) as err:
        RoofFace.from_building_axes(RECT, 25.0, 180.0, rotation_deg=float("nan"))
    assert err.value.field == "rotation_deg"
    with pytest.raises(InputError) as err:
        RoofFace.from_building_axes(RECT, 25.0, 180.0, origin=(0.0, float("inf")))
    assert err.value.field.startswith("origin")


# --------------------------------------------------------------------------- edge kinds
def gable_side(azimuth):
    """A gable face in building axes, local azimuth 180, turned so it faces ``azimuth``."""
    return RoofFace.from_building_axes(RECT, 30.0, 180.0, 3.0, rotation_deg=azimuth - 180.0)


@pytest.mark.parametrize("azimuth", [0.0, 45.0, 90.0, 137.0, 180.0, 270.0, 333.0])
def test_gable_face_edges(azimuth):
    assert gable_side(azimuth).edge_kinds == ("eave", "rake", "ridge", "rake")


@pytest.mark.parametrize("azimuth", [0.0, 90.0, 180.0, 211.0, 300.0])
def test_hip_faces_edges(azimuth):
    rotation = azimuth - 180.0
    trapezoid = RoofFace.from_building_axes([(0, 0), (12, 0), (8, 4), (4, 4)], 30, 180, 3,
                                            rotation_deg=rotation)
    assert trapezoid.edge_kinds == ("eave", "hip", "ridge", "hip")
    triangle = RoofFace.from_building_axes([(0, 0), (8, 0), (4, 4)], 30, 180, 3,
                                           rotation_deg=rotation)
    assert triangle.edge_kinds == ("eave", "hip", "hip")


@pytest.mark.parametrize("azimuth", [0.0, 180.0, 245.0])
def test_valley_face_edges(azimuth):
    # a slope whose eave is interrupted by a wing: the notch's sides run up to a valley point
    notched = [(0, 0), (4, 0), (6, 2), (8, 0), (12, 0), (12, 5), (0, 5)]
    face = RoofFace.from_building_axes(notched, 30, 180, 3, rotation_deg=azimuth - 180)
    assert face.edge_kinds == ("eave", "valley", "valley", "eave", "rake", "ridge", "rake")
    # winding does not matter
    reverse = RoofFace.from_building_axes(notched[::-1], 30, 180, 3, rotation_deg=azimuth - 180)
    assert reverse.edge_kinds == ("ridge", "rake", "eave", "valley", "valley", "eave", "rake")


def test_edge_direction_tolerance_and_flat_faces():
    # an eave 0.5° off level is still an eave; 5° off it is a hip or valley
    lean = math.tan(math.radians(0.5)) * 10
    assert classify_edges([(0, 0), (10, lean), (10, 5), (0, 5)], 30)[0] == "eave"
    steep = math.tan(math.radians(5)) * 10
    assert classify_edges([(0, 0), (10, steep), (10, 5), (0, 5)], 30)[0] == "valley"
    assert RoofFace(RECT, 0.0, 180.0).edge_kinds == ("eave",) * 4


def test_edge_overrides():
    face = RoofFace(RECT, 30.0, 180.0, 3.0)
    walled = face.with_edge_kind(2, "wall")
    assert walled.edge_kinds == ("eave", "rake", "wall", "rake")
    assert walled.geometric_edge_kinds == face.edge_kinds
    assert [e.overridden for e in walled.edges] == [False, False, True, False]
    restored = walled.with_edge_kind(2, None)
    assert restored.edge_overrides is None and restored == face
    with pytest.raises(InputError) as err:
        face.with_edge_kind(4, "wall")
    assert err.value.field == "edge index"
    with pytest.raises(InputError) as err:
        face.with_edge_kind(1, "gutter")
    assert err.value.field == "edge_overrides[1]"
    assert set(EDGE_KINDS) >= {"eave", "ridge", "rake", "hip", "valley", "wall", "parapet"}


# --------------------------------------------------------------------------- validation
NAN, INF = float("nan"), float("inf")


@pytest.mark.parametrize("kwargs, field", [
    (dict(outline=[(0, 0), (4, 4), (4, 0), (0, 4)]), "outline"),  # self-intersecting bow tie
    (dict(outline=[(0, 0), (2, 0), (4, 0)]), "outline"),  # collinear: zero area
    (dict(outline=[(0, 0), (1e-5, 0), (0, 1e-5)]), "outline"),  # area below 1e-6 m²
    (dict(outline=[(0, 0), (4, 0)]), "outline"),  # fewer than 3 corners
    (dict(outline=[]), "outline"),
    (dict(outline=[(0, 0), (4, 0), (4, 0), (0, 4)]), "outline[1]"),  # repeated corner
    (dict(outline=[(0, 0), (4, 0), (4, 4), (0, 0), (0, 4)]), "outline[0]"),
    (dict(outline=[(0, 0), (4, NAN), (4, 4)]), "outline[1]"),
    (dict(outline=[(0, 0), (4, 0), (INF, 4)]), "outline[2]"),
    (dict(outline=[(0, 0, 0), (4, 0, 0), (4, 4, 0)]), "outline"),
    (dict(outline="square"), "outline"),
    (dict(pitch_deg=-0.1), "pitch_deg"),
    (dict(pitch_deg=75.1), "pitch_deg"),
    (dict(pitch_deg=NAN), "pitch_deg"),
    (dict(pitch_deg=INF), "pitch_deg"),
    (dict(pitch_deg="steep"), "pitch_deg"),
    (dict(azimuth_deg=-1), "azimuth_deg"),
    (dict(azimuth_deg=360.5), "azimuth_deg"),
    (dict(azimuth_deg=NAN), "azimuth_deg"),
    (dict(azimuth_deg=-INF), "azimuth_deg"),
    (dict(eave_height_m=-0.01), "eave_height_m"),
    (dict(eave_height_m=NAN), "eave_height_m"),
    (dict(eave_height_m=INF), "eave_height_m"),
    (dict(name=7), "name"),
    (dict(edge_overrides=("wall",)), "edge_overrides"),
    (dict(edge_overrides=(None, "gutter", None, None)), "edge_overrides[1]"),
])
def test_bad_input_names_the_field(kwargs, field):
    args = dict(outline=RECT, pitch_deg=30.0, azimuth_deg=180.0, eave_height_m=3.0) | kwargs
    with pytest.raises(InputError) as err:
        RoofFace(**args)
    assert err.value.field == field
    assert str(err.value).startswith(field)


def test_limits_are_inclusive_and_closed_rings_are_accepted():
    assert RoofFace(RECT, 75.0, 360.0, 0.0).pitch_deg == 75.0
    assert RoofFace(RECT, 0.0, 0.0, 0.0).azimuth_deg == 0.0
    closed = RoofFace([*RECT, RECT[0]], 30.0, 180.0)
    assert closed.outline == tuple(RECT)


def test_error_message_gives_the_allowed_range():
    with pytest.raises(InputError, match=r"from 0 to 75 degrees"):
        RoofFace(RECT, 80.0, 180.0)


# --------------------------------------------------------------------------- data
@pytest.mark.parametrize("face", [
    RoofFace(RECT, 30.0, 180.0, 3.0, name="south"),
    RoofFace([(0.1, 0.2), (10.3, 0.7), (5.5, 4.1)], 17.3, 203.7, 2.75).with_edge_kind(2, "wall"),
    RoofFace.from_building_axes(RECT, 22.0, 180.0, 5.0, rotation_deg=-17.0, origin=(1.1, 2.2)),
])
def test_to_dict_round_trip_is_exact(face):
    data = face.to_dict()
    again = RoofFace.from_dict(json.loads(json.dumps(data)))
    assert again == face
    assert again.to_dict() == data


@pytest.mark.parametrize("mutate, field", [
    (lambda d: d.update(tilt=3), "tilt"),
    (lambda d: d.pop("outline"), "outline"),
    (lambda d: d.pop("pitch_deg"), "pitch_deg"),
    (lambda d: d.pop("azimuth_deg"), "azimuth_deg"),
    (lambda d: d.update(pitch_deg=None), "pitch_deg"),
    (lambda d: d.update(eave_height_m=-3), "eave_height_m"),
    (lambda d: d.update(edge_overrides=["x", None, None, None]), "edge_overrides[0]"),
])
def test_from_dict_names_the_bad_field(mutate, field):
    data = RoofFace(RECT, 30.0, 180.0, 3.0, name="south").to_dict()
    mutate(data)
    with pytest.raises(InputError) as err:
        RoofFace.from_dict(data)
    assert err.value.field == field


def test_from_dict_rejects_non_objects():
    with pytest.raises(InputError):
        RoofFace.from_dict(["outline"])
