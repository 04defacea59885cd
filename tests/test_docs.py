"""The documentation's examples work (common practice, no source)."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

from gwclock.config.mission import mission_from_dict

DOCS = Path(__file__).resolve().parent.parent / "docs"


def _literal_blocks(text):
    """Indented blocks that follow a line ending in '::'."""
    out = []
    for m in re.finditer(r"::\n\n((?:    .*\n|\n)+)", text):
        out.append("\n".join(line[4:] for line in m.group(1).splitlines()))
    return out


def test_the_guide_mission_example_is_a_valid_mission():
    blocks = [b for b in _literal_blocks((DOCS / "guide.rst").read_text()) if "[link]" in b]
    assert len(blocks) == 1
    mission = mission_from_dict(tomllib.loads(blocks[0]), "docs/guide.rst")
    assert mission.link.baseline.to_value("m") == 3e10


def test_the_api_page_lists_every_library_module():
    from tests import import_graph, public_api
    page = (DOCS / "api.rst").read_text()
    documented = set(re.findall(r"automodule:: (\S+)", page))
    wanted = {m for m in import_graph.modules() if not m.startswith(public_api.SKIP) and not m.startswith("gwclock.cli")
              and not m.endswith(("astro", "config", "studies", "outputs"))}
    assert wanted - documented == set()


def test_the_readme_library_example_runs(monkeypatch):
    readme = (DOCS.parent / "README.md").read_text()
    section = readme[readme.index("### Library use"):]
    code = section[section.index("```python") + len("```python"):]
    code = code[:code.index("```")]
    monkeypatch.chdir(DOCS.parent)
    namespace = {}
    exec(compile(code, "README.md", "exec"), namespace)  # noqa: S102 - our own documentation
    budget = namespace["budget"]
    assert budget.asd.shape == (500,) and namespace["variant"].clock.atom_number == 1e6
