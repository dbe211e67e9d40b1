"""The planner's Elevation data tab: find, preview, keep the ticked items, marked as data.

Driven without a browser, by setting the widgets' values as the front end would.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from layout.edits import edit_face
from layout.elevation import PROVENANCE, import_elevation, synthetic
from layout.project_imports import project_from_scene
from layout.scene.survey import Reading, SurveyEntry
from widgets.planner import TAB_NAMES, Planner

SITE = {"site_latitude": synthetic.DEMO_LATITUDE, "site_longitude": synthetic.DEMO_LONGITUDE}


@pytest.fixture(scope="module")
def tile(tmp_path_factory):
    path = tmp_path_factory.mktemp("tile") / "tile.laz"
    scene = synthetic.demo_scene()
    synthetic.write_las(path, synthetic.sample_points(scene, half_size_m=45.0, density=10.0,
                                                      seed=2))
    return path


@pytest.fixture(scope="module")
def planner(tile):
    # a project with the imported roof only: the surroundings are to be added in the tab
    scene = import_elevation(tile, radius_m=40.0, **SITE)
    bare = project_from_scene(scene, latitude=SITE["site_latitude"],
                              longitude=SITE["site_longitude"], timezone="Europe/Zurich")
    return Planner(bare.with_changes(obstructions=(), sources=()))


def test_find_lists_every_item_with_a_ticked_box(planner, tile):
    panel = planner.elevation_panel
    assert planner.tabs.children[TAB_NAMES.index("Elevation data")] is panel
    panel.tile_path.value = str(tile)
    assert panel.find()
    names = list(panel.checkboxes)
    assert names[0] == "house" and "tree 1" in names and "roof bump 1" in names
    assert all(box.value for box in panel.checkboxes.values())
    assert PROVENANCE in panel.found_html.value and "2023-04-18" in panel.found_html.value


def test_keep_adds_the_ticked_items_marked_as_data(planner, tile):
    panel = planner.elevation_panel
    panel.tile_path.value = str(tile)
    panel.find()
    panel.checkboxes["house"].value = False
    panel.checkboxes["tree 2"].value = False
    before = len(planner.project.obstructions)
    assert panel.keep()
    kept = [n for n, b in panel.checkboxes.items() if b.value]
    assert len(planner.project.obstructions) == before + len(kept)
    assert "tree 2" not in {o.name for o in planner.project.obstructions}
    for name in kept:
        assert planner.project.source_of(name) == PROVENANCE
    assert "tree 1" in panel.marked_html.value
    labels = [label for label, _ in planner.objects.choice.options]
    assert any(label.startswith("tree 1") and label.endswith(PROVENANCE) for label in labels)
    assert planner.array_layout is not None


def test_a_second_keep_renames_and_a_moved_tree_is_no_longer_marked(planner, tile):
    assert planner.set_project(planner.project.with_changes(obstructions=(), sources=()))
    panel = planner.elevation_panel
    panel.tile_path.value = str(tile)
    panel.find()
    assert panel.keep()
    panel.tile_path.value = str(tile)
    panel.find()
    assert panel.keep()
    names = [o.name for o in planner.project.obstructions]
    assert len(names) == len(set(names)) and "tree 3 (2)" in names
    index = names.index("tree 3")
    project, _, _ = planner._moved_project(index, 0.0, -25.0)
    assert planner.set_project(project)
    assert planner.project.source_of("tree 3") is None
    assert planner.project.source_of("tree 1") == PROVENANCE


def test_a_bad_file_says_why_and_changes_nothing(planner, tmp_path):
    panel = planner.elevation_panel
    project = planner.project
    panel.tile_path.value = str(tmp_path / "none.laz")
    assert not panel.find()
    assert "does not exist" in panel.message.value
    assert panel.keep_button.disabled and planner.project is project


def test_survey_tab_shows_each_entry_against_the_elevation_data(planner, tile):
    panel = planner.elevation_panel
    panel.tile_path.value = str(tile)
    panel.find()
    assert panel.keep()
    tree = next(o for o in planner.project.obstructions if o.name == "tree 1")
    # a surveyor 20 m south of the tree reads it 3 m too tall (tangent method, eye 1.5 m)
    station = (tree.center[0], tree.center[1] - 20.0)
    top = math.degrees(math.atan2(tree.ground_m + tree.height + 3.0 - 1.5, 20.0))
    base = math.degrees(math.atan2(tree.ground_m - 1.5, 20.0))
    entry = SurveyEntry("tree", Reading(0.0, 1.0), Reading(20.0, 0.2), Reading(top, 0.5),
                        base_angle_deg=Reading(base, 0.5), station_x_m=station[0],
                        station_y_m=station[1], eye_height_m=1.5, crown_radius_m=3.0,
                        crown_base_m=3.0, name="big lime")
    assert planner.set_project(planner.project.with_changes(survey=(entry,)))
    text = planner.survey.crosscheck_html.value
    assert "big lime DIFFERS with tree 1" in text and "#a33" in text


def _data_rings(plan):
    """The dotted outlines the plan draws (display units), padding points dropped."""
    return [np.unique(np.column_stack([x, y]), axis=0)
            for x, y in zip(plan.data_marks.x, plan.data_marks.y, strict=True)]


def test_plan_marks_faces_and_obstructions_from_elevation_data(planner, tile):
    # the whole import as a project: every face and obstruction marked in its sources
    scene = import_elevation(tile, radius_m=40.0, **SITE)
    project = project_from_scene(scene, latitude=SITE["site_latitude"],
                                 longitude=SITE["site_longitude"], timezone="Europe/Zurich")
    assert planner.set_project(project)
    plan = planner.plan
    drawn = [o for o in project.obstructions if hasattr(o, "translated")]  # not the horizon
    rings = _data_rings(plan)
    assert len(rings) == len(project.faces) + len(drawn)
    # each face's dotted outline runs through the corners of that face (metric project: m)
    for face in project.faces:
        corners = np.unique(np.asarray(face.outline), axis=0)
        assert any(r.shape == corners.shape and np.allclose(r, corners) for r in rings)
    names = list(plan.obstruction_markers.names)
    assert all(name.endswith(f"({PROVENANCE})") for name in names)
    # the key says what the dotted outline means
    assert PROVENANCE in plan.key.table.value
    # a tree moved by hand is no longer as the data gave it: its outline and note go
    index = next(i for i, o in enumerate(planner.project.obstructions) if o.name == "tree 2")
    moved, _, _ = planner._moved_project(index, 0.0, -25.0)
    assert planner.set_project(moved)
    assert len(_data_rings(plan)) == len(project.faces) + len(drawn) - 1
    names = list(plan.obstruction_markers.names)
    assert "tree 2" in names and sum(PROVENANCE in n for n in names) == len(drawn) - 1
    # a face typed over in the Roof tab (layout.edits.edit_face) loses its outline too
    face = project.faces[0]
    assert planner.set_project(edit_face(planner.project, face.name,
                                         pitch_deg=face.pitch_deg + 2.0))
    assert len(_data_rings(plan)) == len(project.faces) - 1 + len(drawn) - 1


def test_a_drawn_project_has_no_data_marks(planner):
    assert planner.set_project(planner.project.with_changes(obstructions=(), sources=()))
    assert _data_rings(planner.plan) == []
    assert not any(PROVENANCE in label for label, _ in planner.objects.choice.options)
