import json
import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from layout.errors import InputError
from layout.scene.obstructions import (
    CIRCLE_SEGMENTS,
    LEAF_OFF_TRANSMITTANCE,
    LEAF_ON_TRANSMITTANCE,
    Block,
    Cylinder,
    HorizonProfile,
    Tree,
    deciduous_transmittance,
    obstruction_from_dict,
)

SQUARE = [(0.0, 0.0), (1.0, 0.0), (1.0, 1.0), (0.0, 1.0)]
L_SHAPE = [(0, 0), (4, 0), (4, 1), (1, 1), (1, 3), (0, 3)]


# ------------------------------------------------------------------ construction
def test_signatures_match_design():
    # DESIGN.md: Block(footprint, top, base=0.0), Cylinder(center, radius, top, base=0.0),
    # Tree(center, height, crown_radius, crown_base, trunk_radius=0.2)
    b = Block(SQUARE, 2.0, 1.0)
    assert (b.top, b.base, b.kind) == (2.0, 1.0, "block")
    c = Cylinder((1, 2), 0.1, 3.0, 2.5)
    assert (c.center, c.radius, c.top, c.base, c.kind) == ((1.0, 2.0), 0.1, 3.0, 2.5, "vent")
    t = Tree((5, 5), 12.0, 3.0, 4.0, 0.3)
    assert (t.height, t.crown_radius, t.crown_base, t.trunk_radius) == (12.0, 3.0, 4.0, 0.3)
    assert t.crown_shape == "spheroid" and t.transmittance is None
    # spheroid as DESIGN.md defines it: centred at mid-height between crown_base and height
    assert t.crown_center_z == 8.0 and t.crown_semi_axis_z == 4.0
    with pytest.raises(TypeError):
        Block(SQUARE, 2.0, 0.0, "chimney")  # kind is keyword-only


def test_bounds_and_footprints():
    b = Block(L_SHAPE, 5.0, 2.0)
    assert b.bounds == (0.0, 0.0, 2.0, 4.0, 3.0, 5.0)
    assert b.footprint_polygon.area == pytest.approx(4 + 2)  # closed form: 4x1 + 1x2
    c = Cylinder((1, 1), 0.5, 2.0)
    assert c.bounds == (0.5, 0.5, 0.0, 1.5, 1.5, 2.0)
    # inscribed regular n-gon area (n/2) r² sin(2π/n), closed-form geometry
    n = CIRCLE_SEGMENTS
    assert c.footprint_polygon.area == pytest.approx(n / 2 * 0.25 * math.sin(2 * math.pi / n))
    assert c.footprint_polygon.area == pytest.approx(math.pi * 0.25, rel=2e-3)
    t = Tree((0, 0), 10, 3, 2, 0.2)
    assert t.bounds == (-3.0, -3.0, 0.0, 3.0, 3.0, 10.0)
    assert t.footprint_polygon.area == pytest.approx(math.pi * 9, rel=2e-3)


def test_closed_ring_footprint_is_accepted():
    b = Block([*SQUARE, SQUARE[0]], 1.0)
    assert len(b.footprint) == 4


@pytest.mark.parametrize(
    ("make", "field"),
    [
        (lambda: Block(SQUARE, 1.0, 1.0), "top"),
        (lambda: Block(SQUARE, 1.0, 2.0), "top"),
        (lambda: Block(SQUARE, float("nan")), "top"),
        (lambda: Block(SQUARE, 1.0, float("inf")), "base"),
        (lambda: Block([(0, 0), (1, 1), (1, 0), (0, 1)], 1.0), "footprint"),  # bow tie
        (lambda: Block([(0, 0), (1, 0)], 1.0), "footprint"),
        (lambda: Block([(0, 0), (1, 0), (2, 0)], 1.0), "footprint"),  # no area
        (lambda: Block([(0, 0), (1, 0), (1, 0), (0, 1)], 1.0), "footprint[1]"),
        (lambda: Block([(0, 0), (1, float("nan")), (0, 1)], 1.0), "footprint[1]"),
        (lambda: Block(SQUARE, 1.0, kind="spaceship"), "kind"),
        (lambda: Block(SQUARE, 1.0, name=3), "name"),
        (lambda: Cylinder((0, 0), 0.0, 1.0), "radius"),
        (lambda: Cylinder((0, 0), -1.0, 1.0), "radius"),
        (lambda: Cylinder((0, 0, 0), 1.0, 1.0), "center"),
        (lambda: Cylinder((0, 0), 1.0, 1.0, 3.0), "top"),
        (lambda: Tree((0, 0), 0.0, 1.0, 0.0), "height"),
        (lambda: Tree((0, 0), 10.0, 0.0, 2.0), "crown_radius"),
        (lambda: Tree((0, 0), 10.0, 3.0, 10.0), "crown_base"),  # crown must lie inside height
        (lambda: Tree((0, 0), 10.0, 3.0, 12.0), "crown_base"),
        (lambda: Tree((0, 0), 10.0, 3.0, -1.0), "crown_base"),
        (lambda: Tree((0, 0), 10.0, 3.0, 2.0, 0.0), "trunk_radius"),
        (lambda: Tree((0, 0), 10.0, 3.0, 2.0, crown_shape="cube"), "crown_shape"),
        (lambda: Tree((0, 0), 10.0, 3.0, 2.0, transmittance=[0.5] * 11), "transmittance"),
        (lambda: Tree((0, 0), 10.0, 3.0, 2.0, transmittance=[0.5] * 11 + [1.5]),
         "transmittance[11]"),
        (lambda: HorizonProfile((0, 90), (5,)), "elevation_deg"),
        (lambda: HorizonProfile((0, 90, 45), (5, 5, 5)), "azimuth_deg[2]"),
        (lambda: HorizonProfile((0, 360), (5, 5)), "azimuth_deg[1]"),
        (lambda: HorizonProfile((0,), (95,)), "elevation_deg[0]"),
        (lambda: HorizonProfile((), ()), "azimuth_deg"),
    ],
)
def test_bad_input_names_the_field(make, field):
    with pytest.raises(InputError) as info:
        make()
    assert info.value.field == field


