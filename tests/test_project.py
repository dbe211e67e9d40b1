"""The project document: round trips, atomic save, all problems at once, versions, the demo."""

import copy
import json
import os

import pytest

import layout
from layout.cli import main, project_summary
from layout.project import (
    FILE_SUFFIX,
    SCHEMA_KEY,
    SCHEMA_VERSION,
    ProjectFileError,
    demo_project_path,
    load_demo_project,
    load_project,
    project_from_dict,
    project_to_dict,
    save_project,
)


@pytest.fixture(scope="module")
def demo():
    return load_demo_project()


@pytest.fixture
def document(demo):
    return copy.deepcopy(project_to_dict(demo))


def test_demo_project_is_an_invented_gable_house_with_a_chimney(demo):
    assert demo_project_path().name.endswith(FILE_SUFFIX)
    assert len(demo.buildings) == 1
    assert {face.name for face in demo.faces} == {"south", "north"}
    kinds = {getattr(o, "kind", "tree") for o in demo.obstructions}
    assert "chimney" in kinds
    assert "invented" in demo.site.name


def test_round_trip_is_exact(demo, tmp_path):
    path = save_project(demo, tmp_path / "job")
    assert path.name == "job" + FILE_SUFFIX
    again = load_project(path)
    assert again == demo
    assert project_to_dict(again) == project_to_dict(demo)
    # and the text itself is stable: saving the reloaded project writes the same bytes
    second = save_project(again, tmp_path / "job2")
    assert second.read_text() == path.read_text()


def test_round_trip_keeps_user_removals_and_units(demo, tmp_path):
    layout_now = demo.layout()
    taken = layout_now.active_modules[0].id
    removed = layout_now.remove([taken]).removed
    edited = demo.with_changes(removed=removed, units="metric")
    again = load_project(save_project(edited, tmp_path / "edited"))
    assert again.units == "metric"
    assert again.removed == edited.removed
    assert again.layout().count == layout_now.count - 1


def test_save_is_atomic_and_leaves_the_old_file_when_the_rename_fails(demo, tmp_path, monkeypatch):
    path = save_project(demo, tmp_path / "site")
    before = path.read_bytes()

    def broken_replace(src, dst):
        raise OSError("disk full")

    monkeypatch.setattr(os, "replace", broken_replace)
    with pytest.raises(OSError):
        save_project(demo.with_changes(name="changed"), path)
    assert path.read_bytes() == before
    assert [p.name for p in tmp_path.iterdir()] == [path.name]  # no temporary file left


def test_all_problems_are_reported_at_once_with_their_paths(document):
    document["site"]["latitude"] = 123.0
    document["buildings"][0]["faces"][1]["pitch_deg"] = 80.0
    document["buildings"][0]["faces"][0]["outline"][1] = [float("nan"), 0.0]
    document["module"]["power_w"] = 900.0  # 46 % efficient: beyond the single-junction limit
    document["obstructions"][0]["top"] = -1.0
    document["surprise"] = 1
    with pytest.raises(ProjectFileError) as caught:
        project_from_dict(document, source="job.eaveline.json")
    paths = [path for path, _ in caught.value.problems]
    assert "site.latitude" in paths
    assert "buildings[0].faces[1].pitch_deg" in paths
    assert "buildings[0].faces[0].outline[1]" in paths
    assert any(p.startswith("module.power_w") for p in paths)
    assert any(p.startswith("obstructions[0]") for p in paths)
    assert "surprise" in paths
    message = str(caught.value)
    assert "job.eaveline.json" in message and "allowed: from -90 to 90 degrees" in message


def test_newer_version_is_refused_with_a_clear_message(document):
    document[SCHEMA_KEY] = SCHEMA_VERSION + 1
    with pytest.raises(ProjectFileError, match="newer eaveline"):
        project_from_dict(document)


