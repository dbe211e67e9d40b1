"""The survey against the elevation data: matches, differences and flags.

Survey readings are made up from the demo scene's truth by the tangent method
(H = d · (tan θ_top - tan θ_base), forestry mensuration, USDA Forest Service field guides),
then compared with what the import found.
"""

from __future__ import annotations

import math

import pytest

from layout.elevation import cross_check, import_elevation, synthetic
from layout.scene.survey import Reading, SurveyEntry

SITE = {"site_latitude": synthetic.DEMO_LATITUDE, "site_longitude": synthetic.DEMO_LONGITUDE}


def _sighted_tree(tree, station, *, height_error=0.0, name):
    """A tree entry as a surveyor at ``station`` (eye 1.5 m) would read it."""
    dx, dy = tree.center[0] - station[0], tree.center[1] - station[1]
    d = math.hypot(dx, dy)
    bearing = math.degrees(math.atan2(dx, dy)) % 360.0
    eye = 1.5
    top = math.degrees(math.atan2(tree.ground_m + tree.height + height_error - eye, d))
    base = math.degrees(math.atan2(tree.ground_m - eye, d))
    return SurveyEntry("tree", Reading(bearing, 1.0), Reading(d, 0.2), Reading(top, 0.5),
                       base_angle_deg=Reading(base, 0.5), station_x_m=station[0],
                       station_y_m=station[1], eye_height_m=eye,
                       crown_radius_m=tree.crown_radius, crown_base_m=tree.crown_base,
                       name=name)


@pytest.fixture(scope="module")
def found(demo_tile):
    path, scene, _ = demo_tile()
    return scene, import_elevation(path, radius_m=40.0, **SITE)


def test_true_readings_agree_and_a_wrong_height_is_flagged(found):
    scene, result = found
    station = (0.0, -25.0)
    entries = [_sighted_tree(scene.trees[0], station, name="maple"),
               _sighted_tree(scene.trees[1], station, height_error=2.0, name="oak"),
               _sighted_tree(scene.trees[2], station, name="lime")]
    checks = cross_check(entries, result.obstructions())
    assert [c.matched is not None for c in checks] == [True, True, True]
    maple, oak, lime = checks
    assert not maple.flagged and not lime.flagged
    assert abs(maple.detected_height_m - scene.trees[0].height) <= 0.3
    assert oak.flagged and not oak.height_ok and oak.position_ok
    assert "DIFFERS" in oak.text() and "agrees" in maple.text()


def test_an_entry_with_nothing_near_is_unmatched(found):
    scene, result = found
    far = _sighted_tree(scene.trees[0], (0.0, -25.0), name="gone")
    far = SurveyEntry("tree", far.bearing_deg, Reading(far.distance_m.value + 30.0, 0.2),
                      far.top_angle_deg, base_angle_deg=far.base_angle_deg, station_y_m=-25.0,
                      eye_height_m=1.5, crown_radius_m=2.0, crown_base_m=2.0, name="gone")
    (check,) = cross_check([far], result.obstructions())
    assert check.matched is None and check.flagged
    assert "nothing in the elevation data" in check.text()
