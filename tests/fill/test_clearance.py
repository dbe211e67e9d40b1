"""layout.fill.rules and layout.fill.usable: presets against the code text, exact per-edge
setbacks, rings, pathways, the 33 % rule and the exemption.

Outside sources: the 'Fire access setbacks' table of /work/shared/REFERENCES.md (IFC editions),
the exact inch and foot (international yard and pound agreement, 1959), and closed-form
geometry (point-to-segment distance in 3D, area of a rounded rectangle).
"""

import dataclasses
import json
import math

import numpy as np
import pytest
import shapely
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from layout.errors import InputError
from layout.fill.rules import (
    CAUTION,
    ClearanceRules,
    array_share,
    ifc_2015_residential,
    ifc_2021_commercial,
    ifc_2021_residential,
    no_setbacks,
    ridge_setback_in_force,
)
from layout.fill.usable import (
    ARC_SIDES,
    UsableArea,
    choose_pathway_faces,
    roof_mounted,
    usable_area,
    usable_areas,
)
from layout.scene.roof import EDGE_KINDS, RoofFace
from layout.units import pitch_from_rise

# Largest relative overshoot of a circumscribed ARC_SIDES-gon over its circle.
ARC_SLACK = 1.0 / math.cos(math.pi / ARC_SIDES) - 1.0


@dataclasses.dataclass(frozen=True)
class Thing:
    """Stand-in obstruction with the attributes layout.fill.usable reads (duck typing)."""

    footprint: tuple
    top: float
    base: float = 0.0
    kind: str = "chimney"

    @property
    def footprint_polygon(self):
        return shapely.Polygon(self.footprint)


def rules_with(**setbacks):
    distances = dict.fromkeys(EDGE_KINDS, 0.0)
    distances.update(setbacks)
    return ClearanceRules(name="test", edge_setback_m=distances)


def south_face(width=10.0, depth=5.0, pitch=30.0, name="south"):
    # Plan rectangle facing south: eave on y = 0, ridge on y = depth.
    return RoofFace([(0, 0), (width, 0), (width, depth), (0, depth)], pitch, 180.0, 3.0,
                    name=name)


def point_segment_distance(points, a, b):
    """Distance from points (n, 3) to the segment a-b in 3D (closed form)."""
    ab = b - a
    t = np.clip(((points - a) @ ab) / (ab @ ab), 0.0, 1.0)
    return np.linalg.norm(points - (a + t[:, None] * ab), axis=1)


def sample_inside(geometry, count, rng):
    xmin, ymin, xmax, ymax = geometry.bounds
    pts = rng.uniform([xmin, ymin], [xmax, ymax], size=(count, 2))
    return pts[shapely.contains_xy(geometry, pts[:, 0], pts[:, 1])]


# --------------------------------------------------------------------------- presets
def test_caution_names_the_authority():
    assert "authority having jurisdiction" in CAUTION


def test_ifc_2021_residential_values():
    rules = ifc_2021_residential()
    # IFC 2021 §1205.2.1.2 (REFERENCES.md): 18 in = 457.2 mm at the ridge up to 33 % coverage,
    # 36 in = 914.4 mm above (exact inch, 25.4 mm).
    assert rules.edge_setback_m["ridge"] == pytest.approx(0.4572, abs=1e-12)
    assert rules.ridge_setback_high_m == pytest.approx(0.9144, abs=1e-12)
    assert rules.share_threshold == 0.33
    # IFC 2021 §1205.2.1.1: two 36 in (914.4 mm) pathways from eave to ridge.
    assert rules.pathway_width_m == pytest.approx(0.9144, abs=1e-12)
    assert rules.pathway_count == 2
    # IFC 2021 §1205.2: roofs of 2:12 (9.46°) or less are exempt; atan(2/12) = 9.4623°.
    assert rules.exempt_max_pitch_deg == pytest.approx(9.4623, abs=1e-4)
    for kind in ("eave", "rake", "hip", "valley", "wall", "parapet"):
        assert rules.edge_setback_m[kind] == 0.0
    assert "IFC 2021" in rules.source and "1205.2.1.2" in rules.ridge_source


def test_ifc_2021_residential_sprinklered_threshold():
    # IFC 2021 §1205.2.1.2 with automatic sprinklers: 18 in up to 66 %, 36 in above
    # (REFERENCES.md row marked "memory").
    rules = ifc_2021_residential(sprinklered=True)
    assert rules.share_threshold == 0.66
    assert rules.edge_setback_m["ridge"] == pytest.approx(0.4572, abs=1e-12)
    assert rules.ridge_setback_high_m == pytest.approx(0.9144, abs=1e-12)
    assert "memory" in rules.ridge_source


