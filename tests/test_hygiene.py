"""The test suite's own rules, checked on its source (common practice, no source).

Strain PSDs are ~1e-40, so a comparison with an absolute floor passes whatever the code returns:
``pytest.approx`` keeps abs=1e-12 unless told otherwise and ``np.allclose`` / ``np.isclose`` keep
atol=1e-8. Every comparison of numbers in the suite is therefore relative with no absolute floor:
``pytest.approx(..., abs=0)`` or ``np.testing.assert_allclose(..., atol=0)`` (whose default atol is
already 0). An absolute tolerance is allowed only against an exact zero, where a relative one
means nothing. The tests also cite papers, not a specification file outside the repository.
"""

from __future__ import annotations

import ast
from pathlib import Path

TESTS = Path(__file__).resolve().parent
SOURCES = sorted(TESTS.glob("*.py"))
FORBIDDEN = {"allclose", "isclose", "assert_almost_equal", "assert_array_almost_equal", "assert_approx_equal"}


def _name(func: ast.expr) -> str:
    if isinstance(func, ast.Attribute):
        return func.attr
    if isinstance(func, ast.Name):
        return func.id
    return ""


def _keyword(call: ast.Call, name: str):
    return next((k.value for k in call.keywords if k.arg == name), None)


def _is_zero(node) -> bool:
    return isinstance(node, ast.Constant) and not isinstance(node.value, bool) and node.value == 0


def slack(source: str, filename: str = "<test>") -> list[str]:
    """Places in ``source`` where a numeric comparison keeps an absolute tolerance."""
    found = []
    for node in ast.walk(ast.parse(source, filename)):
        if not isinstance(node, ast.Call):
            continue
        name, where = _name(node.func), f"{filename}:{node.lineno}"
        if name in FORBIDDEN:
            found.append(f"{where}: {name} (use np.testing.assert_allclose(..., atol=0))")
        elif name == "approx":
            tol = _keyword(node, "abs")
            against_zero = bool(node.args) and _is_zero(node.args[0])
            if tol is None or not (_is_zero(tol) or against_zero):
                found.append(f"{where}: approx without abs=0")
            elif _keyword(node, "rel") is None and not against_zero:
                found.append(f"{where}: approx with abs=0 but no rel (that is exact equality)")
        elif name == "assert_allclose":
            tol = _keyword(node, "atol")
            if tol is not None and not _is_zero(tol):
                found.append(f"{where}: assert_allclose with atol != 0")
    return found


def test_no_absolute_tolerance_anywhere_in_the_suite():
    found = [hit for path in SOURCES for hit in slack(path.read_text(), path.name)]
    assert not found, "\n".join(found)


def test_the_guard_sees_each_kind_of_slack():
    # the guard itself must catch what it is there for (a test that cannot fail is no test)
    bad = [
        "assert x == pytest.approx(1.0, rel=1e-3)",
        "assert x == pytest.approx(1.0, rel=1e-3, abs=1e-12)",
        "assert np.allclose(a, b, rtol=1e-9)",
        "assert np.isclose(a, b)",
        "assert x == pytest.approx(1.0, abs=0)",
        "np.testing.assert_allclose(a, b, rtol=1e-9, atol=1e-30)",
        "np.testing.assert_almost_equal(a, b)",
    ]
    for line in bad:
        assert slack(line), line
    good = [
        "assert x == pytest.approx(1.0, rel=1e-3, abs=0)",
        "assert x == pytest.approx(0.0, abs=1e-15)",
        "np.testing.assert_allclose(a, b, rtol=1e-9, atol=0)",
        "np.testing.assert_allclose(a, b, rtol=1e-9)",
    ]
    for line in good:
        assert not slack(line), line


def test_tests_cite_papers_not_a_file_outside_the_repository():
    cited = [f"{p.name}:{i}" for p in SOURCES if p.name != Path(__file__).name
             for i, line in enumerate(p.read_text().splitlines(), 1) if "PHYSICS.md" in line]
    assert not cited, "cite the paper (authors, year, journal, equation) instead: " + ", ".join(cited)


def test_mutant_catalogue_matches_the_code():
    # every snippet of tests/mutants.toml occurs exactly once in its module (else `make mutants`
    # would test nothing for it)
    from . import mutants
    catalogue = mutants.load()
    assert len(catalogue) >= 40
    assert not mutants.stale(catalogue)
