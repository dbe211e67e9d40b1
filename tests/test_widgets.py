"""The planner widgets without a browser: set traits as the front end does, check the figures.

Every figure the planner shows is compared with the core's own result for the new state
(Project.layout(), compare_orientations), never with a number written into the test.
"""

import json
import math
import os
import re
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest
import shapely
from shapely.geometry import shape

from layout import load_demo_project
from layout.project import demo_project_path, project_to_dict
from layout.scene.survey import build_obstruction, entry_geometry
from layout.study.analysis import Analysis, evaluate
from layout.study.compare import compare_layouts
from layout.units import FOOT_M, INCH_M
from widgets import Planner
from widgets import __main__ as app
from widgets.__main__ import voila_command
from widgets.export import layout_geojson, module_table
from widgets.plan_view import obstruction_anchor, plan_scene
from widgets.planner import FIGURES, snap_length
from widgets.style import FIGURE_SCALE, figure_colours, hex_to_rgb

# A point in the middle of the demo's south array [m]: the chimney dropped here costs a module
# (checked against Project.layout() below, not assumed).
CHIMNEY_TARGET_M = (4.5, 2.0)


@pytest.fixture(scope="module")
def demo():
    return load_demo_project()


@pytest.fixture(scope="module")
def shared_planner(demo):
    # One planner for the file: its analysis reads the weather once (about a second); each
    # test gets it back on the demo project with the controls as a new planner has them.
    return Planner(demo)


@pytest.fixture
def planner(shared_planner, demo):
    p = shared_planner
    p.timeline.enabled.value = False
    p.show_tab("Module")
    p.click_mode.value = "toggle"
    p.colour_by.value = "shade_loss_pct"
    p.hours_panel.hours_scope.value = "module"
    p.module_panel.preset.value = "as in the project"
    p.selected_id = None
    assert p.set_project(demo)
    p.survey.new_entry()
    return p


@pytest.fixture(scope="module")
def reference(demo):
    """A separate analysis of the core, for the figures the planner must show."""
    return Analysis(demo)


def core_result(reference, project):
    reference.update(project)
    return reference.result


def shown_count(planner) -> int:
    return int(re.search(r"<b>(\d+)</b> modules", planner.totals_panel.count_label.value).group(1))


def shown_kwp(planner) -> float:
    return float(re.search(r"<b>([\d.]+)</b> kWp", planner.totals_panel.count_label.value).group(1))


def shown_loss(planner) -> float:
    """Annual shade loss of the layout as the totals line shows it [%]."""
    return float(re.search(r"eaveline-shade-loss'>([\d.]+)<",
                           planner.totals_panel.totals_label.value).group(1))


def shown_energy(planner) -> float:
    return float(re.search(r"<b>([\d,]+)</b> kWh a year", planner.totals_panel.totals_label.value)
                 .group(1).replace(",", ""))


def drop_marker(planner, index, x_display, y_display):
    """What the front end does at mouse-up: write the marker's x and y in one update."""
    marker = planner.plan.obstruction_markers
    x = np.array(marker.x, dtype=float)
    y = np.array(marker.y, dtype=float)
    x[index], y[index] = x_display, y_display
    with marker.hold_trait_notifications():
        marker.x = x
        marker.y = y


def moved_project(project, index, x_m, y_m):
    obstruction = project.obstructions[index]
    ax, ay = obstruction_anchor(obstruction)
    obstructions = list(project.obstructions)
    obstructions[index] = obstruction.translated(x_m - ax, y_m - ay)
    return project.with_changes(obstructions=tuple(obstructions))


# --------------------------------------------------------------------------- first view
def test_shown_count_and_kwp_are_the_cores(planner, demo):
    core = demo.layout()  # the core's own layout of the project
    assert shown_count(planner) == core.count
    assert shown_kwp(planner) == pytest.approx(round(core.kwp(demo.module), 2))
    assert planner.array_layout.count == core.count


def test_planner_layout_is_project_layout(planner, demo):
    layout, areas = planner.array_layout, planner.areas
    core = demo.layout()
    assert [m.id for m in layout.modules] == [m.id for m in core.modules]
    assert layout.removed == core.removed
    assert layout.notes == core.notes
    assert set(areas) == set(demo.array_faces)


def test_ridge_rule_in_force_is_shown(planner, demo):
    from widgets.unit_text import in_units

    ridge = [n for n in demo.layout().notes if n.startswith("ridge setback")]
    assert ridge, "the demo has a ridge"
    # shown in the project's units (feet): the metric figure in brackets is dropped
    shown = in_units(ridge[0], demo.units)
    assert "mm" not in shown and "18 in" in shown
    assert shown in planner.module_panel.rule_label.value.replace("&#x27;", "'")


def test_plan_axes_are_equal_and_in_feet_for_an_imperial_project(planner, demo):
    plan = planner.plan
    width_px, height_px = plan.plot_area_px()
    per_px_x = (plan.x_scale.max - plan.x_scale.min) / width_px
    per_px_y = (plan.y_scale.max - plan.y_scale.min) / height_px
    assert per_px_x == pytest.approx(per_px_y, rel=1e-12)  # equal aspect
    assert demo.units == "imperial" and "[ft]" in plan.x_axis.label
    # a marker sits at the obstruction's anchor in feet (1 ft = 0.3048 m exactly, NIST SP 811)
    ax, ay = obstruction_anchor(demo.obstructions[0])
    assert plan.obstruction_markers.x[0] == pytest.approx(ax / FOOT_M)
    assert plan.obstruction_markers.y[0] == pytest.approx(ay / FOOT_M)


def test_plan_shows_usable_area_mapped_to_plan(demo):
    layout, areas = demo.fill_with_areas()
    scene = plan_scene(demo, layout, areas)
    faces = {f.name: f for f in demo.faces}
    for name, geometry in scene.usable:
        # a plane area seen from above shrinks by cos(pitch) (orthographic projection)
        expected = areas[name].area_m2 * math.cos(math.radians(faces[name].pitch_deg))
        assert geometry.area == pytest.approx(expected, rel=1e-9)
    kinds = {kind for _, _, kind, _ in scene.edges}
    assert {"eave", "ridge", "rake"} <= kinds
    categories = {category for _, _, category, _ in scene.zones}
    assert {"setback", "pathway", "clearance"} <= categories
    trees = [entry for entry in scene.obstructions if entry[2]]
    tree = demo.obstructions[2]
    # the crown is drawn as a circle of the crown radius: area pi r^2 within the polygon error
    assert trees[0][3].area == pytest.approx(math.pi * tree.crown_radius ** 2, rel=2e-3)


# --------------------------------------------------------------------------- drag
def test_drag_end_moves_the_chimney_and_refills(planner, demo):
    x_m, y_m = CHIMNEY_TARGET_M
    expected = moved_project(demo, 0, snap_length(x_m, "imperial"),
                             snap_length(y_m, "imperial")).layout()
    assert expected.count != demo.layout().count  # the drop must change the figure
    drop_marker(planner, 0, x_m / FOOT_M, y_m / FOOT_M)
    ax, ay = obstruction_anchor(planner.project.obstructions[0])
    assert ax == pytest.approx(snap_length(x_m, "imperial"), abs=1e-9)
    assert ay == pytest.approx(snap_length(y_m, "imperial"), abs=1e-9)
    assert shown_count(planner) == expected.count == planner.project.layout().count
    assert [m.id for m in planner.array_layout.modules] == [m.id for m in expected.modules]
    # the marker now sits on the snapped position, and the other obstructions stayed put
    assert planner.plan.obstruction_markers.x[0] == pytest.approx(ax / FOOT_M)
    assert planner.project.obstructions[1:] == demo.obstructions[1:]
    assert "chimney moved to" in planner.totals_panel.last_move.value


