"""Figures of noise budgets. Every function takes ``ax=None`` and returns its artists.

matplotlib is imported here only, so that table-only runs never pay for it.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..files import FIGURE_FORMATS, atomic_path, check_output_path
from ..physics.noises import NOISES, pulse_bandwidth
from .styles import StyleBook

__all__ = ["merged_noises", "plot_budget", "plot_budget_panels", "plot_lines", "plot_comparison", "draw_scan", "draw_sweep",
           "axis_label", "unit_text", "MAX_FACETS", "save_figure", "noise_styles", "SERIES_STYLES"]

def noise_styles() -> dict[str, dict]:
    """Line style of each noise of the registry (colour-blind-safe hues, distinct dashes)."""
    return {k: dict(color=n.colour, linestyle=n.dashes, label=n.label) for k, n in NOISES.items()}


def merged_noises(curves: dict) -> list[tuple[list[str], np.ndarray]]:
    """Noises to draw, with those whose curves coincide on the page (within 1 % everywhere, e.g. two
    lasers of the same specification) merged into one entry, labelled "a ≈ b": a list of (names,
    curve); a curve that is zero everywhere is left out."""
    groups: list[tuple[list[str], np.ndarray]] = []
    for name, y in curves.items():
        y = np.asarray(y, dtype=float)
        if not np.any(y > 0):
            continue
        for names, z in groups:
            if np.allclose(y, z, rtol=1e-2, atol=0):
                names.append(name)
                break
        else:
            groups.append(([name], y))
    return groups


def _new_axes(ax, size=(6.4, 4.2)):
    if ax is not None:
        return ax.figure, ax
    from matplotlib.figure import Figure

    fig = Figure(figsize=size, layout="constrained")
    return fig, fig.add_subplot()


def plot_budget(budget, ax=None, title=None, components=True):
    """Plot the total equivalent strain ASD and, optionally, each noise.

    Parameters
    ----------
    budget : gwclock.engine.Budget
    ax : matplotlib Axes, optional
        Axes to draw on; a new figure is made when omitted.
    title : str, optional
    components : bool
        Draw every noise term as well as the total.

    Returns
    -------
    dict
        ``{"total": Line2D, "<noise>": Line2D, ...}``.
    """
    fig, ax = _new_axes(ax)
    f = budget.frequency
    artists = {}
    floor = np.max(budget.asd) * 1e-12
    if components:
        styles = noise_styles()
        curves = {name: np.where(budget.asd_of(name) > floor, budget.asd_of(name), 0.0) for name in styles}
        # a noise the mission does not have (zero everywhere) gets no legend entry; equal ones share one
        for names, y in merged_noises(curves):
            style = dict(styles[names[0]], label=" ≈ ".join(styles[n]["label"] for n in names))
            (line,) = ax.plot(f, np.where(y > 0, y, np.nan), lw=1.3, **style)
            for n in names:
                artists[n] = line
    label = "total (tuned envelope)" if budget.mode == "envelope" else \
        f"total (fixed tuning {float(budget.tuning[0]):.3g} Hz)"
    (artists["total"],) = ax.plot(f, budget.asd, color="black", lw=2.4, label=label)
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlabel("frequency [Hz]")
    ax.set_ylabel(r"strain ASD [Hz$^{-1/2}$]")
    good = budget.asd[np.isfinite(budget.asd)]
    # every drawn noise down to a thousandth of the best total stays in view (none is in the legend only)
    drawn = [budget.asd_of(n) for n in noise_styles()] if components else []
    lowest = min([np.min(y[y > 0]) for y in drawn if np.any(y > 0)] + [good.min()])
    ax.set_ylim(max(lowest, good.min() * 1e-3) / 2, min(good.max(), good.min() * 1e7) * 5)
    ax.grid(True, which="major", alpha=0.35)
    ax.grid(True, which="minor", alpha=0.12)
    if title:
        ax.set_title(title)
    note = "each frequency at its own best tuning" if budget.mode == "envelope" else None
    ax.legend(loc="best", fontsize="small", framealpha=0.85, title=note, title_fontsize="x-small")
    return artists


def plot_budget_panels(budget, fig=None, title=None):
    """The noise budget in two panels: the strain ASD with every noise (top) and, below it, each
    noise's share of the strain PSD as stacked bands, with the changes of sequence marked (Ramsey
    and dynamical decoupling, and the pulse bandwidth 1/(2 t_pi) above which the pi pulses no longer
    sample the light and the clock falls back to Ramsey).

    Parameters
    ----------
    budget : gwclock.engine.Budget
    fig : matplotlib Figure, optional
        Drawn on (two axes are added); a new one when omitted.
    title : str, optional

    Returns
    -------
    dict
        ``{"asd": Axes, "share": Axes, "lines": {noise: Line2D, "total": Line2D}, "bands": [PolyCollection],
        "changes": [Line2D]}``.
    """
    from matplotlib.figure import Figure

    fig = fig if fig is not None else Figure(figsize=(6.4, 5.8), layout="constrained")
    top, bottom = fig.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [3, 1.6]})
    lines = plot_budget(budget, ax=top, title=title)
    f = budget.frequency
    styles = noise_styles()
    shown = [k for k in styles if np.any(budget.psd[k] > 0)]
    shares = np.array([100 * budget.psd[k] / budget.total for k in shown])
    bands = bottom.stackplot(f, shares, colors=[styles[k]["color"] for k in shown], alpha=0.75, lw=0,
                             labels=[styles[k]["label"] for k in shown])
    # sequence changes: Ramsey <-> dynamical decoupling, and the wall at the pulse bandwidth
    changes = []
    dd = np.asarray(budget.pulses) > 0
    for i in np.flatnonzero(dd[1:] != dd[:-1]):
        x = float(np.sqrt(f[i] * f[i + 1]))
        for ax in (top, bottom):
            changes.append(ax.axvline(x, color="0.35", lw=0.7, linestyle=(0, (1, 2))))
        bottom.annotate("DD" if dd[i + 1] else "Ramsey", (x, 100), xytext=(2, -2), textcoords="offset points",
                        fontsize="xx-small", va="top", color="0.25")
    wall = pulse_bandwidth(budget.design)
    if f[0] < wall < f[-1]:
        changes.append(top.axvline(wall, color="0.35", lw=0.7, linestyle=(0, (1, 2))))
        top.annotate("1/(2 t$_\\pi$):\nno pulse\nfits above", (wall, 0.98), xycoords=("data", "axes fraction"),
                     xytext=(-3, 0), textcoords="offset points", fontsize="xx-small", ha="right", va="top",
                     color="0.3")
    bottom.set_ylim(0, 100)
    bottom.set_ylabel("share of PSD [%]")
    bottom.set_xlabel("frequency [Hz]")
    top.set_xlabel("")
    bottom.grid(True, which="major", alpha=0.3)
    return {"asd": top, "share": bottom, "lines": lines, "bands": bands, "changes": changes}


# Okabe & Ito hues with dash patterns, cycled for overlays of several curves.
SERIES_STYLES = [
    dict(color="black", linestyle="-", lw=2.2),
    dict(color="#0072B2", linestyle=(0, (6, 2)), lw=1.6),
    dict(color="#D55E00", linestyle=(0, (2, 1.5)), lw=1.6),
    dict(color="#009E73", linestyle=(0, (6, 2, 1, 2)), lw=1.6),
    dict(color="#CC79A7", linestyle=(0, (1, 1)), lw=1.8),
    dict(color="#E69F00", linestyle=(0, (8, 2, 1, 2, 1, 2)), lw=1.6),
    dict(color="#56B4E9", linestyle=(0, (4, 1)), lw=1.6),
]


def plot_comparison(names, f, asds, fig=None, colours=None):
    """Missions side by side: their strain ASDs (top) and each one's ratio to the first (bottom).

    Parameters
    ----------
    names : list of str
    f : array, Hz
    asds : list of arrays, Hz^-1/2, one per mission (the first is the reference of the ratios)
    fig : matplotlib Figure, optional
        Drawn on (two axes are added); a new one when omitted.
    colours : list of str or None, optional
        Each mission's own colour (its file's ``colour``); see :class:`~gwclock.outputs.styles.StyleBook`.

    Returns
    -------
    dict
        ``{"asd": Axes, "ratio": Axes, "curves": [Line2D], "ratios": [Line2D]}``.
    """
    from matplotlib.figure import Figure

    fig = fig if fig is not None else Figure(figsize=(6.4, 5.6), layout="constrained")
    top, bottom = fig.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [3, 1.3]})
    curves, ratios = [], []
    book = StyleBook()
    colours = colours or [None] * len(names)
    for i, (name, asd) in enumerate(zip(names, asds)):
        st = book.mission(name, colours[i])
        asd = np.asarray(asd, dtype=float)
        (ln,) = top.plot(f, np.where(asd > 0, asd, np.nan), label=f"[{i + 1}] {name}", **st)
        curves.append(ln)
        if i:
            (r,) = bottom.plot(f, asd / np.asarray(asds[0], dtype=float), color=st["color"], linestyle=st["linestyle"],
                               lw=1.4, label=f"[{i + 1}] / [1]")
            ratios.append(r)
    bottom.axhline(1.0, color="0.5", lw=0.8)
    for ax in (top, bottom):
        ax.set_xscale("log")
        ax.set_yscale("log")
        ax.grid(True, which="major", alpha=0.35)
    top.set_ylabel(r"strain ASD [Hz$^{-1/2}$]")
    bottom.set_ylabel("ASD / [1]")
    bottom.set_xlabel("frequency [Hz]")
    top.legend(loc="best", fontsize="small", framealpha=0.85)
    top.set_title("sky-averaged strain sensitivity (each mission's tuned envelope)", fontsize="medium")
    return {"asd": top, "ratio": bottom, "curves": curves, "ratios": ratios}


def plot_lines(series, ax=None, xlabel="frequency [Hz]", ylabel="", title=None, logy=True, marks=None):
    """Overlay labelled curves on log axes.

    Parameters
    ----------
    series : list of (label, x, y)
    marks : list of (label, x, y), optional
        Points to mark and annotate (e.g. times before merger on a track).

    Returns
    -------
    dict
        ``{label: Line2D}``, plus ``"marks"`` for the marked points.
    """
    fig, ax = _new_axes(ax)
    artists = {}
    for i, (label, x, y) in enumerate(series):
        style = SERIES_STYLES[i % len(SERIES_STYLES)]
        y = np.asarray(y, dtype=float)
        (artists[label],) = ax.plot(x, np.where(y > 0, y, np.nan), label=label, **style)
    if marks:
        xs = [m[1] for m in marks]
        ys = [m[2] for m in marks]
        artists["marks"] = ax.scatter(xs, ys, s=18, color="black", zorder=5)
        for label, x, y in marks:
            ax.annotate(label, (x, y), textcoords="offset points", xytext=(4, 5), fontsize="x-small")
    ax.set_xscale("log")
    if logy:
        ax.set_yscale("log")
    ax.set_xlabel(xlabel)
    ax.set_ylabel(ylabel)
    ax.grid(True, which="major", alpha=0.35)
    ax.grid(True, which="minor", alpha=0.12)
    if title:
        ax.set_title(title)
    ax.legend(loc="best", fontsize="small", framealpha=0.85)
    return artists


def save_figure(fig, path, dpi=200, metadata=None) -> Path:
    """Save ``fig`` atomically as PNG, PDF or SVG (by suffix), with provenance metadata."""
    p = check_output_path(path, FIGURE_FORMATS)
    fmt = p.suffix.lower()[1:]
    meta = dict(metadata or {})
    if fmt == "png":
        meta = {k: str(v) for k, v in meta.items()}
    elif fmt == "pdf":
        meta = {"Title": meta.get("Title", ""), "Creator": meta.get("Creator", "gwclock"),
                "Subject": meta.get("Subject", ""), "CreationDate": None}
    else:
        # no date, and element ids from a fixed salt: the same figure gives the same file
        meta = {"Title": meta.get("Title", ""), "Creator": meta.get("Creator", "gwclock"),
                "Description": meta.get("Subject", ""), "Date": None}
    import matplotlib as mpl
    # TrueType fonts in PDFs (journals refuse Type 3) and text as paths in SVGs, for every figure
    rc = {"svg.hashsalt": "gwclock", "pdf.fonttype": 42, "ps.fonttype": 42, "svg.fonttype": "path"}
    with atomic_path(p) as tmp, mpl.rc_context(rc):
        fig.savefig(tmp, format=fmt, dpi=dpi, metadata=meta)
    return p


def draw_scan(ax, f, tunings, S, env):
    """Windows of a tuning scan (thin, graded) and their envelope; returns the artists.

    ``ax`` may be None (a new figure is made)."""
    import matplotlib as mpl

    fig, ax = _new_axes(ax)
    cmap = mpl.colormaps["viridis"]
    tunings = np.asarray(tunings, dtype=float)
    # the colour says the tuning: a logarithmic scale of tuning frequency, shown by a colour bar
    norm = mpl.colors.LogNorm(vmin=tunings.min(), vmax=tunings.max() * (1 + 1e-12)) if tunings.min() > 0 else None
    lines = []
    for k in range(len(tunings)):
        colour = cmap(norm(tunings[k])) if norm is not None else cmap(k / max(len(tunings) - 1, 1))
        (ln,) = ax.plot(f, np.sqrt(S[k]), color=colour, lw=0.9, alpha=0.85)
        lines.append(ln)
        ax.axvline(tunings[k], color=colour, lw=0.5, linestyle=":", alpha=0.8)
    (e,) = ax.plot(f, np.sqrt(env), color="black", lw=2.0, label="envelope of the scan")
    colourbar = None
    if norm is not None:
        colourbar = fig.colorbar(mpl.cm.ScalarMappable(norm=norm, cmap=cmap), ax=ax)
        colourbar.set_label("tuning frequency [Hz] (dotted: each tuning)")
    ax.set_xscale("log")
    ax.set_yscale("log")
    good = np.sqrt(env)
    ax.set_ylim(good.min() / 3, good.min() * 1e4)
    ax.set_xlabel("frequency [Hz]")
    ax.set_ylabel(r"strain ASD [Hz$^{-1/2}$]")
    ax.grid(True, alpha=0.3)
    lines[0].set_label(f"fixed tunings {tunings[0]:.3g} Hz to {tunings[-1]:.3g} Hz")
    ax.legend(loc="best", fontsize="small", framealpha=0.85)
    return {"windows": lines, "envelope": e, "colourbar": colourbar}


def axis_label(field, unit=""):
    """``link.baseline`` with ``m`` as "baseline [m]" (units typeset, e.g. Hz$^{-1/2}$)."""
    name = field.split(".")[-1].replace("_", " ")
    return f"{name} [{unit_text(unit)}]" if unit else name


def unit_text(unit) -> str:
    """A unit for an axis label, in matplotlib's mathtext (``Hz(-1/2)`` as Hz$^{-1/2}$)."""
    import astropy.units as u
    try:
        return u.Unit(unit).to_string("latex_inline")
    except ValueError:
        return str(unit)