@pytest.mark.parametrize("version", [None, 0, "1", 1.5, True])
def test_missing_or_malformed_version_is_refused(document, version):
    if version is None:
        del document[SCHEMA_KEY]
    else:
        document[SCHEMA_KEY] = version
    with pytest.raises(ProjectFileError, match=SCHEMA_KEY):
        project_from_dict(document)


def test_loading_never_executes_code(document, tmp_path):
    marker = tmp_path / "executed"
    document["name"] = f"__import__('pathlib').Path({str(marker)!r}).touch()"
    document["site"]["timezone"] = f"__import__('pathlib').Path({str(marker)!r}).touch()"
    path = tmp_path / ("evil" + FILE_SUFFIX)
    path.write_text(json.dumps(document))
    with pytest.raises(ProjectFileError, match="timezone"):
        load_project(path)
    assert not marker.exists()


def test_unreadable_and_non_json_files_get_clear_errors(tmp_path):
    with pytest.raises(ProjectFileError, match="cannot read"):
        load_project(tmp_path / "missing.eaveline.json")
    bad = tmp_path / ("bad" + FILE_SUFFIX)
    bad.write_text("{ not json")
    with pytest.raises(ProjectFileError, match="not valid JSON"):
        load_project(bad)


def test_duplicate_face_names_across_buildings_are_reported(document):
    document["buildings"].append(copy.deepcopy(document["buildings"][0]))
    for face in document["buildings"][1]["faces"]:
        face["outline"] = [[x + 30.0, y] for x, y in face["outline"]]
    with pytest.raises(ProjectFileError) as caught:
        project_from_dict(document)
    assert any("used twice" in message for _, message in caught.value.problems)


def test_pathways_must_name_faces(document):
    document["pathways"] = {"attic": 1}
    with pytest.raises(ProjectFileError, match=r"pathways\.attic"):
        project_from_dict(document)


def test_summary_command_prints_counts_and_cautions(capsys):
    assert main(["summary", "--demo"]) == 0
    text = capsys.readouterr().out
    assert "portrait" in text and "landscape" in text
    assert "authority having jurisdiction" in text
    assert "Layout in force" in text


def test_check_command_lists_problems_and_fails(document, tmp_path, capsys):
    document["site"]["longitude"] = 500
    path = tmp_path / ("broken" + FILE_SUFFIX)
    path.write_text(json.dumps(document))
    assert main(["check", str(path)]) == 1
    assert "site.longitude" in capsys.readouterr().err
    good = save_project(load_demo_project(), tmp_path / "good")
    assert main(["check", str(good)]) == 0


def test_summary_agrees_with_the_layout(demo):
    text = project_summary(demo)
    count = demo.layout().count
    assert f"{count} modules" in text


def test_top_level_names_are_exported():
    for name in ("Block", "Cylinder", "Tree", "RoofFace", "Site", "Project", "ModuleSpec"):
        assert hasattr(layout, name)


def test_array_faces_must_name_faces(document):
    document["array_faces"] = ["south", "garage"]
    with pytest.raises(ProjectFileError) as caught:
        project_from_dict(document)
    assert [path for path, _ in caught.value.problems] == ["array_faces[1]"]


def test_only_array_faces_take_modules(demo):
    assert demo.array_faces == ("south",)
    assert {m.face for m in demo.layout().modules} == {"south"}
    everywhere = demo.with_changes(array_faces=None).layout()
    assert {m.face for m in everywhere.modules} == {"south", "north"}