def test_drag_snaps_to_a_quarter_inch_and_the_readout_parses_back(planner):
    from layout.units import parse_length

    drop_marker(planner, 1, 6.93 / FOOT_M, 3.0 / FOOT_M)
    text = re.search(r"x = (.*?), y = (.*?)</span>", planner.totals_panel.last_move.value)
    x = parse_length(text.group(1).replace("&#x27;", "'"))
    ax, _ = obstruction_anchor(planner.project.obstructions[1])
    assert x == pytest.approx(ax, abs=1e-9)
    assert round(ax / INCH_M * 4) == pytest.approx(ax / INCH_M * 4, abs=1e-6)


def test_a_second_notification_of_the_same_drop_changes_nothing(planner):
    drop_marker(planner, 0, 4.5 / FOOT_M, 2.0 / FOOT_M)
    project = planner.project
    marker = planner.plan.obstruction_markers
    marker.y = np.array(marker.y)  # same values again
    assert planner.project is project


# --------------------------------------------------------------------------- clicks
def test_click_takes_a_module_out_and_puts_it_back(planner, demo):
    targets = planner.plan.module_targets
    module_id = planner.plan.module_ids[3]
    targets.selected = [3]  # what a click does with interactions={"click": "select"}
    assert len(planner.project.removed) == 1
    core = planner.project.layout()
    assert module_id in {m.id for m in core.removed_modules}
    assert shown_count(planner) == core.count == demo.layout().count - 1
    assert targets.selected is None  # ready for the next click
    targets.selected = [3]
    assert planner.project.removed == ()
    assert shown_count(planner) == demo.layout().count


# --------------------------------------------------------------------------- forms
def test_form_refuses_a_negative_height_and_keeps_the_last_valid_state(planner, demo):
    form = planner.objects
    form.choice.value = 0  # the chimney
    form.rows["top"].input.value = "-2 ft"
    assert "above base" in form.rows["top"].error
    assert planner.project.obstructions == demo.obstructions
    assert shown_count(planner) == demo.layout().count
    form.rows["top"].input.value = "32 ft"
    assert form.rows["top"].error == ""
    assert planner.project.obstructions[0].top == pytest.approx(32 * FOOT_M)  # exact foot


def test_form_refuses_text_in_a_length_field(planner, demo):
    form = planner.objects
    form.choice.value = 1  # the vent
    form.rows["radius"].input.value = "wide"
    assert "not a length" in form.rows["radius"].error
    assert planner.project.obstructions == demo.obstructions


def test_form_refuses_a_crown_base_above_the_tree_top(planner, demo):
    form = planner.objects
    form.choice.value = 2  # the tree
    form.rows["crown_base"].input.value = "50 ft"
    assert "out of range" in form.rows["crown_base"].error
    assert planner.project.obstructions == demo.obstructions
    form.rows["transmittance"].input.value = "1.5"  # both fields wrong: both messages stay
    assert "out of range" in form.rows["crown_base"].error
    form.rows["crown_base"].input.value = "10 ft"
    assert "out of range" in form.rows["transmittance"].error  # a fraction above 1
    assert form.rows["crown_base"].error == ""
    assert planner.project.obstructions == demo.obstructions


def test_form_moves_the_chimney_like_a_drag(planner, demo):
    form = planner.objects
    form.choice.value = 0
    x_m, y_m = CHIMNEY_TARGET_M
    form.rows["x"].input.value = f"{x_m} m"
    form.rows["y"].input.value = f"{y_m} m"
    expected = moved_project(demo, 0, x_m, y_m).layout()
    assert shown_count(planner) == expected.count


def test_form_adds_and_deletes(planner, demo):
    form = planner.objects
    form.new_kind.value = "tree"
    form.add_button.click()
    assert len(planner.project.obstructions) == len(demo.obstructions) + 1
    assert form.index == len(demo.obstructions)
    form.delete_button.click()
    assert planner.project.obstructions == demo.obstructions


def test_block_side_lengths_resize_the_chimney(planner):
    form = planner.objects
    form.choice.value = 0
    form.rows["side_a"].input.value = "1 m"
    form.rows["side_b"].input.value = "0.5 m"
    chimney = planner.project.obstructions[0]
    # a rectangle's area is the product of its sides
    assert chimney.footprint_polygon.area == pytest.approx(0.5, rel=1e-9)


# --------------------------------------------------------------------------- Module tab
def test_orientation_switch_refills_with_the_cores_count(planner, demo):
    planner.module_panel.orientation.value = "landscape"
    expected = demo.with_changes(fill=replace(demo.fill, orientation="landscape")).layout()
    assert planner.project.fill.orientation == "landscape"
    assert shown_count(planner) == expected.count


def test_setback_values_refill_and_bad_values_stay_beside_the_field(planner, demo):
    rows = planner.module_panel.setback_rows
    rows["ridge"].input.value = "36 in"
    assert planner.project.clearance.edge_setback_m["ridge"] == pytest.approx(36 * INCH_M)
    expected = demo.with_changes(clearance=planner.project.clearance).layout()
    assert shown_count(planner) == expected.count
    assert planner.project.clearance.name.endswith("(edited)")
    before = planner.project
    rows["pathway_count"].input.value = "-1"
    assert rows["pathway_count"].error
    assert planner.project is before


def test_setback_preset_fills_the_values(planner, demo):
    planner.module_panel.preset.value = "no setbacks"
    assert all(v == 0 for v in planner.project.clearance.edge_setback_m.values())
    assert shown_count(planner) == planner.project.layout().count
    assert shown_count(planner) >= demo.layout().count


def test_module_size_error_is_shown_beside_the_field(planner, demo):
    planner.module_panel.module_rows["width_m"].input.value = "3 m"  # wider than long
    assert "must not exceed" in planner.module_panel.module_rows["width_m"].error
    assert planner.project.module == demo.module


def test_units_toggle_is_kept_in_the_project(planner, demo):
    feet_max = planner.plan.x_scale.max
    planner.units_toggle.value = "metric"
    assert planner.project.units == "metric"
    assert "[m]" in planner.plan.x_axis.label
    assert planner.plan.x_scale.max == pytest.approx(feet_max * FOOT_M)
    assert planner.module_panel.module_rows["length_m"].input.value.endswith(" m")


# --------------------------------------------------------------------------- Compare tab
def test_compare_tab_is_the_cores_comparison(planner, demo, reference):
    planner.show_tab("Compare")
    table = planner.compare_result
    core = compare_layouts(demo, analysis=reference).table  # the core's, on its own analysis
    assert list(table.index) == list(core.index)
    assert table["modules"].tolist() == core["modules"].tolist()
    assert table["energy_kwh"].to_numpy() == pytest.approx(core["energy_kwh"].to_numpy(),
                                                            rel=1e-9)
    # a "without the worst" option that dropped nothing would repeat the row above: left out
    shown = core[~(core.index.str.endswith("without the worst") & (core["dropped"] == 0))]
    assert list(planner.compare_panel.compare_bars.x) == list(shown.index)
    assert list(planner.compare_panel.compare_bars.y) == pytest.approx(
        shown["energy_kwh"].tolist(), rel=1e-9)
    assert planner.compare_panel.compare_html.value.count("without the worst") == (
        shown.index.str.endswith("without the worst").sum())
    # the option in force fills like Project.layout(), and the plan's analysis is put back
    assert table.loc["portrait", "modules"] == demo.layout().count
    assert planner.analysis.project is demo
    assert shown_loss(planner) == pytest.approx(planner.result.totals["shade_loss_pct"],
                                                abs=0.005)


# --------------------------------------------------------------------------- files
def test_save_and_load_round_trip(planner, tmp_path, demo):
    drop_marker(planner, 0, 4.5 / FOOT_M, 2.0 / FOOT_M)
    planner.file_panel.project_path.value = str(tmp_path / "job")
    written = planner.save()
    assert written.name == "job.eaveline.json"
    saved = planner.project
    assert planner.set_project(demo)
    planner.file_panel.project_path.value = str(written)
    assert planner.load()
    assert project_to_dict(planner.project) == project_to_dict(saved)
    assert shown_count(planner) == saved.layout().count


