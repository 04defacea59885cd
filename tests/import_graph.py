"""The import graph of the gwclock package, read from the source (no import is executed).

``python tests/import_graph.py`` prints the layers with their modules and every edge between
layers; ``--dot`` prints the graph for Graphviz. ``tests/test_architecture.py`` checks it: no
cycle, and no edge from a layer to a later one.
"""

from __future__ import annotations

import ast
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent / "gwclock"

#: The layers, first to last: a module may import from its own layer and from earlier ones only.
LAYERS = {
    "base": ("errors", "constants", "quantities", "files", "version"),
    "physics": ("physics",),
    "engine": ("engine",),
    "astro": ("astro",),
    "config": ("config",),
    "studies": ("studies",),
    "outputs": ("outputs",),
    "cli": ("cli",),
    "entry": ("__init__", "__main__", "bench", "data"),
}
ORDER = list(LAYERS)


def module_name(path: Path) -> str:
    parts = list(path.relative_to(ROOT.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def modules() -> dict[str, Path]:
    return {module_name(p): p for p in sorted(ROOT.rglob("*.py"))}


def layer_of(module: str) -> str:
    parts = module.split(".")
    head = parts[1] if len(parts) > 1 else "__init__"
    for layer, heads in LAYERS.items():
        if head in heads:
            return layer
    raise KeyError(f"{module} is in no layer: add its package to LAYERS in tests/import_graph.py")


def _resolve(module: str, is_package: bool, node: ast.ImportFrom) -> str:
    if node.level == 0:
        return node.module or ""
    base = module.split(".")
    if not is_package:
        base = base[:-1]
    base = base[: len(base) - (node.level - 1)]
    return ".".join(base + ([node.module] if node.module else []))


def edges(known: dict[str, Path] | None = None) -> list[tuple[str, str, int, bool]]:
    """(importer, imported, line, at module level) for every import of a gwclock module."""
    known = modules() if known is None else known
    out = []
    for name, path in known.items():
        tree = ast.parse(path.read_text(), filename=str(path))
        top = {id(n) for n in tree.body}
        for node in ast.walk(tree):
            if isinstance(node, ast.Import):
                targets = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                base = _resolve(name, path.name == "__init__.py", node)
                # ``from pkg import sub`` imports the submodule when there is one
                targets = [f"{base}.{a.name}" if f"{base}.{a.name}" in known else base for a in node.names]
            else:
                continue
            for t in targets:
                if t.split(".")[0] == "gwclock" and t != name:
                    out.append((name, t, node.lineno, id(node) in top))
    return out


def cycles(graph_edges) -> list[list[str]]:
    """Every strongly connected set of more than one module (Tarjan), each a cycle or a knot of them."""
    graph: dict[str, set[str]] = {}
    for a, b, *_ in graph_edges:
        graph.setdefault(a, set()).add(b)
        graph.setdefault(b, set())
    index, low, stack, on, found = {}, {}, [], set(), []

    def visit(v):
        index[v] = low[v] = len(index)
        stack.append(v)
        on.add(v)
        for w in graph[v]:
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            group = []
            while True:
                w = stack.pop()
                on.discard(w)
                group.append(w)
                if w == v:
                    break
            if len(group) > 1:
                found.append(sorted(group))

    sys.setrecursionlimit(10_000)
    for v in sorted(graph):
        if v not in index:
            visit(v)
    return found


def upward(graph_edges) -> list[str]:
    """Edges from a layer to a later one, as readable lines."""
    bad = []
    for a, b, line, _ in graph_edges:
        la, lb = layer_of(a), layer_of(b)
        if ORDER.index(lb) > ORDER.index(la):
            bad.append(f"{a} (layer {la}) imports {b} (layer {lb}) at line {line}")
    return bad


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    known = modules()
    graph = edges(known)
    if "--dot" in argv:
        print("digraph gwclock {\n  rankdir=BT; node [shape=box, fontsize=10];")
        for layer in ORDER:
            members = [m for m in known if layer_of(m) == layer]
            print(f'  subgraph "cluster_{layer}" {{ label="{layer}"; ' + " ".join(f'"{m}";' for m in members) + " }")
        for a, b in sorted({(a, b) for a, b, *_ in graph}):
            print(f'  "{a}" -> "{b}";')
        print("}")
        return 0
    for layer in ORDER:
        members = sorted(m.removeprefix("gwclock.") or "gwclock" for m in known if layer_of(m) == layer)
        print(f"{layer:8s} {', '.join(members)}")
    print()
    between = sorted({(layer_of(a), layer_of(b)) for a, b, *_ in graph if layer_of(a) != layer_of(b)},
                     key=lambda e: (ORDER.index(e[0]), ORDER.index(e[1])))
    for la in ORDER:
        uses = [lb for a, lb in between if a == la]
        if uses:
            print(f"{la:8s} uses {', '.join(uses)}")
    problems = cycles(graph) + upward(graph)
    for p in problems:
        print(f"PROBLEM: {p}")
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())
