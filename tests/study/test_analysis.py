"""The analysis object: incremental updates equal a fresh evaluation; outside checks of totals."""

import math
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest

from layout import Block, FillOptions, Project, Site, gable_roof, generic_60_cell, no_setbacks
from layout.errors import InputError
from layout.power.electrical import ElectricalOptions
from layout.power.energy import EnergyOptions
from layout.project import load_demo_project
from layout.study.analysis import Analysis, evaluate


@pytest.fixture(scope="module")
def demo():
    return load_demo_project()


@pytest.fixture(scope="module")
def analysis(demo):
    return Analysis(demo)


def moved(project, index, dx, dy):
    obstructions = list(project.obstructions)
    obstructions[index] = obstructions[index].translated(dx, dy)
    return project.with_changes(obstructions=tuple(obstructions))


def assert_same(incremental, fresh):
    pd.testing.assert_frame_equal(incremental.table, fresh.table, rtol=1e-12, atol=1e-9)
    pd.testing.assert_frame_equal(incremental.monthly, fresh.monthly, rtol=1e-12, atol=1e-9)
    for key, value in fresh.totals.items():
        if isinstance(value, float):
            assert incremental.totals[key] == pytest.approx(value, rel=1e-12, abs=1e-9), key
        else:
            assert incremental.totals[key] == value, key


def index_of(project, name):
    return next(i for i, o in enumerate(project.obstructions) if o.name.startswith(name))


def test_moving_a_tree_ray_tests_only_the_tree_and_matches_a_fresh_evaluation(demo, analysis):
    tree = index_of(demo, "silver maple")
    edited = moved(demo, tree, 2.0, 1.5)
    ran = analysis.update(edited)
    assert "fill" not in ran and "points" not in ran  # the tree stands off the roof
    assert "rays" in ran and analysis.rays_tested == 1
    assert_same(analysis.result, evaluate(edited))
    # and back again: the cache keeps the other obstructions' hits
    analysis.update(demo)
    assert_same(analysis.result, evaluate(demo))


def test_moving_the_chimney_refills_and_matches_a_fresh_evaluation(demo, analysis):
    chimney = index_of(demo, "chimney")
    edited = moved(demo, chimney, 1.2, -1.0)
    ran = analysis.update(edited)
    assert "fill" in ran  # a roof-mounted obstruction changes the usable area
    assert_same(analysis.result, evaluate(edited))
    analysis.update(demo)


def test_changing_the_electrical_model_recomputes_power_only(demo, analysis):
    energy = replace(demo.energy, electrical=ElectricalOptions(shade_model="irradiance"))
    edited = demo.with_changes(energy=energy)
    ran = analysis.update(edited)
    assert ran == ("power", "tables")
    assert_same(analysis.result, evaluate(edited))
    # irradiance-only is the optimistic model: never more loss than bypass diodes
    # (module-level model; see layout.power.electrical)
    assert analysis.result.totals["shade_loss_pct"] <= evaluate(demo).totals["shade_loss_pct"]
    analysis.update(demo)


def test_a_removal_changes_the_modules_and_the_totals(demo, analysis):
    first = analysis.result.modules[0].id
    taken = analysis.result.layout.remove([first]).removed
    edited = demo.with_changes(removed=taken)
    analysis.update(edited)
    assert first not in analysis.result.table.index
    assert analysis.result.totals["modules"] == evaluate(demo).totals["modules"] - 1
    assert_same(analysis.result, evaluate(edited))
    analysis.update(demo)


def test_progress_is_reported_stage_by_stage(demo):
    seen = []
    Analysis(demo, progress=lambda label, done, total: seen.append((label, done, total)))
    assert seen[0][1] == 0 and all(total == seen[0][2] for _, _, total in seen)
    assert [done for _, done, _ in seen] == sorted(done for _, done, _ in seen)


@pytest.fixture(scope="module")
def open_roof():
    # An invented one-storey gable house at 40° N with nothing around it.
    site = Site(40.0, -105.0, "America/Denver", altitude_m=1600.0, name="open test site")
    house = gable_roof(12.0, 8.0, 25.0, 3.0, name="")
    return Project(site=site, buildings=(house,), module=generic_60_cell(400.0),
                   clearance=no_setbacks(), fill=FillOptions(), array_faces=("south",))


def test_an_unshaded_layout_has_no_loss_and_tsrf_equals_tof(open_roof):
    # Definitions of solar access, TOF and TSRF (common practice): with no shade the solar
    # access is 100 % and TSRF = TOF.
    # Substring irradiance is held in float32 (7 digits), so "zero" is zero to 1e-4 %.
    result = evaluate(open_roof)
    table = result.table
    assert len(table) > 0
    np.testing.assert_allclose(table["shade_loss_pct"], 0.0, atol=1e-4)
    np.testing.assert_allclose(table["solar_access_pct"], 100.0, atol=1e-9)
    np.testing.assert_allclose(table["tsrf_pct"], table["tof_pct"], rtol=1e-12)
    assert result.totals["shade_loss_pct"] == pytest.approx(0.0, abs=1e-4)


