import json
import math
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest
import shapely
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from layout.errors import InputError
from layout.fill.faces import FillOptions, fill_area, fill_face
from layout.fill.packing import FIT_TOLERANCE_M, pack_rectangles
from layout.fill.placed import Layout, PlacedModule
from layout.fill.placement import compare_orientations, fill_building
from layout.fill.rules import ClearanceRules, ifc_2021_residential, no_setbacks
from layout.fill.usable import usable_area
from layout.scene.building import Building, flat_roof, gable_roof, hip_roof
from layout.scene.modules import ModuleSpec, generic_60_cell, generic_72_cell
from layout.scene.roof import EDGE_KINDS, RoofFace

MODULE = generic_60_cell(330)  # 1.650 m × 0.991 m, REFERENCES.md typical sizes
SETTINGS = settings(max_examples=25, deadline=None)


def closed_form_count(width, height, size_u, size_v, gap_u, gap_v):
    # Rectangle of W × H filled with w × h modules and gaps g: the grid count
    # floor((W + g) / (w + g)) × floor((H + g) / (h + g)) (closed-form geometry)
    return math.floor((width + gap_u) / (size_u + gap_u)) * math.floor(
        (height + gap_v) / (size_v + gap_v))


def rect_face(width_m=11.0, depth_plan_m=5.0, pitch_deg=30.0, azimuth_deg=180.0, name="south"):
    # a south-facing rectangle: eave along x at y = 0, ridge at y = depth, slope faces south
    outline = [(0, 0), (width_m, 0), (width_m, depth_plan_m), (0, depth_plan_m)]
    return RoofFace(outline, pitch_deg, azimuth_deg, 3.0, name=name)


def setback_box(face, eave, ridge, left, right):
    u0, v0, u1, v1 = face.roof_polygon.bounds
    return shapely.box(u0 + left, v0 + eave, u1 - right, v1 - ridge)


# --------------------------------------------------------------------------- closed form
@pytest.mark.parametrize("orientation", ["portrait", "landscape"])
@pytest.mark.parametrize("rows", ["grid", "sliding"])
@pytest.mark.parametrize(("setbacks", "gaps"), [
    ((0.0, 0.457, 0.0, 0.0), (0.02, 0.02)),
    ((0.3, 0.914, 0.457, 0.457), (0.02, 0.05)),
    ((0.0, 0.0, 0.914, 0.0), (0.0, 0.0)),
])
def test_count_on_rectangular_face_matches_closed_form(orientation, rows, setbacks, gaps):
    face = rect_face()
    usable = setback_box(face, *setbacks)
    u0, v0, u1, v1 = usable.bounds
    options = FillOptions(orientation=orientation, rows=rows, gap_along_eave_m=gaps[0],
                          gap_up_slope_m=gaps[1])
    size = (MODULE.width_m, MODULE.length_m) if orientation == "portrait" else (
        MODULE.length_m, MODULE.width_m)
    expected = closed_form_count(u1 - u0, v1 - v0, *size, *gaps)
    placed = fill_face(face, usable, MODULE, options)
    assert len(placed) == expected
    assert expected > 0


@SETTINGS
@given(width=st.floats(1.0, 25.0), height=st.floats(1.0, 12.0), gap_u=st.floats(0, 0.1),
       gap_v=st.floats(0, 0.1), landscape=st.booleans(), sliding=st.booleans())
def test_count_on_random_rectangles_matches_closed_form(width, height, gap_u, gap_v, landscape,
                                                        sliding):
    size = (MODULE.length_m, MODULE.width_m) if landscape else (MODULE.width_m, MODULE.length_m)
    ratios = ((width + gap_u) / (size[0] + gap_u), (height + gap_v) / (size[1] + gap_v))
    # keep clear of exact fits, where the fit tolerance decides
    assume(all(abs(r - round(r)) > 1e-6 for r in ratios))
    usable = shapely.box(2.0, 1.0, 2.0 + width, 1.0 + height)
    options = FillOptions(orientation="landscape" if landscape else "portrait",
                          rows="sliding" if sliding else "grid", gap_along_eave_m=gap_u,
                          gap_up_slope_m=gap_v)
    assert fill_area(usable, MODULE, options).count == closed_form_count(
        width, height, *size, gap_u, gap_v)


