"""Mutation check: break the physics on purpose and watch the tests fail.

Each entry of ``tests/mutants.toml`` replaces one exact snippet of a gwclock module by a wrong
one (a factor 2, a square root, a wrong power, a dropped convention factor) and names the test
files that can see it. For each mutant this script copies the project to a scratch folder,
applies the change there (the working tree is never touched), runs those tests with ``-x`` and
records whether they failed ("caught") or passed ("survived"). A mutant whose snippet is not
found exactly once, or whose run errors (exit code other than 0 or 1), is reported as broken.

Usage::

    python tests/mutants.py                 # every mutant, 2 jobs
    python tests/mutants.py --ci            # the subset marked ci = true
    python tests/mutants.py --only NAME ... # a few by name
    python tests/mutants.py --list

Exit code 0 when every mutant is caught, 1 when one survives or breaks, 2 for a bad catalogue.
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import tempfile
import time
import tomllib
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
CATALOGUE = Path(__file__).with_name("mutants.toml")
COPY = ("gwclock", "tests", "mission_configs", "plots", "pyproject.toml", "README.md")


@dataclass(frozen=True)
class Mutant:
    name: str
    file: str
    find: str
    replace: str
    tests: tuple
    ci: bool = False
    note: str = ""


def load(path=CATALOGUE):
    """The catalogue: a group per module (``[[group]]`` with ``tests``) holding ``[[group.mutant]]``."""
    data = tomllib.loads(path.read_text())
    out = []
    for group in data["group"]:
        for m in group["mutant"]:
            out.append(Mutant(m["name"], m.get("file", group["file"]), m["find"], m["replace"],
                              tuple(m.get("tests", group["tests"])), bool(m.get("ci", False)), m.get("note", "")))
    names = [m.name for m in out]
    dupes = sorted({n for n in names if names.count(n) > 1})
    if dupes:
        raise SystemExit(f"mutants.toml: duplicate names {dupes}")
    return out


def stale(mutants, root=ROOT):
    """Mutants whose snippet does not occur exactly once in its file (the catalogue needs updating)."""
    bad = []
    for m in mutants:
        text = (root / m.file).read_text()
        count = text.count(m.find)
        if count != 1 or m.find == m.replace:
            bad.append(f"{m.name}: {m.file} has the snippet {count} times")
    return bad


def _scratch():
    tmp = Path(tempfile.mkdtemp(prefix="gwclock-mutant-"))
    ignore = shutil.ignore_patterns("__pycache__", "*.pyc", ".pytest_cache")
    for item in COPY:
        src = ROOT / item
        if src.is_dir():
            shutil.copytree(src, tmp / item, ignore=ignore)
        elif src.exists():
            shutil.copy2(src, tmp / item)
    return tmp


def _pytest(tmp, tests, timeout):
    env = dict(os.environ, PYTHONPATH=str(tmp), PYTHONDONTWRITEBYTECODE="1")
    cmd = [sys.executable, "-m", "pytest", "-x", "-q", "-p", "no:cacheprovider", "--no-header", "-o",
           "addopts=--strict-markers", *tests]
    try:
        run = subprocess.run(cmd, cwd=tmp, env=env, capture_output=True, text=True, timeout=timeout)
    except subprocess.TimeoutExpired:
        return None, "timeout"
    return run.returncode, (run.stdout + run.stderr).strip().splitlines()[-3:]


def run_mutants(mutants, jobs=2, timeout=900, baseline=True, echo=print):
    """Run every mutant; returns {name: (status, seconds, detail)} with status in caught/survived/broken."""
    scratches = [_scratch() for _ in range(max(1, jobs))]
    try:
        if baseline:
            tests = sorted({t for m in mutants for t in m.tests})
            code, tail = _pytest(scratches[0], tests, timeout)
            if code != 0:
                raise SystemExit("the unmutated tests fail; fix them first:\n" + "\n".join(tail or []))
        free = list(scratches)
        results = {}

        def one(m):
            tmp = free.pop()
            try:
                target = tmp / m.file
                original = target.read_text()
                target.write_text(original.replace(m.find, m.replace, 1))
                start = time.perf_counter()
                try:
                    code, tail = _pytest(tmp, m.tests, timeout)
                finally:
                    target.write_text(original)
                seconds = time.perf_counter() - start
                status = {1: "caught", 0: "survived"}.get(code, "broken")
                if code is None:
                    status = "caught"  # a timeout is a visible change in behaviour
                results[m.name] = (status, seconds, tail)
                echo(f"{status:>8}  {seconds:5.1f} s  {m.name}")
            finally:
                free.append(tmp)

        with ThreadPoolExecutor(max_workers=len(scratches)) as pool:
            list(pool.map(one, mutants))
        return results
    finally:
        for tmp in scratches:
            shutil.rmtree(tmp, ignore_errors=True)


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--ci", action="store_true", help="only the mutants marked ci = true")
    p.add_argument("--only", nargs="+", metavar="NAME", help="only these mutants")
    p.add_argument("--list", action="store_true", help="list the mutants and exit")
    p.add_argument("--jobs", type=int, default=2)
    p.add_argument("--no-baseline", action="store_true", help="skip the check that the unmutated tests pass")
    args = p.parse_args(argv)
    mutants = load()
    bad = stale(mutants)
    if bad:
        print("stale catalogue:\n  " + "\n  ".join(bad), file=sys.stderr)
        return 2
    if args.ci:
        mutants = [m for m in mutants if m.ci]
    if args.only:
        unknown = set(args.only) - {m.name for m in mutants}
        if unknown:
            print(f"unknown mutants: {sorted(unknown)}", file=sys.stderr)
            return 2
        mutants = [m for m in mutants if m.name in args.only]
    if args.list:
        for m in mutants:
            print(f"{m.name:40s} {m.file}  {'(ci)' if m.ci else ''}")
        return 0
    start = time.perf_counter()
    results = run_mutants(mutants, jobs=args.jobs, baseline=not args.no_baseline)
    caught = [n for n, r in results.items() if r[0] == "caught"]
    print(f"\n{len(caught)}/{len(results)} mutants caught in {time.perf_counter() - start:.0f} s")
    failed = [(n, r) for n, r in results.items() if r[0] != "caught"]
    for name, (status, _, tail) in failed:
        print(f"  {status}: {name}")
        for line in tail or []:
            print(f"      {line}")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