#: Most panels a third varied field may give a sweep figure (one per value).
MAX_FACETS = 6


def draw_sweep(ax, axes, metric, table, title=None, column=None, target=None):
    """A sweep's metric against one varied field (a line; a band metric as a shaded band) or two (a
    map with contours); a third varied field gives one panel per value (at most MAX_FACETS).

    ``column`` is the table column drawn (default the metric's first; for ``band@`` in one
    dimension both edges, as a band); ``target`` draws that level of it (a line, or a contour on
    maps) in a colour of its own."""
    col = column or metric.columns[0]
    if len(axes) == 3:
        return _facets(ax, axes, metric, table, title, col, target)
    fig, ax = _new_axes(ax)
    unit = metric.units[metric.columns.index(col)] if col in metric.columns else ""
    y = np.asarray(table[col], dtype=float)
    label = axis_label(col, unit) if col.split("@")[0] in ("band_low", "band_high") else \
        f"{col}" + (f" [{unit_text(unit)}]" if unit else "")
    if len(axes) == 1:
        a = axes[0]
        x = np.asarray(table[a.field], dtype=float)
        if metric.kind == "band" and column is None:
            lo, hi = (np.asarray(table[c], dtype=float) for c in metric.columns)
            ax.fill_between(x, lo, hi, color="#56B4E9", alpha=0.45, lw=0, label=f"ASD < {metric.arg:g} Hz$^{{-1/2}}$")
            ax.plot(x, lo, color="#0072B2", lw=1.2)
            ax.plot(x, hi, color="#0072B2", lw=1.2)
            ax.set_yscale("log")
            ax.legend(frameon=False)
            label = "frequency band [Hz]"
        else:
            ax.plot(x, y, marker="o", ms=3, **SERIES_STYLES[0])
            if f"{col}_p05" in table.colnames:
                ax.fill_between(x, table[f"{col}_p05"], table[f"{col}_p95"], color="0.7", alpha=0.5, label="5-95 %")
                ax.legend(frameon=False)
            if np.all(y[np.isfinite(y)] > 0):
                ax.set_yscale("log")
        if target is not None:
            ax.axhline(target, color=TARGET_COLOUR, lw=1.4, linestyle=(0, (5, 2)), label=f"target {target:g}")
            ax.legend(frameon=False)
        ax.set_xscale("log" if a.log else "linear")
        ax.set_xlabel(axis_label(a.field, a.unit))
        ax.set_ylabel(label)
        ax.grid(True, alpha=0.3)
    else:
        a, b = axes[0], axes[1]
        Z = y.reshape(len(a.values), len(b.values)).T
        logz = np.all(Z[np.isfinite(Z)] > 0)
        Zp = np.log10(Z) if logz else Z
        mesh = ax.pcolormesh(a.values, b.values, Zp, shading="nearest", cmap="cividis")
        cb = fig.colorbar(mesh, ax=ax)
        cb.set_label(("log10 " if logz else "") + label)
        if np.isfinite(Zp).sum() > 3 and len(a.values) > 1 and len(b.values) > 1:
            from matplotlib.ticker import MaxNLocator
            finite = Zp[np.isfinite(Zp)]
            levels = MaxNLocator(7).tick_values(finite.min(), finite.max())
            if target is not None and (target > 0 or not logz):  # the target's own contour replaces an equal one
                t = np.log10(target) if logz else target
                levels = [v for v in levels if abs(v - t) > 1e-9 * max(abs(t), 1.0)]
            levels = [v for v in levels if finite.min() < v < finite.max()]
            if levels:
                cs = ax.contour(a.values, b.values, Zp, levels=levels, colors="white", linewidths=0.8,
                                linestyles="solid")
                ax.clabel(cs, fontsize="x-small", fmt="%.3g", inline=True, inline_spacing=4)
        _target_contour(ax, a.values, b.values, Zp, target, logz)
        ax.set_xscale("log" if a.log else "linear")
        ax.set_yscale("log" if b.log else "linear")
        ax.set_xlabel(axis_label(a.field, a.unit))
        ax.set_ylabel(axis_label(b.field, b.unit))
    if title:
        ax.set_title(title)
    return fig, ax