# ------------------------------------------------------------------ trees
def test_deciduous_preset_uses_heisler_values():
    # Heisler (1986), Urban Ecology 9:337-359: sugar maple crown transmittance about 0.6
    # leafless and 0.2 in leaf (REFERENCES.md)
    assert (LEAF_OFF_TRANSMITTANCE, LEAF_ON_TRANSMITTANCE) == (0.6, 0.2)
    t = Tree.deciduous((0, 0), 15.0, 4.0, 3.0)
    tau = t.monthly_transmittance
    assert tau[0] == 0.6 and tau[11] == 0.6  # January, December leafless
    assert tau[6] == 0.2  # July in leaf
    south = deciduous_transmittance(hemisphere="south")
    assert south[0] == 0.2 and south[6] == 0.6  # seasons flip six months
    assert sorted(south) == sorted(tau.tolist())
    assert np.array_equal(Tree((0, 0), 5, 1, 1).monthly_transmittance, np.zeros(12))
    with pytest.raises(InputError) as info:
        deciduous_transmittance(leaf_on_months=[5, 13])
    assert info.value.field == "leaf_on_months[1]"


# ------------------------------------------------------------------ horizon
def test_horizon_is_piecewise_linear_and_periodic():
    h = HorizonProfile((10, 100, 200), (4, 10, 2))
    assert h.elevation_at(10) == 4 and h.elevation_at(55) == pytest.approx(7)
    # between 200 and 370 (= 10 + 360): 2 → 4 over 170 degrees
    assert h.elevation_at(285) == pytest.approx(3)
    assert h.elevation_at(-75) == pytest.approx(3)
    assert h.elevation_at(0) == pytest.approx(2 + 2 * 160 / 170)
    assert np.allclose(h.elevation_at([10, 370, 730]), 4)
    assert HorizonProfile.uniform(7.5).elevation_at([0, 123.4]).tolist() == [7.5, 7.5]
    assert h.blocks([55, 55], [6.9, 7.1]).tolist() == [True, False]
    south = np.array([[0.0, -math.cos(math.radians(3)), math.sin(math.radians(3))]])
    assert HorizonProfile.uniform(5).blocks_vectors(south).tolist() == [True]
    s = pd.Series([4, 10, 2], index=[10, 100, 200])
    assert HorizonProfile.from_series(s) == h


# ------------------------------------------------------------------ data round trips
finite = st.floats(-1e4, 1e4, allow_nan=False)
positive = st.floats(0.01, 100.0)


@st.composite
def obstructions(draw):
    choice = draw(st.sampled_from(["block", "cylinder", "tree", "horizon"]))
    x, y = draw(finite), draw(finite)
    if choice == "block":
        w, d = draw(positive), draw(positive)
        base = draw(st.floats(-10, 50))
        return Block([(x, y), (x + w, y), (x + w, y + d), (x, y + d)], base + draw(positive),
                     base, kind=draw(st.sampled_from(["chimney", "wall", "building"])),
                     name=draw(st.text(max_size=5)))
    if choice == "cylinder":
        base = draw(st.floats(-10, 50))
        return Cylinder((x, y), draw(positive), base + draw(positive), base, kind="pipe")
    if choice == "tree":
        height = draw(st.floats(1.0, 40.0))
        tau = draw(st.none() | st.lists(st.floats(0, 1), min_size=12, max_size=12))
        return Tree((x, y), height, draw(positive), draw(st.floats(0, 0.99)) * height,
                    draw(positive), crown_shape=draw(st.sampled_from(["spheroid", "cone"])),
                    transmittance=tau, name="oak")
    az = sorted(set(draw(st.lists(st.floats(0, 359.9), min_size=1, max_size=6))))
    return HorizonProfile(az, [draw(st.floats(-5, 60)) for _ in az])


@settings(max_examples=60, deadline=None)
@given(obstructions())
def test_round_trip_is_exact(obstruction):
    data = obstruction.to_dict()
    again = obstruction_from_dict(json.loads(json.dumps(data)))
    assert again == obstruction
    assert again.to_dict() == data
    assert type(obstruction).from_dict(data) == obstruction


