import io
import json
import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from scipy import stats

from layout.errors import InputError
from layout.scene.obstructions import OBSTRUCTION_KINDS, Block, Cylinder, Tree
from layout.scene.survey import (
    ANGLE_TOLERANCE_DEG,
    BEARING_TOLERANCE_DEG,
    BLOCK_KINDS,
    COMPUTED_COLUMNS,
    CYLINDER_KINDS,
    DEFAULT_EYE_HEIGHT_M,
    GROWTH_CLASS_LIMITS_M_PER_YR,
    GROWTH_CLASS_RATES_M_PER_YR,
    LASER_DISTANCE_TOLERANCE_M,
    PROJECTION_YEARS,
    SURVEY_COLUMNS,
    TAPE_DISTANCE_TOLERANCE_M,
    LossRange,
    Reading,
    SurveyEntry,
    SurveyProblem,
    build_obstruction,
    elevation_tangent,
    entries_from_table,
    grown_tree,
    growth_class,
    growth_rate,
    height_error_from_angle,
    height_laser,
    height_per_degree,
    height_range,
    height_tangent,
    laser_horizontal_distance,
    loss_range,
    obstructions_at_year,
    position_from_bearing,
    projected_trees,
    read_survey_csv,
    sample_entry,
    sample_obstructions,
    sample_readings,
    survey_table,
    true_bearing,
)
from layout.shading import shaded
from layout.units import FOOT_M, feet_to_m, m_to_feet

DATA = Path(__file__).resolve().parents[1] / "data"


def tree_entry(**kw):
    args = dict(crown_radius_m=3.0, crown_base_m=2.0)
    args.update(kw)
    return SurveyEntry("tree", args.pop("bearing_deg", 180.0), args.pop("distance_m", 15.0),
                       args.pop("top_angle_deg", 40.0), **args)


# ------------------------------------------------------------------ field formulas
def test_tangent_worked_example_feet():
    # REFERENCES.md "Survey" (forestry mensuration, USDA Forest Service field guides):
    # d = 50 ft, θ = 17°, eye 5.5 ft -> 20.8 ft (recomputed 20.79 ft: 50·tan 17° = 15.287).
    h = height_tangent(feet_to_m(50), 17.0, eye_height_m=feet_to_m(5.5))
    assert m_to_feet(h) == pytest.approx(20.79, abs=0.005)
    assert round(m_to_feet(h), 1) == 20.8
    assert elevation_tangent(50.0, 17.0, eye_height_m=5.5) == pytest.approx(20.79, abs=0.005)


def test_tangent_two_angle_form():
    # Hand-worked: d = 20 m, top 30°, base -5°: 20·(0.577350 + 0.087489) = 13.2968 m.
    h = height_tangent(20.0, 30.0, base_angle_deg=-5.0)
    assert h == pytest.approx(13.2968, abs=5e-4)
    # Closure (geometry): on level ground the base is seen at -atan(eye/d), so the two-angle
    # form must equal d·tan θ + eye height.
    d, eye = 17.0, 1.55
    base = -math.degrees(math.atan(eye / d))
    assert height_tangent(d, 41.0, base_angle_deg=base) == pytest.approx(
        height_tangent(d, 41.0, eye_height_m=eye), rel=1e-12)
    # A wall above the ground: foot seen above eye level shortens the object.
    assert height_tangent(10.0, 45.0, base_angle_deg=30.0) == pytest.approx(
        10 * (1 - 1 / math.sqrt(3)), rel=1e-12)


def test_laser_three_four_five():
    # Closed form: a 3-4-5 triangle scaled by 5: s = 25 m at atan(3/4) has rise 15, run 20.
    angle = math.degrees(math.atan2(3, 4))
    assert laser_horizontal_distance(25.0, angle) == pytest.approx(20.0, rel=1e-12)
    assert height_laser(25.0, angle, eye_height_m=1.6) == pytest.approx(16.6, rel=1e-12)
    base = -math.degrees(math.atan(1.6 / 20.0))
    assert height_laser(25.0, angle, base_angle_deg=base) == pytest.approx(16.6, rel=1e-12)
    # the same tree by the tangent method from the same spot
    assert height_tangent(20.0, angle, eye_height_m=1.6) == pytest.approx(16.6, rel=1e-12)


@pytest.mark.parametrize("kind", ["scalar", "array", "list"])
def test_formulas_take_arrays(kind):
    d = {"scalar": 10.0, "array": np.array([10.0, 20.0]), "list": [10.0, 20.0]}[kind]
    h = height_tangent(d, 45.0, eye_height_m=1.5)
    if kind == "scalar":
        assert isinstance(h, float) and h == pytest.approx(11.5)
    else:
        assert isinstance(h, np.ndarray) and h == pytest.approx([11.5, 21.5])


