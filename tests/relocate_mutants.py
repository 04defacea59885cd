"""Point every mutant of tests/mutants.toml at the module that now holds its snippet.

Run after moving code: ``python tests/relocate_mutants.py``. A mutant whose snippet is no longer
in its group's file gets a ``file = ...`` line of its own naming the one module that holds the
snippet exactly once; it fails loudly when no module or several do (then edit the catalogue).
"""

from __future__ import annotations

import re
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
CATALOGUE = ROOT / "tests" / "mutants.toml"


def main() -> int:
    sources = {str(p.relative_to(ROOT)): p.read_text() for p in (ROOT / "gwclock").rglob("*.py")}
    out, group_file, problems = [], None, []
    lines = CATALOGUE.read_text().splitlines(keepends=True)
    for i, line in enumerate(lines):
        if line.startswith("[[group.mutant]]"):
            out.append(line)
            continue
        m = re.match(r'file = "(.+)"', line)
        if m:
            # a group's file, or a mutant's own (dropped here and rewritten below if still needed)
            if i and lines[i - 1].startswith("[[group]]"):
                group_file = m.group(1)
                out.append(line)
            continue
        f = re.match(r"find = '(.*)'$", line.rstrip("\n"))
        if f:
            snippet = f.group(1)
            if sources.get(group_file, "").count(snippet) != 1:
                where = [name for name, text in sources.items() if text.count(snippet) == 1]
                if len(where) != 1:
                    problems.append(f"{snippet!r}: found in {where or 'no module'}")
                else:
                    out.append(f'file = "{where[0]}"\n')
        out.append(line)
    if problems:
        print("cannot place:\n  " + "\n  ".join(problems), file=sys.stderr)
        return 1
    CATALOGUE.write_text("".join(out))
    return 0


if __name__ == "__main__":
    sys.exit(main())
