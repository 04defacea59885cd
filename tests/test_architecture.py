"""The package's shape: layers that import only earlier layers, no import cycle, imports at
module level (except the heavy optional libraries), a frozen public API, and registries that
carry what the rest of the code needs (common practice, no source)."""

from __future__ import annotations

import ast
import importlib
import inspect

import pytest

import gwclock
from tests import import_graph

#: Libraries a function may import on first use, so that start-up and table-only runs skip them.
# astropy.units and astropy.table in the engine only for Budget.to_qtable: plain use never loads them
LAZY_OK = ("matplotlib", "distributed", "astropy.cosmology", "scipy.integrate", "scipy.optimize",
           "astropy.units", "astropy.table")


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


class TestNoiseRegistry:
    """A noise is one registry entry: the budget, the tables and the figures pick it up."""

    @pytest.fixture
    def twin(self, monkeypatch):
        # a second copy of the laser residual under another name: it must come out equal to the
        # laser column wherever the sequence is fixed (the same PowerLaw terms through the same filter)
        from gwclock.physics import noises
        laser = noises.NOISES["laser"]
        monkeypatch.setitem(noises.NOISES, "twin", noises.Noise("twin", "laser twin", "a copy of the laser residual",
                                                                "#000000", (0, (1, 3)), "test", laser.terms))
        return "twin"

    def test_the_budget_carries_a_new_noise(self, twin):
        import numpy as np

        from gwclock.config.mission import load_mission
        from gwclock.engine import window
        f = np.geomspace(1e-3, 1.0, 40)
        b = window(load_mission(None)[0].design(), f, tune=0.05)
        np.testing.assert_allclose(b.psd[twin], b.psd["laser"], rtol=1e-12, atol=0)
        np.testing.assert_allclose(b.total, sum(b.psd[k] for k in ("projection", "shot", "laser", "receiver", "clock", "acceleration", twin)),
                                   rtol=1e-12, atol=0)

    def test_tables_and_figures_show_a_new_noise(self, twin):
        import numpy as np

        from gwclock.config.mission import load_mission
        from gwclock.engine import envelope
        from gwclock.outputs.plotting import plot_budget
        from gwclock.outputs.tables import budget_table
        b = envelope(load_mission(None)[0].design(), np.geomspace(1e-3, 1.0, 20))
        t = budget_table(b, "m", "0")
        assert "asd_twin" in t.colnames and t["asd_twin"].info.description == "a copy of the laser residual"
        assert "laser twin" in plot_budget(b)[twin].get_label()  # drawn (sharing the equal laser's line)


class TestSequenceRegistry:
    def test_every_kind_implements_the_protocol(self):
        from gwclock.physics.sequences import SEQUENCES, SequenceKind
        for name, kind in SEQUENCES.items():
            assert isinstance(kind, SequenceKind), name
            assert kind.name == name
            assert kind.search in ("pulses", "single", "interrogation")
            # only kinds whose noise integrals are linear in T can offer the (slope, edge) shortcut
            assert hasattr(kind, "noise_coefficients") == kind.linear_in_interrogation

    def test_the_mission_schema_offers_exactly_the_registered_kinds(self):
        from typing import get_args

        from gwclock.config.mission import Sequence
        from gwclock.physics.sequences import SEQUENCES
        assert get_args(Sequence.model_fields["kind"].annotation) == tuple(SEQUENCES)


class TestPublicAPI:
    def test_the_api_matches_its_snapshot(self):
        # a change of a public name or signature must be deliberate: `python tests/public_api.py --write`
        from tests import public_api
        assert public_api.snapshot() == public_api.SNAPSHOT.read_text()

    def test_every_library_module_declares_its_api(self):
        missing = [m for m in import_graph.modules() if not m.startswith(("gwclock.__main__", "gwclock.bench"))
                   and not hasattr(importlib.import_module(m), "__all__")]
        assert missing == []

    def test_tab_completion_lists_the_lazy_exports(self):
        assert set(gwclock.__all__) <= set(dir(gwclock))
        for name in gwclock.__all__:
            assert getattr(gwclock, name) is not None
        with pytest.raises(AttributeError):
            gwclock.no_such_name  # noqa: B018

    def test_every_public_function_and_class_has_a_docstring(self):
        from tests import public_api
        bare = []
        for m in import_graph.modules():
            if m.startswith(public_api.SKIP) or m.startswith("gwclock.cli"):
                continue
            module = importlib.import_module(m)
            if not (module.__doc__ or "").strip():
                bare.append(m)
            for name in module.__all__:
                obj = getattr(module, name)
                if (inspect.isfunction(obj) or inspect.isclass(obj)) and not (obj.__doc__ or "").strip():
                    bare.append(f"{m}.{name}")
        assert bare == []