def test_ifc_2015_residential_values():
    rules = ifc_2015_residential()
    # IFC 2012/2015 §605.11 (REFERENCES.md, older editions): 18 in (457.2 mm) from hips and
    # valleys.
    assert rules.edge_setback_m["hip"] == pytest.approx(0.4572, abs=1e-12)
    assert rules.edge_setback_m["valley"] == pytest.approx(0.4572, abs=1e-12)
    # Ridge 3 ft and 3 ft pathways: from memory (IFC 2015 §605.11.3.2.1-4), 914.4 mm exact.
    assert rules.edge_setback_m["ridge"] == pytest.approx(0.9144, abs=1e-12)
    assert rules.pathway_width_m == pytest.approx(0.9144, abs=1e-12)
    assert rules.ridge_setback_high_m is None
    assert "IFC 2015" in rules.source and "605.11" in rules.source


@pytest.mark.parametrize(
    ("length_m", "width_m", "expected_m"),
    [
        # IFC 2021 §1205.3.1 (REFERENCES.md): 6 ft = 1828.8 mm perimeter when both axes exceed
        # 250 ft (76.2 m); 4 ft = 1219.2 mm where either axis is 250 ft or less (memory).
        (100.0, 90.0, 1.8288),
        (100.0, 50.0, 1.2192),
        (100.0, 76.2, 1.2192),  # exactly 250 ft: "or less"
        (100.0, 76.3, 1.8288),
    ],
)
def test_ifc_2021_commercial_perimeter(length_m, width_m, expected_m):
    rules = ifc_2021_commercial(building_length_m=length_m, building_width_m=width_m)
    for kind in ("eave", "rake", "parapet", "wall"):
        assert rules.edge_setback_m[kind] == pytest.approx(expected_m, abs=1e-12)
    for kind in ("ridge", "hip", "valley"):
        assert rules.edge_setback_m[kind] == 0.0
    assert "1205.3.1" in rules.source
    assert ("memory" in rules.source) == (expected_m < 1.5)


def test_commercial_rejects_bad_axes():
    with pytest.raises(InputError, match="building_width_m"):
        ifc_2021_commercial(building_length_m=30.0, building_width_m=0.0)


def test_no_setbacks_keeps_the_whole_face():
    face = south_face()
    result = usable_area(face, no_setbacks())
    assert result.polygon.symmetric_difference(face.roof_polygon).area < 1e-12
    assert result.zones == {}


# --------------------------------------------------------------------------- rules object
@pytest.mark.parametrize(
    "rules",
    [ifc_2021_residential(), ifc_2021_residential(sprinklered=True), ifc_2015_residential(),
     ifc_2021_commercial(building_length_m=20, building_width_m=10), no_setbacks()],
)
def test_rules_round_trip_exact(rules):
    data = json.loads(json.dumps(rules.to_dict()))
    again = ClearanceRules.from_dict(data)
    assert again == rules
    assert again.to_dict() == rules.to_dict()
    assert hash(again) == hash(rules)


@pytest.mark.parametrize(
    ("change", "field"),
    [
        ({"edge_setback_m": {**dict.fromkeys(EDGE_KINDS, 0.0), "eave": -0.1}},
         "edge_setback_m.eave"),
        ({"edge_setback_m": {**dict.fromkeys(EDGE_KINDS, 0.0), "rake": float("nan")}},
         "edge_setback_m.rake"),
        ({"edge_setback_m": {**dict.fromkeys(EDGE_KINDS, 0.0), "gutter": 0.1}},
         "edge_setback_m.gutter"),
        ({"edge_setback_m": {"eave": 0.1}}, "edge_setback_m"),
        ({"share_threshold": 0.0}, "share_threshold"),
        ({"share_threshold": 1.5}, "share_threshold"),
        ({"ridge_setback_high_m": -1.0}, "ridge_setback_high_m"),
        ({"obstruction_clearance_m": float("inf")}, "obstruction_clearance_m"),
        ({"pathway_width_m": -0.5}, "pathway_width_m"),
        ({"pathway_count": -1}, "pathway_count"),
        ({"pathway_count": 1.5}, "pathway_count"),
        ({"pathway_count": True}, "pathway_count"),
        ({"exempt_max_pitch_deg": 80.0}, "exempt_max_pitch_deg"),
        ({"name": 3}, "name"),
    ],
)
def test_rules_validation_names_the_field(change, field):
    with pytest.raises(InputError) as info:
        dataclasses.replace(ifc_2021_residential(), **change)
    assert info.value.field == field


