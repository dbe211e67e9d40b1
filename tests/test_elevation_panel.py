"""The planner's Elevation data tab: find, preview, keep the ticked items, marked as data.

Driven without a browser, by setting the widgets' values as the front end would.
"""

from __future__ import annotations

import pytest

from layout.elevation import PROVENANCE, import_elevation, synthetic
from layout.project_imports import project_from_scene
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
    assert planner.array_layout is not None


def test_a_bad_file_says_why_and_changes_nothing(planner, tmp_path):
    panel = planner.elevation_panel
    project = planner.project
    panel.tile_path.value = str(tmp_path / "none.laz")
    assert not panel.find()
    assert "does not exist" in panel.message.value
    assert panel.keep_button.disabled and planner.project is project
