"""The package's shape: layers that import only earlier layers, no import cycle, imports at
module level (except the heavy optional libraries), a frozen public API, and registries that
carry what the rest of the code needs (common practice, no source)."""

from __future__ import annotations

import ast

import pytest

from tests import import_graph

#: Libraries a function may import on first use, so that start-up and table-only runs skip them.
LAZY_OK = ("matplotlib", "distributed", "astropy.cosmology", "scipy.integrate", "scipy.optimize")


@pytest.fixture(scope="module")
def graph():
    return import_graph.edges()


def test_every_module_is_in_a_layer():
    for name in import_graph.modules():
        import_graph.layer_of(name)


def test_no_import_cycle(graph):
    assert import_graph.cycles(graph) == []


def test_no_layer_imports_a_later_one(graph):
    assert import_graph.upward(graph) == []


def test_the_graph_checks_catch_a_back_edge_and_a_cycle():
    # the checks themselves must fail on a bad graph
    bad = [("gwclock.physics.noises", "gwclock.engine.curves", 1, True),
           ("gwclock.engine.curves", "gwclock.physics.noises", 1, True)]
    assert import_graph.cycles(bad) == [["gwclock.engine.curves", "gwclock.physics.noises"]]
    assert len(import_graph.upward(bad)) == 1


def test_the_engine_loads_neither_pydantic_nor_the_command_line():
    import subprocess
    import sys
    code = ("import sys, gwclock.engine, gwclock.studies.snr; "
            "print(sorted(m for m in ('pydantic', 'gwclock.config', 'gwclock.cli', 'matplotlib') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_internal_imports_are_at_module_level(graph):
    inner = [f"{a} imports {b} inside a function (line {line})" for a, b, line, top in graph if not top]
    assert inner == []


def test_function_level_imports_are_only_the_heavy_optional_libraries():
    found = []
    for name, path in import_graph.modules().items():
        if name == "gwclock.bench":
            continue
        tree = ast.parse(path.read_text())
        top = {id(n) for n in tree.body}
        for node in ast.walk(tree):
            if isinstance(node, (ast.Import, ast.ImportFrom)) and id(node) not in top:
                mods = ([a.name for a in node.names] if isinstance(node, ast.Import)
                        else [f"{node.module}.{a.name}" for a in node.names])
                for m in mods:
                    if not any(m == ok or m.startswith(ok + ".") for ok in LAZY_OK):
                        found.append(f"{name}:{node.lineno} imports {m}")
    assert found == []
