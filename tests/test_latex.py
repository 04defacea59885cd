"""LaTeX tables for concept documents (booktabs + siunitx): the numbers they print are the
numbers gwclock computes, the units are siunitx's, user text is escaped, and the files compile.

Truth: the engine's own values at the same frequencies (the table must carry them to its printed
precision); the identity that the noise shares of a PSD add up to 100 %; LaTeX's list of special
characters (Lamport 1994, LaTeX: A Document Preparation System, 2nd ed., sec. 2.2.1, from memory);
siunitx's literal unit syntax (Wright, siunitx manual, "literal units", from memory).
"""

import re
import shutil
import subprocess

import numpy as np
import pytest

from gwclock.cli import main
from gwclock.config.mission import load_mission
from gwclock.engine import envelope
from gwclock.outputs.latex import escape, latex_number, latex_unit

from .conftest import MISSIONS

NUM = re.compile(r"\\num\{([^}]*)\}")


def run(argv, capsys):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def body_rows(text):
    """The cells of each data row between \\midrule and \\bottomrule."""
    body = text.split(r"\midrule", 1)[1].split(r"\bottomrule", 1)[0]
    return [[c.strip() for c in line.rstrip().removesuffix(r"\\").split("&")]
            for line in body.splitlines() if line.strip().endswith(r"\\")]


def number(cell):
    m = NUM.search(cell)
    if m:
        return float(m.group(1))
    return {"--": np.nan, r"$\infty$": np.inf, r"$<0.1$": 0.05}.get(cell, None)


@pytest.mark.parametrize("unit, expected", [
    ("Hz(-1/2)", r"\si{Hz^{-1/2}}"),
    ("m / (s2 Hz(1/2))", r"\si{m.s^{-2}.Hz^{-1/2}}"),
    ("solMass", r"\si{\ensuremath{M_\odot}}"),
    ("", ""),
])
def test_units_in_siunitx_literal_form(unit, expected):
    assert latex_unit(unit) == expected


def test_special_characters_are_escaped():
    text = escape("a&b_c%d$e#f{g}h~i^j\\k")
    assert text == r"a\&b\_c\%d\$e\#f\{g\}h\textasciitilde{}i\textasciicircum{}j\textbackslash{}k"
    assert latex_number(float("nan")) == "--" and latex_number(float("inf")) == r"$\infty$"
    assert latex_number(3e10) == r"\num{3e+10}" and latex_number(12) == r"\num{12}" and latex_number(True) == "yes"


def test_mission_table_carries_every_resolved_value(tmp_path, capsys):
    out = tmp_path / "m.tex"
    code, _, _ = run(["check", MISSIONS[0], "--latex", out], capsys)
    assert code == 0
    text = out.read_text()
    assert text.startswith("% written by gwclock") and "% command: gwclock check" in text
    rows = {r[1].replace(r"\_", "_"): r[2] for r in body_rows(text)}
    m, _ = load_mission(MISSIONS[0])
    assert float(NUM.search(rows["baseline"]).group(1)) == pytest.approx(m.link.baseline.to_value("m"), rel=1e-6, abs=0)
    assert rows["baseline"].endswith(r"~\si{m}")
    assert float(NUM.search(rows["atom_number"]).group(1)) == pytest.approx(m.clock.atom_number, rel=1e-6, abs=0)
    assert r"\si{m.s^{-2}.Hz^{-1/2}}" in rows["acceleration_noise"]
    assert rows["kind"] == m.sequence.kind


def test_budget_table_matches_the_engine_and_its_shares_add_up(tmp_path, capsys):
    out = tmp_path / "b.tex"
    at = [3e-4, 3e-3, 0.03, 0.3, 3.0]
    code, _, _ = run(["curve", "--latex", out, "--at", ",".join(f"{x:g} Hz" for x in at)], capsys)
    assert code == 0
    text = out.read_text()
    assert r"\multicolumn" in text and r"\cmidrule" in text and text.count(r"\toprule") == 1
    rows = body_rows(text)
    assert len(rows) == len(at)
    b = envelope(load_mission(None)[0].design(), np.array(at))
    shown = [k for k, v in b.psd.items() if np.any(v > 0)]
    for i, row in enumerate(rows):
        values = [number(c) for c in row]
        assert values[0] == pytest.approx(at[i], rel=1e-9, abs=0)
        assert values[1] == pytest.approx(b.asd[i], rel=5e-4, abs=0)  # 4 significant figures
        assert values[2] == b.pulses[i]
        shares = np.array(values[4:])
        assert shares.size == len(shown)
        # printed to 0.1 (per cent): each share is off by at most half of that
        assert abs(shares.sum() - 100.0) <= 0.05 * len(shown) + 1e-9
        for k, s in zip(shown, shares):
            exact = 100 * b.psd[k][i] / b.total[i]
            assert abs(s - exact) <= 0.05 + 1e-9 or (s == 0.05 and 0 < exact < 0.05)


def test_a_bad_latex_path_is_refused_before_any_work(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    code, _, err = run(["curve", "--latex", "b.txt"], capsys)
    assert code == 2 and "unsupported file type '.txt'" in err and err.count("\n") == 1
    assert list(tmp_path.iterdir()) == []


@pytest.mark.skipif(shutil.which("pdflatex") is None, reason="no pdflatex on this machine")
def test_every_table_compiles(tmp_path, capsys):
    name_file = tmp_path / "odd.toml"
    text = MISSIONS[0].read_text()
    name_file.write_text(re.sub(r'^name = ".*"$', 'name = "R&D_mission #1 (50% {draft})"', text, count=1, flags=re.M))
    tables = [["check", name_file, "--latex", tmp_path / "m.tex"],
              ["curve", name_file, "--latex", tmp_path / "b.tex", "--points", "40"],
              ["snr", name_file, "--mass1", "30", "--mass2", "30", "--redshift", "0.1", "--against", "lisa",
               "--latex", tmp_path / "s.tex"],
              ["horizon", name_file, "--masses", "100", "1e4", "--latex", tmp_path / "h.tex"]]
    for argv in tables:
        assert run(argv, capsys)[0] == 0
    assert r"R\&D\_mission \#1 (50\% \{draft\})" in (tmp_path / "m.tex").read_text()
    doc = tmp_path / "doc.tex"
    doc.write_text("\\documentclass{article}\n\\usepackage{booktabs}\n\\usepackage{siunitx}\n\\begin{document}\n"
                   + "".join(f"\\input{{{n}}}\n" for n in ("m", "b", "s", "h")) + "\\end{document}\n")
    done = subprocess.run(["pdflatex", "-interaction=nonstopmode", "-halt-on-error", doc.name], cwd=tmp_path,
                          capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stdout[-2000:]
    assert "Undefined control sequence" not in done.stdout
    assert (tmp_path / "doc.pdf").read_bytes()[:5] == b"%PDF-"