def test_sensitivity_to_half_a_degree_at_15_m():
    # Derived by hand for d = 15 m, δθ = 0.5° = 0.0087266 rad:
    # θ = 45°: tan 45.5° = (1 + tan 0.5°)/(1 - tan 0.5°) = 1.0087269/0.9912731 = 1.017607,
    #   exact ΔH = 15·(1.017607 - 1) = 0.2641 m; derivative d·sec²θ·δθ = 15·2·0.0087266
    #   = 0.2618 m.
    # θ = 30°: tan 30.5° = 0.589045 (tables), tan 30° = 0.577350: ΔH = 15·0.011695 = 0.1754 m;
    #   derivative 15·(4/3)·0.0087266 = 0.1745 m.
    assert height_error_from_angle(15.0, 45.0, 0.5) == pytest.approx(0.2641, abs=1e-4)
    assert height_per_degree(15.0, 45.0) * 0.5 == pytest.approx(0.2618, abs=1e-4)
    assert height_error_from_angle(15.0, 30.0, 0.5) == pytest.approx(0.1754, abs=1e-4)
    assert height_per_degree(15.0, 30.0) * 0.5 == pytest.approx(0.1745, abs=1e-4)
    # Taylor: the exact change exceeds the linear one by d·sec²θ·tanθ·δθ² + O(δθ³)
    # (= 0.00228 m at 45°).
    delta = math.radians(0.5)
    second = 15.0 * 2.0 * 1.0 * delta**2
    gap = height_error_from_angle(15.0, 45.0, 0.5) - height_per_degree(15.0, 45.0) * 0.5
    assert gap == pytest.approx(second, rel=0.02)
    # and the height error of the tangent formula itself matches: H(θ+δ) - H(θ)
    assert (height_tangent(15.0, 45.5) - height_tangent(15.0, 45.0)
            == pytest.approx(height_error_from_angle(15.0, 45.0, 0.5), rel=1e-12))


def test_default_angle_tolerance_from_brack_and_wood():
    # Brack & Wood (1998): clinometer heights agree within about ±2.5 %, ~1 m on a 40 m tree.
    # Our default angle tolerance, read at 45° from 40 m (tree ≈ 40 m), must give that.
    assert ANGLE_TOLERANCE_DEG == pytest.approx(0.716, abs=1e-3)
    up = height_error_from_angle(40.0, 45.0, ANGLE_TOLERANCE_DEG)
    down = -height_error_from_angle(40.0, 45.0, -ANGLE_TOLERANCE_DEG)
    assert 0.5 * (up + down) == pytest.approx(1.0, abs=0.01)
    assert 0.5 * (up + down) / 40.0 == pytest.approx(0.025, abs=3e-4)


def test_bearing_and_declination_hand_example():
    # Hand-worked: station (10, 20); compass reads 200° where declination is 10° W (-10),
    # so the true bearing is 190°; 30 m away: x = 10 - 30·sin 10° = 10 - 5.2094 = 4.7906,
    # y = 20 - 30·cos 10° = 20 - 29.5442 = -9.5442.
    assert true_bearing(200.0, -10.0) == pytest.approx(190.0)
    x, y = position_from_bearing(30.0, 200.0, origin=(10.0, 20.0), declination_deg=-10.0)
    assert (x, y) == pytest.approx((4.7906, -9.5442), abs=1e-4)
    # East declination wraps past north: compass 350° with 15° E is true 5°.
    assert true_bearing(350.0, 15.0) == pytest.approx(5.0)
    # Cardinal points (geometry): bearing 90° is +x (east), 180° is -y (south).
    x, y = position_from_bearing(np.array([5.0, 5.0]), np.array([90.0, 180.0]))
    assert x == pytest.approx([5.0, 0.0], abs=1e-12) and y == pytest.approx([0.0, -5.0],
                                                                            abs=1e-12)


# ------------------------------------------------------------------ entries
def test_entry_defaults_and_tree():
    # The worked example as an entry: the tree stands due south, 50 ft away.
    e = SurveyEntry("tree", 180.0, feet_to_m(50), 17.0, eye_height_m=feet_to_m(5.5),
                    crown_radius_m=3.0, crown_base_m=1.5, name="maple")
    assert e.top_angle_deg == Reading(17.0, ANGLE_TOLERANCE_DEG)
    assert e.distance_m.tolerance == TAPE_DISTANCE_TOLERANCE_M
    assert e.bearing_deg.tolerance == BEARING_TOLERANCE_DEG
    tree = build_obstruction(e)
    assert isinstance(tree, Tree) and tree.name == "maple"
    assert m_to_feet(tree.height) == pytest.approx(20.79, abs=0.005)
    assert tree.center == pytest.approx((0.0, -feet_to_m(50)), abs=1e-9)
    assert tree.crown_base == 1.5 and tree.transmittance is None
    laser = SurveyEntry("tree", 0.0, 25.0, math.degrees(math.atan2(3, 4)), method="laser",
                        crown_radius_m=2.0, crown_base_m=3.0)
    assert laser.distance_m.tolerance == LASER_DISTANCE_TOLERANCE_M
    assert build_obstruction(laser).height == pytest.approx(15.0 + DEFAULT_EYE_HEIGHT_M)
    assert build_obstruction(laser).center == pytest.approx((0.0, 20.0), abs=1e-9)


