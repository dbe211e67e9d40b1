"""The command line: ``evaluate`` (text, --json, --weather, --csv), ``compare``, and its errors.

The outside reference of the JSON report is the evaluation itself
(``layout.study.analysis.evaluate``, tested against pvlib and closed forms in
tests/study/test_analysis.py): the command line must print exactly its figures, once through a real
subprocess as outside checks call it.
"""

from __future__ import annotations

import io
import json
import math
import os
import subprocess
import sys

import numpy as np
import pandas as pd
import pvlib
import pytest

from layout.cli import CSV_FILES, REPORT_VERSION, evaluation_report, main
from layout.power.metrics import face_table
from layout.project import demo_project_path, load_demo_project, load_project, save_project
from layout.scene.site import Site
from layout.study.analysis import Analysis

GREENSBORO = os.path.join(os.path.dirname(pvlib.__file__), "data", "723170TYA.CSV")  # NREL TMY3


def _no_nan(text: str):
    """Parse JSON, refusing NaN and infinities (which are not JSON)."""
    def refuse(name):
        raise AssertionError(f"{name} in the JSON output")
    return json.loads(text, parse_constant=refuse)


@pytest.fixture(scope="module")
def demo():
    return load_demo_project()


@pytest.fixture(scope="module")
def analysis(demo):
    return Analysis(demo, base_dir=demo_project_path().parent)


@pytest.fixture(scope="module")
def fresh(analysis):
    return analysis.result


@pytest.fixture(scope="module")
def report_from_subprocess():
    # exactly what DESIGN.md says outside checks run
    done = subprocess.run([sys.executable, "-m", "layout", "evaluate",
                           str(demo_project_path()), "--json"],
                          capture_output=True, text=True, timeout=120, check=False)
    assert done.returncode == 0, done.stderr
    assert done.stderr == ""  # no progress unless standard error is a terminal
    return _no_nan(done.stdout)


def test_json_totals_equal_the_evaluation(report_from_subprocess, fresh):
    report = report_from_subprocess
    assert report["report_version"] == REPORT_VERSION
    assert report["project"]["file"] == str(demo_project_path())
    assert set(report["totals"]) == set(fresh.totals)
    for key, value in fresh.totals.items():
        if isinstance(value, float):
            assert report["totals"][key] == pytest.approx(value, rel=1e-12, abs=1e-12), key
        else:
            assert report["totals"][key] == value, key


def test_json_module_rows_equal_the_table(report_from_subprocess, fresh):
    rows = report_from_subprocess["modules"]
    table = fresh.table
    assert [row["id"] for row in rows] == list(table.index)
    for row, module in zip(rows, fresh.modules, strict=True):
        assert (row["row"], row["column"]) == (module.row, module.column)
        for column in table.columns:
            expected = table.at[row["id"], column]
            if isinstance(expected, str):
                assert row[column] == expected
            else:
                assert row[column] == pytest.approx(expected, rel=1e-12), column
        assert row["below_tsrf_threshold"] == (row["tsrf_pct"] < 75.0)
    # the per-module energies add up to the total (layout_totals' definition)
    assert math.fsum(r["energy_kwh"] for r in rows) == pytest.approx(
        report_from_subprocess["totals"]["energy_kwh"], rel=1e-12)


def test_json_says_clear_sky_and_its_caveat(report_from_subprocess, fresh):
    weather = report_from_subprocess["weather"]
    assert weather["clear_sky"] is True
    assert "overstates" in weather["caveat"]
    assert weather["caveat"] == fresh.weather.caveat
    assert len(report_from_subprocess["monthly"]) == 12
    assert [f["face"] for f in report_from_subprocess["faces"]] == ["south"]


def test_undefined_figures_are_null_never_nan(demo, analysis):
    # every module removed: the mean TSRF and solar access are undefined (NaN in pandas)
    everything = analysis.result.layout.remove([m.id for m in analysis.result.modules])
    empty = demo.with_changes(removed=everything.removed)
    analysis.update(empty)
    try:
        result = analysis.result
        assert math.isnan(result.totals["tsrf_pct"])
        text = json.dumps(evaluation_report(result), allow_nan=False)
        report = _no_nan(text)
        assert report["totals"]["tsrf_pct"] is None and report["modules"] == []
        assert report["totals"]["modules"] == 0
    finally:
        analysis.update(demo)


