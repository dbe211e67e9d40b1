"""Edits of a project's roofs (layout.edits) and the undo history (layout.history).

Outside reference: rigid motions keep lengths and areas (Euclidean geometry): a building moved
and turned keeps its plan and true areas and every edge length; turning by θ adds θ to every
face's azimuth. Overlap is checked against shapely's own intersection area.
"""

import math
from dataclasses import replace

import numpy as np
import pytest
import shapely

from layout import load_demo_project
from layout.edits import add_building, edit_face, move_building, remove_building, rename_building
from layout.errors import InputError
from layout.history import ProjectHistory
from layout.scene.templates import RoofTemplate


@pytest.fixture(scope="module")
def demo():
    return load_demo_project()


def _garage(east=30.0, north=0.0, name="garage"):
    return RoofTemplate("gable", 7.0, 6.0, 20.0, 2.6, east_m=east, north_m=north,
                        name=name).build()


def test_add_and_remove_a_building(demo):
    bigger = add_building(demo, _garage())
    assert len(bigger.buildings) == len(demo.buildings) + 1
    assert demo.buildings == load_demo_project().buildings  # the old version is untouched
    back = remove_building(bigger, "garage")
    assert back.buildings == demo.buildings
    assert back.layout().count == demo.layout().count


def test_a_building_that_overlaps_another_is_refused(demo):
    house = demo.buildings[0]
    x, y = house.footprint.centroid.coords[0]
    with pytest.raises(InputError, match="overlaps") as caught:
        add_building(demo, _garage(east=x, north=y))
    assert caught.value.field == "buildings"
    with pytest.raises(InputError, match="already the name"):
        add_building(demo, _garage(name=house.name))


def test_removing_a_building_drops_what_referred_to_its_faces(demo):
    house = demo.buildings[0]
    module = demo.layout().active_modules[0]
    u = 0.5 * (module.uv_rect[0] + module.uv_rect[2])
    v = 0.5 * (module.uv_rect[1] + module.uv_rect[3])
    edited = replace(demo, removed=((module.face, u, v),))
    gone = remove_building(edited, house.name)
    assert gone.removed == () and gone.buildings == ()
    with pytest.raises(InputError, match="is not a building"):
        remove_building(demo, "shed")


def test_moving_and_turning_keeps_lengths_areas_and_turns_azimuths(demo):
    project = add_building(demo, _garage())
    before = project.buildings[-1]
    moved = move_building(project, "garage", east_m=3.0, north_m=-4.0, turn_deg=37.0)
    after = moved.buildings[-1]
    assert after.plan_area_m2 == pytest.approx(before.plan_area_m2, rel=1e-12)
    assert after.true_area_m2 == pytest.approx(before.true_area_m2, rel=1e-12)
    for a, b in zip(before.faces, after.faces, strict=True):
        la = np.linalg.norm(np.diff(np.r_[a.outline, a.outline[:1]], axis=0), axis=1)
        lb = np.linalg.norm(np.diff(np.r_[b.outline, b.outline[:1]], axis=0), axis=1)
        np.testing.assert_allclose(la, lb, rtol=1e-12)
        assert b.azimuth_deg == pytest.approx((a.azimuth_deg + 37.0) % 360)
    shift = np.subtract(after.footprint.centroid.coords[0], before.footprint.centroid.coords[0])
    np.testing.assert_allclose(shift, [3.0, -4.0], atol=1e-9)
    # a move onto the house is refused and leaves the project as it was
    x, y = project.buildings[0].footprint.centroid.coords[0]
    gx, gy = before.footprint.centroid.coords[0]
    with pytest.raises(InputError, match="overlaps"):
        move_building(project, "garage", east_m=x - gx, north_m=y - gy)
    assert project.buildings[-1] is before


