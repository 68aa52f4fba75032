"""Module layout: the planner's imports form no cycle, and the antenna package keeps its layers.

The graph is built from the source with :mod:`ast` (module-level imports and imports inside
functions alike), following the Python Language Reference, "The import system": importing
``a.b.c`` first runs ``a`` and ``a.b`` (so a module depends on every package it imports through,
except its own enclosing packages, which have already started when it runs), and
``from a.b import name`` needs the module ``a.b.name`` when there is one, otherwise the module
``a.b`` that defines ``name``. Cycles are found as the strongly connected components of the
graph (Tarjan, "Depth-first search and linear graph algorithms", SIAM J. Comput. 1, 1972).
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]
ROOT_PACKAGE = "planner"


def module_files(source_root: Path, package: str = ROOT_PACKAGE) -> dict[str, Path]:
    """Dotted module name -> file, for every module of ``package`` under ``source_root``."""
    files = {}
    for path in sorted((source_root / package).rglob("*.py")):
        parts = list(path.relative_to(source_root).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts.pop()
        files[".".join(parts)] = path
    return files


def _is_package(path: Path) -> bool:
    """True for a package front door (``__init__.py``)."""
    return path.name == "__init__.py"


def _ancestors(module: str) -> set[str]:
    """The packages enclosing ``module`` (``a.b.c`` -> ``a``, ``a.b``): they run before it does."""
    parts = module.split(".")
    return {".".join(parts[:k]) for k in range(1, len(parts))}


def _prefixes(name: str) -> list[str]:
    """``a.b.c`` -> ``a``, ``a.b``, ``a.b.c``: what importing ``a.b.c`` runs, in order."""
    parts = name.split(".")
    return [".".join(parts[:k]) for k in range(1, len(parts) + 1)]


def _base_of(node: ast.ImportFrom, module: str, is_package: bool) -> str:
    """The absolute module a ``from ... import`` names (relative imports resolved)."""
    if node.level == 0:
        return node.module or ""
    package = module.split(".") if is_package else module.split(".")[:-1]
    base = package[: len(package) - (node.level - 1)]
    return ".".join(base + ([node.module] if node.module else []))


def imports_of(module: str, path: Path, known: set[str]) -> set[str]:
    """The modules of ``known`` that ``module`` (its source at ``path``) needs, at any depth of the file."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    own = _ancestors(module) | {module}
    needed: set[str] = set()

    def through(name: str) -> None:
        """``name`` and the packages imported on the way to it, minus the importer's own packages."""
        needed.update(p for p in _prefixes(name) if p in known and p not in own)

    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                through(alias.name)
        elif isinstance(node, ast.ImportFrom):
            base = _base_of(node, module, _is_package(path))
            through(base)
            for alias in node.names:
                submodule = f"{base}.{alias.name}"
                if submodule in known:
                    through(submodule)
                elif base in known and base != module:
                    needed.add(base)  # a name defined by the module (or package front door) itself
    return needed


def import_graph(source_root: Path, package: str = ROOT_PACKAGE) -> dict[str, set[str]]:
    """Module -> the modules it imports, for every module of ``package``."""
    files = module_files(source_root, package)
    known = set(files)
    return {module: imports_of(module, path, known) for module, path in files.items()}


def strongly_connected(graph: dict[str, set[str]]) -> list[list[str]]:
    """The strongly connected components with more than one module (Tarjan), each sorted."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    components: list[list[str]] = []

    def visit(start: str) -> None:
        # Iterative depth-first search: (node, iterator over its successors).
        work = [(start, iter(sorted(graph[start])))]
        index[start] = low[start] = len(index)
        stack.append(start)
        on_stack.add(start)
        while work:
            node, successors = work[-1]
            for succ in successors:
                if succ not in index:
                    index[succ] = low[succ] = len(index)
                    stack.append(succ)
                    on_stack.add(succ)
                    work.append((succ, iter(sorted(graph[succ]))))
                    break
                if succ in on_stack:
                    low[node] = min(low[node], index[succ])
            else:
                work.pop()
                if work:
                    parent = work[-1][0]
                    low[parent] = min(low[parent], low[node])
                if low[node] == index[node]:
                    component = []
                    while True:
                        member = stack.pop()
                        on_stack.discard(member)
                        component.append(member)
                        if member == node:
                            break
                    if len(component) > 1:
                        components.append(sorted(component))

    for node in sorted(graph):
        if node not in index:
            visit(node)
    return sorted(components)


def cycle_in(component: list[str], graph: dict[str, set[str]]) -> list[str]:
    """One closed path through the component, e.g. [a, b, a], for the failure message."""
    members = set(component)
    start = component[0]
    # Breadth-first search from start until an edge leads back to it.
    previous: dict[str, str] = {}
    frontier = [start]
    while frontier:
        following = []
        for node in frontier:
            for succ in sorted(graph[node] & members):
                if succ == start:
                    path = [node]
                    while path[-1] != start:
                        path.append(previous[path[-1]])
                    return [*reversed(path), start]
                if succ not in previous:
                    previous[succ] = node
                    following.append(succ)
        frontier = following
    raise AssertionError(f"{component} is not strongly connected")


def reaches(graph: dict[str, set[str]], start: str) -> set[str]:
    """Every module ``start`` imports, directly or through others."""
    seen: set[str] = set()
    todo = [start]
    while todo:
        for succ in graph[todo.pop()]:
            if succ not in seen:
                seen.add(succ)
                todo.append(succ)
    return seen


def _describe(components: list[list[str]], graph: dict[str, set[str]]) -> str:
    """One cycle per component, as ``a -> b -> a``, for a failure message."""
    return "; ".join(" -> ".join(cycle_in(c, graph)) for c in components)


def _in_antenna(module: str) -> bool:
    """True for planner.antenna and the modules under it."""
    return module == "planner.antenna" or module.startswith("planner.antenna.")


@pytest.fixture(scope="module")
def graph() -> dict[str, set[str]]:
    """The planner's import graph, built once for the module."""
    return import_graph(REPO)