@pytest.fixture(scope="module")
def text_and_tables(tmp_path_factory):
    folder = tmp_path_factory.mktemp("tables") / "new" / "folder"  # created by the command
    out, err = io.StringIO(), io.StringIO()
    real_out, real_err = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = out, err
    try:
        status = main(["evaluate", "--demo", "--csv", str(folder)])
    finally:
        sys.stdout, sys.stderr = real_out, real_err
    return status, out.getvalue(), err.getvalue(), folder


def test_text_summary_shows_totals_faces_modules_and_the_caveat(text_and_tables, fresh):
    status, text, err, _ = text_and_tables
    assert status == 0 and err == ""
    totals = fresh.totals
    assert f"{totals['modules']} modules, {totals['power_kwp']:.2f} kWp" in text
    assert f"annual energy {totals['energy_kwh']:,.0f} kWh DC" in text
    assert f"shade loss {totals['shade_loss_pct']:.1f} %" in text
    for module_id in fresh.table.index:
        assert module_id in text
    assert "Faces" in text and "Months" in text
    assert fresh.weather.caveat.split(":")[0] in text  # the clear-sky caution, first line


def test_csv_tables_reload_equal(text_and_tables, fresh, demo):
    _, text, _, folder = text_and_tables
    assert sorted(p.name for p in folder.iterdir()) == sorted(CSV_FILES)
    assert "Tables written" in text
    modules = pd.read_csv(folder / "modules.csv", index_col="module_id")
    # the string and input columns are empty: the demo evaluates with the module model
    assert modules["string"].isna().all() and modules["input"].isna().all()
    modules = modules.drop(columns=["string", "input"])
    pd.testing.assert_frame_equal(modules, fresh.table, check_exact=False, rtol=1e-15)
    faces = pd.read_csv(folder / "faces.csv", index_col="face")
    expected = face_table(fresh.table, power_w=demo.module.power_w)
    pd.testing.assert_frame_equal(faces, expected, check_exact=False, rtol=1e-15)
    monthly = pd.read_csv(folder / "monthly.csv", index_col="month")
    pd.testing.assert_frame_equal(monthly, fresh.monthly, check_exact=False, rtol=1e-15,
                                  check_index_type=False)
    month_hour = pd.read_csv(folder / "month_hour.csv", index_col="month")
    month_hour.columns = month_hour.columns.astype(int)
    np.testing.assert_allclose(month_hour.to_numpy(), fresh.month_hour.to_numpy(), rtol=1e-15)
    assert list(month_hour.columns) == list(range(24))


def test_weather_file_from_the_working_directory(tmp_path, monkeypatch, capsys, demo):
    # The demo roof moved to the Greensboro station of pvlib's shipped TMY3 file, so that site
    # and weather agree; the file is named relative to the working directory.
    site = Site(36.1, -79.95, "America/New_York", altitude_m=273.0, name="Greensboro test")
    project_file = save_project(demo.with_changes(site=site), tmp_path / "greensboro")
    monkeypatch.chdir(os.path.dirname(GREENSBORO))
    assert main(["evaluate", str(project_file), "--weather", "723170TYA.CSV", "--json"]) == 0
    captured = capsys.readouterr()
    assert captured.err == ""
    report = _no_nan(captured.out)
    weather = report["weather"]
    assert weather["clear_sky"] is False and "723170TYA.CSV" in weather["source"]
    assert "typical year" in weather["caveat"].lower()
    # The file's own annual GHI (its column sum; our reader is checked against the file's rows
    # in tests/sky/test_weather.py::test_tmy3_annual_totals_match_the_files_own_sums).
    assert weather["ghi_kwh_m2"] == pytest.approx(1566.203, abs=1e-3)
    assert not any("km from the site" in note for note in weather["notes"])
    totals = report["totals"]
    assert math.fsum(m["energy_kwh"] for m in report["modules"]) == pytest.approx(
        totals["energy_kwh"], rel=1e-12)
    # the project file itself was not changed by --weather
    assert load_project(project_file).energy.weather_file is None


def test_compare_prints_both_orientations_with_progress_on_a_terminal(monkeypatch, capsys):
    class Terminal(io.StringIO):
        def isatty(self):
            return True

    terminal = Terminal()
    monkeypatch.setattr(sys, "stderr", terminal)
    assert main(["compare", "--demo", "--orientations", "portrait,landscape",
                 "--min-tsrf", "95"]) == 0
    text = capsys.readouterr().out
    for name in ("portrait", "landscape", "portrait without the worst",
                 "landscape without the worst"):
        assert f"\n  {name} " in text
    progress = terminal.getvalue()
    assert "landscape: tracing the sun" in progress
    assert progress.endswith("\r\033[K")  # the progress line is cleared at the end