def test_entry_crown_base_angle_and_slope():
    # Tree on a bank, seen from 12 m: base at -10°, crown base at 5°, top at 40°.
    # Closed form: height = 12·(tan 40° + tan 10°), crown base = 12·(tan 5° + tan 10°).
    t = math.tan
    e = SurveyEntry("tree", 90.0, 12.0, 40.0, base_angle_deg=-10.0, crown_radius_m=2.5,
                    crown_base_angle_deg=5.0, trunk_radius_m=0.3, deciduous=True)
    tree = build_obstruction(e)
    r = math.radians
    assert tree.height == pytest.approx(12 * (t(r(40)) + t(r(10))), rel=1e-12)
    assert tree.crown_base == pytest.approx(12 * (t(r(5)) + t(r(10))), rel=1e-12)
    assert tree.trunk_radius == 0.3
    assert tree.transmittance == Tree.deciduous((0, 0), 1, 1, 0).transmittance
    south = build_obstruction(e, hemisphere="south")
    assert south.transmittance[0] == tree.transmittance[6]


def test_entry_block_footprint_and_cylinder():
    # Chimney due east 8 m, seen face on: width across the line of sight (north-south).
    e = SurveyEntry("chimney", 90.0, 8.0, 30.0, base_angle_deg=20.0, width_m=0.8, depth_m=0.6,
                    station_z_m=0.5, eye_height_m=1.5)
    b = build_obstruction(e)
    assert isinstance(b, Block) and b.kind == "chimney"
    xmin, ymin, zmin, xmax, ymax, zmax = b.bounds
    assert (xmin, xmax, ymin, ymax) == pytest.approx((7.7, 8.3, -0.4, 0.4), abs=1e-12)
    r = math.radians
    assert zmax == pytest.approx(2.0 + 8 * math.tan(r(30)), rel=1e-12)
    assert zmin == pytest.approx(2.0 + 8 * math.tan(r(20)), rel=1e-12)
    # An axis read by compass, with declination: width along true 45° (magnetic 55°, 10° W).
    rotated = build_obstruction(SurveyEntry("wall", 0.0, 10.0, 20.0, width_m=4.0, depth_m=0.2,
                                            axis_deg=55.0, declination_deg=-10.0))
    pts = np.array(rotated.footprint)
    long_edge = pts[1] - pts[0]
    assert np.linalg.norm(long_edge) == pytest.approx(4.0)
    assert math.degrees(math.atan2(long_edge[0], long_edge[1])) == pytest.approx(45.0)
    assert rotated.footprint_polygon.area == pytest.approx(0.8)
    assert rotated.footprint_polygon.centroid.coords[0] == pytest.approx(
        (10 * math.sin(r(-10)), 10 * math.cos(r(-10))))
    c = build_obstruction(SurveyEntry("vent", 45.0, 20.0, 15.0, method="laser", radius_m=0.05,
                                      base_angle_deg=12.0))
    assert isinstance(c, Cylinder) and c.radius == 0.05 and c.kind == "vent"


def test_kinds_are_obstruction_kinds():
    assert set(BLOCK_KINDS) | set(CYLINDER_KINDS) <= set(OBSTRUCTION_KINDS)


@pytest.mark.parametrize("kwargs, field", [
    (dict(kind="shed"), "kind"),
    (dict(method="sextant"), "method"),
    (dict(crown_radius_m=None), "crown_radius_m"),
    (dict(crown_base_angle_deg=5.0), "crown_base_m"),
    (dict(crown_base_m=None), "crown_base_angle_deg"),
    (dict(width_m=1.0), "width_m"),
    (dict(top_angle_deg=90.0), "top_angle_deg"),
    (dict(top_angle_deg=Reading(88.0, 3.0)), "top_angle_deg.tolerance"),
    (dict(distance_m=Reading(5.0, 5.0)), "distance_m.tolerance"),
    (dict(bearing_deg=360.0), "bearing_deg"),
    (dict(declination_deg=200.0), "declination_deg"),
    (dict(eye_height_m=-1.0), "eye_height_m"),
    (dict(growth_m_per_yr="quick"), "growth_m_per_yr"),
    (dict(growth_m_per_yr=5.0), "growth_m_per_yr"),
    (dict(crown_base_m=Reading(14.0, 0.5)), "crown_base_m"),
    (dict(top_angle_deg=-10.0), "top_angle_deg"),
    (dict(deciduous="yes"), "deciduous"),
])
def test_entry_errors_name_the_field(kwargs, field):
    args = dict(kind="tree", bearing_deg=180.0, distance_m=15.0, top_angle_deg=40.0,
                crown_radius_m=3.0, crown_base_m=2.0)
    args.update(kwargs)
    with pytest.raises(InputError) as info:
        SurveyEntry.from_dict(args)
    assert info.value.field == field