def test_load_of_a_bad_file_keeps_the_project(planner, tmp_path, demo):
    bad = tmp_path / "bad.eaveline.json"
    bad.write_text("{not json", encoding="utf-8")
    planner.file_panel.project_path.value = str(bad)
    assert not planner.load()
    assert "not valid JSON" in planner.file_panel.file_message.value
    assert planner.project is not None and shown_count(planner) == demo.layout().count


def test_geojson_outlines_match_the_modules(planner, tmp_path):
    path = planner.export_geojson()
    assert path.suffix == ".geojson"
    data = json.loads(path.read_text())
    layout = planner.array_layout
    spec = planner.project.module
    assert len(data["features"]) == len(layout.modules)
    for feature, module in zip(data["features"], layout.modules, strict=True):
        ring = np.asarray(feature["geometry"]["coordinates"][0])
        assert ring.shape == (5, 3) and np.allclose(ring[0], ring[-1])
        plan = shape({"type": "Polygon", "coordinates": [ring[:, :2].tolist()]})
        # orthographic projection of a tilted rectangle: plan area = true area x cos(tilt)
        assert plan.area == pytest.approx(spec.area_m2 * math.cos(math.radians(module.tilt_deg)),
                                          rel=1e-9)
        assert feature["properties"]["id"] == module.id


def test_csv_table_has_one_row_per_module(planner, tmp_path):
    planner.file_panel.export_path.value = str(tmp_path / "out")
    planner.plan.module_targets.selected = [0]  # take one out: it is listed, not active
    path = planner.export_csv()
    table = pd.read_csv(path, index_col="id")
    layout = planner.array_layout
    assert list(table.index) == [m.id for m in layout.modules]
    assert int((~table["active"]).sum()) == len(layout.removed_modules) == 1
    for module in layout.modules:
        centre = np.mean(np.asarray(module.corners_3d), axis=0)
        assert table.loc[module.id, ["centre_x_m", "centre_y_m", "centre_z_m"]].tolist() == \
            pytest.approx(centre.tolist())
    assert module_table(layout).shape[0] == len(layout.modules)
    assert layout_geojson(layout)["eaveline_frame"].startswith("site-local metres")


# --------------------------------------------------------------------------- colours
def _lightness(colour: str) -> float:
    """CIE 1976 L* of an sRGB colour (IEC 61966-2-1 transfer curve, CIE 15:2004 L*)."""
    c = hex_to_rgb(colour)
    linear = np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)
    y = float(linear @ [0.2126, 0.7152, 0.0722])  # relative luminance, sRGB primaries
    return 116 * y ** (1 / 3) - 16 if y > (6 / 29) ** 3 else y * (29 / 3) ** 3


def test_figure_scale_gets_steadily_darker():
    lightness = [_lightness(c) for c in FIGURE_SCALE]
    assert lightness[0] > 95  # near-white
    assert all(np.diff(lightness) < -5)  # one hue, every step visibly darker


def test_module_figures_colour_the_plan(planner):
    layout = planner.array_layout
    # a real per-module figure from the core: the height of each module's centre [m]
    heights = pd.Series({m.id: float(m.centre_3d[2]) for m in layout.active_modules})
    planner.show_module_figure(heights, label="centre height [m]")
    fills = planner.plan.module_fill_marks.fill_colors
    order = np.argsort(heights.to_numpy())
    light = [_lightness(fills[i]) for i in order]
    assert all(np.diff(light) <= 1e-9)  # higher modules never drawn lighter
    assert fills[order[0]] == FIGURE_SCALE[0] and fills[order[-1]] == FIGURE_SCALE[-1]
    assert planner.plan.colour_axis.visible and planner.plan.colour_axis.label
    planner.show_module_figure(None)
    assert set(planner.plan.module_fill_marks.fill_colors) == {"#ffffff"}
    assert not planner.plan.colour_axis.visible


def test_figure_colours_handles_missing_values():
    assert figure_colours([np.nan, 1.0, 2.0])[0] is None


# --------------------------------------------------------------------------- app
def test_app_command_listens_on_localhost_only():
    command = voila_command(__import__("pathlib").Path("x.ipynb"), port=9999)
    assert "--Voila.ip=127.0.0.1" in command and "--port=9999" in command
    assert "--no-browser" in command


@pytest.fixture
def no_exec(monkeypatch):
    """Record what ``python -m widgets`` would exec instead of replacing the test process."""
    calls = []
    monkeypatch.setattr(app.os, "execve", lambda *args: calls.append(args))
    return calls


def test_app_serves_the_packaged_notebook(no_exec, demo, capsys):
    packaged = app.planner_notebook()
    assert packaged.is_file() and packaged.name == "planner.ipynb"
    assert app.main(["--port", "9999"]) == 0
    executable, command, env = no_exec.pop()
    assert executable == app.sys.executable
    assert command == voila_command(packaged, port=9999)  # from a folder package: the file
    assert "EAVELINE_PROJECT" not in env
    # the kernel starts in the notebook's folder; the notebook moves to where the user was
    assert env[app.WORKDIR_VARIABLE] == os.getcwd()
    assert "http://127.0.0.1:9999/" in capsys.readouterr().out
    app.main([str(demo_project_path()), "--open"])
    _, command, env = no_exec.pop()
    assert env["EAVELINE_PROJECT"] == str(demo_project_path().resolve())
    assert "--no-browser" not in command


def test_app_check_builds_the_planner_once(no_exec, demo, capsys):
    assert app.main(["--check"]) == 0
    out = capsys.readouterr().out
    assert out.count("\n") == 1 and out.startswith("planner OK: ")
    assert f"notebook {app.planner_notebook()}," in out
    assert f"{demo.name!r} with {demo.layout().count} modules" in out
    assert no_exec == []  # no server


def test_app_check_names_a_missing_project_file(no_exec, tmp_path, capsys):
    missing = tmp_path / "nowhere.eaveline.json"
    assert app.main(["--check", str(missing)]) == 2
    assert app.main([str(missing)]) == 2
    err = capsys.readouterr().err.splitlines()
    assert err == [f"python -m widgets: no such project file: {missing}"] * 2
    assert no_exec == []


def test_app_check_lists_the_problems_of_a_bad_project(no_exec, tmp_path, capsys):
    bad = tmp_path / "bad.eaveline.json"
    bad.write_text(json.dumps({"eaveline_schema_version": 1}))
    assert app.main(["--check", str(bad)]) == 1
    err = capsys.readouterr().err
    assert err.startswith(f"python -m widgets: the planner cannot open {bad}:")
    assert "problem" in err and "buildings" in err


@pytest.mark.parametrize("check", [True, False], ids=["check", "serve"])
def test_app_stops_clearly_without_its_notebook(no_exec, monkeypatch, capsys, check):
    monkeypatch.setattr(app, "NOTEBOOK_PARTS", ("app", "missing.ipynb"))
    assert app.main(["--check"] if check else []) == 2
    assert "the planner notebook is missing from the widgets package" in capsys.readouterr().err
    assert no_exec == []


@pytest.mark.parametrize("check", [True, False], ids=["check", "serve"])
def test_app_stops_clearly_without_a_kernel(no_exec, monkeypatch, capsys, check):
    # what Voila answers every page load with when ipykernel is missing: No Jupyter kernel
    from jupyter_client.kernelspec import KernelSpecManager, NoSuchKernel

    def no_kernel(self, name):
        raise NoSuchKernel(name)

    monkeypatch.setattr(KernelSpecManager, "get_kernel_spec", no_kernel)
    assert app.main(["--check"] if check else []) == 2
    assert "no Jupyter kernel 'python3' to run the planner in; install ipykernel" in \
        capsys.readouterr().err
    assert no_exec == []


def test_app_stops_clearly_when_the_notebook_is_not_one(no_exec, monkeypatch, capsys):
    monkeypatch.setattr(app, "NOTEBOOK_PARTS", ("__init__.py",))
    assert app.main([]) == 2
    assert "the planner notebook cannot be read" in capsys.readouterr().err
    assert no_exec == []


