"""The Roof tab and undo/redo in the planner, through the widgets' traits.

Outside references: closed-form geometry (a hip roof over a 40 × 28 ft rectangle covers
40 × 28 ft² in plan, true area = plan / cos pitch, the trade's slope factor), and the IANA zone
of Denver (America/Denver, a matter of public record).
"""

import math

import pytest

from layout import load_demo_project
from layout.units import FOOT_M
from widgets.planner import TAB_NAMES, Planner
from widgets.roof_panel import placeholder_project


@pytest.fixture()
def fresh():
    planner = Planner(placeholder_project())
    planner.roof_panel.open_new_project()
    return planner


def _start(planner, *, units="imperial"):
    panel = planner.roof_panel
    panel.latitude.input.value = "39° 44′ 21″ N"
    panel.longitude.input.value = "104° 59′ 24″ W"
    panel.new_units.input.value = units
    panel.project_name.input.value = "Hill residence"
    assert panel.start_new()


def _hip(planner, **overrides):
    panel = planner.roof_panel
    panel.kind.value = "hip"
    values = {"length_m": "40 ft", "width_m": "28 ft", "pitch_deg": "6/12",
              "eave_height_m": "10 ft", **overrides}
    for key, text in values.items():
        panel.template_rows[key].input.value = text


def test_a_new_project_opens_on_the_roof_tab_and_finds_its_time_zone(fresh):
    assert fresh.tabs.selected_index == TAB_NAMES.index("Roof")
    assert fresh.roof_panel.sections.selected_index == 0
    _start(fresh)
    site = fresh.project.site
    assert site.latitude == pytest.approx(39 + 44 / 60 + 21 / 3600)
    assert site.longitude == pytest.approx(-(104 + 59 / 60 + 24 / 3600))
    assert site.timezone == "America/Denver"
    assert fresh.project.units == "imperial" and fresh.project.buildings == ()
    assert fresh.array_layout.count == 0


def test_bad_coordinates_are_marked_and_nothing_changes(fresh):
    panel = fresh.roof_panel
    before = fresh.project
    panel.latitude.input.value = "95 N"
    panel.longitude.input.value = "40 E W"
    assert not panel.start_new()
    assert "out of range" in panel.latitude.error
    assert "not a coordinate" in panel.longitude.error
    assert fresh.project is before
    assert panel.latitude.input.value == "95 N"  # what was typed stays


def test_the_template_previews_then_adds_a_filled_hip_roof(fresh):
    _start(fresh)
    _hip(fresh)
    assert not fresh.roof_panel.add_button.disabled
    assert len(fresh.plan.preview_marks.x) == 4  # four faces drawn dashed
    assert fresh.roof_panel.add_template()
    (building,) = fresh.project.buildings
    plan = 40 * 28 * FOOT_M**2
    assert building.plan_area_m2 == pytest.approx(plan, rel=1e-9)
    assert building.true_area_m2 == pytest.approx(plan / math.cos(math.atan(0.5)), rel=1e-9)
    assert fresh.array_layout.count > 0
    assert len(fresh.plan.preview_marks.x) == 0


def test_template_problems_are_shown_per_field_and_keep_the_text(fresh):
    _start(fresh)
    _hip(fresh, pitch_deg="50/12", width_m="wide")
    assert fresh.roof_panel.add_button.disabled
    assert not fresh.roof_panel.add_template()
    assert "0 to 44 in 12" in fresh.roof_panel.template_rows["pitch_deg"].error
    assert "not a length" in fresh.roof_panel.template_rows["width_m"].error
    assert fresh.roof_panel.template_rows["pitch_deg"].input.value == "50/12"
    assert fresh.project.buildings == ()


def test_face_edits_move_delete_undo_and_redo(fresh):
    _start(fresh)
    _hip(fresh)
    fresh.roof_panel.add_template()
    count = fresh.array_layout.count
    south = next(f.name for f in fresh.project.buildings[0].faces if f.name.endswith("south"))
    # a click on the face's name on the plan picks it in the Roof tab
    fresh.show_tab("Module")
    fresh.plan.face_targets.selected = [list(fresh.plan.face_targets.names).index(south)]
    assert fresh.tabs.selected_index == TAB_NAMES.index("Roof")
    assert fresh.roof_panel.face.value == south
    panel = fresh.roof_panel
    panel.pitch.input.value = "80"
    assert not panel.apply_face() and "0 to 75" in panel.pitch.error
    panel.pitch.input.value = "8/12"
    assert panel.apply_face()
    face = fresh.project.buildings[0].face(south)
    assert face.pitch_deg == pytest.approx(math.degrees(math.atan(8 / 12)))
    panel.move_east.input.value = "10 ft"
    panel.turn.input.value = "15"
    assert panel.move()
    assert fresh.project.buildings[0].face(south).azimuth_deg == pytest.approx(195.0)
    assert panel.delete() and fresh.project.buildings == ()
    assert fresh.history_bar.undo_button.tooltip.startswith("Undo: deleted house")
    fresh.undo()
    fresh.undo()
    assert fresh.project.buildings[0].face(south).azimuth_deg == pytest.approx(180.0)
    fresh.undo()
    assert fresh.project.buildings[0].face(south).pitch_deg == pytest.approx(
        math.degrees(math.atan(0.5)))
    assert fresh.array_layout.count == count
    fresh.redo()
    assert fresh.project.buildings[0].face(south).pitch_deg == pytest.approx(
        math.degrees(math.atan(8 / 12)))
    assert not fresh.history_bar.redo_button.disabled