def test_tolerance_box_is_checked():
    # A low chimney seen from far: nominal top above base, but the tolerances allow the
    # reverse (20·(tan 10.7° - tan 9.3°) < 0 is impossible; 20·(tan 7° - tan 10.2°) < 0).
    SurveyEntry("chimney", 0.0, 20.0, Reading(10.0, 0.0), base_angle_deg=Reading(9.5, 0.0),
                width_m=1.0, depth_m=1.0)
    with pytest.raises(InputError) as info:
        SurveyEntry("chimney", 0.0, 20.0, Reading(10.0, 3.0), base_angle_deg=9.5,
                    width_m=1.0, depth_m=1.0)
    assert info.value.field == "top_angle_deg" and "tolerance" in info.value.problem
    # small sizes get a default tolerance of at most half their size
    e = SurveyEntry("pipe", 0.0, 5.0, 30.0, radius_m=0.04)
    assert e.radius_m.tolerance == pytest.approx(0.02)


def test_height_range_corners():
    # Closed form: with distance and angle tolerances the extremes are at the corners:
    # (d ± δd)·tan(θ ± δθ) + eye.
    e = tree_entry(distance_m=Reading(15.0, 0.2), top_angle_deg=Reading(40.0, 1.0),
                   crown_base_m=Reading(2.0, 0.0))
    low, high = height_range(e)
    t, r = math.tan, math.radians
    assert low == pytest.approx(14.8 * t(r(39)) + DEFAULT_EYE_HEIGHT_M, rel=1e-12)
    assert high == pytest.approx(15.2 * t(r(41)) + DEFAULT_EYE_HEIGHT_M, rel=1e-12)


# ------------------------------------------------------------------ plain data
readings = st.builds(Reading, st.floats(0.5, 0.9), st.floats(0.0, 0.2))


@st.composite
def entries(draw):
    kind = draw(st.sampled_from(["tree", "chimney", "wall", "vent", "pole"]))
    method = draw(st.sampled_from(["tangent", "laser"]))
    common = dict(
        method=method,
        base_angle_deg=draw(st.none() | st.builds(Reading, st.floats(-20, 5),
                                                   st.floats(0, 1))),
        station_x_m=draw(st.floats(-50, 50)), station_y_m=draw(st.floats(-50, 50)),
        station_z_m=draw(st.floats(-3, 3)), eye_height_m=draw(st.floats(0.5, 2.0)),
        declination_deg=draw(st.floats(-30, 30)),
        name=draw(st.text(st.characters(codec="utf-8", exclude_categories=("Cc", "Cs")),
                          max_size=12)),
    )
    if kind == "tree":
        extra = dict(crown_radius_m=draw(st.builds(Reading, st.floats(0.5, 8),
                                                   st.floats(0, 0.4))),
                     trunk_radius_m=draw(st.none() | st.floats(0.05, 1.0)),
                     deciduous=draw(st.booleans()),
                     growth_m_per_yr=draw(st.none() | st.sampled_from(["slow", "medium", "fast"])
                                          | st.floats(0, 3)))
        if draw(st.booleans()):
            extra["crown_base_m"] = draw(st.builds(Reading, st.floats(0.5, 3),
                                                   st.floats(0, 0.4)))
        else:
            extra["crown_base_angle_deg"] = draw(st.builds(Reading, st.floats(8, 15),
                                                           st.floats(0, 1)))
    elif kind in ("chimney", "wall"):
        extra = dict(width_m=draw(st.builds(Reading, st.floats(0.3, 20), st.floats(0, 0.1))),
                     depth_m=draw(st.builds(Reading, st.floats(0.3, 20), st.floats(0, 0.1))),
                     axis_deg=draw(st.none() | st.floats(0, 359.9)))
    else:
        extra = dict(radius_m=draw(readings))
    try:
        return SurveyEntry(kind, draw(st.builds(Reading, st.floats(0, 359.9), st.floats(0, 5))),
                           draw(st.builds(Reading, st.floats(3, 60), st.floats(0, 0.5))),
                           draw(st.builds(Reading, st.floats(25, 60), st.floats(0, 1.5))),
                           **common, **extra)
    except InputError:
        assume(False)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(entries())
def test_entry_dict_round_trip(entry):
    data = entry.to_dict()
    assert SurveyEntry.from_dict(json.loads(json.dumps(data))) == entry


def test_from_dict_errors():
    with pytest.raises(InputError) as info:
        SurveyEntry.from_dict({"kind": "tree", "bearing_deg": 1, "distance_m": 2,
                               "top_angle_deg": 3, "colour": "green"})
    assert info.value.field == "colour"
    with pytest.raises(InputError) as info:
        SurveyEntry.from_dict({"kind": "tree", "bearing_deg": 1, "distance_m": 2})
    assert info.value.field == "top_angle_deg"
    with pytest.raises(InputError) as info:
        SurveyEntry.from_dict({"kind": "vent", "bearing_deg": 1, "distance_m": 2,
                               "top_angle_deg": 30, "radius_m": {"value": 0.1}})
    assert info.value.field == "radius_m.tolerance"