@pytest.mark.parametrize("check", [True, False], ids=["check", "serve"])
def test_app_stops_clearly_without_voila(no_exec, monkeypatch, capsys, check):
    find_spec = app.importlib.util.find_spec
    monkeypatch.setattr(app.importlib.util, "find_spec",
                        lambda name, *a: None if name == "voila" else find_spec(name, *a))
    assert app.main(["--check"] if check else []) == 2
    assert "Voila is not installed" in capsys.readouterr().err
    assert no_exec == []


def test_plan_redraw_is_quick(planner):
    # the Python side of a drop: analysis update and redraw (issue target: 100 ms; the
    # benchmark measures it, this only catches a gross slowdown on a busy machine)
    drop_marker(planner, 2, -1.0 / FOOT_M, -7.0 / FOOT_M)
    assert planner.analysis.recomputed[0] == "rays"  # the tree's rays only, no refill
    assert planner.last_recompute_s < 2.0


def test_hatching_stays_inside_the_zone():
    from widgets.plan_scene import hatch_lines as _hatch

    zone = shapely.box(0, 0, 2, 1).difference(shapely.box(0.5, 0.25, 1.0, 0.75))
    for segment in _hatch(zone, 0.1):
        line = shapely.LineString(segment)
        assert zone.buffer(1e-9).covers(line)


# --------------------------------------------------------------------------- analysis figures
TREE = 2  # the silver maple: off the roof, so moving it changes shade, never the fill


def test_totals_shown_are_the_cores(planner, demo, reference):
    totals = core_result(reference, demo).totals  # the core's own analysis, not the planner's
    assert shown_loss(planner) == pytest.approx(totals["shade_loss_pct"], abs=0.005)
    assert shown_energy(planner) == pytest.approx(totals["energy_kwh"], abs=0.5)
    assert f"mean TSRF <b>{totals['tsrf_pct']:.1f}</b> %" in planner.totals_panel.totals_label.value
    assert (f"below {totals['tsrf_threshold_pct']:g} % TSRF"
            in planner.totals_panel.totals_label.value)
    # clear sky by default: its caveat is on screen
    assert demo.energy.weather_file is None
    assert "overstates" in planner.totals_panel.caveat_label.value


def test_dragging_the_tree_updates_every_module_and_the_totals(planner, demo):
    before = shown_loss(planner)
    target = (-1.0, -6.0)  # metres: the tree a metre and a half nearer the house
    drop_marker(planner, TREE, target[0] / FOOT_M, target[1] / FOOT_M)
    x, y = (snap_length(v, "imperial") for v in target)
    moved = moved_project(demo, TREE, x, y)
    core = evaluate(moved)  # fresh evaluation of the moved tree
    assert planner.analysis.recomputed[0] == "rays"  # no refill: the tree stands off the roof
    assert shown_loss(planner) == pytest.approx(core.totals["shade_loss_pct"], abs=0.005)
    assert shown_loss(planner) != pytest.approx(before, abs=0.01)
    shown = planner.result.table
    pd.testing.assert_series_equal(shown["energy_kwh"], core.table["energy_kwh"], rtol=1e-9)
    # the plan colours every module by its new shade loss
    values = planner.plan.module_values
    assert values.to_numpy() == pytest.approx(core.table["shade_loss_pct"].to_numpy(),
                                              rel=1e-9)
    worst = core.table["shade_loss_pct"].idxmax()
    index = planner.plan.module_ids.index(worst)
    hover = planner.plan.module_targets.names[index]
    assert f"shade loss {core.table.loc[worst, 'shade_loss_pct']:.1f} %" in hover


def drag_message(planner, index, x_display, y_display, event="drag"):
    """What the front end sends on each mouse move of a dragged marker (and at mouse-up)."""
    planner.plan.obstruction_markers._handle_custom_msgs(
        None, {"event": event, "origin": {"x": 0, "y": 0},
               "point": {"x": x_display, "y": y_display}, "index": index})


def test_dragging_shows_a_live_preview_and_the_drop_keeps_it(planner, demo):
    planner.preview_interval_s = 0.0  # every move previews (the app waits 0.15 s first)
    planner.first_preview_s = 0.0
    try:
        crowns_before = list(planner.plan.tree_marks.x)
        markers_before = list(planner.plan.obstruction_markers.x)
        notes_before = list(planner.plan.module_targets.names)
        spot = (-1.0, -6.0)
        drag_message(planner, TREE, spot[0] / FOOT_M, spot[1] / FOOT_M)
        x, y = (snap_length(v, "imperial") for v in spot)
        moved = moved_project(demo, TREE, x, y)
        days = planner.preview_sample_days
        sampled = Analysis(moved, sample_days=days).result
        # the figures are those of one day in five of the year for the marker's place, the
        # project and the main analysis have not changed yet
        assert shown_loss(planner) == pytest.approx(sampled.totals["shade_loss_pct"],
                                                    abs=0.005)
        assert planner.plan.module_values.to_numpy() == pytest.approx(
            sampled.table["shade_loss_pct"].to_numpy(), rel=1e-9)
        # ... close to the whole year's (here 0.02 point apart; the drop gives the exact one)
        exact = evaluate(moved).totals["shade_loss_pct"]
        assert sampled.totals["shade_loss_pct"] == pytest.approx(exact, abs=0.25)
        assert planner.project is demo and planner.analysis.project is demo
        assert "Preview" in planner.status_line.message.value
        assert f"one day in {days}" in planner.status_line.message.value
        # the crown follows the marker; the markers, which the mouse holds, are not redrawn,
        # nor the modules' hover notes (no pointer hovers a module during a drag)
        assert list(planner.plan.tree_marks.x) != crowns_before
        assert list(planner.plan.obstruction_markers.x) == markers_before
        assert list(planner.plan.module_targets.names) == notes_before
        # a drag that ends where it began puts the project's own figures back
        drag_message(planner, TREE, markers_before[TREE], planner.plan.obstruction_markers
                     .y[TREE], event="drag_end")
        assert planner.analysis.project is planner.project is demo
        assert shown_loss(planner) == pytest.approx(evaluate(demo).totals["shade_loss_pct"],
                                                    abs=0.005)
        assert list(planner.plan.tree_marks.x) == crowns_before
        # a preview, then a drop somewhere else: the drop is what stays
        drag_message(planner, TREE, spot[0] / FOOT_M, spot[1] / FOOT_M)
        drop_marker(planner, TREE, -2.0 / FOOT_M, -7.0 / FOOT_M)
        drag_message(planner, TREE, -2.0 / FOOT_M, -7.0 / FOOT_M, event="drag_end")
        x, y = (snap_length(v, "imperial") for v in (-2.0, -7.0))
        dropped = moved_project(demo, TREE, x, y)
        assert planner.project == dropped and planner.analysis.project is planner.project
        assert shown_loss(planner) == pytest.approx(
            evaluate(dropped).totals["shade_loss_pct"], abs=0.005)
        # the drop's hover notes are those of its exact figures
        notes = list(planner.plan.module_targets.names)
        assert notes != notes_before and all(
            planner.plan.module_notes[mid] in notes for mid in planner.plan.module_ids)
    finally:
        planner.preview_interval_s = planner.PREVIEW_INTERVAL_S
        planner.first_preview_s = planner.FIRST_PREVIEW_S


