"""The layout keeps its promises, one rule per folder (DEVELOPERS.md, "Layout"): a flat computational core,
an edge in folders (io/, figures/, jobs/, cli/) that does the I/O, no import cycle, no reaching into
private names. Imports are read with ast from every import statement anywhere in a file (inside
functions and ``if TYPE_CHECKING:`` too), so a lazy import counts as much as one at the top."""

from __future__ import annotations

import ast
import pathlib
import re
import sys

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "navred"
#: The computational core, flat in navred/: numpy, pyerfa, jplephem and the standard library only.
CORE = ("angles", "timescales", "ephemeris", "stars", "epochs", "almanac", "corrections", "triangle", "stats", "fix",
        "plan", "series", "lunar", "constants", "errors", "vocabulary", "timework", "sailings", "marking", "reckoning",
        "rating", "handtables", "presets", "compass", "marking_judge", "marking_sight", "marking_methods",
        "marking_checks", "status", "events", "leastsquares", "fixstats", "fixresult", "fixkinds", "fixbatch",
        "grosserrors", "sensechecks", "latitudes", "sightplan", "magnitudes", "identify")
CORE_LIBRARIES = {"numpy", "erfa", "jplephem"}
EDGE_LIBRARIES = {"pandas", "openpyxl", "matplotlib", "typer", "PIL", "defusedxml", "reportlab"}
#: The edge's folders, and the folders each may not import.
EDGE_FOLDERS = ("io", "figures", "jobs", "cli")
FORBIDDEN = {"io": {"jobs", "cli"}, "figures": {"jobs", "cli"}, "jobs": {"cli"}}

# Existing breaches of the rules, kept while the code is reorganised: to be removed by issue 21 (item 2, modules of
# one job each). Each entry must still be a breach (the test fails on a stale entry), so the lists can only shrink.
#: (importer, imported) pairs of modules that break their folder's rule.
ALLOWED_FOLDER_BREACHES_TO_BE_REMOVED_BY_ISSUE_21 = {
    # the sight log's reader takes the reduction's RESULT_COLUMNS (lazily) to refuse a log of reduced rows
    ("io.logbook", "jobs.sights"),
    # GPX and GeoJSON are written from a jobs.voyage.VoyageResult
    ("io.exports", "jobs.voyage"),
    # the workbook writer: a VoyageResult (type only), row labels from jobs.frames, the training figure from
    # jobs.training, and write_plots sharing the plotting sheets among processes with jobs.forking
    ("io.workbook", "jobs.voyage"),
    ("io.workbook", "jobs.frames"),
    ("io.workbook", "jobs.training"),
    ("io.workbook", "jobs.forking"),
}
#: Import cycles (each a set of modules), lazy imports included.
ALLOWED_CYCLES_TO_BE_REMOVED_BY_ISSUE_21 = {
    # jobs.sights imports the reader; the reader imports jobs.sights' RESULT_COLUMNS inside a function
    frozenset({"io.logbook", "jobs.sights"}),
}


def imports(path: pathlib.Path):
    """(line, module, names, level) of every import in a file, at any depth (inside functions too)."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield node.lineno, alias.name, [], 0
        elif isinstance(node, ast.ImportFrom):
            yield node.lineno, node.module or "", [a.name for a in node.names], node.level


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


EDGES = graph()


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
                 for target, lines in EDGES[module].items() if folder(target) != "core"]
    assert not offending, offending


def folder_breaches() -> dict[tuple[str, str], list[int]]:
    return {(module, target): lines for module, targets in EDGES.items() for target, lines in targets.items()
            if folder(target) in FORBIDDEN.get(folder(module), set())}


def test_io_and_figures_import_no_job_and_jobs_no_command_line():
    breaches = folder_breaches()
    new = [f"{where(a)}:{lines[0]} imports {b}" for (a, b), lines in breaches.items()
           if (a, b) not in ALLOWED_FOLDER_BREACHES_TO_BE_REMOVED_BY_ISSUE_21]
    assert not new, f"a folder imports what its rule forbids: {new}"
    stale = ALLOWED_FOLDER_BREACHES_TO_BE_REMOVED_BY_ISSUE_21 - set(breaches)
    assert not stale, f"no longer breached: remove {sorted(stale)} from the allow-list"


def test_nothing_imports_the_command_line_but_python_m_navred_and_the_console_script():
    offending = [f"{where(module)}:{lines[0]} imports {target}" for module, targets in EDGES.items()
                 for target, lines in targets.items()
                 if folder(target) == "cli" and folder(module) != "cli" and module != "__main__"]
    assert not offending, offending
    assert "cli" in EDGES["__main__"]
    scripts = re.search(r"\[project\.scripts\]\n(.*?)(\n\[|\Z)", (ROOT / "pyproject.toml").read_text(), re.S).group(1)
    assert scripts.strip() == 'navred = "navred.cli:main"'


def cycles() -> list[frozenset[str]]:
    """The strongly connected components of more than one module (Tarjan's algorithm)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found = []

    def visit(node: str) -> None:
        index[node] = low[node] = len(index)
        stack.append(node)
        on_stack.add(node)
        for target in EDGES[node]:
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

    for node in EDGES:
        if node not in index:
            visit(node)
    return found


def test_no_import_cycle_lazy_imports_included():
    found = set(cycles())
    new = [sorted(cycle) for cycle in found - ALLOWED_CYCLES_TO_BE_REMOVED_BY_ISSUE_21]
    assert not new, f"import cycles (lazy imports count): {new}"
    stale = ALLOWED_CYCLES_TO_BE_REMOVED_BY_ISSUE_21 - found
    assert not stale, f"no longer a cycle: remove {[sorted(c) for c in stale]} from the allow-list"


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
    assert resolve("cli", "app", ["app", "main"], 1) == {"cli.app"}
    assert resolve("__main__", "cli", ["main"], 1) == {"cli"}
    assert resolve("jobs.sights", "triangle", ["x"], 2) == {"triangle"}
    assert resolve("fix", "numpy", [], 0) == set()
    # a breach that is really there is found (the allow-list names real ones, checked above), and the known
    # lazy cycle is seen although one of its imports is inside a function
    assert ("io.logbook", "jobs.sights") in folder_breaches()
    assert frozenset({"io.logbook", "jobs.sights"}) in cycles()
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