def test_undo_takes_back_module_clicks_and_knows_the_saved_version(tmp_path):
    planner = Planner(load_demo_project())
    planner.file_panel.project_path.value = str(tmp_path / "house.eaveline.json")
    assert planner.history_bar.undo_button.disabled
    module = planner.array_layout.active_modules[0].id
    planner.click_mode.value = "toggle"
    planner._module_clicked(module)
    assert len(planner.project.removed) == 1
    saved = planner.file_panel.save()
    written = saved.read_text()
    assert not planner.history.unsaved
    assert planner.undo()
    assert planner.project.removed == () and planner.history.unsaved
    assert saved.read_text() == written  # undo after a save leaves the file alone
    assert planner.redo() and len(planner.project.removed) == 1
    assert not planner.redo()
    assert "Nothing to redo" in planner.status_line.message.value


def _click(planner, x, y):
    """What the front end does on a click while drawing: append the point to x and y."""
    import numpy as np

    mark = planner.plan.draw_points
    with mark.hold_trait_notifications():
        mark.x = np.r_[mark.x, x]
        mark.y = np.r_[mark.y, y]


def test_drawing_an_outline_by_clicks_adds_a_building_then_a_snapped_face(fresh):
    _start(fresh, units="metric")
    panel = fresh.roof_panel
    panel.draw_toggle.value = True
    assert fresh.plan.draw_points.interactions == {"click": "add"}
    for x, y in [(0, 0), (10, 0), (10, 6), (5, 9), (0, 6)]:
        _click(fresh, x, y)
    assert "5 corners" in panel.corner_list.value and "edge 1: 10.000 m" in panel.corner_list.value
    assert len(fresh.plan.first_corner.x) == 1  # a target to close on
    fresh.plan.first_corner.selected = [0]  # a click on the first corner closes the outline
    assert panel.closed and fresh.plan.draw_points.interactions == {}
    panel.draw_pitch.input.value = "4/12"
    panel.draw_eave.input.value = "3"
    assert panel.add_drawn()
    (building,) = fresh.project.buildings
    assert building.faces[0].azimuth_deg == pytest.approx(180.0)
    assert building.plan_area_m2 == pytest.approx(10 * 6 + 0.5 * 10 * 3)
    # a second face, clicked a few centimetres off the first one's corners, shares its edge
    panel.draw_toggle.value = True
    for x, y in [(10.05, 0.02), (16, 0), (16, 6), (10.1, 6.05)]:
        _click(fresh, x, y)
    assert panel.close_outline()
    panel.draw_into.input.value = building.name
    panel.draw_pitch.input.value = "0"
    assert panel.add_drawn()
    second = fresh.project.buildings[0].faces[1]
    assert second.outline[0] == (10.0, 0.0) and second.outline[3] == (10.0, 6.0)
    fresh.undo()
    assert len(fresh.project.buildings[0].faces) == 1


def test_a_crossing_outline_is_refused_and_kept_for_fixing(fresh):
    _start(fresh, units="metric")
    panel = fresh.roof_panel
    panel.draw_toggle.value = True
    for x, y in [(0, 0), (5, 0), (0, 5), (5, 5)]:
        _click(fresh, x, y)
    assert not panel.close_outline()
    assert "crosses itself" in panel.draw_message.value
    assert len(panel.corners) == 4 and panel.draw_add.disabled
    panel.take_back_corner()
    assert len(panel.corners) == 3


def test_importing_footprints_into_a_new_project_moves_its_site(fresh, tmp_path):
    import json

    path = tmp_path / "studio.geojson"
    corners = [[-122.6765, 45.5231], [-122.67624, 45.5231], [-122.67624, 45.52317],
               [-122.6765, 45.52317], [-122.6765, 45.5231]]
    path.write_text(json.dumps({"type": "Polygon", "coordinates": [corners]}))
    panel = fresh.roof_panel
    panel.footprint_path.input.value = str(path)
    panel.footprint_pitch.input.value = "4/12"
    assert panel.import_footprints()
    # the IANA zone of Portland, Oregon (public record)
    assert fresh.project.site.timezone == "America/Los_Angeles"
    assert len(fresh.project.buildings) == 1 and fresh.array_layout.count > 0
    assert "site moved" in panel.footprint_message.value
    panel.footprint_path.input.value = str(tmp_path / "missing.geojson")
    assert not panel.import_footprints()
    assert "cannot be read" in panel.footprint_path.error
    assert fresh.history.undo_label.startswith("imported 1 footprint")


def test_dragging_a_buildings_handle_moves_it_and_undo_puts_it_back():
    import numpy as np

    planner = Planner(load_demo_project())
    handle = planner.plan.building_markers
    assert list(handle.names) == [b.name for b in planner.project.buildings]
    before = planner.project.buildings[0].footprint.centroid.coords[0]
    k = planner.plan._k  # display units per metre
    with handle.hold_trait_notifications():  # the front end's drop: x and y together
        handle.x = np.array([handle.x[0] + 2.0 * k])
        handle.y = np.array([handle.y[0] - 1.0 * k])
    after = planner.project.buildings[0].footprint.centroid.coords[0]
    np.testing.assert_allclose(np.subtract(after, before), (2.0, -1.0), atol=0.01)
    assert "west" not in planner.history.undo_label and "south" in planner.history.undo_label
    planner.undo()
    np.testing.assert_allclose(planner.project.buildings[0].footprint.centroid.coords[0], before)