@pytest.mark.parametrize(
    ("data", "field"),
    [
        ({"footprint": SQUARE, "top": 1}, "type"),
        ({"type": "dome"}, "type"),
        ({"type": "block", "top": 1}, "footprint"),
        ({"type": "block", "footprint": SQUARE, "top": 1, "colour": "red"}, "colour"),
        ({"type": "cylinder", "center": [0, 0], "radius": 1}, "top"),
        ({"type": "tree", "center": [0, 0], "height": "tall", "crown_radius": 1,
          "crown_base": 1}, "height"),
        ({"type": "horizon", "azimuth_deg": [0]}, "elevation_deg"),
    ],
)
def test_from_dict_names_the_field(data, field):
    with pytest.raises(InputError) as info:
        obstruction_from_dict(data)
    assert info.value.field == field


def test_from_dict_rejects_wrong_type_tag():
    data = Cylinder((0, 0), 1, 2).to_dict()
    with pytest.raises(InputError) as info:
        Block.from_dict(data)
    assert info.value.field == "type"


def test_translated_moves_geometry():
    b = Block(SQUARE, 2.0, 1.0).translated(1, 2, 0.5)
    assert b.bounds == (1.0, 2.0, 1.5, 2.0, 3.0, 2.5)
    assert Cylinder((0, 0), 1, 2).translated(3, 4).center == (3.0, 4.0)
    assert Tree((0, 0), 5, 1, 1).translated(-1, 1).center == (-1.0, 1.0)


# ------------------------------------------------------------------ plates
def test_plate_geometry_and_round_trip():
    from layout.scene.obstructions import PLANE_TOLERANCE_M, Plate
    from layout.scene.roof import RoofFace

    # closed form: a 2 m × 1.5 m rectangle tilted 30° has true area 3 m² and the unit normal
    # (0, -sin 30°, cos 30°) up to sign
    t = math.radians(30)
    corners = [(0, 0, 3), (2, 0, 3), (2, 1.5 * math.cos(t), 3 + 1.5 * math.sin(t)),
               (0, 1.5 * math.cos(t), 3 + 1.5 * math.sin(t))]
    plate = Plate(corners, kind="module", name="m1")
    _, e1, e2, normal = plate.frame
    assert plate.area_m2 == pytest.approx(3.0)
    assert np.allclose(np.abs(normal), [0, math.sin(t), math.cos(t)])
    assert abs(e1 @ e2) < 1e-12 and abs(e1 @ normal) < 1e-12
    assert plate.bounds == pytest.approx((0, 0, 3, 2, 1.5 * math.cos(t), 3 + 1.5 * math.sin(t)))
    data = json.loads(json.dumps(plate.to_dict()))
    assert Plate.from_dict(data) == plate and obstruction_from_dict(data) == plate
    assert plate.translated(1, 2, 3).bounds[:3] == pytest.approx((1, 2, 6))
    face = RoofFace([(0, 0), (10, 0), (10, 6), (0, 6)], 30.0, 180.0, 3.0, name="south")
    from_face = Plate.from_face(face)
    assert from_face.name == "south" and from_face.area_m2 == pytest.approx(face.true_area_m2)
    # a vertical plate: its plan footprint is a line
    wall = Plate([(0, 0, 0), (4, 0, 0), (4, 0, 2), (0, 0, 2)])
    assert wall.footprint_polygon.geom_type == "LineString"
    assert wall.footprint_polygon.length == pytest.approx(4.0)
    assert PLANE_TOLERANCE_M == 1e-3


@pytest.mark.parametrize(("corners", "field"), [
    ([(0, 0, 0), (1, 0, 0)], "corners"),
    ([(0, 0, 0), (1, 0, 0), (1, 1, 0), (1, 0, 0)], "corners[1]"),
    ([(0, 0, 0), (1, 0, 0), (2, 0, 0)], "corners"),  # no area
    ([(0, 0, 0), (1, 0, 0), (1, 1, 0.01), (0, 1, 0)], "corners[2]"),  # 1 cm off the plane
    ([(0, 0, 0), (1, 1, 0), (1, 0, 0), (0, 1, 0)], "corners"),  # bow tie
    ([(0, 0, 0), (1, 0, math.nan), (1, 1, 0)], "corners[1]"),
])
def test_plate_rejects_bad_corners(corners, field):
    from layout.scene.obstructions import Plate

    with pytest.raises(InputError) as info:
        Plate(corners)
    assert info.value.field == field


def test_plate_rejects_bad_fields():
    from layout.scene.obstructions import Plate

    square = [(0, 0, 0), (1, 0, 0), (1, 1, 0), (0, 1, 0)]
    with pytest.raises(InputError) as info:
        Plate(square, kind="chimney")
    assert info.value.field == "kind"
    with pytest.raises(InputError) as info:
        Plate.from_dict({"type": "plate", "corners": square, "colour": "red"})
    assert info.value.field == "colour"
    with pytest.raises(InputError) as info:
        Plate.from_dict({"type": "plate"})
    assert info.value.field == "corners"