def test_exact_fit_is_kept():
    # three portrait modules and two gaps exactly: 3 · 0.991 + 2 · 0.02 = 3.013 m wide
    usable = shapely.box(0, 0, 3 * 0.991 + 2 * 0.02, 2 * 1.65 + 0.02)
    assert fill_area(usable, MODULE).count == 6


# --------------------------------------------------------------------------- offset search
def test_grid_is_centred_when_there_is_slack():
    # tie rule: among offsets with the most modules, the one most centred in the bounding box
    usable = shapely.box(0, 0, 10.0, 5.0)
    fill = fill_area(usable, MODULE, FillOptions(offset_steps=8))
    left = fill.rects[:, 0].min()
    right = 10.0 - fill.rects[:, 2].max()
    bottom = fill.rects[:, 1].min()
    top = 5.0 - fill.rects[:, 3].max()
    pitch_u, pitch_v = MODULE.width_m + 0.02, MODULE.length_m + 0.02
    assert abs(left - right) <= pitch_u / 8 + 1e-9
    assert abs(bottom - top) <= pitch_v / 8 + 1e-9


def random_polygon(draw, concave):
    n = draw(st.integers(5, 12))
    # corners at increasing angles around a centre, neighbours at least ~0.1 rad apart
    steps = np.array(draw(st.lists(st.floats(0.2, 1.0), min_size=n, max_size=n)))
    angles = 2 * np.pi * np.cumsum(steps) / steps.sum()
    radii = np.array(draw(st.lists(st.floats(3.0 if concave else 6.0, 9.0), min_size=n,
                                   max_size=n)))
    points = np.c_[radii * np.cos(angles), radii * np.sin(angles)] + 10.0
    polygon = shapely.remove_repeated_points(shapely.Polygon(points), 1e-3)
    assume(len(polygon.exterior.coords) >= 4)
    if not concave:
        polygon = polygon.convex_hull
    assume(polygon.is_valid and polygon.area > 20.0)
    return shapely.orient_polygons(polygon)


@st.composite
def outlines(draw):
    return random_polygon(draw, draw(st.booleans()))


@SETTINGS
@given(outline=outlines(), setback=st.floats(0.0, 0.9), pitch=st.floats(0, 45),
       azimuth=st.floats(0, 359), orientation=st.sampled_from(["portrait", "landscape",
                                                               "mixed"]),
       rows=st.sampled_from(["grid", "sliding"]))
def test_random_outlines_modules_inside_apart_and_set_back(outline, setback, pitch, azimuth,
                                                           orientation, rows):
    face = RoofFace(list(outline.exterior.coords)[:-1], pitch, azimuth, 2.0, name="f")
    face_uv = face.roof_polygon
    # every edge gets the same setback, measured on the roof surface: the mitred inset
    usable = face_uv.buffer(-setback, join_style="mitre") if setback else face_uv
    options = FillOptions(orientation=orientation, rows=rows, gap_along_eave_m=0.02,
                          gap_up_slope_m=0.03, offset_steps=4)
    placed = fill_face(face, usable, MODULE, options)
    boxes = np.array([shapely.box(*m.uv_rect) for m in placed])
    if len(boxes) == 0:
        return
    # inside the usable area (up to the fit tolerance)
    assert shapely.covers(usable.buffer(10 * FIT_TOLERANCE_M), boxes).all()
    # each edge's setback is respected: distance from each module to each outline edge
    coords = np.asarray(face_uv.exterior.coords)
    edges = shapely.linestrings(np.stack([coords[:-1], coords[1:]], axis=1))
    distances = shapely.distance(boxes[:, None], edges[None, :])
    assert (distances >= setback - 1e-6).all()
    # no two modules overlap; neighbours keep at least the gaps (Chebyshev gap in u, v)
    tree = shapely.STRtree(boxes)
    left, right = tree.query(boxes, predicate="intersects")
    pairs = left < right
    overlap = shapely.area(shapely.intersection(boxes[left[pairs]], boxes[right[pairs]]))
    assert (overlap < 1e-9).all()
    # the 3D corners lie on the face plane and turn counter-clockwise seen from the front
    for m in placed[:5]:
        c = np.asarray(m.corners_3d)
        assert c == pytest.approx(face.roof_to_3d(np.array(
            [[m.uv_rect[0], m.uv_rect[1]], [m.uv_rect[2], m.uv_rect[1]],
             [m.uv_rect[2], m.uv_rect[3]], [m.uv_rect[0], m.uv_rect[3]]])), abs=1e-9)
        assert np.cross(c[1] - c[0], c[3] - c[0]) @ face.normal > 0
    assert len({m.id for m in placed}) == len(placed)


