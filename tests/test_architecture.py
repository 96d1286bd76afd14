"""The layout keeps its promises, one rule per folder (DEVELOPERS.md, "Layout"): a flat computational core,
an edge in folders (io/, figures/, jobs/, cli/) that does the I/O, no import cycle, no reaching into
private names. Imports are read with ast from every import statement anywhere in a file (inside
functions and ``if TYPE_CHECKING:`` too), so a lazy import counts as much as one at the top."""

from __future__ import annotations

import ast
import functools
import pathlib
import re
import sys

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "navred"
#: The computational core, flat in navred/: numpy, pyerfa, jplephem and the standard library only.
CORE = ("angles", "timescales", "ephemeris", "stars", "epochs", "almanac", "corrections", "triangle", "stats", "fix",
        "plan", "series", "lunar", "constants", "errors", "vocabulary", "timework", "sailings", "marking", "reckoning",
        "rating", "handtables", "handworking", "presets", "compass", "marking_judge", "marking_sight", "marking_methods",
        "marking_checks", "status", "events", "leastsquares", "fixstats", "fixresult", "fixkinds", "fixbatch",
        "grosserrors", "sensechecks", "latitudes", "landmarks", "sightplan", "magnitudes", "identify")
CORE_LIBRARIES = {"numpy", "erfa", "jplephem"}
EDGE_LIBRARIES = {"pandas", "openpyxl", "matplotlib", "typer", "PIL", "defusedxml", "reportlab"}
#: The edge's folders, and the folders each may not import.
EDGE_FOLDERS = ("io", "figures", "jobs", "cli")
FORBIDDEN = {"io": {"jobs", "cli"}, "figures": {"jobs", "cli"}, "jobs": {"cli"}}


def imports(path: pathlib.Path):
    """(line, module, names, level) of every import in a file, at any depth (inside functions too)."""
    for line, module, names, level in _imports(path, path.stat().st_mtime_ns):
        yield line, module, list(names), level


