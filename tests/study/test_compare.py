"""Layouts side by side and "drop the worst" (layout.study.compare)."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest

from layout import Block, Project, Site, compare_orientations, generic_60_cell, no_setbacks
from layout.errors import InputError
from layout.power.electrical import ElectricalOptions
from layout.power.metrics import comparison_table, worst_modules
from layout.project import load_demo_project
from layout.scene.building import shed_roof
from layout.study.analysis import Analysis, evaluate
from layout.study.compare import compare_layouts, drop_worst

#: A TSRF limit that some demo modules fail (their TSRF spans about 93.7-96.5 %), so that the
#: "without the worst" rows really drop modules; the project's own 75 % drops none.
LIMIT_PCT = 95.0


@pytest.fixture(scope="module")
def demo():
    return load_demo_project()


@pytest.fixture(scope="module")
def analysis(demo):
    return Analysis(demo)


@pytest.fixture(scope="module")
def before(analysis):
    return analysis.result


@pytest.fixture(scope="module")
def comparison(demo, analysis, before):
    return compare_layouts(demo, orientations=("portrait", "landscape"),
                           min_tsrf_pct=LIMIT_PCT, analysis=analysis)


def assert_same_totals(totals, expected):
    assert set(totals) == set(expected)
    for key, value in expected.items():
        if isinstance(value, float) and math.isnan(value):
            assert math.isnan(totals[key]), key
        elif isinstance(value, float):
            assert totals[key] == pytest.approx(value, rel=1e-12, abs=1e-9), key
        else:
            assert totals[key] == value, key


def test_rows_are_portrait_and_landscape_with_and_without_the_worst(comparison):
    table = comparison.table
    assert list(table.index) == ["portrait", "portrait without the worst", "landscape",
                                 "landscape without the worst"]
    assert list(table["orientation"]) == ["portrait", "portrait", "landscape", "landscape"]
    for column in ("modules", "power_kwp", "energy_kwh", "specific_yield_kwh_per_kwp",
                   "shade_loss_pct", "tsrf_mean_pct", "modules_below_tsrf"):
        assert column in table.columns
    assert table.attrs["tsrf_threshold_pct"] == 75.0
    # kWh/kWp is the ratio of the two columns beside it
    np.testing.assert_allclose(table["specific_yield_kwh_per_kwp"],
                               table["energy_kwh"] / table["power_kwp"], rtol=1e-12)
    for option in comparison.options:
        assert {m.orientation for m in option.evaluation.modules} == {option.orientation}


def test_module_counts_agree_with_the_fill_comparison(demo, comparison):
    # layout.fill.placement.compare_orientations fills both ways independently of any evaluation
    building = demo.buildings[0]
    counts = compare_orientations(building, demo.module, rules=demo.clearance,
                                  options=demo.fill, obstructions=demo.obstructions,
                                  pathway_faces=demo.pathways, latitude=demo.site.latitude,
                                  array_faces=demo.array_faces_of(building))
    counts = counts.set_index("option")["modules"]
    rows = demo.fill.rows  # "grid" or "sliding", as the comparison keeps the fill's row mode
    assert comparison.table.at["portrait", "modules"] == counts[f"portrait, {rows}"]
    assert comparison.table.at["landscape", "modules"] == counts[f"landscape, {rows}"]


def test_each_row_equals_a_fresh_evaluation_and_the_analysis_is_restored(demo, analysis,
                                                                         before, comparison):
    # the demo is filled in portrait: its row is the demo's own evaluation
    assert_same_totals(comparison.option("portrait").evaluation.totals, before.totals)
    landscape = comparison.option("landscape")
    assert landscape.project.fill == replace(demo.fill, orientation="landscape")
    assert_same_totals(landscape.evaluation.totals, evaluate(landscape.project).totals)
    # the analysis lent to the comparison holds the demo again, with the same figures
    assert analysis.project is demo
    assert_same_totals(analysis.result.totals, before.totals)


def test_drop_worst_removes_exactly_the_modules_below_the_limit(comparison):
    for orientation in ("portrait", "landscape"):
        full = comparison.option(orientation).evaluation
        trimmed = comparison.option(f"{orientation} without the worst")
        below = set(full.table.index[full.table["tsrf_pct"] < LIMIT_PCT])
        assert below and set(trimmed.dropped) == below
        assert set(trimmed.evaluation.table.index) == set(full.table.index) - below
        assert trimmed.evaluation.totals["modules"] == full.totals["modules"] - len(below)
        assert comparison.table.at[trimmed.name, "dropped"] == len(below)
        # with module-level electronics and flush modules (which never shade one another),
        # the modules kept keep their figures exactly
        kept = trimmed.evaluation.table
        pd.testing.assert_frame_equal(kept, full.table.loc[kept.index], rtol=1e-12)


def test_drop_worst_totals_equal_a_fresh_evaluation_of_the_returned_project(demo, comparison):
    trimmed = comparison.option("portrait without the worst")
    assert trimmed.project.removed != demo.removed
    assert_same_totals(trimmed.evaluation.totals, evaluate(trimmed.project).totals)


def test_drop_worst_under_the_string_model_re_forms_the_strings(demo, analysis):
    # removing a module re-forms the strings, so the kept modules' energy can change: the
    # totals must come from a new evaluation, not from the old table minus the dropped rows
    energy = replace(demo.energy, electrical=ElectricalOptions(shade_model="string",
                                                               max_string_length=5))
    stringed = demo.with_changes(energy=energy)
    analysis.update(stringed)
    try:
        full = analysis.result
        dropped = drop_worst(stringed, full, min_tsrf_pct=LIMIT_PCT)  # a fresh evaluation
        analysis.update(dropped.project)  # and the incremental one
        incremental = analysis.result
    finally:
        analysis.update(demo)
    assert_same_totals(dropped.totals, incremental.totals)
    pd.testing.assert_frame_equal(dropped.evaluation.table, incremental.table, rtol=1e-12)
    kept = dropped.evaluation.table.index
    changed = ~np.isclose(dropped.evaluation.table["energy_kwh"],
                          full.table.loc[kept, "energy_kwh"], rtol=1e-9)
    assert changed.any()
    assert dropped.evaluation.power.strings != full.power.strings


def test_drop_worst_other_limits_and_no_op(demo, before):
    table = before.table
    # nothing is below the project's 75 % threshold: the same project comes back
    same = drop_worst(demo, before)
    assert same.dropped == () and same.project is demo and same.evaluation is before
    assert same.limits["min_tsrf_pct"] == 75.0
    # energy and shade-loss limits select as the table says
    median = float(table["energy_kwh"].median())
    assert worst_modules(table, min_energy_kwh=median) == tuple(
        table.index[table["energy_kwh"] < median])
    assert worst_modules(table, max_shade_loss_pct=3.0) == tuple(
        table.index[table["shade_loss_pct"] > 3.0])
    both = set(worst_modules(table, min_energy_kwh=median, max_shade_loss_pct=3.0))
    assert both == set(table.index[(table["energy_kwh"] < median)
                                   | (table["shade_loss_pct"] > 3.0)])


def test_drop_worst_refuses_bad_input(demo, before):
    with pytest.raises(InputError, match="min_tsrf_pct"):
        drop_worst(demo, before, min_tsrf_pct=120)
    with pytest.raises(InputError, match="max_shade_loss_pct"):
        drop_worst(demo, before, max_shade_loss_pct=-1)
    with pytest.raises(InputError, match="min_energy_kwh"):
        drop_worst(demo, before, min_energy_kwh=-3)
    with pytest.raises(InputError, match="another project"):
        drop_worst(demo.with_changes(name="other"), before)
    with pytest.raises(InputError, match="orientations"):
        compare_layouts(demo, orientations=("portrait", "upside down"))
    with pytest.raises(InputError, match="orientations"):
        compare_layouts(demo, orientations=())


def test_comparison_table_of_an_empty_layout():
    totals = {"modules": 0, "power_kwp": 0.0, "energy_kwh": 0.0, "energy_unshaded_kwh": 0.0,
              "shade_loss_pct": 0.0, "specific_yield_kwh_per_kwp": 0.0,
              "solar_access_pct": math.nan, "tsrf_pct": math.nan, "modules_below_tsrf": 0,
              "tsrf_threshold_pct": 75.0, "energy_basis": "DC"}
    table = comparison_table({"none": totals})
    assert table.at["none", "modules"] == 0 and math.isnan(table.at["none", "tsrf_mean_pct"])


# --------------------------------------------------------------------------- row-edge shadow
@pytest.fixture(scope="module")
def row_edge():
    """A low garden wall just south of a shed roof's eave, running well past both ends.

    Invented scene: a 20° south face at 40° N whose slope (5.04 m) holds exactly 3 portrait
    rows (3 × 1.65 m + 2 gaps) or 5 landscape rows (5 × 0.991 m + 4 gaps), both starting at
    the eave, so that the wall's shadow is one horizontal band along the bottom edge of the
    bottom row in either orientation. The module's cells are square (1.65 / 10 = 0.991 / 6 ≈
    0.165 m), so the band darkens the same cell rows, and the same share of the array, both ways.
    """
    site = Site(40.0, -105.0, "America/Denver", altitude_m=1600.0, name="row-edge test site")
    slope_m = 5.04
    porch = shed_roof(12.0, slope_m * math.cos(math.radians(20.0)), 20.0, 3.0, name="porch")
    wall = Block([(-30.0, -1.0), (42.0, -1.0), (42.0, -0.8), (-30.0, -0.8)], top=3.6,
                 kind="wall", name="garden wall")
    project = Project(site=site, buildings=(porch,), module=generic_60_cell(400.0),
                      clearance=no_setbacks(), obstructions=(wall,))
    return project, Analysis(project)


@pytest.mark.parametrize("model", ["irradiance", "module", "string"])
def test_a_bottom_edge_shadow_favours_landscape_only_with_bypass_diodes(row_edge, model):
    # The physics check: a shadow along the bottom edge of a portrait module crosses
    # all three substrings (they run up the slope), so every substring is limited by its
    # darkened bottom cells and the diodes cannot help; in landscape the substrings run along
    # the eave and the band darkens only the bottom one, which is bypassed. Irradiance-only
    # power follows the shaded area, which is the same both ways (square cells, same band).
    # The bypass-diode model itself is checked against pvlib.shading.direct_martinez
    # (Martínez-Moreno et al. 2010) and a bishop88 I-V solution in tests/power/test_electrical.py.
    project, analysis = row_edge
    energy = replace(project.energy, electrical=ElectricalOptions(shade_model=model))
    comparison = compare_layouts(project.with_changes(energy=energy),
                                 orientations=("portrait", "landscape"), without_worst=False,
                                 analysis=analysis)
    for option, rows in (("portrait", 3), ("landscape", 5)):
        result = comparison.option(option).evaluation
        row = np.array([m.row for m in result.modules])
        assert row.max() == rows - 1
        assert min(m.uv_rect[1] for m in result.modules) < 0.01  # flush with the eave
        loss = result.table["shade_loss_pct"].to_numpy()
        assert loss[row == 0].min() > 1.0
        if model != "string":  # (in a string, a shaded module also costs the others)
            # the band falls on the bottom row; the rows above lose only a little sky
            assert np.abs(loss[row > 0]).max() < 0.05 * loss[row == 0].min()
    portrait = comparison.table.at["portrait", "shade_loss_pct"]
    landscape = comparison.table.at["landscape", "shade_loss_pct"]
    if model == "irradiance":
        # equal shaded area, equal loss (to the cell quantisation): landscape does not win
        assert landscape >= 0.98 * portrait
        assert landscape == pytest.approx(portrait, rel=0.05)
    else:
        # landscape loses at most one substring in three while portrait loses all three
        assert landscape < 0.5 * portrait
