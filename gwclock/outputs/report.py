"""Concept-document reports: Markdown with figures, and one self-contained HTML file.

The report collects, for one mission: the parameter table with units, the noise budget, the
envelope against the reference detectors, a tuning scan, and key numbers (best sensitivity and
where, the band below chosen levels, SNRs of a standard set of sources, horizons).
"""

from __future__ import annotations

import base64
import html
import io
import re
from pathlib import Path

import numpy as np

from ..astro.references import DEFAULT_COMPARISON, get_reference
from ..astro.sources import Inspiral, Monochromatic
from ..constants import MPC
from ..engine import envelope, window_psd
from ..engine.budget import SPAN, band_below
from ..errors import InputError
from ..files import atomic_path
from ..studies.horizon import Z_MAX, horizon
from ..studies.snr import TunedCurve, clock_snr, reference_snr
from ..version import __version__
from .latex import budget_latex, latex_provenance, mission_latex
from .plotting import draw_scan, plot_budget_panels
from .styles import StyleBook, reference_style
from .summary import describe_mission, mission_rows
from .tables import provenance

__all__ = ["build_report", "STANDARD_SOURCES"]

#: Our own standard set of sources (source-frame masses in Msun; distance in Mpc or redshift).
STANDARD_SOURCES = [
    ("intermediate-mass binary 1e3+1e3 Msun at z = 0.5", dict(m1=1e3, m2=1e3, redshift=0.5)),
    ("massive binary 1e4+1e4 Msun at z = 1", dict(m1=1e4, m2=1e4, redshift=1.0)),
    ("massive binary 1e5+1e5 Msun at z = 3", dict(m1=1e5, m2=1e5, redshift=3.0)),
    ("stellar binary 30+30 Msun at 400 Mpc", dict(m1=30, m2=30, distance_mpc=400)),
    ("galactic binary at 3 mHz, h0 = 1e-22", dict(frequency=3e-3, h0=1e-22)),
]


def _png(fig):
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=150)
    return buf.getvalue()


def _pdf(fig, meta):
    """A figure as PDF bytes with TrueType fonts (a journal's requirement), no date: reruns match."""
    import matplotlib as mpl
    buf = io.BytesIO()
    with mpl.rc_context({"pdf.fonttype": 42}):
        fig.savefig(buf, format="pdf", metadata={"Creator": meta, "CreationDate": None})
    return buf.getvalue()


def _write_atomic(path: Path, data: bytes):
    with atomic_path(path) as tmp:
        tmp.write_bytes(data)


def _sources():
    out = []
    for name, kw in STANDARD_SOURCES:
        if "frequency" in kw:
            out.append(Monochromatic(name, kw["frequency"], kw["h0"]))
        elif "redshift" in kw:
            out.append(Inspiral.from_masses(kw["m1"], kw["m2"], redshift=kw["redshift"], name=name))
        else:
            out.append(Inspiral.from_masses(kw["m1"], kw["m2"], distance=kw["distance_mpc"] * MPC, name=name))
    return out


