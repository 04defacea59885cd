"""Fail when any gwclock module's branch coverage is below a floor (run by ``make test``).

Usage: ``python tests/coverage_floor.py COVERAGE.json [FLOOR]`` with the JSON report of
coverage.py (``pytest --cov --cov-report=json:FILE``). The benchmark script and the
``python -m gwclock`` shim are omitted in pyproject.toml ([tool.coverage.run]).
"""

import json
import sys


def below(report, floor):
    """(module, percent) for every file of the report under ``floor`` percent."""
    return sorted((name, f["summary"]["percent_covered"]) for name, f in report["files"].items()
                  if f["summary"]["percent_covered"] < floor)


def main(argv):
    path, floor = argv[0], float(argv[1]) if len(argv) > 1 else 90.0
    with open(path) as fh:
        report = json.load(fh)
    low = below(report, floor)
    total = report["totals"]["percent_covered"]
    if low:
        print(f"coverage below {floor:g} % (line + branch):", file=sys.stderr)
        for name, pct in low:
            print(f"  {name}: {pct:.1f} %", file=sys.stderr)
        return 1
    print(f"coverage: every module >= {floor:g} % (total {total:.1f} %)")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