def test_best_fixed_tilt_is_near_the_latitude_facing_the_equator(open_roof):
    # Common practice: for clear sky at mid-latitudes the best fixed tilt is near the latitude
    # and the best azimuth faces the equator.
    best = evaluate(open_roof).best
    assert abs(best.surface_tilt - open_roof.site.latitude) < 8.0
    assert abs(best.surface_azimuth - 180.0) < 5.0
    # and the search really is a maximum: pvlib's own transposition on neighbouring planes
    from layout.power.energy import load_weather
    from layout.power.metrics import _insolation

    weather = load_weather(open_roof.site, open_roof.energy)
    for dt, da in ((5, 0), (-5, 0), (0, 10), (0, -10)):
        assert _insolation(weather, best.surface_tilt + dt, best.surface_azimuth + da,
                           "perez") < best.insolation_kwh_m2


def test_a_fully_enclosed_module_keeps_only_the_ground_reflected_share(open_roof):
    # A box over the whole south face hides the beam and the sky from every module, leaving
    # the ground-reflected part (irradiance rule: ground-reflected light is not shaded).
    face = open_roof.buildings[0].face("south")
    x0, y0, x1, y1 = face.plan_polygon.bounds
    lid = Block([(x0 - 1, y0 - 1), (x1 + 1, y0 - 1), (x1 + 1, y1 + 1), (x0 - 1, y1 + 1)],
                top=face.ridge_height_m + 1.2, base=face.ridge_height_m + 0.2, kind="other",
                name="lid")
    walls = [Block([(x0 - 1.2, y0 - 1.2), (x1 + 1.2, y0 - 1.2), (x1 + 1.2, y0 - 1.0),
                    (x0 - 1.2, y0 - 1.0)], top=face.ridge_height_m + 1.2, kind="wall")]
    walls.append(Block([(x0 - 1.2, y0 - 1.2), (x0 - 1.0, y0 - 1.2), (x0 - 1.0, y1 + 1.2),
                        (x0 - 1.2, y1 + 1.2)], top=face.ridge_height_m + 1.2, kind="wall"))
    walls.append(Block([(x1 + 1.0, y0 - 1.2), (x1 + 1.2, y0 - 1.2), (x1 + 1.2, y1 + 1.2),
                        (x1 + 1.0, y1 + 1.2)], top=face.ridge_height_m + 1.2, kind="wall"))
    walls.append(Block([(x0 - 1.2, y1 + 1.0), (x1 + 1.2, y1 + 1.0), (x1 + 1.2, y1 + 1.2),
                        (x0 - 1.2, y1 + 1.2)], top=face.ridge_height_m + 1.2, kind="wall"))
    enclosed = open_roof.with_changes(obstructions=(lid, *walls))
    result = evaluate(enclosed)
    # the ground-reflected share of the unshaded plane-of-array insolation, from pvlib directly
    from layout.power.energy import load_weather
    from layout.power.transposition import plane_of_array

    weather = load_weather(enclosed.site, enclosed.energy)
    frame = plane_of_array(weather, face.pitch_deg, face.azimuth_deg)
    ground_share = frame["poa_ground_diffuse"].sum() / frame["poa_global"].clip(lower=0).sum()
    np.testing.assert_allclose(result.table["solar_access_pct"], 100 * ground_share, rtol=0.02)
    assert math.isclose(result.sky_view.max(), 0.0, abs_tol=0.01)


def test_energy_options_round_trip_through_the_project_file(demo, tmp_path):
    from layout.project import load_project, save_project

    energy = EnergyOptions(step_minutes=30, sky_model="haydavies",
                           electrical=ElectricalOptions(shade_model="string",
                                                        inverter_efficiency=0.96))
    edited = demo.with_changes(energy=energy)
    assert load_project(save_project(edited, tmp_path / "e")).energy == energy


def test_a_parapet_casts_a_shadow_as_long_as_geometry_says():
    # A wall of height h shades the flat roof behind it to h / tan(elevation) when the sun
    # stands square to it (plane geometry; REFERENCES.md gives the pole case, 2.00 × height
    # at 40° N solstice noon, elevation 26.56°).
    from layout import flat_roof
    from layout.power.energy import parapet_walls, scene_casters
    from layout.shading import shaded
    from layout.sky.sun import sun_vectors

    roof = flat_roof(20.0, 12.0, eave_height_m=6.0, parapet_height_m=1.0, name="store")
    project = Project(site=Site(40.0, -105.0, "America/Denver"), buildings=(roof,),
                      module=generic_60_cell(400.0), clearance=no_setbacks())
    walls = parapet_walls(project)
    assert len(walls) == 4
    assert {round(max(c[2] for c in w.corners), 9) for w in walls} == {7.0}
    reach = 1.0 / math.tan(math.radians(26.56))  # 2.00 m
    sun = sun_vectors(np.array([180.0]), np.array([26.56]))
    points = np.array([[10.0, 0.98 * reach, 6.0], [10.0, 1.02 * reach, 6.0]])
    assert shaded(points, sun, scene_casters(project)).tolist() == [[True, False]]
    no_parapet = project.with_changes(buildings=(replace(roof, parapet_height_m=0.0),))
    assert parapet_walls(no_parapet) == ()