def test_rules_from_dict_errors():
    data = ifc_2021_residential().to_dict()
    with pytest.raises(InputError, match="colour"):
        ClearanceRules.from_dict({**data, "colour": "red"})
    del data["edge_setback_m"]
    with pytest.raises(InputError, match="edge_setback_m"):
        ClearanceRules.from_dict(data)


def test_with_edge_setback_changes_one_kind():
    rules = ifc_2021_residential().with_edge_setback("eave", 0.3)
    assert rules.edge_setback_m["eave"] == 0.3
    assert rules.edge_setback_m["ridge"] == pytest.approx(0.4572, abs=1e-12)
    assert ifc_2021_residential().edge_setback_m["eave"] == 0.0  # the original is unchanged
    with pytest.raises(InputError, match="kind"):
        rules.with_edge_setback("gutter", 0.3)
    with pytest.raises(TypeError):
        rules.edge_setback_m["eave"] = 1.0  # read-only mapping


# --------------------------------------------------------------------------- 33 % rule
def test_array_share():
    assert array_share(41.0, 100.0) == pytest.approx(0.41, abs=1e-15)
    with pytest.raises(InputError, match="roof_plan_area_m2"):
        array_share(1.0, 0.0)
    with pytest.raises(InputError, match="module_plan_area_m2"):
        array_share(120.0, 100.0)


def test_ridge_setback_switches_above_33_percent():
    rules = ifc_2021_residential()
    # IFC 2021 §1205.2.1.2: "not more than 33 percent" keeps 18 in; more than 33 % needs 36 in.
    low, why_low = ridge_setback_in_force(rules, 0.33)
    assert low == pytest.approx(0.4572, abs=1e-12)
    assert "18 in (457 mm)" in why_low and "not above 33 %" in why_low
    high, why = ridge_setback_in_force(rules, 0.41)
    assert high == pytest.approx(0.9144, abs=1e-12)
    assert why == ("ridge setback 36 in (914 mm): array covers 41 % of the plan-view roof area, "
                   "above 33 % (IFC 2021 §1205.2.1.2)")
    # Just above the threshold, the text shows enough decimals to tell them apart.
    _, close = ridge_setback_in_force(rules, 0.334)
    assert "33.4 %" in close and "above 33.0 %" in close
    with pytest.raises(InputError, match="array_share"):
        ridge_setback_in_force(rules, 1.2)


def test_ridge_setback_sprinklered_switches_at_66_percent():
    rules = ifc_2021_residential(sprinklered=True)
    assert ridge_setback_in_force(rules, 0.5)[0] == pytest.approx(0.4572, abs=1e-12)
    assert ridge_setback_in_force(rules, 0.7)[0] == pytest.approx(0.9144, abs=1e-12)


def test_usable_area_applies_the_share_both_ways():
    face = south_face()
    rules = ifc_2021_residential()
    top = face.roof_polygon.bounds[3]
    below = usable_area(face, rules, array_share=0.2)
    above = usable_area(face, rules, array_share=0.5)
    assert below.ridge_setback_m == pytest.approx(0.4572, abs=1e-12)
    assert above.ridge_setback_m == pytest.approx(0.9144, abs=1e-12)
    assert below.polygon.bounds[3] == pytest.approx(top - 0.4572, abs=1e-9)
    assert above.polygon.bounds[3] == pytest.approx(top - 0.9144, abs=1e-9)
    assert any("above 33 %" in note for note in above.notes)
    assert any("not above 33 %" in note for note in below.notes)


# --------------------------------------------------------------------------- exactness
def test_rectangle_per_edge_setbacks_exact():
    face = south_face(width=10.0, depth=5.0, pitch=30.0)
    assert face.edge_kinds == ("eave", "rake", "ridge", "rake")
    rules = rules_with(eave=0.3, rake=0.6, ridge=0.457)
    result = usable_area(face, rules)
    height = 5.0 / math.cos(math.radians(30.0))  # slope length of the face (geometry)
    expected = shapely.box(0.6, 0.3, 10.0 - 0.6, height - 0.457)
    assert result.polygon.geom_type == "Polygon"
    np.testing.assert_allclose(result.polygon.bounds, expected.bounds, atol=1e-9, rtol=0)
    assert result.polygon.symmetric_difference(expected).area < 1e-9
    assert set(result.zones) == {"eave setback", "rake setback", "ridge setback"}