def test_what_stands_on_a_moved_roof_moves_with_it_and_the_fill_is_the_same(demo):
    from layout.fill.usable import roof_mounted

    house = demo.buildings[0]
    centre = np.array(house.footprint.centroid.coords[0])
    on_roof = [any(roof_mounted(f, ob) for f in house.faces) for ob in demo.obstructions]
    assert any(on_roof) and not all(on_roof)  # the demo's chimney and vent; a tree, a garage
    moved = move_building(demo, house.name, east_m=6.0, north_m=-2.5, turn_deg=25.0)
    new_centre = centre + np.array([6.0, -2.5])
    for ob, new, carried in zip(demo.obstructions, moved.obstructions, on_roof, strict=True):
        if not carried:
            assert new is ob
            continue
        assert any(roof_mounted(f, new) for f in moved.buildings[0].faces), ob.name
        assert (new.top, new.base) == (ob.top, ob.base)
        # a rigid motion: the footprint's distance from the roof's centre is kept, and the
        # direction to it turns by the building's turn (plane geometry)
        a = np.asarray(ob.footprint_polygon.centroid.coords[0]) - centre
        b = np.asarray(new.footprint_polygon.centroid.coords[0]) - new_centre
        assert np.hypot(*b) == pytest.approx(np.hypot(*a), abs=1e-9)
        turn = np.degrees(np.arctan2(a[0], a[1]) - np.arctan2(b[0], b[1])) % 360
        assert turn == pytest.approx(360 - 25.0, abs=1e-6)  # compass turn, clockwise
    # the modules keep their places on the faces: the same count, the same roof coordinates
    before, after = demo.layout(), moved.layout()
    assert after.count == before.count > 0
    assert sorted((m.face, round(m.row), round(m.column)) for m in after.modules) == \
        sorted((m.face, round(m.row), round(m.column)) for m in before.modules)


def test_edit_face_changes_one_face_and_names_bad_values(demo):
    face = demo.buildings[0].faces[0]
    steeper = edit_face(demo, face.name, pitch_deg=40.0, eave_height_m=4.0)
    new = steeper.buildings[0].faces[0]
    assert new.pitch_deg == 40.0 and new.eave_height_m == 4.0
    assert new.outline == face.outline and new.azimuth_deg == face.azimuth_deg
    # the true area follows the pitch: plan area / cos(pitch)
    assert new.true_area_m2 == pytest.approx(face.plan_area_m2 / math.cos(math.radians(40)))
    with pytest.raises(InputError) as caught:
        edit_face(demo, face.name, pitch_deg=80.0)
    assert caught.value.field == f"faces[{face.name}].pitch_deg"
    kinds = ["eave"] + [None] * (len(face.outline) - 1)
    assert edit_face(demo, face.name, edge_kinds=kinds).buildings[0].faces[0].edge_kinds[0] == \
        "eave"
    with pytest.raises(InputError, match="unknown edge kind"):
        edit_face(demo, face.name, edge_kinds=["gutter"] * len(face.outline))
    with pytest.raises(InputError, match="is not a face"):
        edit_face(demo, "attic", pitch_deg=20.0)


def test_rename_building(demo):
    project = add_building(demo, _garage())
    assert rename_building(project, "garage", "shop").buildings[-1].name == "shop"
    with pytest.raises(InputError, match="already the name"):
        rename_building(project, "garage", demo.buildings[0].name)


def test_history_undoes_and_redoes_every_step(demo):
    history = ProjectHistory(demo)
    versions = [demo]
    project = demo
    for k in range(150):  # more than the 100 steps the planner must keep
        project = move_building(add_building(project, _garage(name=f"g{k}", east=40 + 10 * k))
                                if k == 0 else project, "g0", east_m=0.1)
        history.record(project, f"moved g0 ({k})")
        versions.append(project)
    assert history.depth == (150, 0)
    for k in range(150):
        assert history.undo() is versions[-2 - k]
    assert not history.can_undo and history.project is demo
    with pytest.raises(InputError, match="nothing to undo"):
        history.undo()
    assert history.redo() is versions[1] and history.redo_label == "moved g0 (1)"
    # a new edit after an undo drops what was ahead
    history.record(remove_building(history.project, "g0"), "removed g0")
    assert not history.can_redo
    with pytest.raises(InputError, match="nothing to redo"):
        history.redo()


