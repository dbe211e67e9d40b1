"""The stringing options of the demo side by side, the user's strings, writing a plan back."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from layout.errors import InputError
from layout.power.electrical import ElectricalOptions
from layout.project import load_demo_project
from layout.study.analysis import Analysis, evaluate
from layout.study.string_options import compare_stringing, module_string_columns, with_plan


@pytest.fixture(scope="module")
def demo_evaluation():
    return evaluate(load_demo_project())


def test_demo_options_and_the_gain_of_shade_aware(demo_evaluation):
    comparison = compare_stringing(demo_evaluation)
    table = comparison.table
    assert list(table.index) == ["rows", "shade"]  # the demo has no strings of its own
    assert "draw them on the plan" in comparison.notes[0]
    assert (table["modules"] == len(demo_evaluation.modules)).all()
    assert table.loc["shade", "energy_kwh"] >= table.loc["rows", "energy_kwh"]
    assert comparison.shade_gain_kwh == pytest.approx(
        table.loc["shade", "energy_kwh"] - table.loc["rows", "energy_kwh"])
    # per-string energies add up to the option's
    strings = comparison.strings
    for method in table.index:
        assert strings[strings["method"] == method]["energy_kwh"].sum() == pytest.approx(
            table.loc[method, "energy_kwh"])
    # DC/AC ratio: modules' STC power over the inverter's AC rating
    project = demo_evaluation.project
    assert table.loc["rows", "dc_ac_ratio"] == pytest.approx(
        len(demo_evaluation.modules) * project.module.power_w / project.inverter.ac_power_w)


def test_plan_written_back_is_the_string_model_of_the_evaluation(demo_evaluation):
    comparison = compare_stringing(demo_evaluation)
    project = with_plan(demo_evaluation.project, comparison.plans["shade"])
    assert project.energy.electrical.strings == comparison.plans["shade"].strings
    assert project.strings.inputs == comparison.plans["shade"].inputs
    # the drawn option is the plan itself, with the same energy
    again = compare_stringing(evaluate(project))
    assert again.table.loc["project", "energy_kwh"] == pytest.approx(
        comparison.table.loc["shade", "energy_kwh"])
    # and it is what the project's string model evaluates (layout.power.electrical.dc_power)
    electrical = dataclasses.replace(project.energy.electrical, shade_model="string")
    stringed = project.with_changes(energy=dataclasses.replace(project.energy,
                                                               electrical=electrical))
    analysis = Analysis(stringed)
    assert analysis.result.power.string_dc_w.sum() / 1000 * \
        analysis.result.weather.step_minutes / 60 == pytest.approx(
            comparison.table.loc["shade", "energy_kwh"], rel=1e-9)
    assert analysis.project.energy.electrical.strings == comparison.plans["shade"].strings


def test_bad_user_strings_leave_the_project_unchanged(demo_evaluation):
    # the tracking window's top at 300 V allows 8 of the demo's modules (Vmp at -26 °C
    # 36.5 V), its bottom at 100 V at least 5 (Vmp at an 83.5 °C cell 24.7 V)
    project = demo_evaluation.project
    project = project.with_changes(inverter=dataclasses.replace(project.inverter,
                                                                mppt_max_v=300.0))
    ids = [m.id for m in demo_evaluation.modules]
    for strings, words in [((tuple(ids[:9]),), "at most 8 modules"),
                           ((tuple(ids[:4]),), "at least 5 modules"),
                           ((tuple(ids[:5]), tuple(ids[4:10])), "repeats"),
                           ((("south/r7c7", *tuple(ids[:5])),), "not in the layout")]:
        with pytest.raises(InputError, match=words) as info:
            edited = project.with_changes(energy=dataclasses.replace(
                project.energy, electrical=ElectricalOptions(strings=strings)))
            compare_stringing(evaluate(edited))
        assert info.value.field.startswith("strings[")
    assert project.energy.electrical.strings is None  # the project itself never changes


def test_no_inverter_no_sizing(demo_evaluation):
    project = demo_evaluation.project.with_changes(inverter=None)
    with pytest.raises(InputError) as info:
        compare_stringing(evaluate(project))
    assert info.value.field == "inverter"


def test_with_plan_refuses_unstrung_modules_under_the_string_model(demo_evaluation):
    comparison = compare_stringing(demo_evaluation)
    plan = dataclasses.replace(comparison.plans["rows"], unstrung=("south/r9c9",))
    project = demo_evaluation.project
    stringed = project.with_changes(energy=dataclasses.replace(
        project.energy, electrical=ElectricalOptions(shade_model="string")))
    with pytest.raises(InputError, match="no string"):
        with_plan(stringed, plan)


def test_module_string_columns():
    frame = module_string_columns(["a", "b", "c"], (("c", "a"),), (1,))
    assert list(frame["string"]) == ["S1", "", "S1"]
    assert frame["input"].tolist()[0] == 2 and frame["input"].isna().tolist() == [False, True,
                                                                                   False]
    assert np.all(module_string_columns(["a"], None)["string"] == "")
