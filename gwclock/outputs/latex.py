"""LaTeX tables for concept documents: booktabs rules, numbers and units typeset by siunitx.

Every table is a complete ``table`` float that a document includes with ``\\input``; its preamble
needs ``\\usepackage{booktabs}`` and ``\\usepackage{siunitx}`` (both in TeX Live). Numbers are
written as ``\\num{1.234e-20}`` and units in siunitx's literal form (``\\si{Hz^{-1/2}}``), which
siunitx 2 and 3 both read. A comment block at the top carries the provenance: the tool, the
command line and the mission's digest.
"""

from __future__ import annotations

import math
import re
import shlex
from fractions import Fraction

import astropy.units as u
import numpy as np

from ..files import COMMAND, atomic_path, check_output_path
from ..version import __version__

__all__ = ["Raw", "escape", "latex_unit", "latex_number", "table_latex", "mission_latex", "budget_latex", "astropy_latex",
           "latex_provenance", "write_latex", "LATEX_FORMATS"]

LATEX_FORMATS = {".tex": "latex"}

_SPECIAL = {"\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#", "_": r"\_",
            "{": r"\{", "}": r"\}", "~": r"\textasciitilde{}", "^": r"\textasciicircum{}"}
_SPECIAL_RE = re.compile("|".join(re.escape(k) for k in _SPECIAL))

#: Units that siunitx's literal mode should not see as they are written in astropy.
_UNIT_TEXT = {"solMass": r"\ensuremath{M_\odot}", "deg": r"\degree", "Msun": r"\ensuremath{M_\odot}"}


def escape(text) -> str:
    """Text with LaTeX's special characters escaped (names, notes: anything a user wrote)."""
    text = " ".join(str(text).split())
    return _SPECIAL_RE.sub(lambda m: _SPECIAL[m.group(0)], text)


def latex_unit(unit) -> str:
    """A unit as ``\\si{...}`` in siunitx's literal form (``m.s^{-2}.Hz^{-1/2}``); '' for none."""
    if unit is None:
        return ""
    unit = u.Unit(unit)
    if unit == u.dimensionless_unscaled:
        return ""
    parts = []
    scale = getattr(unit, "scale", 1.0)
    if scale != 1.0:
        parts.append(f"\\num{{{scale:g}}}")
    pairs = list(zip(getattr(unit, "bases", [unit]), getattr(unit, "powers", [1])))
    # the usual order of an amplitude spectral density: m s^-2 Hz^-1/2 (per root hertz last)
    pairs.sort(key=lambda bp: (bp[1] < 0, bp[0].to_string() == "Hz"))
    for base, power in pairs:
        name = _UNIT_TEXT.get(base.to_string(), base.to_string())
        p = Fraction(power).limit_denominator(12)
        parts.append(name if p == 1 else f"{name}^{{{p}}}")
    return f"\\si{{{'.'.join(parts)}}}"


class Raw(str):
    """LaTeX written as it is (not escaped) in a table cell."""


def latex_number(x, digits: int = 4) -> str:
    """A number as ``\\num{...}`` with ``digits`` significant figures; booleans as yes/no,
    NaN as a dash, infinities as ``$\\pm\\infty$``, whole numbers without an exponent."""
    if isinstance(x, (bool, np.bool_)):
        return "yes" if x else "no"
    if isinstance(x, Raw):
        return str(x)
    if isinstance(x, str):
        return escape(x)
    x = float(x)
    if math.isnan(x):
        return "--"
    if math.isinf(x):
        return r"$\infty$" if x > 0 else r"$-\infty$"
    if x == int(x) and abs(x) < 1e6:
        return f"\\num{{{int(x)}}}"
    return f"\\num{{{x:.{digits}g}}}"


def latex_provenance(mission_name: str, digest: str) -> dict:
    """The comment lines of a LaTeX table: the tool, the mission it used and, from the command line,
    the command that made it."""
    prov = {"tool": f"gwclock {__version__}", "mission": f"{mission_name} (sha256 {digest})"}
    if COMMAND:
        prov["command"] = shlex.join(COMMAND)
    return prov


def _header(provenance) -> list[str]:
    lines = ["% written by gwclock: estimates for concept studies (see its README for the assumptions)"]
    for key, value in (provenance or {}).items():
        lines.append(f"% {key}: {' '.join(str(value).split())}")
    lines.append(r"% needs \usepackage{booktabs} and \usepackage{siunitx}")
    return lines