@SETTINGS
@given(outline=outlines(), landscape=st.booleans())
def test_offset_search_never_worse_than_origin_grid_and_sliding_never_worse(outline,
                                                                            landscape):
    orientation = "landscape" if landscape else "portrait"
    origin = fill_area(outline, MODULE, FillOptions(orientation=orientation, offset_steps=1))
    searched = fill_area(outline, MODULE, FillOptions(orientation=orientation, offset_steps=6))
    sliding = fill_area(outline, MODULE, FillOptions(orientation=orientation, offset_steps=6,
                                                     rows="sliding"))
    assert searched.count >= origin.count
    assert sliding.count >= searched.count
    mixed = fill_area(outline, MODULE, FillOptions(orientation="mixed", offset_steps=6))
    portrait = fill_area(outline, MODULE, FillOptions(offset_steps=6))
    assert mixed.count >= portrait.count


def test_offset_search_beats_origin_grid_on_a_triangle():
    # a hip end (triangle): the grid anchored at the corner wastes the narrow top
    tri = shapely.Polygon([(0, 0), (10, 0), (5, 4)])
    origin = fill_area(tri, MODULE, FillOptions(offset_steps=1))
    searched = fill_area(tri, MODULE, FillOptions(offset_steps=8))
    assert searched.count > origin.count


def hip_face_12_by_4_5():
    # a hip-roof trapezoid of our own: 12 m eave, 4.5 m up the slope (true length), hips at 45°
    # in plan, pitch 6:12 = 26.565° (REFERENCES.md), IFC 2021 residential setbacks (18 in from
    # the ridge, none from the hips)
    pitch = 26.565
    depth = 4.5 * math.cos(math.radians(pitch))
    face = RoofFace([(0, 0), (12, 0), (12 - depth, depth), (depth, depth)], pitch, 180, 3.0,
                    name="south")
    return face, usable_area(face, ifc_2021_residential()).polygon


def test_sliding_rows_fit_strictly_more_on_a_hip_face():
    face, usable = hip_face_12_by_4_5()
    counts = {}
    for orientation in ("portrait", "landscape"):
        for rows in ("grid", "sliding"):
            counts[orientation, rows] = len(fill_face(
                face, usable, MODULE, FillOptions(orientation=orientation, rows=rows)))
    assert counts["landscape", "sliding"] > counts["landscape", "grid"]
    assert counts["portrait", "sliding"] >= counts["portrait", "grid"]
    # sliding rows are still rows: every module shares its v with its row
    placed = fill_face(face, usable, MODULE, FillOptions(orientation="landscape",
                                                         rows="sliding"))
    by_row = {}
    for m in placed:
        by_row.setdefault(m.row, set()).add(round(m.uv_rect[1], 9))
    assert all(len(v) == 1 for v in by_row.values())


def test_mixed_fills_the_strip_left_by_portrait():
    # 10 m × 2.8 m: one portrait row (1.65 m) leaves 2.8 − 1.65 − 0.02 = 1.13 m, room for one
    # landscape row (0.991 m). Closed form: 9 portrait + floor(10.02 / 1.67) = 6 landscape.
    usable = shapely.box(0, 0, 10.0, 2.8)
    fill = fill_area(usable, MODULE, FillOptions(orientation="mixed"))
    assert fill.orientation.count("portrait") == closed_form_count(10, 2.8, 0.991, 1.65, 0.02,
                                                                   0.02)
    assert fill.orientation.count("landscape") == 6
    boxes = fill.polygons()
    assert shapely.area(shapely.intersection_all(boxes[:2])) == 0
    union_area = shapely.union_all(boxes).area
    assert union_area == pytest.approx(fill.count * MODULE.area_m2)