def test_a_move_handled_late_is_not_previewed(planner, demo, monkeypatch):
    # the kernel behind the browser (moves queued): a move older than the freshest of the
    # drag by more than PREVIEW_LATE_S is skipped; caught up again, moves preview
    import widgets.planner_previews as previews_module

    ages = iter([0.020, 0.020 + planner.PREVIEW_LATE_S + 0.03, 0.025])
    monkeypatch.setattr(previews_module, "message_age_s", lambda widget: next(ages))
    previews = planner._preview_analysis()
    calls = []
    original = previews.update
    monkeypatch.setattr(previews, "update", lambda project, **options: calls.append(
        project) or original(project, **options))
    planner.preview_interval_s = planner.first_preview_s = 0.0
    try:
        drag_message(planner, TREE, -1.0 / FOOT_M, -6.0 / FOOT_M, event="drag_start")
        drag_message(planner, TREE, -1.1 / FOOT_M, -6.0 / FOOT_M)  # fresh: previewed
        drag_message(planner, TREE, -1.2 / FOOT_M, -6.0 / FOOT_M)  # 80 ms late: skipped
        drag_message(planner, TREE, -1.3 / FOOT_M, -6.0 / FOOT_M)  # caught up: previewed
        assert len(calls) == 2
        assert [p.obstructions[TREE] for p in calls] == [
            moved_project(demo, TREE, snap_length(x, "imperial"),
                          snap_length(-6.0, "imperial")).obstructions[TREE]
            for x in (-1.1, -1.3)]
    finally:
        planner.preview_interval_s = planner.PREVIEW_INTERVAL_S
        planner.first_preview_s = planner.FIRST_PREVIEW_S
        monkeypatch.undo()
        drag_message(planner, TREE, 0, 0, event="drag_end")
    assert planner.analysis.project is planner.project is demo


def test_message_age_reads_the_front_ends_date_from_the_kernel():
    from datetime import UTC, datetime, timedelta
    from types import SimpleNamespace

    from widgets.message_age import message_age_s

    sent = datetime.now(UTC) - timedelta(seconds=0.5)

    def widget(date):
        header = {"header": {"date": date}}
        return SimpleNamespace(comm=SimpleNamespace(kernel=SimpleNamespace(
            get_parent=lambda channel: header)))

    assert message_age_s(widget(sent)) == pytest.approx(0.5, abs=0.2)
    assert message_age_s(widget(sent.isoformat())) == pytest.approx(0.5, abs=0.2)
    assert message_age_s(widget(sent.replace(tzinfo=None))) == pytest.approx(0.5, abs=0.2)
    assert message_age_s(widget("not a date")) is None
    assert message_age_s(SimpleNamespace(comm=None)) is None  # no kernel: a test, a script


def test_the_first_preview_after_a_roof_edit_recolours_the_modules(demo):
    # the preview analysis catches up with the edit (it refills) at the next drag's first
    # preview: the modules it colours are still those drawn, so they are recoloured
    planner = Planner(demo)
    planner.preview_interval_s = planner.first_preview_s = 0.0
    drag_message(planner, TREE, -1.0 / FOOT_M, -6.0 / FOOT_M)  # makes the preview analysis
    drag_message(planner, TREE, 0, 0, event="drag_end")
    planner.roof_panel.select_face("south")
    planner.roof_panel.pitch.input.value = "33"
    assert planner.roof_panel.apply_face()
    edited = planner.project
    drag_message(planner, TREE, -1.5 / FOOT_M, -6.5 / FOOT_M)
    assert "fill" in planner._preview_analysis().recomputed
    x, y = (snap_length(v, "imperial") for v in (-1.5, -6.5))
    sampled = Analysis(moved_project(edited, TREE, x, y), sample_days=5).result
    assert planner.plan.module_values.to_numpy() == pytest.approx(
        sampled.table["shade_loss_pct"].to_numpy(), rel=1e-9)


@pytest.mark.parametrize("setting", ["preview_sample_days", "SAMPLED_PREVIEW_MODULES"])
def test_previews_are_exact_on_a_large_roof_or_when_asked(planner, demo, setting):
    # one day in one, or a roof above the size limit (here: a limit of one module), previews
    # on the main analysis: exact figures for the marker's place, not kept as a recent state
    setattr(planner, setting, 1)
    planner.preview_interval_s = planner.first_preview_s = 0.0
    try:
        spot = (-1.5, -6.0)
        drag_message(planner, TREE, spot[0] / FOOT_M, spot[1] / FOOT_M)
        x, y = (snap_length(v, "imperial") for v in spot)
        exact = evaluate(moved_project(demo, TREE, x, y))
        assert planner.plan.module_values.to_numpy() == pytest.approx(
            exact.table["shade_loss_pct"].to_numpy(), rel=1e-9)
        assert "one day in" not in planner.status_line.message.value
        assert planner.project is demo and planner.analysis.project is not demo
        drag_message(planner, TREE, 0, 0, event="drag_end")
        assert planner.analysis.project is planner.project is demo
        assert shown_loss(planner) == pytest.approx(evaluate(demo).totals["shade_loss_pct"],
                                                    abs=0.005)
    finally:
        if setting == "preview_sample_days":
            planner.preview_sample_days = planner.PREVIEW_SAMPLE_DAYS
        else:
            del planner.SAMPLED_PREVIEW_MODULES  # back to the class's value
        planner.preview_interval_s = planner.PREVIEW_INTERVAL_S
        planner.first_preview_s = planner.FIRST_PREVIEW_S


def test_previews_during_a_drag_are_spaced_out(planner, demo):
    # with the app's delays, a quick drag (a burst of moves just after the mouse took hold)
    # runs no preview; later in a drag, a burst of moves runs one (the next ones come before
    # the interval after it has passed)
    calls = []
    previews = planner._preview_analysis()  # the analysis previews run on
    original = previews.update
    previews.update = (lambda project, **options: calls.append(project)
                       or original(project, **options))
    try:
        drag_message(planner, TREE, -1.0 / FOOT_M, -6.0 / FOOT_M, event="drag_start")
        for k in range(5):
            drag_message(planner, TREE, (-1.0 - 0.1 * k) / FOOT_M, -6.0 / FOOT_M)
        assert calls == []
        planner._drag_since -= planner.first_preview_s  # the drag has lasted a while
        for k in range(5):
            drag_message(planner, TREE, (-1.0 - 0.1 * k) / FOOT_M, -6.0 / FOOT_M)
        assert len(calls) == 1
        # the place just previewed, sent again (browsers send moves in pairs): no new preview
        planner._preview_done -= planner.preview_interval_s
        drag_message(planner, TREE, -1.0 / FOOT_M, -6.0 / FOOT_M)
        assert len(calls) == 1
    finally:
        del previews.update
        drag_message(planner, TREE, 0, 0, event="drag_end")
    assert planner.analysis.project is planner.project is demo


def test_modules_coloured_by_the_chosen_figure_share_one_scale(planner):
    table = planner.result.table
    for key in ("shade_loss_pct", "tsrf_pct", "energy_kwh"):
        planner.colour_by.value = key
        _, label, vmin = FIGURES[key]
        expected = figure_colours(table[key].to_numpy(), vmin=vmin)
        assert list(planner.plan.module_fill_marks.fill_colors) == expected
        assert planner.plan.colour_axis.label == label and planner.plan.colour_axis.visible
    planner.colour_by.value = ""
    assert set(planner.plan.module_fill_marks.fill_colors) == {"#ffffff"}


def test_modules_below_the_tsrf_threshold_get_a_thick_outline(planner, demo, reference):
    tsrf = planner.result.table["tsrf_pct"]
    threshold = float(np.round(tsrf.median(), 1))
    project = demo.with_changes(energy=replace(demo.energy, tsrf_threshold_pct=threshold))
    assert planner.set_project(project)
    core = core_result(reference, project)
    below = int((core.table["tsrf_pct"] < threshold).sum())
    assert 0 < below < len(core.table)
    assert len(planner.plan.flag_marks.x) == below == core.totals["modules_below_tsrf"]
    assert planner.plan.flag_marks.stroke_width >= 3
    assert f"{below} modules below {threshold:g} % TSRF" in planner.totals_panel.totals_label.value
    # an outline, not a warning colour: the fills stay on the single-hue scale
    assert list(planner.plan.module_fill_marks.fill_colors) == figure_colours(
        core.table["shade_loss_pct"].to_numpy(), vmin=0.0)


