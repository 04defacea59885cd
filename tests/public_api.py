"""The public API as text: every name in every library module's ``__all__`` with its signature.

``tests/test_architecture.py`` compares it with ``tests/data/public_api.txt``, so that a change
of the API is a deliberate edit. After one, run ``python tests/public_api.py --write`` and say
what changed in the commit message.
"""

from __future__ import annotations

import importlib
import inspect
import sys
from pathlib import Path

from tests import import_graph

SNAPSHOT = Path(__file__).resolve().parent / "data" / "public_api.txt"
#: Modules that are not library API (entry points; the command line is its own interface).
SKIP = ("gwclock.__main__", "gwclock.bench", "gwclock.data")


def _signature(obj) -> str:
    """The signature with each default shown by its type only (reprs of arrays and quantities
    vary between library versions; names, order and kinds of the parameters are the API)."""
    try:
        sig = inspect.signature(obj)
    except (TypeError, ValueError):
        return "(...)"
    params = []
    for p in sig.parameters.values():
        if p.default is not inspect.Parameter.empty and not isinstance(p.default, (int, float, str, bool, type(None))):
            p = p.replace(default=_Default(type(p.default).__name__))
        params.append(p.replace(annotation=inspect.Parameter.empty))
    return str(sig.replace(parameters=params, return_annotation=inspect.Signature.empty))


class _Default:
    def __init__(self, name):
        self.name = name

    def __repr__(self):
        return f"<{self.name}>"


def describe(module_name: str) -> list[str]:
    module = importlib.import_module(module_name)
    lines = []
    for name in module.__all__:
        obj = getattr(module, name)
        where = f"{module_name}.{name}"
        if inspect.isclass(obj) and hasattr(obj, "model_fields"):  # a pydantic schema: its fields
            lines.append(f"class {where}({', '.join(obj.model_fields)})")
        elif inspect.isclass(obj):
            lines.append(f"class {where}{_signature(obj)}")
            for attr, member in sorted(vars(obj).items()):
                if attr.startswith("_"):
                    continue
                if attr.startswith("model_"):
                    continue
                if inspect.isfunction(member) or isinstance(member, (staticmethod, classmethod)):
                    lines.append(f"    def {attr}{_signature(getattr(obj, attr))}")
                elif isinstance(member, property):
                    lines.append(f"    property {attr}")
        elif callable(obj):
            lines.append(f"def {where}{_signature(obj)}")
        else:
            lines.append(f"{where}: {type(obj).__name__}")
    return lines


def snapshot() -> str:
    names = sorted(m for m in import_graph.modules() if not m.startswith(SKIP) and not m.startswith("gwclock.cli"))
    out = []
    for m in names:
        out += describe(m)
    return "\n".join(out) + "\n"


if __name__ == "__main__":
    if "--write" in sys.argv[1:]:
        SNAPSHOT.write_text(snapshot())
        print(f"wrote {SNAPSHOT}")
    else:
        sys.stdout.write(snapshot())