def test_history_knows_the_saved_version_and_keeps_its_limit(demo):
    history = ProjectHistory(demo, steps=3)
    assert history.unsaved
    history.mark_saved()
    assert not history.unsaved
    edited = edit_face(demo, demo.buildings[0].faces[0].name, pitch_deg=30.0)
    history.record(edited, "pitch 30°")
    assert history.unsaved and history.undo_label == "pitch 30°"
    history.undo()
    assert not history.unsaved  # back at the saved version: nothing to save
    for k in range(5):
        history.record(edit_face(history.project, demo.buildings[0].faces[0].name,
                                 pitch_deg=20.0 + k), f"pitch {20 + k}°")
    assert history.depth == (3, 0)
    assert history.record(history.project, "nothing") is history.project  # no empty step
    assert history.depth == (3, 0)
    with pytest.raises(InputError, match="steps"):
        ProjectHistory(demo, steps=0)


def test_overlap_agrees_with_shapely(demo):
    # the refusal threshold is shapely's intersection area, not a bounding-box test
    house = demo.buildings[0]
    _, miny, maxx, _ = house.footprint.bounds
    touching = RoofTemplate("flat", 5.0, 5.0, 0.0, 3.0, east_m=maxx, north_m=miny,
                            name="shed").build()
    assert shapely.area(shapely.intersection(house.footprint, touching.footprint)) < 1e-9
    add_building(demo, touching)  # sharing a wall line is not an overlap


def test_edits_of_one_thing_in_a_row_are_one_step(demo):
    # typing the fields of one survey entry one after another: one undo takes it all back
    history = ProjectHistory(demo)
    name = demo.buildings[0].faces[0].name
    steps = [edit_face(demo, name, pitch_deg=20.0 + k) for k in range(4)]
    for k, project in enumerate(steps):
        history.record(project, f"pitch {20 + k}", key=("face", name))
    assert history.depth == (1, 0) and history.project is steps[-1]
    history.record(edit_face(steps[-1], name, eave_height_m=4.0), "eave", key=("eave", name))
    assert history.depth == (2, 0)
    history.undo()
    history.undo()
    assert history.project is demo
    # after an undo, the same key starts a new step rather than rewriting an old one
    history.redo()
    history.record(edit_face(steps[-1], name, pitch_deg=30.0), "pitch 30", key=("face", name))
    assert history.depth == (2, 0)


def _imported(demo):
    """The demo with its building and obstructions listed as from elevation data."""
    building = demo.buildings[0]
    note = "from elevation data, not surveyed"
    names = [building.name, *building.face_names, *(o.name for o in demo.obstructions)]
    return demo.with_changes(sources=({"kind": "elevation data", "note": note,
                                       "items": names},)), building, note


def test_a_changed_imported_face_or_building_loses_its_source_note(demo):
    project, building, note = _imported(demo)
    face = building.faces[0]
    # a face edited by hand: it and its building lose the note, the other faces keep it
    edited = edit_face(project, face.name, pitch_deg=face.pitch_deg + 5.0)
    assert edited.source_of(face.name) is None and edited.source_of(building.name) is None
    assert all(edited.source_of(f.name) == note for f in building.faces[1:])
    # typed again as it was: nothing changed, nothing unmarked
    same = edit_face(project, face.name, pitch_deg=face.pitch_deg)
    assert same.sources == project.sources
    # moved: the building and every face of it; not moved at all: kept
    moved = move_building(project, building.name, east_m=0.5)
    assert all(moved.source_of(n) is None for n in (building.name, *building.face_names))
    assert move_building(project, building.name).sources == project.sources
    # obstructions are not touched by roof edits
    assert moved.source_of(demo.obstructions[0].name) == note


def test_a_renamed_imported_building_stays_marked_and_a_deleted_one_leaves_no_name(demo):
    project, building, note = _imported(demo)
    renamed = rename_building(project, building.name, "main house")
    assert renamed.source_of("main house") == note and renamed.source_of(building.name) is None
    gone = remove_building(project, building.name)
    assert all(gone.source_of(n) is None for n in (building.name, *building.face_names))
    # a building drawn later under the old name is not taken for the imported one
    again = add_building(gone, replace(_garage(east=0.0), name=building.name))
    assert again.source_of(building.name) is None
