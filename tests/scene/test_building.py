"""Tests for layout.scene.building: the Building container and the roof builders.

Outside references used here:
- closed-form geometry of roofs of one pitch rising from level eaves: ridge height
  e + (span/2)·tan(pitch); true area = plan area / cos(pitch) (REFERENCES.md "plan vs true
  area"); rise-in-12 is the tangent of the pitch (REFERENCES.md "roof pitch");
- volume under a gable, tan(p)·L·W²/4 (triangular prism), and under a hip roof, the prism less
  two end wedges of tan(p)·W³/24 each (a square gives the pyramid (1/3)·a²·(a/2)·tan(p));
- the roof of two intersecting wings is the upper envelope (union of solids) of the two simple
  roofs, each height = eave + tan(pitch)·distance to its nearest eave: an independent height
  field to compare every face against;
- edge kinds judged from 3D folds: a shared edge whose neighbour lies below the face's plane
  is convex (ridge if level, hip if inclined); above it, concave (valley).
"""

import json
import math
from collections import Counter

import numpy as np
import pytest
import shapely

from layout.errors import InputError
from layout.scene.building import (
    OVERLAP_TOLERANCE_M2,
    Building,
    compass_name,
    flat_roof,
    gable_roof,
    hip_roof,
    l_shaped_gable_roof,
    l_shaped_hip_roof,
    shed_roof,
)
from layout.scene.roof import RoofFace, building_to_site

ROTATIONS = [0.0, -20.0, 37.5, 90.0, 200.0]
ORIGINS = [(0.0, 0.0), (12.5, -4.0)]
EAVE = 3.2


# --------------------------------------------------------------------------- helpers
def edge_segments(face):
    pts = face.outline
    return [(pts[i], pts[(i + 1) % len(pts)]) for i in range(len(pts))]


def edge_index(building):
    """Map an undirected plan segment (exact coordinates) to the (face, edge) pairs using it."""
    index = {}
    for f, face in enumerate(building.faces):
        for e, (a, b) in enumerate(edge_segments(face)):
            index.setdefault(frozenset((a, b)), []).append((f, e))
    return index


def expected_kind(building, f, e, index, eave):
    """Edge kind judged from the 3D shape of the roof, independently of classify_edges."""
    face = building.faces[f]
    a, b = edge_segments(face)[e]
    za, zb = face.height_at(np.array([a, b]))
    users = [pair for pair in index[frozenset((a, b))] if pair[0] != f]
    if not users:  # on the outline of the roof
        return "eave" if abs(za - eave) < 1e-9 and abs(zb - eave) < 1e-9 else "rake"
    other = building.faces[users[0][0]]
    # a point just across the edge, inside the neighbour
    a_, b_ = np.asarray(a), np.asarray(b)
    step = np.array([b_[1] - a_[1], a_[0] - b_[0]]) / math.dist(a, b) * 1e-3
    probe = (a_ + b_) / 2 + step
    if not other.plan_polygon.contains(shapely.Point(probe)):
        probe = (a_ + b_) / 2 - step
    assert other.plan_polygon.contains(shapely.Point(probe))
    above = other.height_at(probe) - face.height_at(probe)  # neighbour vs this plane
    convex = above < -1e-12
    assert abs(above) > 1e-12, "neighbouring faces are coplanar"
    if abs(za - zb) < 1e-9:
        return "ridge" if convex else "valley"  # a level concave fold would be a level valley
    return "hip" if convex else "valley"


def check_seams(building):
    """Each edge lies on the roof outline or is shared whole by one other face, at one height."""
    index = edge_index(building)
    outline = building.footprint.boundary
    for users in index.values():
        assert len(users) <= 2
        f, e = users[0]
        a, b = edge_segments(building.faces[f])[e]
        if len(users) == 1:
            mid = shapely.Point((a[0] + b[0]) / 2, (a[1] + b[1]) / 2)
            assert outline.distance(mid) < 1e-9, "an inner edge has no neighbour (T-junction)"
        else:
            (f1, _), (f2, _) = users
            z1 = building.faces[f1].height_at(np.array([a, b]))
            z2 = building.faces[f2].height_at(np.array([a, b]))
            np.testing.assert_allclose(z1, z2, atol=1e-9)  # the 3D endpoints agree
    return index