def table_latex(rows, columns, caption: str, label: str, provenance=None, digits: int = 4, groups=None) -> str:
    """A booktabs table float.

    Parameters
    ----------
    rows : list of sequences
        The cells, one sequence per row (numbers, booleans or text).
    columns : list of (title, unit, align)
        Column heads, the unit of each column (astropy unit, text or None) and its alignment
        (``l``, ``r`` or ``c``).
    caption, label : str
        The float's caption (escaped) and ``\\label`` key.
    provenance : dict, optional
        Written as comment lines at the top.
    groups : list of (title, first, last), optional
        Heads above the column heads spanning columns first..last (counted from 0), with rules.
    """
    heads = []
    for title, unit, _ in columns:
        text = title if isinstance(title, Raw) else escape(title)
        unit_tex = latex_unit(unit) if unit not in (None, "") else ""
        heads.append(f"{text} [{unit_tex}]" if unit_tex else text)
    lines = _header(provenance)
    caption = caption if isinstance(caption, Raw) else escape(caption)
    lines += [r"\begin{table}", r"  \centering", r"  \small", f"  \\caption{{{caption}}}", f"  \\label{{{label}}}",
              f"  \\begin{{tabular}}{{{''.join(a for _, _, a in columns)}}}", r"    \toprule"]
    if groups:
        cells, rules, at = [], [], 0
        for title, first, last in groups:
            cells += [""] * (first - at) + [f"\\multicolumn{{{last - first + 1}}}{{c}}{{{escape(title)}}}"]
            rules.append(f"\\cmidrule(lr){{{first + 1}-{last + 1}}}")
            at = last + 1
        cells += [""] * (len(columns) - at)
        lines += ["    " + " & ".join(cells) + r" \\", "    " + " ".join(rules)]
    lines += ["    " + " & ".join(heads) + r" \\", r"    \midrule"]
    for row in rows:
        if len(row) != len(columns):
            raise ValueError("every row needs one cell per column")
        lines.append("    " + " & ".join(latex_number(c, digits) for c in row) + r" \\")
    lines += [r"    \bottomrule", r"  \end{tabular}", r"\end{table}", ""]
    return "\n".join(lines)


def astropy_latex(table, caption, label: str, provenance=None, digits: int = 4, skip=(), titles=None,
                  groups=None) -> str:
    """An astropy table (its columns, their units) as a booktabs table float; text columns are
    left-aligned, numbers right-aligned; ``titles`` renames column heads, ``skip`` leaves columns
    out, ``groups`` as in :func:`table_latex`."""
    titles = titles or {}
    names = [c for c in table.colnames if c not in skip]
    columns = [(titles.get(c, c), table[c].unit, "l" if table[c].dtype.kind in "USO" else "r") for c in names]
    rows = [[row[c] if table[c].dtype.kind in "USO" else _plain(row[c]) for c in names] for row in table]
    return table_latex(rows, columns, caption, label, provenance, digits, groups)


def _plain(x):
    x = getattr(x, "value", x)
    return bool(x) if isinstance(x, (bool, np.bool_)) else float(x)


def mission_latex(rows, name: str, provenance=None) -> str:
    """The mission parameter table: (section, field, value, unit, note) rows (see
    :func:`gwclock.outputs.summary.mission_rows`)."""
    cells = []
    for section, key, value, unit, note in rows:
        shown = value if isinstance(value, (int, float, np.floating, bool)) else escape(value)
        unit_tex = latex_unit(unit) if unit else ""
        cells.append((section, key, shown, unit_tex, note))
    lines = _header(provenance)
    lines += [r"\begin{table}", r"  \centering", f"  \\caption{{Mission parameters of {escape(name)}.}}",
              f"  \\label{{tab:mission-{_label(name)}}}", r"  \begin{tabular}{lllp{0.3\linewidth}}", r"    \toprule",
              r"    section & parameter & value & note \\", r"    \midrule"]
    last = None
    for section, key, shown, unit_tex, note in cells:
        if last is not None and section != last:
            lines.append(r"    \addlinespace")
        value = latex_number(shown, 6) if not isinstance(shown, str) else shown
        if unit_tex:
            value = f"{value}~{unit_tex}"
        lines.append(f"    {escape(section) if section != last else ''} & {escape(key)} & {value} & {escape(note)} \\\\")
        last = section
    lines += [r"    \bottomrule", r"  \end{tabular}", r"\end{table}", ""]
    return "\n".join(lines)


def budget_latex(budget, name: str, provenance=None) -> str:
    """The noise budget at the budget's frequencies: total ASD, the sequence, and each noise's
    share of the PSD in per cent (noises that are zero everywhere are left out)."""
    shown = [k for k, v in budget.psd.items() if np.any(np.asarray(v) > 0)]
    short = {"acceleration": "accel."}
    columns = [(Raw("$f$"), u.Hz, "r"), ("strain ASD", u.Unit("Hz(-1/2)"), "r"), (Raw(r"$n_\pi$"), None, "r"),
               (Raw("$T$"), u.s, "r")] + [(short.get(k, k), None, "r") for k in shown]
    rows = []
    for i, f in enumerate(budget.frequency):
        total = float(budget.total[i])
        shares = [100.0 * float(budget.psd[k][i]) / total for k in shown]
        rows.append([float(f), float(budget.asd[i]), int(budget.pulses[i]), float(budget.interrogation[i]),
                     *[round(s, 1) if s >= 0.05 or s == 0 else Raw("$<0.1$") for s in shares]])
    kind = "tuned envelope" if budget.mode == "envelope" else "fixed-tuning window"
    caption = Raw(f"Noise budget of {escape(name)} ({kind}): sky-averaged strain ASD, the sequence used "
                  f"($n_\\pi$ pi pulses, 0 for Ramsey, over an interrogation $T$), and each noise's share of "
                  f"the strain PSD.")
    groups = [("share of the PSD [%]", 4, 3 + len(shown))] if shown else None
    return table_latex(rows, columns, caption, f"tab:budget-{_label(name)}", provenance, digits=4, groups=groups)


def _label(name: str) -> str:
    return re.sub(r"[^A-Za-z0-9]+", "-", str(name)).strip("-").lower() or "mission"


def write_latex(text: str, path) -> None:
    """Write a LaTeX table atomically (the path must end in .tex)."""
    p = check_output_path(path, LATEX_FORMATS)
    with atomic_path(p) as tmp:
        tmp.write_text(text, encoding="utf-8")
