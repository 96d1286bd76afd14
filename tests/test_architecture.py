"""The layout keeps its promises: a pure core, an edge that does the I/O, no reaching into private names."""

from __future__ import annotations

import ast
import pathlib

import pytest

PACKAGE = pathlib.Path(__file__).resolve().parents[1] / "navred"
#: The computational core: numpy, pyerfa and jplephem only (DEVELOPERS.md, "Layout").
CORE = ("angles", "timescales", "ephemeris", "stars", "epochs", "almanac", "corrections", "triangle", "stats", "fix",
        "plan", "series", "lunar", "constants", "errors", "vocabulary", "timework", "sailings", "marking", "reckoning", "rating")
EDGE_LIBRARIES = {"pandas", "openpyxl", "matplotlib", "typer"}


def imports(path: pathlib.Path):
    """(line, module, names) of every import in a file, at any depth (inside functions too)."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield node.lineno, alias.name, [], 0
        elif isinstance(node, ast.ImportFrom):
            yield node.lineno, node.module or "", [a.name for a in node.names], node.level


@pytest.mark.parametrize("module", CORE)
def test_the_core_imports_no_edge_library(module):
    path = PACKAGE / f"{module}.py"
    assert path.exists(), f"core module {module} is missing"
    offending = [(line, name) for line, name, _, level in imports(path)
                 if level == 0 and name.split(".")[0] in EDGE_LIBRARIES]
    assert not offending, f"navred/{module}.py imports {offending}"


def test_the_core_imports_only_the_core():
    for module in CORE:
        for line, name, _, level in imports(PACKAGE / f"{module}.py"):
            if level >= 1:
                assert name.split(".")[0] in CORE, f"navred/{module}.py:{line} imports the edge module .{name}"


def test_no_module_imports_another_modules_private_name():
    offending = []
    for path in sorted(PACKAGE.glob("*.py")):
        for line, name, names, level in imports(path):
            private = [n for n in names if n.startswith("_") and not n.startswith("__")]
            if level >= 1 and private:
                offending.append(f"{path.name}:{line} from .{name} import {', '.join(private)}")
    assert not offending, offending


def test_the_check_itself_catches_a_reach_in(tmp_path):
    sample = tmp_path / "sample.py"
    sample.write_text("def f():\n    import pandas\n    from .logbook import _secret\n")
    found = list(imports(sample))
    assert (2, "pandas", [], 0) in found and (3, "logbook", ["_secret"], 1) in found


def test_the_command_line_starts_without_the_heavy_libraries():
    # issue 13: `navred --help` and `import navred` must not pay for pandas, matplotlib, openpyxl, erfa or
    # even numpy before a command needs them (a fresh interpreter, so that nothing is imported already)
    import subprocess
    import sys

    probe = ("import sys, navred, navred.cli; "
             "print(','.join(m for m in ('pandas', 'matplotlib', 'openpyxl', 'erfa', 'numpy', 'jplephem', 'PIL') "
             "if m in sys.modules))")
    loaded = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True).stdout.strip()
    assert loaded == ""