def test_setback_measured_on_the_roof_surface():
    # On a 45° face a setback d along the slope covers a plan depth of d·cos 45° (geometry;
    # REFERENCES.md 'plan vs true area').
    face = RoofFace([(0, 0), (8, 0), (8, 4), (0, 4)], 45.0, 180.0, 3.0, name="steep")
    d = 0.5
    result = usable_area(face, rules_with(eave=d, ridge=d))
    plan = shapely.transform(result.polygon, face.roof_to_plan)
    assert plan.bounds[1] == pytest.approx(d * math.cos(math.radians(45.0)), abs=1e-9)
    assert plan.bounds[3] == pytest.approx(4.0 - d * math.cos(math.radians(45.0)), abs=1e-9)
    # And in 3D the lower usable edge is d from the eave line.
    corner = face.roof_to_3d(np.array([[2.0, plan.bounds[1] / math.cos(math.pi / 4)]]))
    assert point_segment_distance(corner, face.corners_3d[0], face.corners_3d[1])[0] == \
        pytest.approx(d, abs=1e-9)


def _star_face(data):
    n = data.draw(st.integers(3, 9))
    fractions = data.draw(st.lists(st.floats(0.1, 0.9), min_size=n, max_size=n))
    radii = data.draw(st.lists(st.floats(2.0, 8.0), min_size=n, max_size=n))
    angles = 2 * np.pi * (np.arange(n) + np.array(fractions)) / n
    outline = np.stack([np.array(radii) * np.cos(angles), np.array(radii) * np.sin(angles)], 1)
    overrides = data.draw(st.lists(st.sampled_from((None, *EDGE_KINDS)), min_size=n, max_size=n))
    return RoofFace(outline, data.draw(st.floats(0.0, 60.0)), data.draw(st.floats(0.0, 360.0)),
                    2.0, name="random", edge_overrides=tuple(overrides))


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.data())
def test_every_usable_point_keeps_each_edge_distance(data):
    face = _star_face(data)
    distances = {k: data.draw(st.one_of(st.just(0.0), st.floats(0.05, 1.5))) for k in EDGE_KINDS}
    rules = ClearanceRules(name="random", edge_setback_m=distances)
    result = usable_area(face, rules)
    assert result.polygon.difference(face.roof_polygon).area < 1e-9
    rng = np.random.default_rng(7)
    corners = face.corners_3d
    n = len(corners)
    need = np.array([distances[k] for k in face.edge_kinds])
    # Closed-form check in 3D: distance from each point to each edge segment of the face.
    inside = sample_inside(result.polygon, 600, rng) if not result.is_empty else np.empty((0, 2))
    if len(inside):
        pts3 = face.roof_to_3d(inside)
        for k in range(n):
            gap = point_segment_distance(pts3, corners[k], corners[(k + 1) % n])
            assert gap.min() >= need[k] - 1e-9
    # And nothing is thrown away that keeps every distance with the arc slack to spare.
    candidates = sample_inside(face.roof_polygon, 600, rng)
    pts3 = face.roof_to_3d(candidates)
    gaps = np.stack([point_segment_distance(pts3, corners[k], corners[(k + 1) % n])
                     for k in range(n)], axis=1)
    clear = (gaps >= need * (1 + 2 * ARC_SLACK) + 1e-6).all(axis=1)
    kept = shapely.contains_xy(result.polygon, candidates[:, 0], candidates[:, 1])
    assert kept[clear].all()


def test_zero_distance_edges_leave_no_zone_and_concave_face_works():
    # L-shaped face: a concave corner; only the eave has a setback.
    face = RoofFace([(0, 0), (6, 0), (6, 3), (3, 3), (3, 6), (0, 6)], 20.0, 180.0, 3.0,
                    name="ell")
    result = usable_area(face, rules_with(eave=0.4))
    assert set(result.zones) == {"eave setback"}
    # The eave is the edge y = 0; the step (3, 3)-(6, 3) is level with its outside up the
    # slope, a ridge-kind edge, so only the bottom strip of 6 m × 0.4 m (roof length) goes.
    assert face.roof_polygon.area - result.area_m2 == pytest.approx(6 * 0.4, abs=1e-9)