def check_edge_kinds(building, eave):
    index = edge_index(building)
    for f, face in enumerate(building.faces):
        got = face.geometric_edge_kinds
        want = tuple(expected_kind(building, f, e, index, eave) for e in range(len(got)))
        assert got == want, face.name


def check_heights(building, reference, rotation, origin, bounds, rng, n=400):
    """Compare face heights with a reference height field given in building axes."""
    (a0, a1), (b0, b1) = bounds
    local = np.column_stack([rng.uniform(a0, a1, n), rng.uniform(b0, b1, n)])
    site = building_to_site(local, rotation, origin)
    checked = 0
    for face in building.faces:
        polygon = face.plan_polygon.buffer(-1e-6)
        inside = shapely.contains_xy(polygon, site[:, 0], site[:, 1])
        if inside.any():
            want = np.array([reference(a, b) for a, b in local[inside]])
            np.testing.assert_allclose(face.height_at(site[inside]), want, atol=1e-9)
            checked += int(inside.sum())
    assert checked > 0.9 * n * building.plan_area_m2 / ((a1 - a0) * (b1 - b0))


def roof_volume(building, eave):
    """Volume between the eave level and the roof [m³]: plan area × mean height of each plane."""
    return sum(face.plan_area_m2 * (face.height_at(np.asarray(face.plan_polygon.centroid.coords[0]))
                                    - eave) for face in building.faces)


def rect_distance(a, b, x0, x1, y0, y1):
    """Distance from an inside point to the nearest side of an axis-aligned rectangle."""
    return min(a - x0, x1 - a, b - y0, y1 - b)


def inside(a, b, x0, x1, y0, y1):
    return x0 - 1e-12 <= a <= x1 + 1e-12 and y0 - 1e-12 <= b <= y1 + 1e-12


def local_footprint(points, rotation, origin):
    return shapely.Polygon(building_to_site(np.asarray(points, dtype=float), rotation, origin))


def l_outline(l1, w1, l2, w2):
    return [(0, 0), (l1, 0), (l1, w1), (w2, w1), (w2, l2), (0, l2)]


# --------------------------------------------------------------------------- gable
@pytest.mark.parametrize("rotation", ROTATIONS)
@pytest.mark.parametrize("origin", ORIGINS)
def test_gable_geometry(rotation, origin):
    length, width, pitch = 11.0, 7.5, 32.0
    roof = gable_roof(length, width, pitch, EAVE, rotation_deg=rotation, origin=origin)
    t = math.tan(math.radians(pitch))
    assert len(roof.faces) == 2
    # closed-form geometry: ridge = eave + half the span × tan(pitch)
    assert roof.ridge_height_m == pytest.approx(EAVE + width / 2 * t, abs=1e-9)
    # REFERENCES.md "plan vs true area": true area = plan area / cos(pitch)
    assert roof.true_area_m2 == pytest.approx(length * width / math.cos(math.radians(pitch)),
                                              rel=1e-12)
    footprint = local_footprint([(0, 0), (length, 0), (length, width), (0, width)], rotation,
                                origin)
    assert roof.footprint.symmetric_difference(footprint).area < 1e-9
    assert roof.plan_area_m2 == pytest.approx(length * width, rel=1e-12)
    # triangular prism: tan(p)·L·W²/4
    assert roof_volume(roof, EAVE) == pytest.approx(t * length * width**2 / 4, rel=1e-9)
    index = check_seams(roof)
    ridge = [users for users in index.values() if len(users) == 2]
    assert len(ridge) == 1  # the two faces share the whole ridge
    check_edge_kinds(roof, EAVE)
    for face in roof.faces:
        assert Counter(face.edge_kinds) == {"eave": 1, "ridge": 1, "rake": 2}
        assert face.eave_height_m == EAVE
    check_heights(roof, lambda a, b: EAVE + t * min(b, width - b), rotation, origin,
                  ((0, length), (0, width)), np.random.default_rng(1))


