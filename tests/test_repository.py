"""Checks on the repository itself: the README's commands, CI, packaging and the core's imports."""

import ast
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


#: The report's modules that draw and lay out with matplotlib and fpdf2: the only ones in the
#: core allowed to import matplotlib, loaded only when a report is made.
REPORT_RENDERERS = ("layout.report.drawing", "layout.report.html", "layout.report.pdf")


def test_importing_the_core_does_not_import_the_front_end():
    code = (
        "import sys, layout, layout.scene.roof, layout.scene.site, layout.units, layout.errors\n"
        "import pkgutil, importlib\n"
        f"skip = {REPORT_RENDERERS!r}\n"
        "for m in pkgutil.walk_packages(layout.__path__, 'layout.'):\n"
        "    if not m.name.endswith('__main__') and m.name not in skip:\n"
        "        importlib.import_module(m.name)\n"
        "bad = [m for m in ('ipywidgets', 'bqplot', 'widgets', 'matplotlib') if m in sys.modules]\n"
        "for m in skip: importlib.import_module(m)\n"
        "bad += [m for m in ('ipywidgets', 'bqplot', 'widgets') if m in sys.modules]\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_only_the_report_package_imports_matplotlib():
    # DEVELOPERS.md: static figures may use matplotlib in layout/report only
    offenders = []
    for path in sorted((ROOT / "layout").rglob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            names = [a.name for a in node.names] if isinstance(node, ast.Import) else \
                [node.module or ""] if isinstance(node, ast.ImportFrom) else []
            if any(n.split(".")[0] == "matplotlib" for n in names) \
                    and "report" not in path.relative_to(ROOT / "layout").parts[:1]:
                offenders.append(str(path.relative_to(ROOT)))
    assert offenders == []


def test_ruff_is_clean():
    ruff = Path(sys.executable).with_name("ruff")
    if not ruff.exists():
        pytest.fail("ruff is not installed in the test environment; run bash .ci/setup.sh --test")
    out = subprocess.run([str(ruff), "check", "--quiet", str(ROOT)], capture_output=True,
                         text=True, cwd=ROOT)
    assert out.returncode == 0, out.stdout + out.stderr