@functools.cache
def _imports(path: pathlib.Path, _mtime_ns: int) -> tuple:
    """A file's imports, parsed once for all the checks (the file as it is: its time of change is in the key)."""
    found = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found += [(node.lineno, alias.name, (), 0) for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            found.append((node.lineno, node.module or "", tuple(a.name for a in node.names), node.level))
    return tuple(found)


def module_name(path: pathlib.Path) -> str:
    """The module's name inside navred ("fix", "io.logbook", "io" for io/__init__.py, "" for the front)."""
    parts = list(path.relative_to(PACKAGE).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


MODULES = {module_name(path): path for path in sorted(PACKAGE.rglob("*.py"))}


def folder(module: str) -> str:
    """The folder a module lives in: "core" for the flat core, "front" for navred/__init__ and __main__."""
    if module in ("", "__main__"):
        return "front"
    head = module.split(".")[0]
    return head if head in EDGE_FOLDERS else "core"


def resolve(importer: str, module: str, names: list[str], level: int) -> set[str]:
    """The navred modules an import statement of ``importer`` brings in (nothing for an outside library)."""
    if level == 0:
        if module.split(".")[0] != "navred":
            return set()
        base = module.split(".")[1:]
    else:
        package = importer.split(".") if MODULES[importer].name == "__init__.py" else importer.split(".")[:-1]
        package = [p for p in package if p]
        if level - 1 > len(package):
            raise AssertionError(f"{importer}: a relative import above the package")
        base = package[: len(package) - (level - 1)] + ([p for p in module.split(".") if p] if module else [])
    target = ".".join(base)
    found = {target} if target in MODULES else set()
    for name in names:  # `from . import x` brings in the submodule x when there is one
        sub = f"{target}.{name}" if target else name
        if sub in MODULES:
            found.add(sub)
    if not found and target not in MODULES:
        raise AssertionError(f"{importer} imports navred module {target!r}, which does not exist")
    return found or {target}


def graph() -> dict[str, dict[str, list[int]]]:
    """importer -> {imported navred module: [lines]} over every import statement of every module."""
    edges: dict[str, dict[str, list[int]]] = {name: {} for name in MODULES}
    for name, path in MODULES.items():
        for line, module, names, level in imports(path):
            for target in resolve(name, module, names, level):
                if target != name:
                    edges[name].setdefault(target, []).append(line)
    return edges


@functools.cache
def import_graph() -> dict[str, dict[str, list[int]]]:
    """The graph, made once when a test first asks for it (not while the tests are collected: each worker
    collects every module, and parsing the package takes a second)."""
    return graph()


def where(module: str) -> str:
    return str(MODULES[module].relative_to(ROOT))


def test_every_module_is_in_a_known_place():
    # a new flat module must be declared core (here) or go into an edge folder
    flat = {name for name in MODULES if "." not in name and name not in EDGE_FOLDERS and name not in ("", "__main__")}
    assert flat == set(CORE), f"flat modules not in CORE: {sorted(flat - set(CORE))}; missing: {sorted(set(CORE) - flat)}"
    folders = {path.parent.name for path in PACKAGE.rglob("*.py") if path.parent != PACKAGE}
    assert folders == set(EDGE_FOLDERS)


@pytest.mark.parametrize("name", ["io", "figures", "jobs"])
def test_each_edge_folder_says_what_lives_there_and_nothing_else(name):
    tree = ast.parse((PACKAGE / name / "__init__.py").read_text(encoding="utf-8"))
    docstring = ast.get_docstring(tree)
    assert docstring and "rule" in docstring
    assert len(tree.body) == 1, f"navred/{name}/__init__.py holds more than its docstring"


@pytest.mark.parametrize("module", CORE)
def test_the_core_imports_only_numpy_erfa_jplephem_and_the_standard_library(module):
    outside = [(line, name) for line, name, _, level in imports(MODULES[module])
               if level == 0 and name.split(".")[0] not in CORE_LIBRARIES | set(sys.stdlib_module_names)]
    assert not outside, f"navred/{module}.py imports {outside}"
    edge = [(line, name) for line, name, _, level in imports(MODULES[module])
            if level == 0 and name.split(".")[0] in EDGE_LIBRARIES]
    assert not edge, f"navred/{module}.py imports the edge libraries {edge}"


def test_the_core_imports_only_the_core():
    offending = [f"{where(module)}:{lines[0]} imports {target}" for module in CORE
                 for target, lines in import_graph()[module].items() if folder(target) != "core"]
    assert not offending, offending


def folder_breaches(edges=None) -> dict[tuple[str, str], list[int]]:
    edges = import_graph() if edges is None else edges
    return {(module, target): lines for module, targets in edges.items() for target, lines in targets.items()
            if folder(target) in FORBIDDEN.get(folder(module), set())}


def test_io_and_figures_import_no_job_and_jobs_no_command_line():
    # no exception: every rule holds for every module (issue 21 emptied the list of breaches once allowed)
    breaches = [f"{where(a)}:{lines[0]} imports {b}" for (a, b), lines in folder_breaches().items()]
    assert not breaches, f"a folder imports what its rule forbids: {breaches}"


def test_nothing_imports_the_command_line_but_python_m_navred_and_the_console_script():
    offending = [f"{where(module)}:{lines[0]} imports {target}" for module, targets in import_graph().items()
                 for target, lines in targets.items()
                 if folder(target) == "cli" and folder(module) != "cli" and module != "__main__"]
    assert not offending, offending
    assert "cli" in import_graph()["__main__"]
    scripts = re.search(r"\[project\.scripts\]\n(.*?)(\n\[|\Z)", (ROOT / "pyproject.toml").read_text(), re.S).group(1)
    assert scripts.strip() == 'navred = "navred.cli:main"'


def cycles(edges=None) -> list[frozenset[str]]:
    """The strongly connected components of more than one module (Tarjan's algorithm)."""
    edges = import_graph() if edges is None else edges
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found = []

    def visit(node: str) -> None:
        index[node] = low[node] = len(index)
        stack.append(node)
        on_stack.add(node)
        for target in edges[node]:
            if target not in index:
                visit(target)
                low[node] = min(low[node], low[target])
            elif target in on_stack:
                low[node] = min(low[node], index[target])
        if low[node] == index[node]:
            component = set()
            while True:
                member = stack.pop()
                on_stack.discard(member)
                component.add(member)
                if member == node:
                    break
            if len(component) > 1:
                found.append(frozenset(component))

    for node in edges:
        if node not in index:
            visit(node)
    return found


def test_no_import_cycle_lazy_imports_included():
    found = [sorted(cycle) for cycle in cycles()]
    assert not found, f"import cycles (lazy imports count): {found}"


def test_no_module_imports_another_modules_private_name():
    offending = []
    for name, path in MODULES.items():
        for line, module, names, level in imports(path):
            private = [n for n in names if n.startswith("_") and not n.startswith("__")]
            if private and resolve(name, module, names, level):
                offending.append(f"{where(name)}:{line} from {'.' * level}{module} import {', '.join(private)}")
    assert not offending, offending


def test_the_checks_themselves_catch_a_reach_in_a_lazy_cycle_and_a_forbidden_folder(tmp_path):
    sample = tmp_path / "sample.py"
    sample.write_text("def f():\n    import pandas\n    from ..jobs.voyage import _secret\n")
    found = list(imports(sample))
    assert (2, "pandas", [], 0) in found and (3, "jobs.voyage", ["_secret"], 2) in found
    # the resolver places relative imports from a folder, a folder's __init__ and the front
    assert resolve("io.workbook", "jobs.voyage", ["VoyageResult"], 2) == {"jobs.voyage"}
    assert resolve("io.workbook", "output", ["atomic_write"], 1) == {"io.output"}
    assert resolve("io.exports", "", ["__version__"], 2) == {""}
    assert resolve("cli", "common", ["app", "main"], 1) == {"cli.common"}
    assert "cli.sights" in resolve("cli", "", ["sights"], 1)
    assert resolve("__main__", "cli", ["main"], 1) == {"cli"}
    assert resolve("jobs.sights", "triangle", ["x"], 2) == {"triangle"}
    assert resolve("fix", "numpy", [], 0) == set()
    # a breach and a cycle through a lazy import are found in a graph that has them (the one the code had
    # before issue 21: the reader took the reduction's columns inside a function)
    graph_with_both = {"io.logbook": {"jobs.sights": [460]}, "jobs.sights": {"io.logbook": [19]}, "fix": {}}
    assert ("io.logbook", "jobs.sights") in folder_breaches(graph_with_both)
    assert frozenset({"io.logbook", "jobs.sights"}) in cycles(graph_with_both)
    assert folder("io.logbook") == "io" and folder("fix") == "core" and folder("__main__") == "front"


def test_the_command_line_starts_without_the_heavy_libraries():
    # issue 13: `navred --help` and `import navred` must not pay for pandas, matplotlib, openpyxl, erfa or
    # even numpy before a command needs them (a fresh interpreter, so that nothing is imported already)
    import subprocess

    probe = ("import sys, navred, navred.cli; "
             "print(','.join(m for m in ('pandas', 'matplotlib', 'openpyxl', 'erfa', 'numpy', 'jplephem', 'PIL') "
             "if m in sys.modules))")
    loaded = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True).stdout.strip()
    assert loaded == ""
