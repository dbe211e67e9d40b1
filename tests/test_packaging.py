"""The built distribution works on its own: the sdist is complete, the wheel installs and runs.

What is built: ``python -m build --no-isolation`` makes the sdist from a clean copy of the
checkout (no ``.venv``, no leftover ``*.egg-info``, which setuptools would read) and then the
wheel from that sdist, as a release would, with the setuptools of the test environment (the
``test`` extra names ``build`` and ``setuptools>=77``), so nothing is downloaded to build.

How the wheel is installed, and why this proves it works: a fresh virtualenv is made in a
temporary folder (``python -m venv --without-pip``; the checkout's editable install and its
``.pth`` finder are not in it), and the wheel is installed into it with its dependencies by
an ordinary ``pip install`` -- the test environment's pip, pointed at the fresh interpreter
with ``pip --python``, which saves bootstrapping a pip into the new environment. pip resolves
the dependencies from the indexes it is configured with, as a user's install would, so like
``bash .ci/setup.sh`` it needs them reachable (``--no-compile`` skips byte-compiling some
hundred packages: the slowest part, and not what is tested). Measured on the development
machine (2 shared cores): about 13 s for the fresh environment and the install, about 30 s
for the whole module.

Then, from a working directory outside the checkout, with ``PYTHONPATH`` unset, the fresh
environment runs ``python -m layout summary --demo``, the ``eaveline summary --demo`` and
``eaveline-planner --check`` console scripts, serves the planner with ``eaveline-planner`` and
loads its page once, and reports where ``layout`` and ``widgets`` were imported from: its own
site-packages, never the checkout.
"""

from __future__ import annotations

import importlib.util
import os
import shutil
import subprocess
import sys
import sysconfig
import tarfile
import urllib.error
import urllib.request
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
#: Folders of the checkout that the sdist carries whole, besides the two packages.
SDIST_FOLDERS = ("tests", "example_notebooks", "benchmarks", ".ci")
#: Left out of the sdist: bytecode and Jupyter's autosaves.
NOT_SHIPPED = ("__pycache__", ".ipynb_checkpoints")


def _run(command, *, cwd, env=None, timeout=300) -> subprocess.CompletedProcess:
    done = subprocess.run([str(c) for c in command], cwd=cwd, env=env, capture_output=True,
                          text=True, timeout=timeout, check=False)
    assert done.returncode == 0, (f"{command} exited {done.returncode}\n--- stdout\n"
                                  f"{done.stdout}\n--- stderr\n{done.stderr}")
    return done


def _leave_out(folder: str, names: list[str]) -> set[str]:
    """Names :func:`shutil.copytree` skips: what a fresh clone would not have."""
    skipped = {n for n in names if n in NOT_SHIPPED or n.endswith(".egg-info")
               or n in (".pytest_cache", ".ruff_cache", ".hypothesis")}
    if Path(folder) == ROOT:
        skipped |= {n for n in names if n in (".venv", ".git", "build", "dist")}
    return skipped


@pytest.fixture(scope="module")
def dist(tmp_path_factory) -> Path:
    """Folder holding the sdist and the wheel built from it."""
    if importlib.util.find_spec("build") is None:
        pytest.fail("the build package is missing from the test environment; run "
                    "bash .ci/setup.sh --test")
    # Built from a clean copy: setuptools would otherwise also ship what a leftover
    # eaveline.egg-info/SOURCES.txt in the checkout lists, and leave one there itself.
    source = tmp_path_factory.mktemp("source") / "eaveline"
    shutil.copytree(ROOT, source, ignore=_leave_out)
    out = tmp_path_factory.mktemp("dist")
    _run([sys.executable, "-m", "build", "--no-isolation", "--outdir", out, source], cwd=source)
    return out


def _one(folder: Path, pattern: str) -> Path:
    found = sorted(folder.glob(pattern))
    assert len(found) == 1, f"expected one {pattern} in {folder}, found {found}"
    return found[0]


@pytest.fixture(scope="module")
def fresh(dist, tmp_path_factory) -> dict:
    """A fresh virtualenv with the wheel installed, and a working folder outside the checkout."""
    base = tmp_path_factory.mktemp("fresh")
    venv = base / "venv"
    _run([sys.executable, "-m", "venv", "--without-pip", venv], cwd=base)
    python = venv / "bin" / "python"
    _run([sys.executable, "-m", "pip", "--python", python, "install", "--no-compile",
          "--disable-pip-version-check", "--quiet", _one(dist, "*.whl")], cwd=base)
    work = base / "work"
    work.mkdir()
    # PYTHONDONTWRITEBYTECODE goes too: the first command writes the bytecode that pip was
    # told not to, and the later ones start quicker
    env = {k: v for k, v in os.environ.items()
           if k not in ("PYTHONPATH", "PYTHONHOME", "PYTHONSTARTUP", "VIRTUAL_ENV",
                        "PYTHONDONTWRITEBYTECODE")}
    env["PATH"] = f"{venv / 'bin'}{os.pathsep}{env.get('PATH', '')}"
    return {"venv": venv, "python": python, "bin": venv / "bin", "work": work, "env": env}


