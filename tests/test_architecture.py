"""The core's imports point down the data flow, and no module imports itself back.

The order of the stages is DEVELOPERS.md's ("The house"): a module may import from its own
stage or from any stage before it, never from a later one, and the graph of imports between
modules has no cycle. Every import counts, also those inside functions and under
``TYPE_CHECKING``. The walk reads the source with :mod:`ast` and imports nothing.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

#: The stages of ``layout`` in the order of the data flow; a name is a top-level module of the
#: package or one of its subpackages (the subpackage's modules share its place).
STAGES = (
    ("errors", "units", "runtime"),  # the ground every stage stands on
    ("scene",),  # what the user describes
    ("elevation",),  # the scene read from point clouds and elevation rasters
    ("fill",),  # usable area and where modules go
    ("sky",),  # sun path and weather
    ("shading",),  # ray tests and sky-view factors
    ("power",),  # irradiance, electrical models, metrics, evaluation stages
    ("project", "project_imports", "edits", "history"),  # the whole input, its edits
    ("study",),  # incremental analysis, comparisons, outlook, portfolios
    ("report",),  # the shade report: reads an evaluation, renders HTML and PDF
    ("cli", "__main__"),  # the command line
)


def module_files(package_dir: Path) -> dict[str, Path]:
    """Map each module's dotted name to its file, for every ``*.py`` below ``package_dir``."""
    root = package_dir.parent
    modules = {}
    for path in sorted(package_dir.rglob("*.py")):
        parts = list(path.relative_to(root).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts.pop()
        modules[".".join(parts)] = path
    return modules


def _resolve(module: str, is_package: bool, node: ast.ImportFrom) -> str:
    if node.level == 0:
        return node.module or ""
    base = module.split(".")
    if not is_package:
        base.pop()
    if node.level > 1:
        base = base[: len(base) - (node.level - 1)]
    return ".".join(base + ([node.module] if node.module else []))


def import_graph(package_dir: Path) -> dict[str, set[str]]:
    """Return module → the set of the package's modules it imports (every import statement)."""
    files = module_files(package_dir)
    top = package_dir.name
    graph: dict[str, set[str]] = {}
    for module, path in files.items():
        targets = set()
        tree = ast.parse(path.read_text(), filename=str(path))
        for node in ast.walk(tree):
            if isinstance(node, ast.Import):
                names = [alias.name for alias in node.names]
            elif isinstance(node, ast.ImportFrom):
                base = _resolve(module, path.name == "__init__.py", node)
                # "from pkg import name" imports the module pkg.name when there is one
                names = [f"{base}.{a.name}" if f"{base}.{a.name}" in files else base
                         for a in node.names]
            else:
                continue
            for name in names:
                # the longest known module the name lies in ("layout.scene.roof.RoofFace" is
                # an attribute of layout.scene.roof)
                while name and name not in files:
                    name = name.rpartition(".")[0]
                if name.split(".")[0] == top and name != module:
                    targets.add(name)
        graph[module] = targets
    return graph


def stage_of(module: str, stages=STAGES) -> int | None:
    """Return the index of the stage ``module`` belongs to; None for the package itself."""
    parts = module.split(".")
    if len(parts) == 1:
        return None  # layout/__init__.py re-exports the public names; nothing may import it
    for index, names in enumerate(stages):
        if parts[1] in names:
            return index
    raise LookupError(f"{module} is in no stage; add it to STAGES in {Path(__file__).name}")


def upward_imports(graph: dict[str, set[str]], stages=STAGES) -> list[tuple[str, str]]:
    """Return the (importer, imported) pairs that point against the flow."""
    bad = []
    for module, targets in sorted(graph.items()):
        here = stage_of(module, stages)
        for target in sorted(targets):
            there = stage_of(target, stages)
            if here is None:
                continue  # the package's __init__ may gather from anywhere
            if there is None or there > here:
                bad.append((module, target))
    return bad


def cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Return the strongly connected components of more than one module (Tarjan's algorithm)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[list[str]] = []

    def visit(node: str) -> None:
        index[node] = low[node] = len(index)
        stack.append(node)
        on_stack.add(node)
        for nxt in sorted(graph.get(node, ())):
            if nxt not in index:
                visit(nxt)
                low[node] = min(low[node], low[nxt])
            elif nxt in on_stack:
                low[node] = min(low[node], index[nxt])
        if low[node] == index[node]:
            component = []
            while True:
                member = stack.pop()
                on_stack.discard(member)
                component.append(member)
                if member == node:
                    break
            if len(component) > 1:
                found.append(sorted(component))

    for node in sorted(graph):
        if node not in index:
            visit(node)
    return found


def test_every_module_of_the_core_has_a_stage():
    for module in module_files(ROOT / "layout"):
        stage_of(module)  # raises for a module no stage names


def test_core_imports_point_down_the_flow():
    assert upward_imports(import_graph(ROOT / "layout")) == []


def test_core_has_no_import_cycle():
    assert cycles(import_graph(ROOT / "layout")) == []


def test_front_end_has_no_import_cycle():
    assert cycles(import_graph(ROOT / "widgets")) == []


def _write(root: Path, files: dict[str, str]) -> Path:
    for name, text in files.items():
        path = root / name
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(text)
    return root / "layout"


def test_the_walk_finds_an_upward_import_and_a_cycle(tmp_path):
    # A made-up package: the rule must catch what it is there to catch.
    package = _write(tmp_path, {
        "layout/__init__.py": "from .scene.roof import RoofFace\n",
        "layout/errors.py": "",
        "layout/scene/__init__.py": "",
        "layout/scene/roof.py": "from ..errors import InputError\n"
                                "def f():\n    from ..study.analysis import Analysis\n",
        "layout/scene/site.py": "from . import roof\n",
        "layout/study/__init__.py": "",
        "layout/study/analysis.py": "from ..scene import site\nfrom layout.study import compare\n",
        "layout/study/compare.py": "import layout.study.analysis\nfrom layout import RoofFace\n",
    })
    graph = import_graph(package)
    assert graph["layout.scene.site"] == {"layout.scene.roof"}
    assert upward_imports(graph) == [("layout.scene.roof", "layout.study.analysis"),
                                     ("layout.study.compare", "layout")]
    assert cycles(graph) == [["layout", "layout.scene.roof", "layout.scene.site",
                              "layout.study.analysis", "layout.study.compare"]]
    with pytest.raises(LookupError, match="no stage"):
        stage_of("layout.nowhere.module")