def test_progress_is_shown_while_a_full_recompute_runs(planner, demo):
    said = []
    planner.status_line.message.observe(lambda change: said.append(change["new"]), names="value")
    shown = []
    planner.status_line.progress.observe(lambda change: shown.append(change["new"]), names="value")
    planner.progress_after_s = 0.0  # as if the machine were slow: every stage is shown
    try:
        # refill: every stage after the weather runs
        planner.module_panel.orientation.value = "landscape"
    finally:
        planner.progress_after_s = planner.PROGRESS_AFTER_S
    stages = [re.sub("<[^>]+>", "", text) for text in said]
    assert any("filling the roof faces" in text for text in stages)
    assert any("tracing the sun past every obstruction" in text for text in stages)
    # the refill's stages, from the fill (value 2) on, move the bar forward only; what the
    # bar held before (an earlier, quicker recompute leaves it where it was) comes first
    refill = shown[shown.index(2):]
    assert refill == sorted(refill) and len(refill) >= 5
    assert planner.status_line.progress.layout.visibility == "hidden"  # and gone when done
    assert stages[-1].startswith("Ready") or "Refilled" in stages[-1]


def test_a_quick_recompute_does_not_flicker_through_its_stages(planner, demo):
    said = []
    planner.status_line.message.observe(lambda change: said.append(change["new"]), names="value")
    planner.progress_after_s = 60.0  # any recompute is quicker than this
    try:
        drop_marker(planner, TREE, -1.0 / FOOT_M, -6.0 / FOOT_M)
    finally:
        planner.progress_after_s = planner.PROGRESS_AFTER_S
    stages = [re.sub("<[^>]+>", "", text) for text in said]
    assert stages[0] == "Recomputing…" and stages[-1].startswith("Ready")
    assert not any(text.startswith("Recomputing:") for text in stages)
    assert planner.status_line.progress.layout.visibility == "hidden"


def test_a_refused_edit_keeps_the_figures(planner):
    loss = shown_loss(planner)
    assert not planner.set_project(planner.project.with_changes(
        energy=replace(planner.project.energy, weather_file="no-such-file.epw")))
    said = planner.status_line.message.value
    assert "Not changed" in said and "weather_file" in said
    assert shown_loss(planner) == loss
    assert planner.analysis.project is planner.project


# --------------------------------------------------------------------------- Sky tab
def test_click_in_select_mode_shows_the_module_in_the_sky_tab(planner):
    planner.click_mode.value = "select"
    planner.show_tab("Sky")
    module_id = planner.plan.module_ids[5]
    removed = planner.project.removed
    planner.plan.module_targets.selected = [5]
    assert planner.project.removed == removed  # selecting takes nothing out
    assert planner.selected_id == module_id == planner.sky_panel.sky_module.value
    assert module_id in planner.sky_panel.sky_chart.title.value
    assert list(planner.plan.selected_mark.x) == pytest.approx(
        [np.mean(planner.array_layout.module(module_id).corners_3d, axis=0)[0] / FOOT_M])
    # the monthly table is the core's for that module
    monthly = planner.result.module_monthly(module_id)
    cells = re.findall(r"<td style='text-align:right'>([\d.]+)</td>",
                       planner.sky_panel.sky_chart.table.value)
    assert float(cells[0]) == pytest.approx(monthly["energy_kwh"].iloc[0], abs=0.05)
    assert float(cells[-2]) == pytest.approx(monthly["energy_kwh"].sum(), abs=0.05)


def test_sun_paths_reach_the_noon_elevations_of_the_solstices(planner, demo):
    from layout.sky.paths import sun_paths

    paths = {p.month: p for p in sun_paths(demo.site)}
    lat = demo.site.latitude
    # noon elevation = 90 - latitude ± declination; declination at the solstices ±23.44°
    # (standard spherical astronomy, e.g. Duffie & Beckman, Solar Engineering of Thermal
    # Processes, eq. 1.6.1); the 10-minute steps and refraction keep it within 0.3°
    assert np.nanmax(paths[6].elevation_deg) == pytest.approx(90 - lat + 23.44, abs=0.3)
    assert np.nanmax(paths[12].elevation_deg) == pytest.approx(90 - lat - 23.44, abs=0.3)
    # at the equinox the sun rises near due east and sets near due west
    march = paths[3].azimuth_deg[np.isfinite(paths[3].azimuth_deg)]
    assert march[0] == pytest.approx(90, abs=3) and march[-1] == pytest.approx(270, abs=3)


def test_skyline_of_a_pole_matches_closed_form_geometry():
    from layout import Cylinder
    from layout.shading.skyline import skyline_regions

    # a pole of radius 0.5 m and height 10 m, 10 m due south of a point 2 m up
    pole = Cylinder(center=(0.0, -10.0), radius=0.5, top=10.0, name="pole")
    (region,) = skyline_regions((0.0, 0.0, 2.0), [pole])
    assert region.label == "pole" and region.kind == "cylinder"
    # top edge: the nearest rim, atan(8 / 9.5); half width asin(0.5 / 10) (plane geometry);
    # the chart's grid is 2° by 1°
    assert region.top_deg == pytest.approx(math.degrees(math.atan2(8.0, 9.5)), abs=1.0)
    assert region.top_azimuth_deg == pytest.approx(180.0, abs=2.0)
    x0, _, x1, _ = region.outline.bounds
    half = math.degrees(math.asin(0.5 / 10.0))
    assert x0 == pytest.approx(180 - half, abs=2.0) and x1 == pytest.approx(180 + half, abs=2.0)


def test_sky_chart_names_the_tree_for_a_module_it_shades(planner):
    planner.show_tab("Sky")
    table = planner.result.table
    worst = table["shade_loss_pct"].idxmax()
    planner.select_module(worst)
    labels = [r.label for r in planner.sky_panel.sky_chart.regions]
    assert "silver maple (south-west)" in labels
    assert list(planner.sky_panel.sky_chart.region_labels.text) == labels


# --------------------------------------------------------------------------- Hours tab
def test_heat_map_is_the_cores_month_hour_table(planner):
    from widgets.charts import MONTH_NAMES, NIGHT

    planner.show_tab("Hours")
    module_id = planner.selected_id
    expected = planner.result.module_month_hour(module_id)
    heat_map = planner.hours_panel.heat_map
    heat = heat_map.heat
    hours = [int(h) for h in heat.column]
    assert np.isfinite(expected.to_numpy()).any(axis=0)[hours].all()

    def check(table):
        values = table[hours].to_numpy()
        night = ~np.isfinite(values)
        np.testing.assert_allclose(heat.color[~night], values[~night], rtol=1e-12)
        # sun below the horizon: the scale's lowest stop, the light grey the note names
        assert (heat.color[night] == heat_map.colour_scale.min).all()
        assert heat_map.colour_scale.min < 0

    check(expected)
    planner.hours_panel.hours_scope.value = "layout"
    check(planner.result.month_hour)
    scale = heat_map.colour_scale
    assert list(scale.colors) == [NIGHT, *FIGURE_SCALE]
    # the figure's stops fall on 0 ... max, as on the plan: one stop width below zero is night
    assert scale.min == pytest.approx(-scale.max / (len(FIGURE_SCALE) - 1))
    assert "shade loss" in heat_map.colour_axis.label and min(heat_map.colour_axis.tick_values) == 0
    assert heat_map.month_axis.tick_labels["1"] == MONTH_NAMES[0] == "Jan"


# --------------------------------------------------------------------------- timeline
def test_timeline_draws_shadows_and_the_sun_agrees_with_pvlib(planner, demo):
    import pvlib

    planner.timeline.choose("21 Dec", "09:00")
    shadows = planner.shadows
    assert shadows is not None and shadows.sun_up
    when = pd.Timestamp(2023, 12, 21, 9).tz_localize(demo.site.timezone)
    sun = pvlib.solarposition.get_solarposition(pd.DatetimeIndex([when]), demo.site.latitude,
                                                demo.site.longitude)
    assert shadows.azimuth_deg == pytest.approx(float(sun["azimuth"].iloc[0]), abs=0.05)
    assert shadows.elevation_deg == pytest.approx(float(sun["apparent_elevation"].iloc[0]),
                                                  abs=0.2)
    assert len(planner.plan.shadow_marks.x) > 0
    assert "azimuth" in planner.timeline.readout.value
    planner.timeline.enabled.value = False
    assert len(planner.plan.shadow_marks.x) == 0


