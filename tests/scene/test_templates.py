"""Roof templates from typed text.

Outside reference: closed-form geometry. A roof of one pitch over a rectangle covers the
rectangle in plan, and each face's true area is its plan area over cos(pitch) (the slope
factor every roofing table prints); an L of two rectangles covers their union.
"""

import math

import pytest

from layout.scene.templates import TEMPLATE_KINDS, RoofTemplate, template_from_text
from layout.units import FOOT_M

FT = FOOT_M


@pytest.mark.parametrize("kind", ["gable", "hip", "shed"])
def test_a_40_by_28_ft_roof_at_6_in_12_has_the_closed_form_areas(kind):
    template, problems = template_from_text(kind, {
        "length_m": "40 ft", "width_m": "28 ft", "pitch_deg": "6/12", "eave_height_m": "10 ft",
    })
    assert problems == {}
    building = template.build()
    plan = 40 * 28 * FT**2
    pitch = math.atan(6 / 12)
    assert building.plan_area_m2 == pytest.approx(plan, rel=1e-9)
    assert building.true_area_m2 == pytest.approx(plan / math.cos(pitch), rel=1e-9)
    assert min(f.eave_height_m for f in building.faces) == pytest.approx(10 * FT)


def test_flat_and_l_shapes_cover_their_footprints():
    flat = RoofTemplate("flat", 20.0, 12.0, 0.0, 6.0, parapet_height_m=0.9).build()
    assert flat.plan_area_m2 == pytest.approx(240.0)
    assert flat.true_area_m2 == pytest.approx(240.0)
    for kind in ("l_gable", "l_hip"):
        template = RoofTemplate(kind, 12.0, 8.0, 30.0, 3.0, wing_length_m=14.0, wing_width_m=6.0)
        building = template.build()
        # the main block and the wing standing out of it (closed form: 12 × 8 + 6 × (14 − 8))
        assert building.plan_area_m2 == pytest.approx(12 * 8 + 6 * (14 - 8), rel=1e-9)
        assert building.true_area_m2 == pytest.approx(
            building.plan_area_m2 / math.cos(math.radians(30)), rel=1e-9)


def test_rotation_and_position_move_the_building():
    base = RoofTemplate("gable", 10.0, 8.0, 25.0, 3.0)
    turned = RoofTemplate("gable", 10.0, 8.0, 25.0, 3.0, rotation_deg=30.0, east_m=5.0,
                          north_m=-2.0)
    assert turned.build().plan_area_m2 == pytest.approx(base.build().plan_area_m2)
    azimuths = sorted(f.azimuth_deg for f in turned.build().faces)
    assert azimuths == pytest.approx([30.0, 210.0])
    assert RoofTemplate.from_dict(turned.to_dict()) == turned


def test_every_bad_field_is_reported_at_once_and_nothing_is_built():
    template, problems = template_from_text("hip", {
        "length_m": "40 ft", "width_m": "twenty", "pitch_deg": "60/12", "eave_height_m": "",
    })
    assert template is None
    assert set(problems) == {"width_m", "pitch_deg", "eave_height_m"}
    assert "0 to 44 in 12" in problems["pitch_deg"]
    assert problems["eave_height_m"] == "is missing"


def test_the_builder_rejection_names_its_field():
    template, problems = template_from_text("l_hip", {
        "length_m": "12", "width_m": "8", "pitch_deg": "30", "eave_height_m": "3",
        "wing_length_m": "2", "wing_width_m": "20"})
    assert template is None and "wing_length_m" in problems
    assert "kind" in template_from_text("dome", {})[1]
    assert set(TEMPLATE_KINDS) == {"gable", "hip", "shed", "flat", "l_gable", "l_hip"}


def test_bare_numbers_take_the_projects_unit():
    template, _ = template_from_text("shed", {"length_m": "20", "width_m": "12",
                                              "pitch_deg": "2/12", "eave_height_m": "9"},
                                     default_unit="ft")
    assert template.length_m == pytest.approx(20 * FT)
