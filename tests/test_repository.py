"""Checks on the repository itself: the README's commands, CI, packaging and the core's imports."""

import re
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def readme_commands():
    text = (ROOT / "README.md").read_text()
    return [block.strip() for block in re.findall(r"```bash\n(.*?)```", text, flags=re.S)]


def test_readme_has_exactly_two_commands():
    commands = readme_commands()
    assert len(commands) == 2
    assert all("\n" not in command for command in commands)
    assert commands[0].endswith("python -m widgets")  # the planner on the demo project
    assert "pytest" in commands[1]


def test_ci_runs_the_readme_test_command():
    ci = (ROOT / ".ci" / "run").read_text()
    assert readme_commands()[1] in ci


def test_top_level_layout_is_as_designed():
    for name in ("pyproject.toml", "README.md", "DEVELOPERS.md", "CHANGELOG.md", "layout",
                 "widgets", "tests", "example_notebooks", "benchmarks", ".ci/run"):
        assert (ROOT / name).exists(), name


def test_one_distribution_with_two_packages():
    project = tomllib.loads((ROOT / "pyproject.toml").read_text())
    assert project["project"]["name"] == "eaveline"
    assert project["tool"]["setuptools"]["packages"]["find"]["include"] == ["layout*", "widgets*"]
    deps = " ".join(project["project"]["dependencies"])
    for needed in ("numpy", "shapely", "pandas", "pvlib", "ipywidgets", "bqplot"):
        assert needed in deps


def test_importing_the_core_does_not_import_the_front_end():
    code = (
        "import sys, layout, layout.scene.roof, layout.scene.site, layout.units, layout.errors\n"
        "import pkgutil, importlib\n"
        "for m in pkgutil.walk_packages(layout.__path__, 'layout.'):\n"
        "    if not m.name.endswith('__main__'): importlib.import_module(m.name)\n"
        "bad = [m for m in ('ipywidgets', 'bqplot', 'widgets', 'matplotlib') if m in sys.modules]\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_ruff_is_clean():
    ruff = Path(sys.executable).with_name("ruff")
    if not ruff.exists():
        pytest.fail("ruff is not installed in the test environment; run bash .ci/setup.sh --test")
    out = subprocess.run([str(ruff), "check", "--quiet", str(ROOT)], capture_output=True,
                         text=True, cwd=ROOT)
    assert out.returncode == 0, out.stdout + out.stderr