@pytest.mark.parametrize("rotation, names", [
    (0.0, {"south": 180.0, "north": 0.0}),
    (-20.0, {"south": 160.0, "north": 340.0}),
    (45.0, {"southwest": 225.0, "northeast": 45.0}),
    (90.0, {"west": 270.0, "east": 90.0}),
])
def test_gable_faces_get_true_azimuths_and_compass_names(rotation, names):
    roof = gable_roof(10, 6, 25, 3, rotation_deg=rotation)
    got = {face.name: face.azimuth_deg for face in roof.faces}
    assert got.keys() == names.keys()
    for name, azimuth in names.items():
        assert got[name] == pytest.approx(azimuth, abs=1e-12)


def test_gable_ridge_along_y_and_rise_in_12():
    # REFERENCES.md "roof pitch": rise r in 12 means tan(pitch) = r/12, so a 6:12 roof over a
    # 9 m span rises 4.5 m × 6/12 = 2.25 m at the ridge.
    roof = gable_roof(9.0, 14.0, rise_in_12=6, eave_height_m=2.5, ridge_axis="y")
    assert {f.name for f in roof.faces} == {"west", "east"}
    assert roof.ridge_height_m == pytest.approx(2.5 + 2.25, abs=1e-12)
    assert all(f.pitch_deg == pytest.approx(26.565, abs=5e-4) for f in roof.faces)
    check_edge_kinds(roof, 2.5)


def test_gable_name_prefixes_faces():
    roof = gable_roof(10, 6, 25, 3, name="garage")
    assert roof.name == "garage"
    assert roof.face_names == ("garage south", "garage north")
    assert roof.face("garage north").azimuth_deg == 0.0


# --------------------------------------------------------------------------- hip
@pytest.mark.parametrize("rotation", ROTATIONS)
@pytest.mark.parametrize("length, width", [(12.0, 8.0), (6.0, 10.0), (9.0, 9.0)])
def test_hip_geometry(rotation, length, width):
    pitch, origin = 27.0, (3.0, 4.0)
    roof = hip_roof(length, width, pitch, EAVE, rotation_deg=rotation, origin=origin)
    t = math.tan(math.radians(pitch))
    short, long_ = min(length, width), max(length, width)
    assert len(roof.faces) == 4
    assert roof.ridge_height_m == pytest.approx(EAVE + short / 2 * t, abs=1e-9)
    assert roof.true_area_m2 == pytest.approx(length * width / math.cos(math.radians(pitch)),
                                              rel=1e-12)
    footprint = local_footprint([(0, 0), (length, 0), (length, width), (0, width)], rotation,
                                origin)
    assert roof.footprint.symmetric_difference(footprint).area < 1e-9
    # closed form: gable prism tan(p)·L·W²/4 less two end wedges tan(p)·W³/24
    assert roof_volume(roof, EAVE) == pytest.approx(
        t * short**2 * long_ / 4 - 2 * t * short**3 / 24, rel=1e-9)
    check_seams(roof)
    check_edge_kinds(roof, EAVE)
    kinds = sorted(tuple(sorted(Counter(f.edge_kinds).items())) for f in roof.faces)
    if length == width:  # a pyramid: four triangles
        assert kinds == [(("eave", 1), ("hip", 2))] * 4
        assert not any(name.endswith("hip") for name in roof.face_names)
    else:
        assert kinds == [(("eave", 1), ("hip", 2))] * 2 + [(("eave", 1), ("hip", 2),
                                                             ("ridge", 1))] * 2
        assert sum(name.endswith(" hip") for name in roof.face_names) == 2
    check_heights(roof, lambda a, b: EAVE + t * rect_distance(a, b, 0, length, 0, width),
                  rotation, origin, ((0, length), (0, width)), np.random.default_rng(2))


def test_hip_names():
    roof = hip_roof(12, 8, 30, 3)
    assert roof.face_names == ("south", "east hip", "north", "west hip")
    turned = hip_roof(12, 8, 30, 3, rotation_deg=90)  # the long sides now face west and east
    assert turned.face_names == ("west", "south hip", "east", "north hip")


def test_hip_pyramid_from_nearly_square_footprint():
    roof = hip_roof(8.0, 8.0 + 1e-8, 30, 3)
    assert [len(f.outline) for f in roof.faces] == [3, 3, 3, 3]