def test_survey_readings_round_trip_and_stand_in_the_scene(demo, tmp_path):
    # A surveyed tree: 50 ft away at 17° to the top with a 5.5 ft eye height is 20.8 ft tall
    # (REFERENCES.md, tangent method worked example).
    from layout.scene.survey import SurveyEntry
    from layout.units import feet_to_m

    entry = SurveyEntry("tree", 200.0, feet_to_m(50.0), 17.0, eye_height_m=feet_to_m(5.5),
                        crown_radius_m=2.0, crown_base_m=2.5, growth_m_per_yr="medium",
                        name="surveyed oak")
    edited = demo.with_changes(survey=(entry,))
    tree = edited.scene_obstructions[-1]
    assert tree.name == "surveyed oak"
    assert tree.height == pytest.approx(feet_to_m(20.79), abs=0.01)
    assert tree.growth_m_per_yr > 0
    again = load_project(save_project(edited, tmp_path / "surveyed"))
    assert again.survey == edited.survey
    assert again.scene_obstructions == edited.scene_obstructions


# --------------------------------------------------------------------------- version 2
V1_DEMO = os.path.join(os.path.dirname(__file__), "data", "demo_house_v1.eaveline.json")


def test_a_version_1_file_still_loads_with_a_note(demo):
    old = load_project(V1_DEMO)
    assert old.inverter is None and old.strings.record_low_c is None
    assert old.module.missing_electrical()  # the version 1 module has sizes only
    assert old.buildings == demo.buildings and old.obstructions == demo.obstructions
    assert any("document version 1" in note for note in old.load_notes)
    assert any("string sizing needs voc_v" in note for note in old.load_notes)
    assert not demo.load_notes  # the bundled demo is current and complete


def test_a_version_1_file_is_saved_as_the_current_version(tmp_path):
    path = save_project(load_project(V1_DEMO), tmp_path / "upgraded")
    document = json.loads(path.read_text())
    assert document[SCHEMA_KEY] == SCHEMA_VERSION == 2
    assert document["inverter"] is None
    assert "voc_v" not in document["module"]  # nothing is invented for the user
    assert load_project(path).load_notes[-1].startswith("the module has no electrical data")


def test_inverter_and_string_design_round_trip_and_report_their_paths(demo, document):
    assert demo.inverter is not None and demo.strings.record_low_c == -26.0
    assert project_from_dict(document) == demo
    document["inverter"]["mppt_min_v"] = 900.0
    document["strings"]["record_low_c"] = 50.0
    document["module"]["imp_a"] = 99.0
    with pytest.raises(ProjectFileError) as info:
        project_from_dict(document)
    paths = [path for path, _ in info.value.problems]
    assert "inverter.mppt_min_v" in paths and "strings.record_low_c" in paths
    assert "module.imp_a" in paths


def test_string_inputs_must_match_the_strings(document):
    document["strings"]["inputs"] = [0, 1]
    with pytest.raises(ProjectFileError) as info:
        project_from_dict(document)
    assert info.value.problems[0][0] == "strings.inputs"
    document["energy"]["electrical"]["strings"] = [["south/r0c0"], ["south/r0c1"]]
    assert project_from_dict(document).strings.inputs == (0, 1)


def test_outlines_noted_are_the_faces_then_the_obstructions_a_source_names(demo):
    from layout.scene.provenance import PROVENANCE

    face = demo.faces[1]
    tree = next(o for o in demo.obstructions if type(o).__name__ == "Tree")
    project = demo.with_changes(sources=(
        {"kind": "elevation data", "note": PROVENANCE, "items": [tree.name, face.name]},
        {"kind": "footprint file", "note": "from a footprint file", "items": ["chimney"]}))
    outlines = project.outlines_noted(PROVENANCE)
    assert [name for name, _ in outlines] == [face.name, tree.name]
    # the face's own plan outline and the crown's footprint, the same areas
    assert outlines[0][1].area == pytest.approx(abs(_shoelace(face.outline)), rel=1e-12)
    assert outlines[1][1].equals(tree.footprint_polygon)
    assert demo.outlines_noted(PROVENANCE) == ()


def _shoelace(ring) -> float:
    """Plan area of a ring by the shoelace formula (independent of shapely)."""
    return 0.5 * sum(x0 * y1 - x1 * y0 for (x0, y0), (x1, y1)
                     in zip(ring, [*ring[1:], ring[0]], strict=True))
