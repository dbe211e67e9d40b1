"""``python -m layout strings``: text and JSON equal the study's comparison; errors in one line."""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from layout.cli import main
from layout.project import demo_project_path, load_demo_project
from layout.scene.inverter import generic_inverter_7kw
from layout.study.analysis import evaluate
from layout.study.string_options import compare_stringing

V1_DEMO = Path(__file__).parents[1] / "data" / "demo_house_v1.eaveline.json"


@pytest.fixture(scope="module")
def comparison():
    return compare_stringing(evaluate(load_demo_project()))


def test_json_from_a_subprocess_equals_the_comparison(comparison):
    done = subprocess.run([sys.executable, "-m", "layout", "strings", str(demo_project_path()),
                           "--from-project", "--method", "rows", "--json"],
                          capture_output=True, text=True, timeout=120, check=False)
    assert done.returncode == 0, done.stderr
    report = json.loads(done.stdout)
    assert report["sizing"]["max_length"] == comparison.sizing.max_length
    assert report["sizing"]["design"]["record_low_c"] == -26.0
    options = {o["method"]: o for o in report["options"]}
    for method in ("rows", "shade"):
        assert options[method]["energy_kwh"] == pytest.approx(
            comparison.table.loc[method, "energy_kwh"])
    assert options["shade"]["gain_kwh"] >= 0
    plan = report["plan"]
    assert plan["method"] == "rows"
    assert [tuple(s["module_ids"]) for s in plan["strings"]] == \
        list(comparison.plans["rows"].strings)
    assert any("Article 690" in line for line in report["cautions"])


def test_text_names_the_values_used_and_the_limits(capsys, comparison):
    assert main(["strings", "--demo"]) == 0
    out = capsys.readouterr().out
    assert "record low -26 °C" in out and "design high 34 °C" in out
    assert "longest string 13 modules" in out and "shortest string 5 modules" in out
    assert "shade-aware" in out and "by rows" in out
    assert "licensed electrician" in out


def test_inverter_file_replaces_the_project_inverter(tmp_path, capsys):
    small = generic_inverter_7kw().to_dict() | {"max_dc_voltage_v": 400.0,
                                              "mppt_max_v": 400.0}
    path = tmp_path / "inverter.json"
    path.write_text(json.dumps(small))
    assert main(["strings", "--demo", "--inverter", str(path), "--json"]) == 0
    report = json.loads(capsys.readouterr().out)
    assert report["sizing"]["inverter"]["max_dc_voltage_v"] == 400.0
    assert report["sizing"]["max_length"] == 9  # 400 V / 42.32 V (Voc at -26 °C) = 9.45
    assert "400 V" in report["sizing"]["max_length_limit"]


def test_errors_are_one_line(tmp_path, capsys):
    bad = tmp_path / "inverter.json"
    bad.write_text(json.dumps(generic_inverter_7kw().to_dict() | {"mppt_inputs": 0}))
    assert main(["strings", "--demo", "--inverter", str(bad)]) == 1
    err = capsys.readouterr().err
    assert err.startswith("error: inverter.mppt_inputs") and err.count("\n") == 1
    assert main(["strings", "--demo", "--method", "project"]) == 1
    assert "no strings of its own" in capsys.readouterr().err
    # an older project file loads, but sizing asks for the module's electrical data
    old = tmp_path / "old.eaveline.json"
    shutil.copy(V1_DEMO, old)
    assert main(["strings", str(old)]) == 1
    err = capsys.readouterr().err
    assert "electrical data" in err and "voc_v" in err
    with pytest.raises(SystemExit):
        main(["strings", "--demo", "--inverter", str(bad), "--from-project"])


def test_summary_names_the_inverter_and_the_notes_of_an_older_file(capsys):
    assert main(["summary", str(V1_DEMO)]) == 0
    out = capsys.readouterr().out
    assert "Strings: no inverter chosen; design temperatures not typed yet" in out
    assert "read from document version 1" in out and "string sizing needs" in out
    assert main(["summary", "--demo"]) == 0
    assert "design temperatures -26 °C to 34 °C" in capsys.readouterr().out