# --------------------------------------------------------------------------- shed and flat
@pytest.mark.parametrize("facing", [180.0, 200.0, 90.0, 0.0, 315.0])
def test_shed_roof(facing):
    roof = shed_roof(6.0, 3.0, 14.0, 2.4, facing_azimuth_deg=facing, origin=(1.0, 2.0))
    (face,) = roof.faces
    assert face.azimuth_deg == pytest.approx(facing % 360.0, abs=1e-12)
    assert face.name == compass_name(facing)
    assert face.edge_kinds == ("eave", "rake", "ridge", "rake")
    # closed form: the high edge rises run × tan(pitch) above the eave
    assert roof.ridge_height_m == pytest.approx(2.4 + 3.0 * math.tan(math.radians(14.0)),
                                                abs=1e-12)
    assert face.outline[0] == (1.0, 2.0)
    eave_edge = face.edges[0]
    assert eave_edge.plan_length_m == pytest.approx(6.0, abs=1e-12)
    assert face.height_at(np.array(eave_edge.start)) == pytest.approx(2.4, abs=1e-12)
    # documented override of the high edge for a lean-to against a wall
    assert face.with_edge_kind(2, "wall").edge_kinds == ("eave", "rake", "wall", "rake")


def test_flat_roof_with_and_without_parapet():
    plain = flat_roof(20.0, 10.0, 6.0, rotation_deg=-15)
    (face,) = plain.faces
    assert face.pitch_deg == 0.0 and face.name == "flat"
    assert face.edge_kinds == ("eave",) * 4
    assert face.azimuth_deg == 165.0
    assert plain.parapet_height_m == 0.0
    assert plain.plan_area_m2 == pytest.approx(200.0, rel=1e-12)
    assert plain.true_area_m2 == pytest.approx(200.0, rel=1e-12)
    walled = flat_roof(20.0, 10.0, 6.0, parapet_height_m=1.1)
    assert walled.faces[0].edge_kinds == ("parapet",) * 4
    assert walled.faces[0].geometric_edge_kinds == ("eave",) * 4
    assert walled.parapet_height_m == 1.1
    assert walled.ridge_height_m == 6.0
    # u runs along the building's length: the roof-plane outline is 20 × 10
    assert face.roof_polygon.bounds == pytest.approx((0, 0, 20.0, 10.0), abs=1e-9)


# --------------------------------------------------------------------------- L shapes
L_CASES = [
    (12.0, 8.0, 10.0, 8.0),  # equal widths
    (12.0, 8.0, 10.0, 6.0),  # wing narrower
    (12.0, 6.0, 10.0, 8.0),  # wing wider: the legs trade roles
    (9.0, 7.0, 15.0, 4.5),
]


def gable_l_reference(l1, w1, l2, w2, eave, t):
    """Upper envelope of the through leg's gable and the narrower leg's gable that runs into it."""
    def height(a, b):
        values = []
        if w2 <= w1:
            if inside(a, b, 0, l1, 0, w1):
                values.append(t * min(b, w1 - b))
            if inside(a, b, 0, w2, w1 / 2, l2):
                values.append(t * min(a, w2 - a))
        else:
            if inside(a, b, 0, w2, 0, l2):
                values.append(t * min(a, w2 - a))
            if inside(a, b, w2 / 2, l1, 0, w1):
                values.append(t * min(b, w1 - b))
        return eave + max(values)
    return height


def hip_l_reference(l1, w1, l2, w2, eave, t):
    """Upper envelope of the two legs' hip roofs."""
    def height(a, b):
        values = [t * rect_distance(a, b, *box) for box in ((0, l1, 0, w1), (0, w2, 0, l2))
                  if inside(a, b, *box)]
        return eave + max(values)
    return height