def test_empty_and_tiny_areas_give_no_modules():
    assert fill_area(shapely.Polygon(), MODULE).count == 0
    assert fill_area(shapely.box(0, 0, 0.5, 3.0), MODULE).count == 0
    assert fill_face(rect_face(), shapely.box(0, 0, 0.5, 0.5), MODULE) == ()
    assert len(pack_rectangles(None, 1.0, 1.0)) == 0


# --------------------------------------------------------------------------- cells
def test_portrait_bottom_shadow_crosses_all_substrings_landscape_only_one():
    # REFERENCES.md: 3 bypass diodes, each over one third of the cells, substrings running
    # the length of the module (common practice)
    face = rect_face()
    usable = shapely.box(0.5, 0.5, 10.0, 6.0)
    for orientation, expected in (("portrait", {0, 1, 2}), ("landscape", {0})):
        placed = fill_face(face, usable, MODULE, FillOptions(orientation=orientation))
        m = placed[0]
        points, _, substring = m.cell_points(MODULE, samples_per_cell=4)
        assert points.shape == (240, 3)
        assert np.bincount(substring).tolist() == [80, 80, 80]
        uv = np.c_[(points[:, :2] - face.roof_to_plan([0.0, 0.0])) @ face.along_eave,
                   (points[:, 2] - face.eave_height_m) / face.sin_pitch]
        # a shadow over the lowest 10 cm of the module
        strip = uv[:, 1] < m.uv_rect[1] + 0.10
        assert strip.any()
        assert set(substring[strip].tolist()) == expected
        # all points on the module plane, inside its rectangle
        assert (uv[:, 0] > m.uv_rect[0]).all() and (uv[:, 0] < m.uv_rect[2]).all()
        assert (uv[:, 1] > m.uv_rect[1]).all() and (uv[:, 1] < m.uv_rect[3]).all()
        assert face.roof_to_3d(uv) == pytest.approx(points, abs=1e-9)
        subs = m.substring_points(MODULE)
        assert [len(s) for s in subs] == [20, 20, 20]


def test_corner_edges_have_module_true_lengths():
    face = rect_face(pitch_deg=40.0)
    m = fill_face(face, setback_box(face, 0, 0, 0, 0), MODULE)[0]
    c = np.asarray(m.corners_3d)
    # portrait: the up-slope edge is the module length on the roof surface (true length)
    assert np.linalg.norm(c[3] - c[0]) == pytest.approx(MODULE.length_m)
    assert np.linalg.norm(c[1] - c[0]) == pytest.approx(MODULE.width_m)
    assert c[3, 2] - c[0, 2] == pytest.approx(MODULE.length_m * math.sin(math.radians(40)))
    assert m.normal == pytest.approx(face.normal)
    other = ModuleSpec(1.956, 0.991, 400, 12, 6)
    with pytest.raises(InputError) as err:
        m.cell_points(other)
    assert err.value.field == "spec.length_m"


# --------------------------------------------------------------------------- data
def test_fill_options_validation_and_round_trip():
    options = FillOptions("mixed", 0.015, 0.03, "sliding", 5)
    assert FillOptions.from_dict(json.loads(json.dumps(options.to_dict()))) == options
    for bad, field in (({"orientation": "diagonal"}, "orientation"),
                       ({"rows": "staggered"}, "rows"),
                       ({"gap_along_eave_m": -0.01}, "gap_along_eave_m"),
                       ({"gap_up_slope_m": 2.0}, "gap_up_slope_m"),
                       ({"offset_steps": 0}, "offset_steps"),
                       ({"offset_steps": 2.5}, "offset_steps"),
                       ({"spacing": 1}, "spacing")):
        with pytest.raises(InputError) as err:
            FillOptions.from_dict(bad)
        assert err.value.field == field


def test_placed_module_round_trip_and_errors():
    m = fill_face(rect_face(), shapely.box(0, 0, 4, 4), MODULE)[0]
    data = json.loads(json.dumps(m.to_dict()))
    assert PlacedModule.from_dict(data) == m
    bad = dict(data, orientation="sideways")
    with pytest.raises(InputError) as err:
        PlacedModule.from_dict(bad)
    assert err.value.field == "orientation"
    bad = dict(data, uv_rect=[1, 1, 0, 2])
    with pytest.raises(InputError) as err:
        PlacedModule.from_dict(bad)
    assert err.value.field == "uv_rect"
    del data["corners_3d"]
    with pytest.raises(InputError) as err:
        PlacedModule.from_dict(data)
    assert err.value.field == "corners_3d"