def test_the_chimney_shadow_points_away_from_the_sun(demo):
    from widgets.timeline import roof_shadows

    bare = demo.with_changes(obstructions=())
    chimney = demo.with_changes(obstructions=(demo.obstructions[0],))
    when = pd.Timestamp(2023, 12, 21, 11).tz_localize(demo.site.timezone)
    with_it = roof_shadows(chimney, when)
    own = with_it.outline.difference(roof_shadows(bare, when).outline)
    assert own.area > 0.5
    cx, cy = obstruction_anchor(demo.obstructions[0])
    dx, dy = own.centroid.x - cx, own.centroid.y - cy
    # a vertical solid's shadow runs, in plan, straight away from the sun's azimuth
    # (a parallel projection along the sun's rays; closed-form geometry)
    away = math.degrees(math.atan2(dx, dy)) % 360
    assert away == pytest.approx((with_it.azimuth_deg + 180) % 360, abs=8)


def test_shadows_follow_a_dragged_obstruction(planner):
    planner.timeline.choose("21 Jun", "15:00")
    first = planner.shadows.outline
    drop_marker(planner, 0, 4.5 / FOOT_M, 2.0 / FOOT_M)
    assert not planner.shadows.outline.equals(first)


def test_a_leading_minus_applies_to_feet_and_inches():
    from widgets.forms import length_text, read_length

    # 1 ft = 0.3048 m and 1 in = 0.0254 m exactly (NIST SP 811, appendix B)
    metres = -(3 * 0.3048 + 3.75 * 0.0254)
    text = length_text(metres, "imperial")
    assert text.startswith("-3 ft")
    assert read_length(text, "imperial", field="x") == pytest.approx(metres, abs=1e-12)
    assert read_length("-1.25 m", "imperial", field="x") == pytest.approx(-1.25)


def test_compare_waits_for_a_request_after_an_edit(planner):
    planner.show_tab("Compare")
    shown = planner.compare_result
    drop_marker(planner, TREE, -1.0 / FOOT_M, -6.0 / FOOT_M)
    assert planner.compare_result is shown
    assert "Compare again" in planner.compare_panel.compare_note.value
    planner.compare_panel.compare_button.click()
    assert planner.compare_result is not shown
    assert planner.compare_result.loc["portrait", "shade_loss_pct"] == pytest.approx(
        planner.result.totals["shade_loss_pct"], rel=1e-9)



# --------------------------------------------------------------------------- Survey tab
# The worked example of the tangent method (REFERENCES.md "Survey", forestry mensuration, USDA
# Forest Service field guides): 50 ft away, 17° to the top, eye at 5.5 ft -> 20.8 ft. The tree
# stands 6 m south of the demo's south eave, sighted due north from a station 50 ft further
# south, so that it shades the array in winter.
WORKED_EXAMPLE = {
    "name": "oak", "station_x_m": "5 m", "station_y_m": "-21.24 m", "eye_height_m": "5.5 ft",
    "bearing_deg": "0", "distance_m": "50 ft", "top_angle_deg": "17",
    "crown_radius_m": "10 ft", "crown_base_m": "8 ft",
}


def worked_entry():
    from layout.scene.survey import SurveyEntry

    return SurveyEntry("tree", 0.0, 50 * FOOT_M, 17.0, eye_height_m=5.5 * FOOT_M,
                       station_x_m=5.0, station_y_m=-21.24, crown_radius_m=10 * FOOT_M,
                       crown_base_m=8 * FOOT_M, name="oak")


def type_readings(panel, values):
    """What a user does: type each field and leave it (continuous_update=False)."""
    for key, text in values.items():
        panel.rows[key].input.value = text


def shown_height_ft(panel) -> float:
    return float(re.search(r"Height ([\d.]+) ft", panel.readout.value).group(1))


def test_survey_form_shows_the_worked_example_height():
    from layout.scene.survey import height_range, height_tangent
    from widgets.survey_panel import SurveyPanel

    panel = SurveyPanel()
    panel.show((), units="imperial")
    type_readings(panel, {k: v for k, v in WORKED_EXAMPLE.items() if k != "crown_base_m"})
    assert panel.entries == () and "Still needed: Crown base height" in panel.readout.value
    type_readings(panel, {"crown_base_m": "8 ft"})
    entry = panel.entries[0]
    assert entry == worked_entry()
    # REFERENCES.md worked example: 20.8 ft (the formula gives 20.79 ft)
    expected = height_tangent(50 * FOOT_M, 17.0, eye_height_m=5.5 * FOOT_M)
    assert entry_geometry(entry)["height_m"] == pytest.approx(expected, rel=1e-12)
    assert shown_height_ft(panel) == pytest.approx(expected / FOOT_M, abs=0.005)
    assert shown_height_ft(panel) == pytest.approx(20.8, abs=0.05)
    low, high = height_range(entry)
    assert f"from {low / FOOT_M:.2f} ft" in panel.readout.value
    assert f"to {high / FOOT_M:.2f} ft" in panel.readout.value
    assert f"{expected / FOOT_M:.2f} ft" in panel.list_html.value


def test_survey_tolerances_are_prefilled_with_the_cores_defaults():
    from layout.scene.survey import SurveyEntry
    from widgets.survey_panel import SurveyPanel, default_tolerance, read_angle

    # bare readings get the core's documented defaults (layout.scene.survey module notes); values
    # large enough that no default is cut to half of its size
    tree = SurveyEntry("tree", 10.0, 20.0, 30.0, base_angle_deg=-3.0, crown_radius_m=4.0,
                       crown_base_m=3.0)
    tree_angle = SurveyEntry("tree", 10.0, 20.0, 30.0, crown_radius_m=4.0,
                             crown_base_angle_deg=5.0)
    wall = SurveyEntry("wall", 10.0, 20.0, 10.0, width_m=5.0, depth_m=1.0)
    pole = SurveyEntry("pole", 10.0, 30.0, 10.0, method="laser", radius_m=0.5)
    for entry in (tree, tree_angle, wall, pole):
        for key, reading in vars(entry).items():
            if hasattr(reading, "tolerance"):
                assert default_tolerance(key, entry.method) == reading.tolerance, key
    panel = SurveyPanel()
    panel.show((), units="metric")
    row = panel.rows["top_angle_deg"]
    assert row.tolerance.value == "0.716"  # shown to 3 digits; left as is, the exact default
    assert read_angle(row.tolerance.value, field="t") == pytest.approx(
        default_tolerance("top_angle_deg"), abs=5e-4)
    assert panel.rows["distance_m"].tolerance.value == "0.100 m"
    panel.rows["method"].input.value = "laser"  # an untouched tolerance follows the method
    assert panel.rows["distance_m"].tolerance.value == "0.300 m"
    # a 5 cm vent radius: the core cuts the default to half the size, and the box says so
    type_readings(panel, {"kind": "vent", "bearing_deg": "45", "distance_m": "20",
                          "top_angle_deg": "15", "radius_m": "0.05"})
    assert panel.entries[0].radius_m.tolerance == pytest.approx(0.025)
    assert panel.entries[0].top_angle_deg.tolerance == default_tolerance("top_angle_deg")
    assert panel.rows["radius_m"].tolerance.value == "0.025 m"
    assert "(default)" in panel.rows["radius_m"].unit.value