# ------------------------------------------------------------------ sampling
def test_sampling_distributions():
    e = tree_entry(distance_m=Reading(15.0, 0.4), top_angle_deg=Reading(40.0, 1.0))
    draws = sample_readings(e, 20000, seed=3)
    assert set(draws) == {"bearing_deg", "distance_m", "top_angle_deg", "crown_radius_m",
                          "crown_base_m"}
    z = (draws["top_angle_deg"] - 40.0) / 1.0
    assert np.abs(z).max() <= 1.0
    # normal with σ = tolerance/2 truncated at ±2σ: scipy.stats.truncnorm(-2, 2)
    assert z.std() == pytest.approx(stats.truncnorm(-2, 2).std() / 2, rel=0.02)
    u = sample_readings(e, 20000, seed=3, distribution="uniform")
    # uniform over ±tolerance: standard deviation tolerance/√3
    assert u["distance_m"].std() == pytest.approx(0.4 / math.sqrt(3), rel=0.02)
    again = sample_readings(e, 20000, seed=3)
    assert np.array_equal(again["top_angle_deg"], draws["top_angle_deg"])
    with pytest.raises(InputError):
        sample_readings(e, 0)
    with pytest.raises(InputError):
        sample_readings(e, 5, distribution="triangular")


def test_sample_builds_valid_obstructions_within_range():
    e = SurveyEntry("chimney", 90.0, 8.0, 30.0, base_angle_deg=20.0, width_m=0.8, depth_m=0.6)
    low, high = height_range(e)
    blocks = sample_entry(e, 200, seed=1)
    heights = np.array([b.top - b.base for b in blocks])
    assert all(isinstance(b, Block) for b in blocks)
    assert heights.min() >= low and heights.max() <= high
    assert heights.std() > 0
    sets = sample_obstructions([e, tree_entry()], 5, seed=2)
    assert len(sets) == 5 and all(len(s) == 2 for s in sets)
    assert isinstance(sets[0][1], Tree)
    assert sample_obstructions([e, tree_entry()], 5, seed=2) == sets


def test_loss_range_of_tree_height():
    # evaluate = tree height. Only the top angle varies (uniform over ±1°), so the p-th
    # percentile of the height is the height at the p-th percentile of the angle:
    # 40° - 0.9° and 40° + 0.9° for p = 5 and 95 (uniform quantiles, closed form).
    e = tree_entry(distance_m=Reading(15.0, 0.0), top_angle_deg=Reading(40.0, 1.0),
                   bearing_deg=Reading(180.0, 0.0))
    result = loss_range([e], lambda obs: obs[0].height, samples=2000, seed=7,
                        distribution="uniform")
    assert isinstance(result, LossRange)
    assert (result.samples, result.seed, result.percentiles) == (2000, 7, (5.0, 95.0))
    expected = height_tangent(15.0, np.array([39.1, 40.9]), eye_height_m=DEFAULT_EYE_HEIGHT_M)
    # sampling error of a 5 % quantile from 2000 uniform draws: ~0.01 of the range
    assert result.values == pytest.approx(expected, abs=0.02 * 15 * 2 * math.radians(1) * 1.5)
    assert result.nominal == pytest.approx(height_tangent(15.0, 40.0))
    # truncated normal: quantiles from scipy.stats.truncnorm(-2, 2), scaled by σ = 0.5°
    normal = loss_range([e], lambda obs: obs[0].height, samples=2000, seed=7)
    q = stats.truncnorm(-2, 2).ppf([0.05, 0.95]) * 0.5
    assert normal.values == pytest.approx(height_tangent(15.0, 40.0 + q), abs=0.02)
    data = json.loads(json.dumps(normal.to_dict()))
    assert data["seed"] == 7 and data["samples"] == 2000
    assert LossRange.from_dict(data).to_dict() == normal.to_dict()
    other = loss_range([e], lambda obs: obs[0].height, samples=2000, seed=8)
    assert not np.array_equal(other.values, normal.values)
    same = loss_range([e], lambda obs: obs[0].height, samples=2000, seed=7)
    assert np.array_equal(same.values, normal.values)