# --------------------------------------------------------------------------- obstructions
def _rounded_rectangle_area(a, b, c):
    # Rectangle a × b grown by c with round corners: (a+2c)(b+2c) − (4−π)c² (geometry).
    return (a + 2 * c) * (b + 2 * c) - (4 - math.pi) * c * c


@pytest.mark.parametrize("pitch", [0.0, 30.0])
def test_obstruction_ring_hole_area(pitch):
    face = RoofFace([(0, 0), (10, 0), (10, 8), (0, 8)], pitch, 180.0, 3.0, name="main")
    a, b, c = 1.0, 0.6, 0.3  # chimney plan size and ring [m]
    chimney = Thing(((4, 3), (4 + a, 3), (4 + a, 3 + b), (4, 3 + b)), top=12.0)
    rules = dataclasses.replace(no_setbacks(), obstruction_clearance_m=c)
    result = usable_area(face, rules, [chimney])
    assert result.polygon.geom_type == "Polygon" and len(result.polygon.interiors) == 1
    hole = shapely.Polygon(result.polygon.interiors[0]).area
    b_roof = b / math.cos(math.radians(pitch))  # plan depth → slope length
    exact = _rounded_rectangle_area(a, b_roof, c)
    # The arcs are circumscribed polygons: never smaller than the true ring.
    assert exact - 1e-12 <= hole <= exact + 1e-3 * c * c
    assert result.area_m2 == pytest.approx(face.true_area_m2 - hole, abs=1e-9)
    assert {"chimney 0", "chimney 0 clearance"} <= set(result.zones)
    assert result.zones["chimney 0"].area == pytest.approx(a * b_roof, abs=1e-9)


def test_usable_points_clear_of_a_vent_ring():
    face = south_face(pitch=25.0)
    vent = Thing(tuple(shapely.Point(5, 2.5).buffer(0.08, quad_segs=8).exterior.coords[:-1]),
                 top=7.0, kind="vent")
    c = 0.25
    rules = dataclasses.replace(no_setbacks(), obstruction_clearance_m=c)
    result = usable_area(face, rules, [vent])
    footprint = shapely.transform(vent.footprint_polygon, face.plan_to_roof)
    pts = sample_inside(result.polygon.buffer(0), 4000, np.random.default_rng(3))
    assert shapely.distance(footprint, shapely.points(pts)).min() >= c - 1e-9


def test_which_obstructions_stand_on_the_face():
    face = south_face(pitch=30.0)  # eave at 3 m, rises to 3 + 5·tan 30° = 5.89 m
    on_roof = Thing(((2, 2), (3, 2), (3, 3), (2, 3)), top=7.0)
    beside = Thing(((12, 2), (13, 2), (13, 3), (12, 3)), top=9.0, kind="building")
    floating = Thing(((2, 2), (3, 2), (3, 3), (2, 3)), top=9.0, base=8.0)
    under = Thing(((2, 2), (3, 2), (3, 3), (2, 3)), top=1.0)
    tree = Thing(((2, 2), (3, 2), (3, 3), (2, 3)), top=15.0, kind="tree")
    assert roof_mounted(face, on_roof)
    assert not roof_mounted(face, beside)
    assert not roof_mounted(face, floating)
    assert not roof_mounted(face, under)
    assert not roof_mounted(face, tree)
    result = usable_area(face, no_setbacks(), [beside, tree, on_roof])
    assert set(result.zones) == {"chimney 2"}


def test_obstructions_from_the_obstruction_module():
    obstructions = pytest.importorskip("layout.scene.obstructions")
    face = south_face(pitch=30.0)
    chimney = obstructions.Block([(2, 2), (3, 2), (3, 3), (2, 3)], top=7.0, kind="chimney")
    tree = obstructions.Tree((5, 3), 12.0, 3.0, 4.0)
    result = usable_area(face, no_setbacks(), [chimney, tree])
    assert set(result.zones) == {"chimney 0"}