def build_report(mission, digest, out_dir):
    """Write ``report.md``, ``report.html`` and the figures into ``out_dir``; returns both paths."""
    from matplotlib.figure import Figure


    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        raise InputError("exists and is not a folder", source="command line", field="--out", value=str(out))
    if not out.parent.is_dir():
        raise InputError("the parent folder does not exist", source="command line", field="--out", value=str(out))
    design = mission.design()
    f = np.geomspace(*SPAN, 600)
    budget = envelope(design, f)
    asd = budget.asd
    i = int(np.argmin(asd))
    figures, drawn = {}, {}  # PNG bytes for the Markdown and the HTML; the figures for PDF copies

    fig = Figure(figsize=(6.4, 5.8), layout="constrained")
    plot_budget_panels(budget, fig=fig, title=f"{mission.name}: noise budget (tuned envelope)")
    figures["budget"], drawn["budget"] = _png(fig), fig

    fig = Figure(figsize=(6.4, 4.2), layout="constrained")
    ax = fig.add_subplot()
    ax.plot(f, asd, label=f"{mission.name} (tuned envelope)", **StyleBook().mission(mission.name, mission.colour))
    for k in DEFAULT_COMPARISON:
        ref, style = get_reference(k), reference_style(k)
        fr = f[(f >= ref.band[0]) & (f <= ref.band[1])]
        ax.plot(fr, np.sqrt(ref.network(fr)), label=f"{ref.network_label} (sky-averaged)", **style)
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_ylim(asd.min() / 1e5, asd.min() * 1e4)
    ax.set_xlabel("frequency [Hz]")
    ax.set_ylabel(r"strain ASD [Hz$^{-1/2}$]")
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize="small", loc="best")
    ax.set_title("Envelope against reference detectors")
    figures["references"], drawn["references"] = _png(fig), fig

    lo_t = max(2 / (design.max_interrogation), 1e-3)
    tunings = np.geomspace(lo_t, min(0.4 / design.pi_pulse_duration, 30.0), 7)
    fs = np.geomspace(tunings[0] / 5, tunings[-1] * 3, 900)
    S, best = window_psd(design, tunings, fs)
    fig = Figure(figsize=(6.4, 4.2), layout="constrained")
    ax = fig.add_subplot()
    draw_scan(ax, fs, tunings, S, S.min(axis=0))
    ax.set_title("Tuning scan: fixed-tuning windows")
    figures["scan"], drawn["scan"] = _png(fig), fig

    levels = sorted({float(f"{asd[i] * 2:.2g}"), float(f"{asd[i] * 10:.2g}")})
    bands = []
    for level in levels:
        bands.append((level, *band_below(f, asd, level)))
    curve = TunedCurve(design)
    snrs = []
    for src in _sources():
        row = [src.name, clock_snr(curve, src, "track").snr]
        for k in DEFAULT_COMPARISON:
            row.append(reference_snr(get_reference(k), src).snr)
        snrs.append(row)
    horizons = []
    for mass in (2e3, 2e4, 2e5):
        z, d = horizon(lambda s: clock_snr(curve, s, "track").snr, mass, 8.0)
        horizons.append((mass, z, d / 3.0856775814913673e22))

    meta = provenance(mission.name, digest)

    def fmt(x, spec=".3g"):
        return "-" if not np.isfinite(x) else (f"{x:{spec}}" if x != np.inf else f"beyond z = {Z_MAX:g}")

    params = describe_mission(mission, digest)
    ref_labels = [get_reference(k).network_label for k in DEFAULT_COMPARISON]
    name = html.escape(mission.name)  # user text in Markdown: no live HTML (a viewer would run a <script>)
    md = [f"# {name}: clock-link sensitivity report", "",
          f"*Concept-study estimate* produced by gwclock {__version__} on {meta['created']} from a mission file with "
          f"SHA-256 `{digest}`. The sensitivity is sky-averaged (normalisation of Robson, Cornish & Liu 2019) and "
          "rests on the model assumptions listed in the gwclock README.", ""]
    if mission.description:
        md += [html.escape(mission.description), ""]
    md += ["## Key numbers", "",
           f"* Best strain ASD: **{asd[i]:.3e} Hz^-1/2** at **{f[i]:.4g} Hz** (tuned envelope: each frequency at its own "
           "tuning; no single tuning reaches the whole curve).",
           f"* Dominant noise there: {max(budget.psd, key=lambda k: budget.psd[k][i])}; chosen sequence "
           f"{int(budget.pulses[i])} pi pulses over {budget.interrogation[i]:.3g} s."]
    for level, lo, hi in bands:
        md.append(f"* Band with ASD below {level:.2g} Hz^-1/2: {fmt(lo)} Hz to {fmt(hi)} Hz.")
    md += ["", "## Noise budget", "", "![noise budget](budget.png)", "", "## Against reference detectors", "",
           "![references](references.png)", "", "## Tuning scan", "", "![tuning scan](scan.png)", "",
           "| tuning [Hz] | pi pulses | interrogation [s] |", "|---|---|---|"]
    md += [f"| {t:.4g} | {int(n)} | {T:.3g} |" for t, n, T in zip(tunings, best["pulses"], best["interrogation"])]
    md += ["", "## SNR of standard sources", "",
           f"Observing time {design.duration / 3.15576e7:.3g} yr; clock schedule `track` (retuned every 600 s); "
           "sky-, polarisation- and inclination-averaged.", "",
           "| source | " + name + " | " + " | ".join(ref_labels) + " |",
           "|---|" + "---|" * (1 + len(ref_labels))]
    md += ["| " + " | ".join([r[0]] + [fmt(x) for x in r[1:]]) + " |" for r in snrs]
    md += ["", "## Sky-averaged distance at SNR 8 (RMS over sky, polarisation and inclination; equal masses, "
           "Planck18)", "", "| total mass [Msun] | redshift | luminosity distance [Mpc] |",
           "|---|---|---|"]
    md += [f"| {m:g} | {fmt(z)} | {fmt(d, '.4g')} |" for m, z, d in horizons]
    md += ["", "## Mission parameters", "", "```", params, "```", "",
           "## Files for a concept document", "",
           "Every figure also as PDF with TrueType fonts (`budget.pdf`, `references.pdf`, `scan.pdf`); LaTeX tables "
           "(booktabs + siunitx) of the mission parameters (`mission.tex`) and of the noise budget at each decade "
           "from 1e-4 Hz to 10 Hz (`budget.tex`).", ""]
    md_text = "\n".join(md)

    html_text = _html(md_text, figures, mission.name)
    out.mkdir(exist_ok=True)
    for name, data in figures.items():
        _write_atomic(out / f"{name}.png", data)
        _write_atomic(out / f"{name}.pdf", _pdf(drawn[name], f"gwclock {__version__}; mission sha256 {digest}"))
    prov = latex_provenance(mission.name, digest)
    _write_atomic(out / "mission.tex", mission_latex(mission_rows(mission), mission.name, prov).encode())
    at = np.array([10.0**k for k in range(-4, 2)])
    _write_atomic(out / "budget.tex", budget_latex(envelope(design, at), mission.name, prov).encode())
    _write_atomic(out / "report.md", md_text.encode())
    _write_atomic(out / "report.html", html_text.encode())
    return out / "report.md", out / "report.html"


