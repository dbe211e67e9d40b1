"""Outlines drawn corner by corner (layout.scene.outlines).

Outside references: the shoelace area of a polygon (Gauss's area formula) through shapely; a
face's slope runs at right angles to its eave (roof geometry), so a rectangle drawn from its
south-west corner eastward slopes south (azimuth 180°).
"""

import numpy as np
import pytest
import shapely

from layout.errors import InputError
from layout.scene.outlines import (
    MIN_EDGE_M,
    check_outline_drawing,
    downslope_azimuth,
    face_from_drawing,
    snap_corners,
)

RECTANGLE = [(0, 0), (10, 0), (10, 6), (0, 6)]


@pytest.mark.parametrize("corners, eave, azimuth", [
    (RECTANGLE, 0, 180.0),  # eave along the south edge
    (RECTANGLE, 1, 90.0),  # along the east edge: slopes east
    (RECTANGLE[::-1], 0, 0.0),  # the other winding: the first edge is the north side
    ([(0, 0), (4, 4), (0, 8), (-4, 4)], 0, 135.0),  # a diamond: eave facing south-east
])
def test_the_slope_runs_away_from_the_outline_across_its_eave(corners, eave, azimuth):
    assert downslope_azimuth(corners, eave) == pytest.approx(azimuth)


def test_a_drawn_face_has_the_drawn_area_and_pitch():
    pentagon = [(0, 0), (12, 0), (12, 8), (6, 11), (0, 8)]
    face = face_from_drawing(pentagon, 18.0, 3.0, name="drawn")
    assert face.plan_area_m2 == pytest.approx(shapely.Polygon(pentagon).area)
    assert face.true_area_m2 == pytest.approx(face.plan_area_m2 / np.cos(np.radians(18.0)))
    assert face.azimuth_deg == pytest.approx(180.0) and face.edge_kinds[0] == "eave"
    flat = face_from_drawing(pentagon, 0.0, 3.0)
    assert flat.pitch_deg == 0.0


@pytest.mark.parametrize("corners, words", [
    ([(0, 0), (1, 0)], "at least three corners"),
    ([(0, 0), (10, 0), (0, 5), (10, 5)], "crosses itself"),
    ([(0, 0), (10, 0), (10, 0.05), (0, 5)], "too short"),
    ([(0, 0), (5, 0), (10, 0)], "crosses itself|no area"),
    ([(0, 0), (float("nan"), 0), (1, 1)], "finite|number"),
])
def test_bad_drawings_say_what_is_wrong(corners, words):
    with pytest.raises(InputError, match=words) as caught:
        check_outline_drawing(corners)
    assert caught.value.field.startswith("outline")


def test_the_short_edge_is_named_and_the_limit_given():
    with pytest.raises(InputError) as caught:
        check_outline_drawing([(0, 0), (10, 0), (10, 0.05), (0, 5)])
    assert "edge 2" in str(caught.value) and f"{MIN_EDGE_M} m" in str(caught.value)


def test_corners_snap_onto_corners_already_drawn():
    drawn = snap_corners([(10.08, 0.05), (16, 0), (16, 6), (10.3, 6.0)], RECTANGLE, 0.15)
    np.testing.assert_allclose(drawn[0], (10, 0))  # 9 cm away: pulled on
    np.testing.assert_allclose(drawn[3], (10.3, 6.0))  # 30 cm away: left where clicked
    assert len(snap_corners([], RECTANGLE, 0.15)) == 0
    # the repeated first corner of a closed drawing is dropped
    assert len(check_outline_drawing([*RECTANGLE, RECTANGLE[0]])) == 4
