"""The Strings tab and the strings on the plan, driven as the front end would (no browser).

The figures shown are checked against the core's comparison
(:func:`layout.study.string_options.compare_stringing`), itself checked against NEC 690.7(A)
examples and pvlib's bishop88 in tests/power.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from layout.project import load_demo_project
from layout.study.analysis import evaluate
from layout.study.string_options import compare_stringing
from widgets.plan_view import unit_factor
from widgets.planner import TAB_NAMES, Planner
from widgets.string_lines import LINE_STYLES, string_style


@pytest.fixture(scope="module")
def demo():
    return load_demo_project()


@pytest.fixture(scope="module")
def reference(demo):
    return compare_stringing(evaluate(demo))


@pytest.fixture
def planner(demo):
    return Planner(demo)


def _drawn_paths(planner):
    """Plan paths of the strings drawn, in string order [display units]."""
    marks = planner.string_lines.line_marks
    out = {}
    for j, mark in enumerate(marks):
        xs, ys = np.atleast_2d(mark.x), np.atleast_2d(mark.y)
        if not np.size(mark.x):
            continue
        which = [i for i in range(len(planner.string_lines.shown)) if i % len(marks) == j]
        for i, x, y in zip(which, xs, ys, strict=True):
            out[i] = np.stack([x, y], axis=1)
    return [out[i] for i in sorted(out)]


def test_tab_shows_the_three_options_and_the_sizing(planner, reference):
    planner.show_tab("Strings")
    panel = planner.strings_panel
    assert TAB_NAMES.index("Strings") == planner.tabs.selected_index
    pd.testing.assert_frame_equal(panel.comparison.table, reference.table)
    text = panel.sizing_html.value
    assert "record low -26 °C" in text and "longest string 13 modules" in text
    gain = reference.table.loc["shade", "gain_kwh"]
    assert f"{gain:+,.0f}" in panel.options_html.value
    assert "licensed electrician" in panel.children[-1].value


def test_options_drawn_as_lines_through_module_centres(planner, reference):
    planner.show_tab("Strings")
    panel = planner.strings_panel
    assert panel.show_on_plan.value == "shade"  # no strings of its own: the suggestion shows
    strings = reference.plans["shade"].strings
    assert planner.string_lines.shown == strings
    k = unit_factor(planner.project.units)  # the demo is drawn in feet
    centres = {m.id: m.centre_3d[:2] * k for m in planner.result.modules}
    for string, path in zip(strings, _drawn_paths(planner), strict=True):
        np.testing.assert_allclose(path[:len(string)], [centres[m] for m in string])
    assert list(planner.string_lines.label_mark.text) == [f"S{i + 1}" for i in
                                                          range(len(strings))]
    # one line style each: no two strings share dash pattern and colour
    styles = {string_style(i) for i in range(len(strings))}
    assert len(styles) == len(strings) and len(LINE_STYLES) == 4


def test_use_an_option_and_draw_a_string_by_clicks(planner, reference, tmp_path):
    planner.show_tab("Strings")
    panel = planner.strings_panel
    panel.use_shade.click()
    assert planner.project.energy.electrical.strings == reference.plans["shade"].strings
    assert planner.project.strings.inputs == reference.plans["shade"].inputs
    assert list(panel.comparison.table.index) == ["rows", "shade", "project"]
    assert panel.comparison.table.loc["project", "energy_kwh"] == pytest.approx(
        reference.table.loc["shade", "energy_kwh"])
    # the CSV gains the string and input columns
    planner.file_panel.export_path.value = str(tmp_path / "modules")
    table = pd.read_csv(planner.export_csv(), index_col="id")
    first = reference.plans["shade"].strings[0]
    assert (table.loc[list(first), "string"] == "S1").all()
    assert (table.loc[list(first), "input"] == reference.plans["shade"].inputs[0] + 1).all()
    # clear, then draw one string by clicking modules in order
    panel.clear_button.click()
    assert planner.project.energy.electrical.strings is None
    ids = [m.id for m in planner.result.modules]
    panel.draw_toggle.value = True
    for module_id in ids[:7]:
        planner.plan.module_targets.selected = [planner.plan.module_ids.index(module_id)]
    planner.plan.module_targets.selected = [planner.plan.module_ids.index(ids[6])]  # take back
    assert panel.draft == ids[:6]
    assert list(planner.string_lines.label_mark.text) == ["new"]
    assert not planner.array_layout.removed_modules  # clicks while drawing remove nothing
    panel.finish_button.click()
    assert planner.project.energy.electrical.strings == (tuple(ids[:6]),)
    assert not panel.draw_toggle.value and panel.draft == []
    assert planner.string_lines.shown == (tuple(ids[:6]),)
    # six of the thirteen modules: the table gives no gain over the rows for them
    table = planner.strings_panel.comparison.table
    assert table.loc["project", "modules"] == 6 and np.isnan(table.loc["project", "gain_kwh"])
    assert "hold 6 of the 13 modules" in planner.strings_panel.options_html.value


def test_a_string_the_sizing_refuses_leaves_the_project_unchanged(planner):
    planner.show_tab("Strings")
    panel = planner.strings_panel
    before = planner.project
    ids = [m.id for m in planner.result.modules]
    panel.draw_toggle.value = True
    for module_id in ids[:3]:  # shorter than the 5 the tracking window asks for
        panel.add_module(module_id)
    panel.finish_button.click()
    assert planner.project is before
    assert "shorter than the tracking window allows" in panel.note.value
    assert panel.draft == ids[:3]  # kept, to be finished


def test_sizing_problem_is_shown_not_raised(demo):
    planner = Planner(demo.with_changes(inverter=None))
    planner.show_tab("Strings")
    assert planner.strings_panel.comparison is None
    assert "inverter" in planner.strings_panel.sizing_html.value


def test_loading_an_older_file_says_what_string_sizing_needs(planner):
    from pathlib import Path

    old = Path(__file__).parent / "data" / "demo_house_v1.eaveline.json"
    planner.file_panel.project_path.value = str(old)
    assert planner.load()
    message = planner.file_panel.file_message.value
    assert "document version 1" in message and "string sizing needs voc_v" in message
    planner.show_tab("Strings")
    assert "electrical data" in planner.strings_panel.sizing_html.value


def test_design_temperatures_typed_in_the_tab(planner):
    planner.show_tab("Strings")
    panel = planner.strings_panel
    assert panel.low_text.value == "-26" and panel.high_text.value == "34"
    panel.low_text.value = "-40"
    panel.method_menu.value = "table"
    panel.apply_design.click()
    assert planner.project.strings.record_low_c == -40.0
    assert planner.project.strings.voc_method == "table"
    # Table 690.7(A) at -40 °C: 1.25 (from memory, see tests/power/test_string_sizing.py)
    assert panel.comparison.sizing.voc_factor == 1.25
    assert "record low -40 °C" in panel.sizing_html.value
    before = planner.project
    panel.low_text.value = "36"  # above the design high: refused, the project unchanged
    panel.apply_design.click()
    assert planner.project is before
    assert "record_low_c" in panel.note.value and "below design_high_c" in panel.note.value
    panel.low_text.value = "cold"
    panel.apply_design.click()
    assert planner.project is before and "not a temperature" in panel.note.value