def test_loss_range_with_shaded_pole():
    # A pole at the origin (radius 0.1 m) whose top is read with a clinometer; points on a
    # vertical line 20 m east; the sun in the west at elevation 20°. Closed-form geometry:
    # a point at height z is shaded when z + (20 - 0.1)·tan 20° <= top.
    e = SurveyEntry("pole", Reading(0.0, 0.0), Reading(15.0, 0.0), Reading(30.0, 1.0),
                    radius_m=Reading(0.1, 0.0), station_y_m=-15.0)
    z = np.linspace(0.05, 9.95, 100)
    points = np.column_stack([np.full_like(z, 20.0), np.zeros_like(z), z])
    alpha = math.radians(20.0)
    sun = np.array([[-math.cos(alpha), 0.0, math.sin(alpha)]])

    def fraction(obs):
        return shaded(points, sun, obs).mean()

    def closed_form(top):
        return np.mean(z + 19.9 * math.tan(alpha) <= top)

    n, seed = 60, 11
    result = loss_range([e], fraction, samples=n, seed=seed, percentiles=(5, 50, 95))
    tops = [s[0].top for s in sample_obstructions([e], n, seed)]
    expected = np.percentile([closed_form(t) for t in tops], (5, 50, 95))
    assert result.values == pytest.approx(expected, abs=1e-12)
    assert result.nominal == pytest.approx(closed_form(build_obstruction(e).top))
    assert result.values[0] < result.nominal < result.values[2]


def test_loss_range_per_module_and_year():
    e = tree_entry(growth_m_per_yr="medium")
    result = loss_range([e], lambda obs: np.array([obs[0].height, obs[0].crown_radius]),
                        samples=50, seed=0, year=10)
    assert result.values.shape == (2, 2)
    grown = obstructions_at_year([e], 10)[0]
    assert result.nominal == pytest.approx([grown.height, grown.crown_radius])
    assert grown.height == pytest.approx(build_obstruction(e).height + 10 * 18 * 0.0254)
    narrow = loss_range([e], lambda obs: obs[0].crown_radius, samples=5, year=10,
                        widen_crown=False)
    assert narrow.nominal == build_obstruction(e).crown_radius
    with pytest.raises(InputError):
        loss_range([e], lambda obs: 0.0, percentiles=(5, 120))


# ------------------------------------------------------------------ growth
def test_growth_classes_from_extension_tables():
    # REFERENCES.md "tree growth classes" (state forestry extension tables, common practice):
    # slow <= 0.30 m/yr, medium 0.30-0.61 m/yr, fast >= 0.61 m/yr; i.e. 12 and 24 in/yr.
    slow_max, fast_min = GROWTH_CLASS_LIMITS_M_PER_YR
    assert round(slow_max, 2) == 0.30 and round(fast_min, 2) == 0.61
    assert slow_max == pytest.approx(12 * 0.0254) and fast_min == pytest.approx(24 * 0.0254)
    rates = GROWTH_CLASS_RATES_M_PER_YR
    assert rates["slow"] < slow_max < rates["medium"] < fast_min < rates["fast"]
    for name, rate in rates.items():
        assert growth_class(rate) == name
        assert growth_rate(name) == rate
    assert growth_class(0.30) == "slow" and growth_class(0.61) == "fast"
    assert growth_class(0.45) == "medium"
    with pytest.raises(InputError):
        growth_rate("glacial")
    with pytest.raises(InputError):
        growth_rate(-0.1)


def test_grown_tree():
    tree = Tree.deciduous((3.0, -4.0), 10.0, 3.0, 2.5, name="elm")
    at25 = grown_tree(tree, 25, growth="medium")
    # 18 in/yr for 25 years = 450 in = 11.43 m
    assert at25.height == pytest.approx(10.0 + 11.43)
    assert at25.crown_radius == pytest.approx(3.0 * 21.43 / 10.0)
    assert (at25.crown_base, at25.trunk_radius, at25.center, at25.name) == (
        2.5, tree.trunk_radius, tree.center, "elm")
    assert at25.transmittance == tree.transmittance
    narrow = grown_tree(tree, 25, growth=0.2, widen_crown=False)
    assert (narrow.height, narrow.crown_radius) == pytest.approx((15.0, 3.0))
    capped = grown_tree(tree, 25, growth="fast", max_height_m=18.0)
    assert capped.height == 18.0
    assert grown_tree(tree, 10, growth="fast", max_height_m=8.0).height == 10.0
    trees = projected_trees(tree, growth="slow")
    assert tuple(trees) == PROJECTION_YEARS == (1, 10, 25)
    assert trees[10].height == pytest.approx(10.0 + 10 * 6 * 0.0254)
    assert grown_tree(tree, 0, growth="fast") == tree


def test_obstructions_at_year():
    es = [tree_entry(growth_m_per_yr=0.5), tree_entry(), SurveyEntry(
        "vent", 10.0, 5.0, 20.0, radius_m=0.1)]
    now = obstructions_at_year(es)
    later = obstructions_at_year(es, 25)
    assert later[0].height == pytest.approx(now[0].height + 12.5)
    assert later[1] == now[1] and later[2] == now[2]
    with pytest.raises(InputError):
        obstructions_at_year(es, -1)