# --------------------------------------------------------------------------- errors
def _one_error_line(capsys):
    captured = capsys.readouterr()
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1, captured.err
    assert "Traceback" not in captured.err
    assert lines[0].startswith("error: ")
    return lines[0]


def test_missing_project_file_is_one_line(tmp_path, capsys):
    missing = tmp_path / "nowhere.eaveline.json"
    assert main(["evaluate", str(missing), "--json"]) == 1
    line = _one_error_line(capsys)
    assert str(missing) in line and "cannot read" in line


def test_broken_project_names_the_field(tmp_path, capsys):
    document = json.loads(demo_project_path().read_text())
    document["site"]["latitude"] = 123
    document["module"]["power_w"] = -5
    path = tmp_path / "broken.eaveline.json"
    path.write_text(json.dumps(document))
    assert main(["evaluate", str(path)]) == 1
    line = _one_error_line(capsys)
    assert "2 problems" in line and "site.latitude" in line and "check" in line


def test_missing_weather_file_is_one_line(capsys, tmp_path):
    assert main(["evaluate", "--demo", "--weather", str(tmp_path / "none.epw")]) == 1
    line = _one_error_line(capsys)
    assert "weather_file" in line and "none.epw" in line


def test_csv_into_a_file_is_refused_before_any_work(capsys, tmp_path):
    occupied = tmp_path / "a_file"
    occupied.write_text("x")
    assert main(["evaluate", "--demo", "--csv", str(occupied)]) == 1
    assert "--csv" in _one_error_line(capsys)


def test_project_and_demo_together_are_refused(capsys):
    assert main(["compare", str(demo_project_path()), "--demo"]) == 1
    assert "one of the two" in _one_error_line(capsys)


def test_bad_limits_name_the_field(capsys):
    assert main(["compare", "--demo", "--min-tsrf", "140"]) == 1
    assert "min_tsrf_pct" in _one_error_line(capsys)


def test_a_misused_command_line_exits_with_status_2(capsys):
    with pytest.raises(SystemExit) as caught:
        main(["evaluate", "--demo", "--shade-model", "magic"])
    assert caught.value.code == 2
    assert "Traceback" not in capsys.readouterr().err
    with pytest.raises(SystemExit) as caught:
        main(["compare", "--demo", "--orientations", "diagonal"])
    assert caught.value.code == 2


def test_evaluate_matches_a_fresh_evaluation_with_another_shade_model(demo, analysis, capsys):
    # --shade-model overrides the project's; compared with the library call on the same input
    from dataclasses import replace

    assert main(["evaluate", "--demo", "--shade-model", "irradiance", "--json"]) == 0
    report = _no_nan(capsys.readouterr().out)
    energy = replace(demo.energy, electrical=replace(demo.energy.electrical,
                                                     shade_model="irradiance"))
    analysis.update(demo.with_changes(energy=energy))
    try:
        expected = analysis.result.totals
    finally:
        analysis.update(demo)
    assert report["settings"]["shade_model"] == "irradiance"
    assert report["totals"]["energy_kwh"] == pytest.approx(expected["energy_kwh"], rel=1e-12)


# How the two ways of starting the command line run it: the installed ``eaveline`` script calls
# its entry point (as pip's generated script does), ``python -m layout`` runs layout/__main__.py.
LAUNCHERS = {
    "eaveline script": (
        "from importlib.metadata import entry_points\n"
        "script = next(iter(entry_points(group='console_scripts', name='eaveline')))\n"
        "sys.argv = ['eaveline', 'check', sys.argv[1]]\n"
        "status = script.load()()\n"),
    "python -m layout": (
        "import runpy\n"
        "sys.argv = ['layout', 'check', sys.argv[1]]\n"
        "try:\n"
        "    runpy.run_module('layout', run_name='__main__', alter_sys=True)\n"
        "except SystemExit as done:\n"
        "    status = done.code\n"),
}