#: The colour of a target level on sweep figures (in no other family).
TARGET_COLOUR = "#EE3377"


def _target_contour(ax, x, y, Zp, target, logz):
    """The contour where the drawn metric equals ``target``, labelled "target"; None if absent."""
    if target is None or not (len(x) > 1 and len(y) > 1) or (logz and target <= 0):
        return None
    level = np.log10(target) if logz else target
    finite = Zp[np.isfinite(Zp)]
    if finite.size == 0 or not finite.min() < level < finite.max():
        return None
    cs = ax.contour(x, y, Zp, levels=[level], colors=TARGET_COLOUR, linewidths=1.8, linestyles="solid")
    ax.clabel(cs, fmt={level: f"target {target:g}"}, fontsize="x-small", inline=True)
    return cs


def _facets(ax, axes, metric, table, title, col, target=None):
    """One panel per value of the third varied field, sharing the colour scale of the metric."""
    from matplotlib.figure import Figure

    a, b, c = axes
    if len(c.values) > MAX_FACETS:
        raise ValueError(f"a third varied field gives one panel per value: at most {MAX_FACETS} values")
    fig = ax.figure if ax is not None else Figure(figsize=(6.4, 4.6), layout="constrained")
    if ax is not None:
        ax.remove()
    panels = fig.subplots(1, len(c.values), sharey=True, squeeze=False)[0]
    y = np.asarray(table[col], dtype=float).reshape(len(a.values), len(b.values), len(c.values))
    finite = y[np.isfinite(y)]
    logz = finite.size > 0 and np.all(finite > 0)
    Y = np.log10(y) if logz else y
    lo, hi = (np.nanmin(Y), np.nanmax(Y)) if np.isfinite(Y).any() else (0.0, 1.0)
    mesh = None
    for k, p in enumerate(panels):
        mesh = p.pcolormesh(a.values, b.values, Y[:, :, k].T, shading="nearest", cmap="cividis", vmin=lo, vmax=hi)
        _target_contour(p, a.values, b.values, Y[:, :, k].T, target, logz)
        p.set_xscale("log" if a.log else "linear")
        p.set_yscale("log" if b.log else "linear")
        p.set_title(f"{axis_label(c.field)} = {c.values[k]:.3g}" + (f" {unit_text(c.unit)}" if c.unit else ""),
                    fontsize="small")
        p.set_xlabel(axis_label(a.field, a.unit))
    panels[0].set_ylabel(axis_label(b.field, b.unit))
    unit = metric.units[metric.columns.index(col)] if col in metric.columns else ""
    cb = fig.colorbar(mesh, ax=list(panels))
    cb.set_label(("log10 " if logz else "") + col + (f" [{unit_text(unit)}]" if unit else ""))
    if title:
        fig.suptitle(title)
    return fig, panels[0]