# ------------------------------------------------------------------ tables and CSV
def test_read_fixture_keeps_good_rows_and_reports_bad_ones():
    entries_, problems = read_survey_csv(DATA / "survey_yard.csv")
    assert [e.name for e in entries_] == ["maple", "chimney", "vent", "spruce"]
    found = [(p.row, p.column) for p in problems]
    assert found == [
        (4, "top_angle_deg"),
        (7, "bearing_deg"), (7, "distance_m"),
        (8, "width_m"),
        (9, "length_unit"),
        (10, "top_angle_deg"),
        (11, ""),
        (12, "growth_m_per_yr"),
    ]
    by_row = {p.row: p for p in problems}
    assert "-90" in by_row[4].allowed and "90 degrees" in by_row[4].allowed
    assert by_row[9].allowed == "m, cm, mm, ft, in"
    assert "slow, medium, fast" in by_row[12].allowed
    assert str(by_row[4]).startswith("row 4, top_angle_deg:")
    assert by_row[4].value == "95"  # the cell as typed in the file
    for p in problems:
        assert SurveyProblem.from_dict(json.loads(json.dumps(p.to_dict()))) == p
    # The imperial row is the REFERENCES.md worked example: 50 ft at 17°, eye 5.5 ft -> 20.79 ft
    maple = entries_[0]
    assert m_to_feet(build_obstruction(maple).height) == pytest.approx(20.79, abs=0.005)
    assert maple.crown_radius_m.value == pytest.approx(10 * FOOT_M)
    assert maple.deciduous and maple.growth_m_per_yr == "medium"
    assert entries_[3].distance_m.value == 3.5 and entries_[3].growth_m_per_yr == 0.5


def test_header_problems():
    text = "kind,bearing_deg,distance_m,colour\ntree,1,2,red\n"
    entries_, problems = read_survey_csv(io.StringIO(text))
    assert entries_ == []
    assert [(p.row, p.column) for p in problems] == [(1, "colour"), (1, "top_angle_deg")]
    entries_, problems = read_survey_csv(io.StringIO(""))
    assert entries_ == [] and problems[0].row == 1
    text = ("kind,bearing_deg,distance_m,top_angle_deg,radius_m,radius_tol_m,colour\n"
            "vent,10,5,20,0.1,,x\n"
            "vent,10,5,20,,0.01,x\n")
    entries_, problems = read_survey_csv(io.StringIO(text))
    assert len(entries_) == 1
    # a tolerance with no reading: reported at its column, naming the reading to fill
    assert [(p.row, p.column) for p in problems] == [(1, "colour"), (3, "radius_tol_m")]
    assert "radius_m" in problems[1].allowed


def test_survey_table_columns_and_values():
    es = [tree_entry(name="oak"), SurveyEntry("chimney", 90.0, 8.0, 30.0, base_angle_deg=20.0,
                                              width_m=0.8, depth_m=0.6)]
    table = survey_table(es)
    assert list(table.columns) == [*SURVEY_COLUMNS, *COMPUTED_COLUMNS]
    assert all(c.endswith(("_m", "_deg", "_per_yr")) for c in table.columns
               if c not in ("name", "kind", "method", "length_unit", "crown_shape",
                            "deciduous"))
    assert table.loc[0, "height_m"] == pytest.approx(height_tangent(15.0, 40.0))
    assert table.loc[1, "height_m"] == pytest.approx(height_tangent(8.0, 30.0,
                                                                    base_angle_deg=20.0))
    assert table.loc[0, "height_min_m"] < table.loc[0, "height_m"] < table.loc[0, "height_max_m"]
    assert table.loc[1, "radius_m"] is None
    assert survey_table([]).empty


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(entries(), min_size=1, max_size=4))
def test_table_csv_round_trip(es):
    table = survey_table(es)
    buffer = io.StringIO()
    table.to_csv(buffer, index=False)
    buffer.seek(0)
    back, problems = read_survey_csv(buffer)
    assert problems == []
    assert back == es
    again, problems = entries_from_table(table)
    assert problems == [] and again == es


def test_entries_from_typed_frame():
    # A form as a surveyor types it: numbers, feet as text, blanks as NaN.
    frame = pd.DataFrame({
        "kind": ["tree", "pole"],
        "bearing_deg": [180, 270],
        "distance_m": ["50 ft", 12.0],
        "top_angle_deg": [17.0, 95.0],
        "eye_height_m": ["5 ft 6 in", np.nan],
        "crown_radius_m": [3.0, np.nan],
        "crown_base_m": [1.0, np.nan],
        "radius_m": [np.nan, 0.1],
    })
    es, problems = entries_from_table(frame)
    assert len(es) == 1
    assert m_to_feet(build_obstruction(es[0]).height) == pytest.approx(20.79, abs=0.005)
    assert [(p.row, p.column) for p in problems] == [(3, "top_angle_deg")]