@pytest.mark.parametrize("dims", L_CASES)
@pytest.mark.parametrize("rotation", [0.0, -20.0, 135.0])
@pytest.mark.parametrize("builder, reference", [
    (l_shaped_gable_roof, gable_l_reference),
    (l_shaped_hip_roof, hip_l_reference),
])
def test_l_shaped_roofs(builder, reference, dims, rotation):
    l1, w1, l2, w2 = dims
    pitch, origin = 30.0, (-3.0, 7.0)
    t = math.tan(math.radians(pitch))
    roof = builder(l1, w1, l2, w2, pitch, EAVE, rotation_deg=rotation, origin=origin)
    footprint = local_footprint(l_outline(l1, w1, l2, w2), rotation, origin)
    area = l1 * w1 + w2 * l2 - w1 * w2
    assert roof.footprint.symmetric_difference(footprint).area < 1e-9
    assert roof.plan_area_m2 == pytest.approx(area, rel=1e-12)
    assert roof.true_area_m2 == pytest.approx(area / math.cos(math.radians(pitch)), rel=1e-12)
    # the wider leg sets the ridge height: eave + (its width / 2) · tan(pitch)
    assert roof.ridge_height_m == pytest.approx(EAVE + max(w1, w2) / 2 * t, abs=1e-9)
    assert all(face.eave_height_m == pytest.approx(EAVE, abs=1e-9) for face in roof.faces)
    check_seams(roof)
    check_edge_kinds(roof, EAVE)
    check_heights(roof, reference(l1, w1, l2, w2, EAVE, t), rotation, origin,
                  ((0, l1), (0, l2)), np.random.default_rng(3))
    # the valleys start at the inner corner, at eave height
    inner = tuple(building_to_site(np.array([(w2, w1)], dtype=float), rotation, origin)[0])
    valley_faces = [face for face in roof.faces
                    for (a, b), kind in zip(edge_segments(face), face.edge_kinds, strict=True)
                    if kind == "valley" and inner in (a, b)]
    assert len(valley_faces) == 2  # one valley from the inner corner, seen from both sides
    for face in valley_faces:
        assert face.height_at(np.array(inner)) == pytest.approx(EAVE, abs=1e-9)
    names = roof.face_names
    assert len(set(names)) == len(names)
    assert any(n.startswith("wing ") for n in names) and any(not n.startswith("wing ")
                                                             for n in names)


def test_l_gable_faces_and_kinds():
    equal = l_shaped_gable_roof(12, 8, 10, 8, 30, 3)
    assert equal.face_names == ("south", "north", "north corner", "wing west", "wing east")
    kinds = Counter(k for face in equal.faces for k in face.edge_kinds)
    # two valleys, each counted on both of its faces; one ridge split at the meeting point,
    # counted on both sides, plus the wing ridge on both sides
    assert kinds["valley"] == 4 and kinds["ridge"] == 6 and kinds["hip"] == 0
    narrow = l_shaped_gable_roof(12, 8, 10, 6, 30, 3)
    assert narrow.face_names == ("south", "north", "wing west", "wing east")
    # the narrower wing's ridge is lower: eave + 3 m · tan 30°
    wing_ridge = max(narrow.face("wing west").corners_3d[:, 2])
    assert wing_ridge == pytest.approx(3 + 3 * math.tan(math.radians(30)), abs=1e-12)


def test_l_hip_faces_and_kinds():
    roof = l_shaped_hip_roof(12, 8, 10, 6, 30, 3)
    assert roof.face_names == ("south", "east hip", "north", "wing west", "wing east",
                               "wing north hip")
    kinds = Counter(k for face in roof.faces for k in face.edge_kinds)
    assert kinds["valley"] == 2  # one valley, seen from both faces
    assert kinds["rake"] == 0  # eaves all round
    wider_wing = l_shaped_hip_roof(12, 6, 10, 8, 30, 3)
    assert wider_wing.face_names[0] == "south" and wider_wing.face_names[-1].startswith("wing")


def test_l_equal_widths_within_a_micrometre_count_as_equal():
    roof = l_shaped_gable_roof(12, 8, 10, 8 - 1e-8, 30, 3)
    assert len(roof.faces) == 5
    check_seams(roof)


@pytest.mark.parametrize("builder", [l_shaped_gable_roof, l_shaped_hip_roof])
@pytest.mark.parametrize("dims, field", [
    ((12, 8, 8, 6), "wing_length_m"),  # the wing does not stand out of the main leg
    ((6, 8, 10, 6), "length_m"),  # the main leg does not stand out of the wing
    ((-1, 8, 10, 6), "length_m"),
    ((12, 0, 10, 6), "width_m"),
    ((12, 8, float("nan"), 6), "wing_length_m"),
    ((12, 8, 10, float("inf")), "wing_width_m"),
])
def test_l_rejects_legs_that_do_not_make_an_l(builder, dims, field):
    with pytest.raises(InputError) as err:
        builder(*dims, 30, 3)
    assert err.value.field == field