def test_sdist_carries_tests_notebooks_benchmarks_and_ci(dist):
    with tarfile.open(_one(dist, "*.tar.gz")) as sdist:
        names = {name.split("/", 1)[1] for name in sdist.getnames() if "/" in name}
    expected = {path.relative_to(ROOT).as_posix()
                for folder in SDIST_FOLDERS for path in (ROOT / folder).rglob("*")
                if path.is_file() and not set(NOT_SHIPPED) & set(path.parts)
                and path.suffix != ".pyc"}
    assert {"tests/test_packaging.py", "example_notebooks/data/quarry_lane_survey.csv",
            "example_notebooks/images/planner.png", "benchmarks/planner.py",
            ".ci/setup.sh", ".ci/run"} <= expected
    assert expected - names == set()
    assert {"widgets/app/planner.ipynb", "layout/data/demo_house.eaveline.json",
            "MANIFEST.in", "pyproject.toml", "README.md", "CHANGELOG.md"} <= names


def test_wheel_holds_the_two_packages_and_their_data(dist):
    with zipfile.ZipFile(_one(dist, "*.whl")) as wheel:
        names = wheel.namelist()
        entry_points = next(wheel.read(n).decode() for n in names
                            if n.endswith(".dist-info/entry_points.txt"))
    tops = {name.split("/", 1)[0] for name in names}
    assert {t for t in tops if not t.endswith(".dist-info")} == {"layout", "widgets"}
    assert {"widgets/app/planner.ipynb", "layout/data/demo_house.eaveline.json"} <= set(names)
    assert "eaveline = layout.__main__:main" in entry_points
    assert "eaveline-planner = widgets.__main__:main" in entry_points


def test_installed_packages_come_from_the_fresh_site_packages(fresh):
    code = ("import sys, sysconfig, layout, widgets\n"
            "print(layout.__file__)\nprint(widgets.__file__)\n"
            "print(sysconfig.get_paths()['purelib'])\n"
            "print('\\n'.join(sys.path))\n")
    out = _run([fresh["python"], "-c", code], cwd=fresh["work"], env=fresh["env"]).stdout
    layout_file, widgets_file, purelib, *path = out.splitlines()
    print(f"\nlayout from {layout_file}\nwidgets from {widgets_file}")
    purelib = Path(purelib)
    assert purelib.is_relative_to(fresh["venv"])
    assert Path(layout_file) == purelib / "layout" / "__init__.py"
    assert Path(widgets_file) == purelib / "widgets" / "__init__.py"
    assert not [p for p in path if p and Path(p).resolve().is_relative_to(ROOT)]
    assert sysconfig.get_paths()["purelib"] not in path  # not the test environment's either


@pytest.fixture(scope="module")
def summary(fresh) -> str:
    """``python -m layout summary --demo`` in the fresh environment."""
    return _run([fresh["python"], "-m", "layout", "summary", "--demo"], cwd=fresh["work"],
                env=fresh["env"]).stdout


def test_python_dash_m_layout_summary_demo(summary):
    assert "Demo: two-storey gable house" in summary


def test_console_script_eaveline_summary_demo(fresh, summary):
    done = _run([fresh["bin"] / "eaveline", "summary", "--demo"], cwd=fresh["work"],
                env=fresh["env"])
    assert done.stdout == summary


def test_console_script_eaveline_report_demo(fresh):
    # the report's fonts (matplotlib's DejaVu Sans) and its writers come with the install
    target = fresh["work"] / "demo-report.pdf"
    done = _run([fresh["bin"] / "eaveline", "report", "--demo", "-o", target],
                cwd=fresh["work"], env=fresh["env"], timeout=180)
    assert done.stdout.strip() == str(target)
    assert target.read_bytes().startswith(b"%PDF-")


def test_console_script_eaveline_planner_check(fresh):
    done = _run([fresh["bin"] / "eaveline-planner", "--check"], cwd=fresh["work"],
                env=fresh["env"], timeout=180)
    print(done.stdout)
    lines = done.stdout.splitlines()
    assert len(lines) == 1 and lines[0].startswith("planner OK")
    purelib = next(fresh["venv"].glob("lib/python*/site-packages"))
    assert f"notebook {purelib / 'widgets' / 'app' / 'planner.ipynb'}," in lines[0]


def test_console_script_eaveline_planner_serves_the_planner(fresh, local_server):
    # one page load: Voila runs the packaged notebook in a kernel of the fresh environment
    # and sends the page with the planner's widget in it, or a 500 with the reason
    with local_server(lambda port: [fresh["bin"] / "eaveline-planner", f"--port={port}"],
                      log=fresh["work"] / "planner.log", cwd=fresh["work"],
                      env=fresh["env"], start_timeout_s=60) as url:
        try:
            with urllib.request.urlopen(url, timeout=180) as response:
                page = response.read().decode("utf-8")
        except urllib.error.HTTPError as err:
            pytest.fail(f"{url} answered {err.code}; the log:\n"
                        f"{(fresh['work'] / 'planner.log').read_text()}")
    assert page.count("application/vnd.jupyter.widget-view+json") == 1  # the Planner
    assert '"output_type": "error"' not in page and "Traceback" not in page


def test_planner_check_fails_clearly_in_the_installed_package(fresh):
    done = subprocess.run([fresh["bin"] / "eaveline-planner", "--check", "no-such.eaveline.json"],
                          cwd=fresh["work"], env=fresh["env"], capture_output=True, text=True,
                          timeout=120, check=False)
    assert done.returncode == 2
    assert done.stderr.startswith("eaveline-planner: no such project file: ")
    assert done.stdout == ""