def test_a_tree_on_a_bank_keeps_its_foot():
    # Tangent method with a base angle (REFERENCES.md, forestry mensuration): the tree's foot
    # stands d·tan(θ_base) + eye height above the station's ground.
    from layout.scene.survey import SurveyEntry

    entry = SurveyEntry("tree", 180.0, 20.0, 30.0, base_angle_deg=5.0, eye_height_m=1.6,
                        crown_radius_m=3.0, crown_base_m=3.0)
    tree = build_obstruction(entry)
    foot = 20.0 * math.tan(math.radians(5.0)) + 1.6
    assert tree.ground_m == pytest.approx(foot, abs=1e-9)
    assert tree.height == pytest.approx(20.0 * (math.tan(math.radians(30.0))
                                                - math.tan(math.radians(5.0))), abs=1e-9)
    assert tree.bounds[5] == pytest.approx(20.0 * math.tan(math.radians(30.0)) + 1.6, abs=1e-9)


# ------------------------------------------------------------------ conifers
def test_conifer_entry_builds_a_cone_crown_from_its_readings():
    # a conifer: the same tangent height as a broadleaf (REFERENCES.md "Survey": height from
    # distance and top angle), its crown a cone from the crown base to that top
    spruce = tree_entry(name="spruce", crown_shape="cone", crown_radius_m=2.0)
    tree = build_obstruction(spruce)
    assert tree.crown_shape == "cone"
    assert tree.height == pytest.approx(height_tangent(15.0, 40.0))
    assert tree.crown_base == pytest.approx(2.0) and tree.crown_radius == pytest.approx(2.0)
    assert all(t.crown_shape == "cone" for t in sample_entry(spruce, 5, seed=3))
    assert spruce.to_dict()["crown_shape"] == "cone"
    assert SurveyEntry.from_dict(spruce.to_dict()) == spruce
    assert "crown_shape" not in tree_entry().to_dict()  # rounded crowns: files as before
    deciduous = build_obstruction(tree_entry(crown_shape="cone", deciduous=True))
    assert deciduous.crown_shape == "cone" and deciduous.transmittance is not None
    # grown over the years, it stays a cone
    assert grown_tree(tree, 10, growth="slow").crown_shape == "cone"
    with pytest.raises(InputError) as info:
        tree_entry(crown_shape="pyramid")
    assert info.value.field == "crown_shape" and "cone" in info.value.allowed
    with pytest.raises(InputError) as info:
        SurveyEntry("chimney", 90.0, 8.0, 30.0, width_m=0.8, depth_m=0.6, crown_shape="cone")
    assert info.value.field == "crown_shape"


def test_conifer_in_a_survey_csv():
    text = ("kind,bearing_deg,distance_m,top_angle_deg,crown_radius_m,crown_base_m,crown_shape\n"
            "tree,200,15,40,2.0,1.5,Cone\n"
            "tree,210,15,40,2.0,1.5,\n"
            "tree,220,15,40,2.0,1.5,pyramid\n")
    entries_, problems = read_survey_csv(io.StringIO(text))
    assert [e.crown_shape for e in entries_] == ["cone", "spheroid"]
    assert [(p.row, p.column) for p in problems] == [(4, "crown_shape")]
    # the table written back reads back the same
    again, problems = read_survey_csv(io.StringIO(survey_table(entries_).to_csv(index=False)))
    assert problems == [] and again == entries_


def test_mature_height_caps_growth_and_travels_with_the_tree():
    # the rule: height = min(surveyed + rate * years, mature height); a tree already taller
    # keeps its height; the cap is kept in the entry, the tree, the file and the CSV
    entry = tree_entry(growth_m_per_yr=0.5, mature_height_m=14.0)
    tree = build_obstruction(entry)
    h0 = height_tangent(15.0, 40.0)  # 14.19 m with the default eye height
    assert tree.mature_height_m == 14.0 and tree.height == pytest.approx(h0)
    assert grown_tree(tree, 10).height == pytest.approx(h0)  # already past the cap
    young = replace(tree, height=10.0, crown_base=2.0)
    assert grown_tree(young, 4).height == pytest.approx(12.0)
    assert grown_tree(young, 20).height == pytest.approx(14.0)
    assert grown_tree(young, 20, max_height_m=30.0).height == pytest.approx(20.0)
    assert Tree.from_dict(young.to_dict()) == young
    assert "mature_height_m" not in replace(young, mature_height_m=None).to_dict()
    assert SurveyEntry.from_dict(entry.to_dict()) == entry
    assert "mature_height_m" not in tree_entry().to_dict()
    with pytest.raises(InputError) as info:
        tree_entry(mature_height_m=-3.0)
    assert info.value.field == "mature_height_m"
    with pytest.raises(InputError) as info:
        replace(young, mature_height_m=500.0)
    assert info.value.field == "mature_height_m"
    text = ("kind,bearing_deg,distance_m,top_angle_deg,crown_radius_m,crown_base_m,"
            "mature_height_m,length_unit\n"
            "tree,200,50,17,10,6,60,ft\n")
    entries_, problems = read_survey_csv(io.StringIO(text))
    assert problems == [] and entries_[0].mature_height_m == pytest.approx(60 * FOOT_M)