def test_l_hip_rejects_a_stubby_wide_leg():
    with pytest.raises(InputError, match="at least as long as it is wide") as err:
        l_shaped_hip_roof(7, 8, 10, 6, 30, 3)  # main leg 8 wide but only 7 long
    assert err.value.field == "length_m"
    with pytest.raises(InputError) as err:
        l_shaped_hip_roof(10, 6, 7, 8, 30, 3)
    assert err.value.field == "wing_length_m"
    # the gable has no such limit
    assert len(l_shaped_gable_roof(7, 8, 10, 6, 30, 3).faces) == 4


# --------------------------------------------------------------------------- builder inputs
@pytest.mark.parametrize("kwargs, field", [
    (dict(pitch_deg=None), "pitch_deg"),  # neither pitch nor rise
    (dict(pitch_deg=30, rise_in_12=6), "pitch_deg"),  # both
    (dict(pitch_deg=0), "pitch_deg"),
    (dict(pitch_deg=-5), "pitch_deg"),
    (dict(pitch_deg=76), "pitch_deg"),
    (dict(pitch_deg=float("nan")), "pitch_deg"),
    (dict(pitch_deg=None, rise_in_12=50), "rise_in_12"),
    (dict(pitch_deg=None, rise_in_12=0), "rise_in_12"),
    (dict(pitch_deg=None, rise_in_12=[4, 6]), "rise_in_12"),
    (dict(eave_height_m=None), "eave_height_m"),
    (dict(eave_height_m=-1), "eave_height_m"),
    (dict(eave_height_m=float("inf")), "eave_height_m"),
    (dict(length_m=0), "length_m"),
    (dict(width_m=-2), "width_m"),
    (dict(width_m=float("nan")), "width_m"),
    (dict(rotation_deg=float("nan")), "rotation_deg"),
    (dict(origin=(1.0, float("inf"))), "origin[0]"),
    (dict(origin="here"), "origin"),
    (dict(name=3), "name"),
])
@pytest.mark.parametrize("builder", [gable_roof, hip_roof])
def test_builders_name_the_bad_field(builder, kwargs, field):
    args = dict(length_m=10, width_m=6, pitch_deg=30, eave_height_m=3) | kwargs
    with pytest.raises(InputError) as err:
        builder(**args)
    assert err.value.field == field


def test_pitch_zero_points_to_flat_roof():
    with pytest.raises(InputError, match="flat_roof"):
        gable_roof(10, 6, 0, 3)


@pytest.mark.parametrize("call, field", [
    (lambda: gable_roof(10, 6, 30, 3, ridge_axis="z"), "ridge_axis"),
    (lambda: shed_roof(6, 3, 10, 2, facing_azimuth_deg=400), "facing_azimuth_deg"),
    (lambda: shed_roof(6, 3, 10, 2, facing_azimuth_deg=float("nan")), "facing_azimuth_deg"),
    (lambda: flat_roof(10, 6, 3, parapet_height_m=-0.5), "parapet_height_m"),
    (lambda: flat_roof(10, 6, None), "eave_height_m"),
    (lambda: flat_roof(10, 6, float("nan")), "eave_height_m"),
])
def test_other_builder_inputs(call, field):
    with pytest.raises(InputError) as err:
        call()
    assert err.value.field == field


# --------------------------------------------------------------------------- Building
def square(x0, y0, size=4.0):
    return [(x0, y0), (x0 + size, y0), (x0 + size, y0 + size), (x0, y0 + size)]


def test_overlapping_faces_cannot_share_a_building():
    a = RoofFace(square(0, 0), 20, 180, 3, name="front")
    b = RoofFace(square(3, 3), 20, 180, 3, name="back")  # overlaps a by 1 m²
    with pytest.raises(InputError) as err:
        Building((a, b))
    assert err.value.field == "faces"
    assert "'front'" in str(err.value) and "'back'" in str(err.value)
    assert "1 m²" in str(err.value)