def _inline(text):
    t = html.escape(html.unescape(text))  # the Markdown's own escapes are not escaped twice
    t = re.sub(r"\*\*(.+?)\*\*", r"<strong>\1</strong>", t)
    t = re.sub(r"\*(.+?)\*", r"<em>\1</em>", t)
    t = re.sub(r"`(.+?)`", r"<code>\1</code>", t)
    return t


def _html(md_text, figures, title):
    """A small Markdown subset rendered to one HTML file with the figures embedded (data URIs)."""
    body = []
    lines = md_text.splitlines()
    k = 0
    while k < len(lines):
        ln = lines[k]
        if ln.startswith("```"):
            j = k + 1
            block = []
            while j < len(lines) and not lines[j].startswith("```"):
                block.append(lines[j])
                j += 1
            body.append("<pre>" + html.escape("\n".join(block)) + "</pre>")
            k = j + 1
            continue
        if ln.startswith("# "):
            body.append(f"<h1>{_inline(ln[2:])}</h1>")
        elif ln.startswith("## "):
            body.append(f"<h2>{_inline(ln[3:])}</h2>")
        elif ln.startswith("!["):
            name = ln[ln.index("(") + 1:ln.index(")")].rsplit(".", 1)[0]
            data = base64.b64encode(figures[name]).decode()
            body.append(f'<figure><img alt="{html.escape(name)}" src="data:image/png;base64,{data}"></figure>')
        elif ln.startswith("* "):
            items = []
            while k < len(lines) and lines[k].startswith("* "):
                items.append(f"<li>{_inline(lines[k][2:])}</li>")
                k += 1
            body.append("<ul>" + "".join(items) + "</ul>")
            continue
        elif ln.startswith("|"):
            rows = []
            while k < len(lines) and lines[k].startswith("|"):
                if not set(lines[k]) <= set("|-"):
                    rows.append([c.strip() for c in lines[k].strip("|").split("|")])
                k += 1
            head, *rest = rows
            t = "<table><thead><tr>" + "".join(f"<th>{_inline(c)}</th>" for c in head) + "</tr></thead><tbody>"
            t += "".join("<tr>" + "".join(f"<td>{_inline(c)}</td>" for c in r) + "</tr>" for r in rest)
            body.append(t + "</tbody></table>")
            continue
        elif ln.strip():
            body.append(f"<p>{_inline(ln)}</p>")
        k += 1
    style = ("body{font-family:sans-serif;max-width:56em;margin:2em auto;padding:0 1em;color:#222;line-height:1.45}"
             "table{border-collapse:collapse;margin:1em 0}td,th{border:1px solid #bbb;padding:.25em .6em;text-align:left}"
             "th{background:#eee}img{max-width:100%}pre{background:#f6f6f6;padding:1em;overflow:auto}")
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f"<title>{html.escape(title)}: gwclock report</title><style>{style}</style></head><body>\n"
            + "\n".join(body) + "\n</body></html>\n")