# --------------------------------------------------------------------------- exemption, empty
def test_exemption_by_pitch():
    rules = ifc_2021_residential()
    flat = south_face(pitch=9.0, name="low")
    result = usable_area(flat, rules, array_share=0.5, pathway_edges=())
    assert result.area_m2 == pytest.approx(flat.true_area_m2, abs=1e-9)
    assert result.ridge_setback_m == 0.0
    assert any(note.startswith("face exempt: pitch 9.00° ≤ 9.46°") for note in result.notes)
    # IFC 2021 §1205.2: "2 units vertical in 12 units horizontal or less": 2:12 itself is exempt.
    at_limit = RoofFace(flat.outline, pitch_from_rise(2), 180.0, 3.0, name="limit")
    assert usable_area(at_limit, rules).area_m2 == pytest.approx(at_limit.true_area_m2)
    steeper = south_face(pitch=9.5, name="steeper")
    assert usable_area(steeper, rules).area_m2 < steeper.true_area_m2 - 1.0


def test_setbacks_leaving_nothing_give_an_empty_area_with_a_note():
    face = south_face(width=3.0, depth=0.8, pitch=30.0, name="north")
    rules = ifc_2021_residential().with_edge_setback("eave", 0.5)
    result = usable_area(face, rules, array_share=0.5)
    assert result.is_empty and result.area_m2 == 0.0
    assert 'setbacks leave no usable area on face "north"' in result.notes
    again = UsableArea.from_dict(json.loads(json.dumps(result.to_dict())))
    assert again == result and again.is_empty


# --------------------------------------------------------------------------- pathways
def test_pathway_strip_width_along_a_rake():
    face = south_face(width=10.0, depth=5.0, pitch=30.0)
    rules = ifc_2021_residential()
    result = usable_area(face, rules, pathway_edges=[1])
    height = 5.0 / math.cos(math.radians(30.0))
    strip = result.zones["pathway along edge 1"]
    # IFC 2021 §1205.2.1.1: 36 in (914.4 mm) wide, eave to ridge.
    np.testing.assert_allclose(strip.bounds, (10.0 - 0.9144, 0.0, 10.0, height), atol=1e-9)
    assert strip.area == pytest.approx(0.9144 * height, abs=1e-9)
    assert result.polygon.bounds[2] == pytest.approx(10.0 - 0.9144, abs=1e-9)


def test_pathway_along_a_hip_keeps_its_width():
    faces = hip_roof()
    south = faces[0]
    hip = south.edge_kinds.index("hip")
    result = usable_area(south, ifc_2021_residential(), pathway_edges=[hip])
    strip = result.zones[f"pathway along edge {hip}"]
    corners = south.plan_to_roof(np.asarray(south.outline))
    a, b = corners[hip], corners[(hip + 1) % len(corners)]
    hip_line = shapely.LineString([a, b])
    # Farthest point of the strip from the hip is its width (up to the arc slack).
    far = max(hip_line.distance(shapely.Point(p)) for p in strip.exterior.coords)
    assert 0.9144 - 1e-9 <= far <= 0.9144 * (1 + ARC_SLACK) + 1e-9


def test_pathway_edges_are_checked():
    face = south_face()
    with pytest.raises(InputError, match=r"pathway_edges\[0\]"):
        usable_area(face, ifc_2021_residential(), pathway_edges=[0])  # the eave
    with pytest.raises(InputError, match=r"pathway_edges\[1\]"):
        usable_area(face, ifc_2021_residential(), pathway_edges=[1, 7])


def hip_roof(pitch=30.0):
    # Hip roof on a 12 × 8 m plan with a 4 m ridge (equal pitch on all four faces).
    return [
        RoofFace([(0, 0), (12, 0), (8, 4), (4, 4)], pitch, 180.0, 3.0, name="S"),
        RoofFace([(12, 8), (0, 8), (4, 4), (8, 4)], pitch, 0.0, 3.0, name="N"),
        RoofFace([(12, 0), (12, 8), (8, 4)], pitch, 90.0, 3.0, name="E"),
        RoofFace([(0, 8), (0, 0), (4, 4)], pitch, 270.0, 3.0, name="W"),
    ]


def test_choose_pathway_faces_prefers_faces_turned_from_the_equator():
    faces = hip_roof()
    rules = ifc_2021_residential()
    north = choose_pathway_faces(faces, rules, latitude=40.0)
    # North face turns 180° from south, then east and west tie at 90°: same size, first given.
    assert list(north) == ["N", "E"]
    for face in faces:
        if face.name in north:
            assert face.edge_kinds[north[face.name]] == "hip"
    south = choose_pathway_faces(faces, rules, latitude=-33.9)
    assert list(south) == ["S", "E"]