def test_a_surveyed_tree_stands_on_the_plan_and_in_the_figures(planner, demo, reference):
    planner.show_tab("Survey")
    type_readings(planner.survey, WORKED_EXAMPLE)
    assert planner.project.survey == (worked_entry(),)
    assert planner.project.obstructions == demo.obstructions
    g = entry_geometry(worked_entry())
    plan = planner.plan
    assert plan.surveyed_markers.x[0] == pytest.approx(g["x_m"] / FOOT_M)
    assert plan.surveyed_markers.y[0] == pytest.approx(g["y_m"] / FOOT_M)
    assert not plan.surveyed_markers.enable_move  # moved through its readings only
    assert plan.station_marks.x[0] == pytest.approx(5.0 / FOOT_M)
    # the crown is drawn with the trees: one more crown ring than the demo has
    assert len(plan.tree_marks.x) == 1 + sum(type(o).__name__ == "Tree"
                                             for o in demo.obstructions)
    totals = core_result(reference, planner.project).totals
    assert shown_loss(planner) == pytest.approx(totals["shade_loss_pct"], abs=0.005)
    assert totals["shade_loss_pct"] > core_result(reference, demo).totals["shade_loss_pct"]
    # the sky chart and the shadows see the surveyed tree as well
    assert planner.project.scene_obstructions[-1] == build_obstruction(worked_entry())


def test_a_surveyed_conifer_with_a_cone_crown_and_a_mature_height(planner, demo, reference):
    planner.show_tab("Survey")
    type_readings(planner.survey, WORKED_EXAMPLE)
    planner.survey.rows["crown_shape"].input.value = "cone"  # the Crown choice in the form
    entry = planner.project.survey[0]
    assert entry.crown_shape == "cone"
    assert planner.project.scene_obstructions[-1] == build_obstruction(
        replace(worked_entry(), crown_shape="cone"))
    totals = core_result(reference, planner.project).totals
    assert shown_loss(planner) == pytest.approx(totals["shade_loss_pct"], abs=0.005)
    # a mature height typed in feet caps its growth
    planner.survey.rows["mature_height_m"].input.value = "40 ft"
    assert planner.project.survey[0].mature_height_m == pytest.approx(40 * FOOT_M)
    assert planner.project.scene_obstructions[-1].mature_height_m == pytest.approx(40 * FOOT_M)
    # opening the entry again shows its crown and cap
    planner.survey.new_entry()
    assert planner.survey.rows["crown_shape"].input.value == "spheroid"
    assert planner.survey.rows["mature_height_m"].input.value == ""
    planner.survey.select(0)
    assert planner.survey.rows["crown_shape"].input.value == "cone"
    assert planner.survey.rows["mature_height_m"].input.value == "40 ft 0 in"


def test_a_bad_reading_stays_beside_its_field_and_the_survey_is_kept(planner):
    panel = planner.survey
    type_readings(panel, WORKED_EXAMPLE)
    project = planner.project
    row = panel.rows["top_angle_deg"]
    row.input.value = "95"
    assert "out of range" in row.error and "90" in row.error
    assert planner.project is project and row.input.value == "95"  # nothing typed is lost
    panel.rows["crown_radius_m"].tolerance.value = "wide"
    assert "tolerance is not a length" in panel.rows["crown_radius_m"].error
    assert "out of range" in row.error  # both messages stay until each field is right
    assert planner.project is project
    panel.rows["crown_radius_m"].tolerance.value = "1 ft"
    row.input.value = "18"
    assert row.error == "" and panel.rows["crown_radius_m"].error == ""
    entry = planner.project.survey[0]
    assert entry.top_angle_deg.value == 18.0
    assert entry.crown_radius_m.tolerance == pytest.approx(FOOT_M, rel=1e-12)
    # a crown base above the top is the core's refusal, shown beside the crown base
    panel.rows["crown_base_m"].input.value = "30 ft"
    assert "crown base outside the tree" in panel.rows["crown_base_m"].error
    assert planner.project.survey[0] == entry


def test_surveyed_ring_opens_the_entry_and_delete_removes_it(planner, demo):
    type_readings(planner.survey, WORKED_EXAMPLE)
    planner.survey.new_entry()
    planner.tabs.selected_index = 0
    planner.plan.surveyed_markers.selected = [0]  # a click on the ring
    assert planner.tabs.selected_index == planner.tabs.titles.index("Survey")
    assert planner.survey.index == 0
    assert planner.survey.rows["distance_m"].input.value == "50 ft 0 in"
    planner.survey.delete_button.click()
    assert planner.project.survey == ()
    assert planner.plan.surveyed_markers.x.size == 0
    assert shown_count(planner) == demo.layout().count


def test_survey_csv_import_keeps_good_rows_and_lists_bad_ones(planner):
    import html as html_module
    from pathlib import Path

    from layout.scene.survey import read_survey_csv

    path = Path(__file__).parent / "data" / "survey_yard.csv"
    entries, problems = read_survey_csv(path)  # the core's own reading of the file
    assert problems and entries
    panel = planner.survey
    panel.csv_path.value = str(path)
    panel.import_button.click()
    assert planner.project.survey == tuple(entries)
    shown = html_module.unescape(panel.import_message.value)
    for problem in problems:
        assert f"row {problem.row}, {problem.column or 'row'}" in shown
        assert str(problem) in shown
    panel.csv_path.value = str(path.with_name("no-such-survey.csv"))
    panel.import_button.click()
    assert "Not read" in panel.import_message.value
    assert planner.project.survey == tuple(entries)


def test_loss_band_is_the_cores_for_the_same_seed(planner, reference):
    from layout.study.outlook import shade_loss_range

    assert planner.loss_panel.range_button.disabled  # the demo has no survey
    type_readings(planner.survey, WORKED_EXAMPLE)
    project = planner.project
    planner.loss_panel.range_samples.value, planner.loss_panel.range_seed.value = 4, 7
    said = []
    planner.status_line.message.observe(lambda change: said.append(change["new"]), names="value")
    planner.loss_panel.range_button.click()
    band = planner.loss_range
    assert any("Loss range: draw 4 of 4" in text for text in said)
    core = shade_loss_range(project, samples=4, seed=7, analysis=reference)
    pd.testing.assert_frame_equal(band.totals[["nominal", "p5", "p95"]],
                                  core.totals[["nominal", "p5", "p95"]], rtol=1e-9)
    loss = core.totals.loc["shade_loss_pct"]
    assert loss["p95"] > loss["p5"]  # the tolerances move this tree's shade
    text = planner.loss_panel.band_label.value
    assert f"{loss['p5']:.2f} to {loss['p95']:.2f}</b> %" in text
    assert "4 draws" in text and "seed 7" in text
    # per module: hover text and the selected module's readout
    module_id = planner.selected_id
    low = core.modules.loc[module_id, "shade_loss_pct_p5"]
    high = core.modules.loc[module_id, "shade_loss_pct_p95"]
    assert f"(range {low:.2f} to {high:.2f} %)" in planner.totals_panel.module_readout.value
    i = planner.plan.module_ids.index(module_id)
    assert f"(range {low:.1f} to {high:.1f} %)" in planner.plan.module_targets.names[i]
    # the planner's analysis is left on the project shown
    assert planner.analysis.project is project
    assert shown_loss(planner) == pytest.approx(loss["nominal"], abs=0.005)
    # kept through a change of units, dropped when the project changes
    planner.units_toggle.value = "metric"
    assert "eaveline-band" in planner.loss_panel.band_label.value
    drop_marker(planner, TREE, -1.0, -6.0)
    assert "press <b>Loss range</b>" in planner.loss_panel.band_label.value
    assert "range" not in planner.totals_panel.module_readout.value


def test_the_file_tab_writes_the_report_and_shows_its_path(tmp_path):
    planner = Planner(load_demo_project())
    planner.file_panel.report_path.value = str(tmp_path / "demo-report.html")
    written = planner.file_panel.make_report()
    assert written == tmp_path / "demo-report.html" and written.is_file()
    assert str(written) in planner.file_panel.file_message.value
    assert "Report written" in planner.status_line.message.value
    assert planner.status_line.progress.layout.visibility == "hidden"
    # the report's numbers are the planner's: the same evaluation
    assert f"{planner.result.totals['energy_kwh']:,.0f}" in written.read_text(encoding="utf-8")
    planner.file_panel.report_path.value = str(tmp_path / "demo-report.docx")
    assert planner.file_panel.make_report() is None
    assert "unknown extension" in planner.file_panel.file_message.value
    assert sorted(p.name for p in tmp_path.iterdir()) == ["demo-report.html"]