def test_layout_remove_restore_and_round_trip():
    face = rect_face()
    placed = fill_face(face, setback_box(face, 0, 0.457, 0, 0), MODULE)
    layout = Layout(modules=placed, notes=("a note",))
    n = layout.count
    cut = layout.remove(["south/r0c1", "south/r1c2"])
    assert cut.count == n - 2
    assert {m.id for m in cut.removed_modules} == {"south/r0c1", "south/r1c2"}
    assert cut.power_w(MODULE) == pytest.approx((n - 2) * 330)
    assert cut.kwp(MODULE) == pytest.approx((n - 2) * 0.330)
    assert cut.remove("south/r0c1").removed == cut.removed  # removing twice changes nothing
    back = cut.restore("south/r0c1")
    assert back.count == n - 1
    assert back.restore("south/r1c2").count == n
    with pytest.raises(InputError):
        layout.remove("south/r99c0")
    full = json.loads(json.dumps(cut.to_dict()))
    assert Layout.from_dict(full) == cut
    short = json.loads(json.dumps(cut.to_dict(include_modules=False)))
    assert "modules" not in short
    assert Layout.from_dict(short).removed == cut.removed
    with pytest.raises(InputError) as err:
        Layout.from_dict({"removed": [["south", "x", 1.0]]})
    assert err.value.field == "removed[0].u"


def test_removal_survives_refill_where_a_module_still_covers_it():
    building = gable_roof(10, 8, 30, 3.0)
    rules = replace(no_setbacks().with_edge_setback("ridge", 0.457), pathway_width_m=2.0,
                    pathway_count=1)
    first = fill_building(building, MODULE, rules, pathway_faces={})
    target = first.module("south/r0c2")
    cut = first.remove(target.id)
    # refill with a pathway on the north face only: the south face keeps its modules, and the
    # removal stays on the same module
    north = building.face("north")
    rake = north.edge_kinds.index("rake")
    refill = fill_building(building, MODULE, rules, removed=cut.removed,
                           pathway_faces={"north": rake})
    assert sum(m.face == "north" for m in refill.modules) < sum(
        m.face == "north" for m in first.modules)
    assert refill.removed == cut.removed
    assert refill.count == len(refill.modules) - 1
    assert [m.uv_rect for m in refill.removed_modules] == [target.uv_rect]
    # a larger ridge setback moves the rows; whatever removal is kept lies under a module
    moved = fill_building(building, MODULE, rules.with_edge_setback("ridge", 0.9),
                          removed=cut.removed, pathway_faces={})
    assert all(any(m.covers_uv(u, v) for m in moved.modules if m.face == f)
               for f, u, v in moved.removed)
    assert moved.count == len(moved.modules) - len(moved.removed)
    # fill_face leaves the removed module out altogether
    usable = usable_area(building.face("south"), rules)
    assert len(fill_face(building.face("south"), usable, MODULE, removed=cut.removed)) == (
        sum(m.face == "south" for m in first.modules) - 1)
    # a removal where no module stands any more is dropped with a note
    far = fill_building(building, MODULE, rules, removed=[("south", 0.01, 0.01)],
                        pathway_faces={})
    assert far.removed == ()
    assert any("no longer under a module" in n for n in far.notes)


# --------------------------------------------------------------------------- buildings
def test_33_percent_rule_refills_with_the_higher_ridge_setback():
    # IFC 2021 §1205.2.1.2 (REFERENCES.md): 18 in while the array covers ≤ 33 % of the
    # plan-view roof area, 36 in above
    rules = ifc_2021_residential()
    big = gable_roof(12, 9, 30, 3.0)
    layout = fill_building(big, MODULE, rules, latitude=40)
    share = sum(MODULE.area_m2 * math.cos(math.radians(m.tilt_deg))
                for m in layout.active_modules) / big.plan_area_m2
    assert layout.ridge_setback_m == pytest.approx(36 * 0.0254)
    assert share > 0.33
    assert any("36 in" in n and "above 33 %" in n for n in layout.notes)
    # modules keep 36 in from the ridge
    for m in layout.modules:
        top = big.face(m.face).roof_polygon.bounds[3]
        assert top - m.uv_rect[3] >= 36 * 0.0254 - 1e-6