# -- the checker itself, on a made-up package ------------------------------------------------------


def _write(root: Path, files: dict[str, str]) -> None:
    """Write a made-up source tree: relative path -> text."""
    for name, text in files.items():
        path = root / name
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(text, encoding="utf-8")


def test_checker_finds_a_cycle_through_a_function_level_import(tmp_path):
    # a imports b at module level, b imports a inside a function: a cycle all the same.
    _write(
        tmp_path,
        {
            "pkg/__init__.py": "",
            "pkg/a.py": "from pkg.b import f\n",
            "pkg/b.py": "def f():\n    from pkg import a\n    return a\n",
            "pkg/c.py": "import pkg.a\n",
        },
    )
    graph = import_graph(tmp_path, "pkg")
    assert graph["pkg.c"] == {"pkg.a"}
    assert strongly_connected(graph) == [["pkg.a", "pkg.b"]]
    assert cycle_in(["pkg.a", "pkg.b"], graph) == ["pkg.a", "pkg.b", "pkg.a"]


def test_checker_counts_front_doors_and_relative_imports(tmp_path):
    # Importing pkg.sub.x runs pkg.sub's front door first (Python Language Reference, "The import
    # system"); a name taken from a front door depends on that front door, even from inside it.
    _write(
        tmp_path,
        {
            "pkg/__init__.py": "",
            "pkg/sub/__init__.py": "from .x import VALUE\n",
            "pkg/sub/x.py": "VALUE = 1\n",
            "pkg/sub/y.py": "from pkg.sub import VALUE\n",
            "pkg/top.py": "from pkg.sub.x import VALUE\n",
        },
    )
    graph = import_graph(tmp_path, "pkg")
    assert graph["pkg.top"] == {"pkg.sub", "pkg.sub.x"}
    assert graph["pkg.sub"] == {"pkg.sub.x"}
    assert graph["pkg.sub.y"] == {"pkg.sub"}
    assert graph["pkg.sub.x"] == set()
    assert strongly_connected(graph) == []


# -- the planner ---------------------------------------------------------------------------------


def test_graph_sees_the_planner(graph):
    # Known edges of the code base, one module-level and one inside a function, so that an empty
    # graph (a broken walk) cannot pass the cycle checks below.
    assert "planner.antenna.table" in graph["planner.antenna.synth.mom"]
    assert "planner.antenna.registry" in graph["planner.cli.pattern"]


def test_antenna_imports_form_no_cycle(graph):
    # A cycle makes the outcome of an import depend on which module is imported first (Python
    # Language Reference, "The import system": a module is bound in sys.modules before it has run).
    components = [c for c in strongly_connected(graph) if any(_in_antenna(m) for m in c)]
    assert not components, f"import cycles: {_describe(components, graph)}"


def test_no_import_cycle_elsewhere(graph):
    components = [c for c in strongly_connected(graph) if not any(_in_antenna(m) for m in c)]
    assert not components, f"import cycles: {_describe(components, graph)}"


def test_antenna_front_door_stays_below_the_solver(graph):
    # Importing planner.antenna.synth.x runs planner.antenna's front door first; if that reached
    # the registry, which builds on the solver, the solver would sit above and below it at once.
    reached = reaches(graph, "planner.antenna")
    assert "planner.antenna.registry" not in reached
    assert not {m for m in reached if m.startswith("planner.antenna.synth")}


def test_solver_takes_only_tables_files_and_closed_forms(graph):
    # The package's layering (planner.antenna front door docstring): the solver builds on the table,
    # its file format and the closed forms; the registry and the harness build on the solver.
    allowed = {"planner.antenna.table", "planner.antenna.tablefile", "planner.antenna.analytic"}
    for module, needed in graph.items():
        if module.startswith("planner.antenna.synth"):
            outside = {m for m in needed if _in_antenna(m) and not m.startswith("planner.antenna.synth")}
            assert outside <= allowed, f"{module} imports {sorted(outside - allowed)}"


def test_the_front_door_names_resolve_and_the_notebook_uses_only_them():
    # planner/__init__.py lists its public names; each must resolve to its module's object, and
    # the walkthrough notebook (what a user copies) imports from the front door alone.
    import json

    import planner

    for name in planner.__all__:
        assert getattr(planner, name) is not None, name
    notebook = json.loads((Path(__file__).resolve().parents[1] / "notebooks" / "station-choice.ipynb").read_text())
    imports = [
        line.strip()
        for cell in notebook["cells"]
        if cell["cell_type"] == "code"
        for line in "".join(cell["source"]).splitlines()
        if "planner" in line and "import" in line
    ]
    assert imports, "the notebook imports nothing from planner"
    assert all(line.startswith("from planner import ") for line in imports), imports