def test_choose_pathway_faces_limits():
    faces = hip_roof()
    assert choose_pathway_faces(faces, no_setbacks(), latitude=40.0) == {}
    low = hip_roof(pitch=5.0)  # exempt under IFC 2021 §1205.2
    assert choose_pathway_faces(low, ifc_2021_residential(), latitude=40.0) == {}
    gable = [south_face(name="S"),
             RoofFace([(0, 10), (10, 10), (10, 5), (0, 5)], 30.0, 0.0, 3.0, name="N")]
    chosen = choose_pathway_faces(gable, ifc_2021_residential(), latitude=40.0)
    assert list(chosen) == ["N", "S"]
    assert all(gable[0].edge_kinds[i] == "rake" for i in chosen.values())
    with pytest.raises(InputError, match="name"):
        choose_pathway_faces([faces[0], faces[0]], ifc_2021_residential(), latitude=40.0)


def test_chosen_pathways_feed_usable_area():
    faces = hip_roof()
    rules = ifc_2021_residential()
    chosen = choose_pathway_faces(faces, rules, latitude=40.0)
    for face in faces:
        edges = [chosen[face.name]] if face.name in chosen else []
        result = usable_area(face, rules, pathway_edges=edges)
        assert any(k.startswith("pathway") for k in result.zones) == bool(edges)


# --------------------------------------------------------------------------- data
def test_usable_area_round_trip_exact():
    face = south_face()
    rules = dataclasses.replace(ifc_2021_residential(), obstruction_clearance_m=0.3)
    chimney = Thing(((4, 2), (5, 2), (5, 2.6), (4, 2.6)), top=12.0)
    result = usable_area(face, rules, [chimney], array_share=0.4, pathway_edges=[3])
    data = json.loads(json.dumps(result.to_dict()))
    again = UsableArea.from_dict(data)
    assert again == result
    assert shapely.equals_exact(again.polygon, result.polygon, tolerance=0.0)
    with pytest.raises(InputError, match="polygon"):
        UsableArea.from_dict({**data, "polygon": {"type": "Blob"}})
    with pytest.raises(InputError, match="extra"):
        UsableArea.from_dict({**data, "extra": 1})


def test_usable_areas_for_a_building():
    faces = hip_roof()
    rules = ifc_2021_residential()
    areas = usable_areas(faces, rules, latitude=40.0, array_share=0.5)
    assert list(areas) == ["S", "N", "E", "W"]
    with_path = [name for name, area in areas.items()
                 if any(k.startswith("pathway") for k in area.zones)]
    assert with_path == ["N", "E"]
    assert all(area.ridge_setback_m == pytest.approx(0.9144, abs=1e-12) for area in areas.values())
    given_paths = usable_areas(faces, rules, pathways={"S": 1})
    assert "pathway along edge 1" in given_paths["S"].zones
    with pytest.raises(InputError, match="latitude"):
        usable_areas(faces, rules)
    with pytest.raises(InputError, match=r"pathways\.X"):
        usable_areas(faces, rules, pathways={"X": 1})
    with pytest.raises(InputError, match=r"faces\[0\]\.pathway_edges\[0\]"):
        usable_areas(faces, rules, pathways={"S": 0})


@pytest.mark.parametrize("sides", [4, 7, 64])
def test_a_convex_footprint_grows_as_the_union_of_its_pieces(sides):
    # the quick convex path of _grow (one hull) against the general path (the union of bands
    # and end discs): a superset, off by at most the notch between two neighbouring discs,
    # and never inside the exact round offset (GEOS buffer, a reference we did not write)
    from layout.fill.usable import ARC_SIDES, _grow, _rings_of, _segment_zones

    angles = np.sort(np.random.default_rng(sides).uniform(0, 2 * np.pi, sides))
    footprint = shapely.Polygon(np.c_[3 + 0.4 * np.cos(angles), 2 + 0.25 * np.sin(angles)])
    ring = _rings_of(footprint)[0]
    union = shapely.union_all(
        [footprint, *_segment_zones(ring[:-1], ring[1:], np.full(len(ring) - 1, 0.3))])
    hull = _grow(footprint, 0.3)
    notch = 0.3 * (1 / math.cos(math.pi / ARC_SIDES) - 1)
    assert shapely.difference(union, hull).area < 1e-12
    assert shapely.hausdorff_distance(union, hull) <= notch + 1e-9
    exact = footprint.buffer(0.3, quad_segs=256)
    assert shapely.difference(exact, hull).area < 1e-9