def test_faces_touching_along_an_edge_or_apart_are_fine():
    a = RoofFace(square(0, 0), 20, 180, 3, name="a")
    b = RoofFace(square(4, 0), 20, 180, 3, name="b")  # shares the edge x = 4
    c = RoofFace(square(20, 0), 20, 180, 3, name="c")  # a detached part
    building = Building((a, b, c))
    assert building.plan_area_m2 == pytest.approx(48.0, rel=1e-12)
    assert building.footprint.geom_type == "MultiPolygon"
    # an overlap below the tolerance (rounding of typed corners) is accepted
    sliver = OVERLAP_TOLERANCE_M2 / 2 / 4.0
    d = RoofFace(square(4 - sliver, 4.0), 20, 180, 3, name="d")
    e = RoofFace(square(0, 4.0), 20, 180, 3, name="e")
    Building((d, e))


def test_face_names_unique_and_auto_named():
    a = RoofFace(square(0, 0), 20, 180, 3)
    b = RoofFace(square(4, 0), 20, 180, 3)
    building = Building([a, b])
    assert building.face_names == ("face 1", "face 2")
    assert isinstance(building.faces, tuple)
    with pytest.raises(InputError) as err:
        Building((RoofFace(square(0, 0), 20, 180, 3, name="x"),
                  RoofFace(square(4, 0), 20, 180, 3, name="x")))
    assert err.value.field == "faces[1].name"
    assert "faces[0]" in str(err.value)


@pytest.mark.parametrize("kwargs, field", [
    (dict(faces=()), "faces"),
    (dict(faces=("not a face",)), "faces[0]"),
    (dict(faces=RoofFace(square(0, 0), 20, 180, 3)), "faces"),
    (dict(parapet_height_m=-1.0), "parapet_height_m"),
    (dict(parapet_height_m=float("nan")), "parapet_height_m"),
    (dict(name=None), "name"),
])
def test_building_rejects_bad_fields(kwargs, field):
    args = dict(faces=(RoofFace(square(0, 0), 20, 180, 3),)) | kwargs
    with pytest.raises(InputError) as err:
        Building(**args)
    assert err.value.field == field


def test_face_lookup():
    roof = hip_roof(12, 8, 30, 3)
    assert roof.face("east hip") is roof.faces[1]
    with pytest.raises(InputError, match="south, east hip, north, west hip"):
        roof.face("garage")


@pytest.mark.parametrize("building", [
    gable_roof(10, 6, 25, 3, rotation_deg=-17.3, origin=(0.1, 0.2), name="house"),
    l_shaped_hip_roof(12, 8, 10, 6, rise_in_12=7, eave_height_m=2.9, rotation_deg=33),
    flat_roof(20, 10, 6, parapet_height_m=0.9),
    Building((RoofFace(square(0, 0), 20, 180, 3).with_edge_kind(1, "wall"),)),
])
def test_to_dict_round_trip_is_exact(building):
    data = building.to_dict()
    again = Building.from_dict(json.loads(json.dumps(data)))
    assert again == building
    assert again.to_dict() == data


@pytest.mark.parametrize("mutate, field", [
    (lambda d: d.update(colour="red"), "colour"),
    (lambda d: d.pop("faces"), "faces"),
    (lambda d: d.update(faces={"a": 1}), "faces"),
    (lambda d: d["faces"].append(3), "faces[2]"),
    (lambda d: d["faces"][1].update(pitch_deg=99), "faces[1].pitch_deg"),
    (lambda d: d["faces"][0].update(outline=[[0, 0], [1, 1]]), "faces[0].outline"),
    (lambda d: d["faces"][1].pop("azimuth_deg"), "faces[1].azimuth_deg"),
    (lambda d: d.update(parapet_height_m="tall"), "parapet_height_m"),
])
def test_from_dict_names_the_bad_field(mutate, field):
    data = gable_roof(10, 6, 25, 3).to_dict()
    mutate(data)
    with pytest.raises(InputError) as err:
        Building.from_dict(data)
    assert err.value.field == field


def test_from_dict_rejects_non_objects():
    with pytest.raises(InputError):
        Building.from_dict([1, 2])


@pytest.mark.parametrize("azimuth, name", [
    (0, "north"), (22.4, "north"), (22.5, "northeast"), (90, "east"), (160, "south"),
    (202.4, "south"), (225, "southwest"), (337.6, "north"), (360, "north"), (-45, "northwest"),
])
def test_compass_name(azimuth, name):
    assert compass_name(azimuth) == name