def test_33_percent_rule_keeps_high_setback_without_oscillating():
    # our own rules: threshold set so that the first fill is above it and the refill below;
    # the higher setback must stay, with a note
    face = rect_face(width_m=10.5, depth_plan_m=3.3, pitch_deg=20.0)
    building = Building((face,))
    setbacks = dict.fromkeys(EDGE_KINDS, 0.0)
    setbacks["ridge"] = 0.1
    low_rules = ClearanceRules(name="test", edge_setback_m=setbacks, ridge_setback_high_m=1.0,
                               share_threshold=0.99)
    low = fill_building(building, MODULE, low_rules)
    low_share = low.count * MODULE.area_m2 * face.cos_pitch / building.plan_area_m2
    high = fill_building(building, MODULE, low_rules.with_edge_setback("ridge", 1.0))
    high_share = high.count * MODULE.area_m2 * face.cos_pitch / building.plan_area_m2
    assert high_share < low_share
    threshold = 0.5 * (low_share + high_share)
    rules = ClearanceRules(name="test", edge_setback_m=setbacks, ridge_setback_high_m=1.0,
                           share_threshold=threshold)
    layout = fill_building(building, MODULE, rules)
    assert layout.ridge_setback_m == 1.0
    assert layout.count == high.count
    assert any("does not switch back and forth" in n for n in layout.notes)


def test_module_larger_than_every_face_is_an_input_error():
    building = Building((rect_face(width_m=1.2, depth_plan_m=1.0),))
    with pytest.raises(InputError) as err:
        fill_building(building, MODULE, no_setbacks())
    assert err.value.field == "module"
    assert "larger than every roof face" in str(err.value)


def test_setbacks_that_leave_nothing_give_an_empty_layout_with_a_note():
    building = Building((rect_face(width_m=3.0, depth_plan_m=2.0),))
    rules = no_setbacks().with_edge_setback("eave", 0.6).with_edge_setback("ridge", 0.6)
    layout = fill_building(building, MODULE, rules)
    assert layout.count == 0
    assert any("no room for a single module" in n for n in layout.notes)


def test_automatic_pathways_need_a_latitude():
    with pytest.raises(InputError) as err:
        fill_building(hip_roof(12, 9, 26.57, 3.0), MODULE, ifc_2021_residential())
    assert err.value.field == "latitude"


def test_fill_building_hip_roof_all_faces_valid():
    building = hip_roof(14, 10, 26.57, 3.0)
    layout = fill_building(building, MODULE, ifc_2021_residential(), latitude=40)
    assert layout.count > 0
    for face in building.faces:
        mods = [m for m in layout.modules if m.face == face.name]
        if not mods:
            continue
        boxes = shapely.box(*np.array([m.uv_rect for m in mods]).T)
        assert shapely.covers(face.roof_polygon.buffer(1e-6), boxes).all()


def test_compare_orientations_table():
    face, usable = hip_face_12_by_4_5()
    table = compare_orientations(face, MODULE, usable=usable)
    assert isinstance(table, pd.DataFrame)
    assert len(table) == 6
    row = table.set_index("option").loc["landscape, sliding"]
    assert row["modules"] == len(fill_face(face, usable, MODULE,
                                           FillOptions("landscape", rows="sliding")))
    assert row["power_kwp"] == pytest.approx(row["modules"] * 0.330)
    assert row["usable_area_m2"] == pytest.approx(usable.area)
    assert row["usable_use_pct"] == pytest.approx(
        100 * row["modules"] * MODULE.area_m2 / usable.area)
    assert (table["portrait_modules"] + table["landscape_modules"] == table["modules"]).all()
    building_table = compare_orientations(flat_roof(20, 12, 6.0), MODULE, rules=no_setbacks())
    assert building_table["usable_area_m2"].iloc[0] == pytest.approx(240.0)