def test_changing_the_sky_directions_recomputes_the_sky_view(demo, analysis):
    energy = replace(demo.energy, sky_directions=256)
    edited = demo.with_changes(energy=energy)
    ran = analysis.update(edited)
    assert "sky" in ran and analysis.rays_tested == 0  # the beam's hits are all cached
    assert_same(analysis.result, evaluate(edited))
    analysis.update(demo)


# --------------------------------------------------------------- recent projects (undo, redo)
def test_going_back_to_a_recent_project_recalls_its_state_exactly(demo):
    analysis = Analysis(demo)
    first = analysis.result
    tree = index_of(demo, "silver maple")
    chimney = index_of(demo, "chimney")
    tree_moved = moved(demo, tree, 2.0, 1.5)
    analysis.update(tree_moved)  # the shared hit cache now holds the moved tree
    assert analysis.update(demo) == ("recalled",)  # undo
    assert analysis.result is first and analysis.project is demo
    assert analysis.update(tree_moved) == ("recalled",)  # redo
    assert_same(analysis.result, evaluate(tree_moved))
    # an edit made from a recalled state is as exact as any other: the hit cache shared
    # between the states is brought to the edit's obstructions before it is read
    analysis.update(demo)
    both = moved(moved(demo, chimney, 1.2, -1.0), tree, -1.0, 0.5)
    assert "recalled" not in analysis.update(both)
    assert_same(analysis.result, evaluate(both))


def test_a_passing_project_is_not_kept_and_the_kept_ones_are_few(demo):
    analysis = Analysis(demo, recent=2)
    tree = index_of(demo, "silver maple")
    preview = moved(demo, tree, 1.0, 0.0)
    analysis.update(preview, remember=False)  # a drag's live preview
    assert "recalled" not in analysis.update(moved(demo, tree, 2.0, 0.0))
    assert "recalled" not in analysis.update(preview, remember=False)  # computed again
    assert analysis.update(demo) == ("recalled",)
    for step in (3.0, 4.0):  # two more projects push the oldest out (the preview, then demo)
        analysis.update(moved(demo, tree, step, 0.0))
    assert "recalled" not in analysis.update(demo)


def test_no_state_is_kept_beyond_the_memory_budget_or_when_none_is_asked(demo):
    tree = index_of(demo, "silver maple")
    for options in ({"recent": 0}, {"recent_mb": 0.001}):  # the demo's arrays hold ~20 MB
        analysis = Analysis(demo, **options)
        analysis.update(moved(demo, tree, 1.0, 0.0))
        assert "recalled" not in analysis.update(demo), options


@pytest.mark.parametrize(("options", "field"), [({"recent": -1}, "recent"),
                                                ({"recent": 1.5}, "recent"),
                                                ({"recent_mb": 0}, "recent_mb")])
def test_bad_recall_settings_name_the_field(demo, options, field):
    from layout.errors import InputError

    with pytest.raises(InputError, match=field):
        Analysis(demo, **options)


def test_a_kept_state_is_not_recalled_once_files_are_read_from_another_folder(demo, tmp_path):
    analysis = Analysis(demo)
    tree = index_of(demo, "silver maple")
    analysis.update(moved(demo, tree, 1.0, 0.0))
    analysis.base_dir = tmp_path  # a project file opened from elsewhere
    assert "recalled" not in analysis.update(demo)


def test_a_sampled_analysis_reuses_the_weather_given_and_estimates_the_year(demo, analysis):
    # previews run on one day in five of the weather the main analysis read: nothing is read
    # again, and the shade loss lands near the whole year's (the exact figure comes at drop)
    weather = analysis.result.weather
    sampled = Analysis(demo, sample_days=5, weather=weather, recent=0)
    assert sampled.result.weather.site == weather.site
    assert set(sampled.result.weather.data.index.dayofyear) == set(range(1, 366, 5))
    assert sampled.timings["weather"] < 0.5  # no file read (a read takes a second or so)
    assert sampled.result.totals["shade_loss_pct"] == pytest.approx(
        analysis.result.totals["shade_loss_pct"], abs=0.25)
    assert sampled.result.totals["energy_kwh"] == pytest.approx(
        analysis.result.totals["energy_kwh"], rel=0.03)
    tree = index_of(demo, "silver maple (south-west)")
    project = moved(demo, tree, 1.0, 0.5)
    sampled.update(project, remember=False)
    assert sampled.rays_tested == 1 and sampled.result.totals["shade_loss_pct"] > 0


@pytest.mark.parametrize("days", [0, 25, 1.5, True])
def test_sample_days_out_of_range_names_the_field(demo, days):
    with pytest.raises(InputError, match="sample_days"):
        Analysis(demo, sample_days=days)