@pytest.mark.parametrize("launcher", sorted(LAUNCHERS))
def test_both_launchers_turn_the_hugepage_advice_off(launcher, tmp_path):
    # The eaveline console script once skipped layout.runtime.quiet_hugepages, which ran only
    # under ``if __name__ == "__main__"``; both ways must leave the advice off in the process
    # and NUMPY_MADVISE_HUGEPAGE=0 for its children (Dask workers).
    from layout.runtime import HUGEPAGE_VARIABLE

    code = ("import os, sys\n" + LAUNCHERS[launcher]
            + "from layout.runtime import HUGEPAGE_VARIABLE, hugepage_advice\n"
            "print(status, os.environ.get(HUGEPAGE_VARIABLE), hugepage_advice())\n")
    env = {k: v for k, v in os.environ.items() if k != HUGEPAGE_VARIABLE}
    done = subprocess.run([sys.executable, "-c", code, str(demo_project_path())], env=env,
                          cwd=tmp_path, capture_output=True, text=True, timeout=120,
                          check=False)
    assert done.returncode == 0, done.stderr
    assert done.stdout.splitlines()[-1] == "0 0 False"


def test_commands_turn_numpy_hugepage_advice_off_unless_the_user_chose():
    # layout.runtime: python -m layout and python -m widgets set numpy's own switch
    # (NUMPY_MADVISE_HUGEPAGE, read by numpy at import) for their child processes and turn
    # the advice off in their own process; a choice already in the environment is kept
    import numpy as np

    from layout.runtime import HUGEPAGE_VARIABLE, MALLOC_SETTINGS, hugepage_advice, quiet_hugepages
    from widgets.__main__ import WORKDIR_VARIABLE, voila_environment

    before = hugepage_advice()
    try:
        environ = {}
        assert quiet_hugepages(environ)
        assert environ == {HUGEPAGE_VARIABLE: "0"}
        assert hugepage_advice() is False
        chosen = {HUGEPAGE_VARIABLE: "1"}
        assert not quiet_hugepages(chosen) and chosen == {HUGEPAGE_VARIABLE: "1"}
    finally:
        np._core.multiarray._set_madvise_hugepage(before)
    assert voila_environment({})[HUGEPAGE_VARIABLE] == "0"
    assert voila_environment({HUGEPAGE_VARIABLE: "1", "A": "b"}) == {
        HUGEPAGE_VARIABLE: "1", "A": "b", WORKDIR_VARIABLE: os.getcwd(), **MALLOC_SETTINGS}


def test_commands_keep_freed_arrays_for_reuse_unless_the_user_chose(monkeypatch):
    # layout.runtime: the commands raise glibc malloc's mmap and trim thresholds (here through
    # mallopt, for children through MALLOC_*_ in their environment); a choice the user made
    # (any MALLOC_*_ variable, GLIBC_TUNABLES) is kept, and nothing else is added then
    from layout.runtime import MALLOC_SETTINGS, keep_freed_memory
    from widgets.__main__ import voila_environment

    environ = {"PATH": "/bin"}
    assert keep_freed_memory(environ) and environ == {"PATH": "/bin", **MALLOC_SETTINGS}
    assert int(MALLOC_SETTINGS["MALLOC_MMAP_THRESHOLD_"]) == 32 << 20
    for chosen in ({"MALLOC_ARENA_MAX_": "2"}, {"GLIBC_TUNABLES": "glibc.malloc.trim_threshold=0"}):
        kept = dict(chosen)
        assert not keep_freed_memory(kept) and kept == chosen
        assert not set(MALLOC_SETTINGS) & set(voila_environment(chosen))


def test_the_planner_kernel_starts_with_the_malloc_settings():
    # the settings reach a child process through its environment: glibc reads them at start
    # (a child started with voila_environment, as Voila starts the planner's kernel)
    from layout.runtime import MALLOC_SETTINGS
    from widgets.__main__ import voila_environment

    code = ("import os; print(os.environ.get('MALLOC_MMAP_THRESHOLD_'), "
            "os.environ.get('MALLOC_TRIM_THRESHOLD_'))")
    env = {k: v for k, v in os.environ.items() if not k.startswith("MALLOC_")}
    done = subprocess.run([sys.executable, "-c", code], env=voila_environment(env),
                          capture_output=True, text=True, timeout=60, check=True)
    assert done.stdout.split() == [MALLOC_SETTINGS["MALLOC_MMAP_THRESHOLD_"],
                                   MALLOC_SETTINGS["MALLOC_TRIM_THRESHOLD_"]]