def test_free_faces_count_as_access_pathways():
    # IFC 2021 §1205.2.1.1: two 36 in pathways from eave to ridge on separate roof planes.
    # On a gable with modules on the south plane only, the free north plane is one of them, so
    # exactly one strip is cut into the south plane; with both planes filled, each gets one.
    from layout.fill.rules import ifc_2021_residential
    from layout.scene.building import gable_roof

    house = gable_roof(12.0, 9.0, 30.0, 3.0)
    spec = generic_60_cell(400.0)
    rules = ifc_2021_residential()
    south_only = fill_building(house, spec, rules, latitude=40.0, array_faces=["south"])
    strips = [n for n in south_only.notes if "access pathway 36 in" in n]
    assert len(strips) == 1 and strips[0].startswith("south")
    assert any(n.startswith("north: left without modules") for n in south_only.notes)
    both = fill_building(house, spec, rules, latitude=40.0)
    assert len([n for n in both.notes if "access pathway 36 in" in n]) == 2
    with pytest.raises(InputError, match="array_faces"):
        fill_building(house, spec, rules, latitude=40.0, array_faces=["garage"])


def test_flat_faces_take_rack_rows_when_asked():
    # Rows spaced by the no-shade window (common practice; REFERENCES.md worked formula) or a
    # GCR; checked against layout.fill.racking, which is itself checked against pvlib's
    # shaded_fraction1d in tests/fill/test_racking.py.
    from layout.fill.racking import row_pitch_from_gcr, row_pitch_no_shade_window
    from layout.fill.rules import ifc_2021_commercial
    from layout.scene.building import flat_roof

    roof = flat_roof(30.0, 20.0, 8.0, parapet_height_m=0.6, name="warehouse")
    rules = ifc_2021_commercial(building_length_m=30.0, building_width_m=20.0)
    spec = generic_72_cell(450.0)
    flush = fill_building(roof, spec, rules, FillOptions(), latitude=40.0)
    assert {m.tilt_deg for m in flush.modules} == {0.0}
    assert not any("ridge setback" in n for n in flush.notes)  # a flat roof has no ridge

    racked = fill_building(roof, spec, rules, FillOptions(rack_tilt_deg=10.0), latitude=40.0)
    assert {m.tilt_deg for m in racked.modules} == {10.0}
    pitch = row_pitch_no_shade_window(spec.length_m, 10.0, 40.0)
    assert any(f"rows {pitch:.3f} m apart" in n for n in racked.notes)
    fronts = sorted({round(min(c[1] for c in m.corners_3d), 6) for m in racked.modules})
    assert np.allclose(np.diff(fronts), pitch)
    assert racked.count < flush.count

    dense = FillOptions(rack_tilt_deg=20.0, rack_gcr=0.5, orientation="landscape")
    by_gcr = fill_building(roof, spec, rules, dense, latitude=40.0)
    fronts = sorted({round(min(c[1] for c in m.corners_3d), 6) for m in by_gcr.modules})
    assert np.allclose(np.diff(fronts), row_pitch_from_gcr(spec.width_m, 0.5))
    assert FillOptions.from_dict(dense.to_dict()) == dense
    with pytest.raises(InputError, match="rack_tilt_deg"):
        FillOptions(rack_tilt_deg=90.0)


def test_kept_face_fills_equal_fresh_ones_and_spare_the_faces_an_edit_left_alone():
    # the fill keeps recent per-face answers (layout.fill.placement._filled_face); a face
    # edited refills, the others come back as they were, and all equal a fill from nothing
    from layout.fill.placement import _filled_face

    rules = ifc_2021_residential()
    house = hip_roof(14.0, 9.0, 30.0, 3.0, name="house")
    faces = list(house.faces)
    faces[0] = replace(faces[0], pitch_deg=33.0)
    edited = replace(house, faces=tuple(faces))
    fill_building(house, MODULE, rules, latitude=40.0)
    before = _filled_face.cache_info()
    kept = fill_building(edited, MODULE, rules, latitude=40.0)
    after = _filled_face.cache_info()
    assert after.hits - before.hits >= len(faces) - 1  # the faces left alone
    assert after.misses - before.misses >= 1  # the edited face
    _filled_face.cache_clear()
    fresh = fill_building(edited, MODULE, rules, latitude=40.0)
    assert kept.modules == fresh.modules and kept.notes == fresh.notes
