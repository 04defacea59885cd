"""Drawing a figure specification (:mod:`gwclock.config.figure_spec`) in print-ready form.

Conventions (sky-averaged strain, one-sided PSD):

* ``asd``: sqrt(S_n); an inspiral as 2 sqrt(f) |h~| = h_c / sqrt(f); a monochromatic source as
  h0 sqrt(T_obs) (its SNR is the ratio to the curve);
* ``hc``: h_n = sqrt(f S_n); an inspiral as h_c = 2 f |h~|; a monochromatic source as
  h0 sqrt(f T_obs) (Moore, Cole & Berry 2015, Class. Quantum Grav. 32, 015014);
* ``omega``: Omega_n = 4 pi^2 f^3 S_n / (3 H0^2) (Thrane & Romano 2013, Phys. Rev. D 88,
  124032); sources are not drawn in this form.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..astro.references import get_reference
from ..astro.sources import MARKS, Inspiral
from ..config.figure_spec import FONTS, SIZES, FigureSpec
from ..config.mission import load_mission
from ..engine import envelope, window
from ..errors import InputError
from ..studies.background import hubble_constant, omega_noise
from ..version import __version__
from .plotting import MISSION_STYLES, REFERENCE_STYLES, SOURCE_STYLES, noise_styles, save_figure

__all__ = ["render_spec", "save_spec_figure", "YLABELS"]


def _transform(form, f, s_n, h0):
    if form == "asd":
        return np.sqrt(s_n)
    if form == "hc":
        return np.sqrt(f * s_n)
    return omega_noise(f, s_n, h0)


YLABELS = {"asd": r"strain ASD [Hz$^{-1/2}$]", "hc": "characteristic strain", "omega": r"$\Omega_{\rm gw}$ sensitivity"}


def render_spec(spec: FigureSpec, base_dir=".", ax=None):
    """Draw a spec; returns (figure, artists dict, provenance dict)."""
    import matplotlib as mpl
    with mpl.rc_context(FONTS[spec.size]):
        return _render(spec, base_dir, ax)


def _render(spec, base_dir, ax):
    from matplotlib.figure import Figure

    if ax is None:
        fig = Figure(figsize=SIZES[spec.size], layout="constrained")
        ax = fig.add_subplot()
    else:
        fig = ax.figure
    small = spec.size == "one-column"
    f = np.geomspace(spec.axes.fmin, spec.axes.fmax, spec.axes.points)
    h0 = hubble_constant() if spec.form == "omega" else None
    artists = {"curves": [], "marks": [], "annotations": []}
    provenance = {"tool": f"gwclock {__version__}", "missions": []}
    styles = {"mission": iter(MISSION_STYLES * 10), "reference": iter(REFERENCE_STYLES * 10),
              "source": iter(SOURCE_STYLES * 10)}
    lw_scale = 0.75 if small else 1.0

    def line(x, y, label, family="mission", **extra):
        st = dict(next(styles[family]))
        st["lw"] = st.get("lw", 1.5) * lw_scale
        st.update(extra)
        y = np.where(np.isfinite(y) & (y > 0), y, np.nan)
        (ln,) = ax.plot(x, y, label=label, **st)
        artists["curves"].append(ln)
        return ln

    for item in spec.mission:
        path = None if item.file == "default" else (Path(base_dir) / item.file)
        mission, digest = load_mission(path)
        provenance["missions"].append(f"{mission.name} sha256 {digest}")
        d = mission.design()
        if item.mode == "envelope":
            b = envelope(d, f)
            label = item.label or f"{mission.name} (tuned envelope)"
        else:
            try:
                b = window(d, f, tune=item.tune)
            except ValueError as exc:
                raise InputError(str(exc), source=str(path or "default"), field="tune") from None
            label = item.label or f"{mission.name} (tuned to {item.tune:.3g} Hz)"
        ln = line(f, _transform(spec.form, f, b.total, h0), label)
        if item.noises:
            for name, nst in noise_styles().items():
                y = _transform(spec.form, f, b.psd[name], h0)
                (c,) = ax.plot(f, np.where(y > 0, y, np.nan), color=nst["color"], linestyle=nst["linestyle"],
                               lw=0.9 * lw_scale, label=f"  {nst['label']}")
                artists["curves"].append(c)
        if item.mode == "window":
            artists["annotations"].append(ax.axvline(item.tune, color=ln.get_color(), lw=0.6, linestyle=":"))
        if item.band and spec.form == "asd":
            lo, hi = b.band_below(item.band)
            if np.isfinite(lo):
                for x in (lo, hi):
                    artists["annotations"].append(ax.axvline(x, color=ln.get_color(), lw=0.6, linestyle="--"))
                artists["annotations"].append(ax.annotate(
                    f"ASD < {item.band:.0e}: {lo:.2g}-{hi:.2g} Hz", (np.sqrt(lo * hi), item.band),
                    fontsize="x-small", ha="center", va="bottom", color=ln.get_color()))
    for item in spec.reference:
        try:
            ref = get_reference(item.name)
        except KeyError as exc:
            raise InputError(str(exc.args[0]), source="figure spec", field="reference.name", value=item.name) from None
        opts = ref.options_for(item.confusion)
        fr = f[(f >= ref.band[0]) & (f <= ref.band[1])]
        if fr.size < 2:
            continue
        line(fr, _transform(spec.form, fr, ref.sky_averaged(fr, **opts), h0), item.label or ref.label, "reference")
    if spec.form != "omega":
        for item in spec.track:
            src = Inspiral.from_masses(item.mass1, item.mass2, distance=item.distance, redshift=item.redshift)
            top = min(spec.axes.fmax, src.isco_frequency)
            if top <= spec.axes.fmin:
                continue
            ft = np.geomspace(spec.axes.fmin, top, 300)
            hc = src.characteristic_strain(ft)
            y = hc if spec.form == "hc" else hc / np.sqrt(ft)
            ln = line(ft, y, item.label or f"{item.mass1:g}+{item.mass2:g} Msun", "source")
            if item.marks:
                for label, before in MARKS.items():
                    fm = float(src.frequency_at(before))
                    if ft[0] <= fm <= ft[-1]:
                        ym = float(src.characteristic_strain(fm)) / (1 if spec.form == "hc" else np.sqrt(fm))
                        artists["marks"].append(ax.plot([fm], [ym], marker="o", ms=3, color=ln.get_color())[0])
                        artists["annotations"].append(ax.annotate(label, (fm, ym), xytext=(3, 3),
                                                                  textcoords="offset points", fontsize="xx-small"))
        for item in spec.point:
            y = item.h0 * np.sqrt(spec.observation) * (np.sqrt(item.frequency) if spec.form == "hc" else 1.0)
            pt = ax.plot([item.frequency], [y], marker="*", ms=7 * lw_scale, linestyle="none", color="black",
                         label=item.label or f"source at {item.frequency:.3g} Hz")[0]
            artists["marks"].append(pt)
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlim(spec.axes.fmin, spec.axes.fmax)
    if spec.axes.ymin or spec.axes.ymax:
        ax.set_ylim(spec.axes.ymin, spec.axes.ymax)
    ax.set_xlabel("frequency [Hz]")
    ax.set_ylabel(YLABELS[spec.form])
    ax.grid(True, which="major", alpha=0.3)
    if spec.title:
        ax.set_title(spec.title)
    if small:  # one column: the legend goes under the axes, in two columns
        artists["legend"] = ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.2), ncol=2, frameon=False)
    else:
        artists["legend"] = ax.legend(loc="best", framealpha=0.85)
    caption = {"asd": "sky-averaged; sources: 2 sqrt(f)|h~| (inspirals), h0 sqrt(T) (monochromatic)",
               "hc": "sky-averaged; h_n = sqrt(f S_n); monochromatic h_c = h0 sqrt(f T)",
               "omega": "Omega_n = 4 pi^2 f^3 S_n / (3 H0^2), Planck18 H0"}[spec.form]
    artists["caption"] = ax.text(0.995, 0.005, caption, transform=ax.transAxes, fontsize=4 if small else 6,
                                 color="0.35", ha="right", va="bottom")
    return fig, artists, provenance


def save_spec_figure(fig, path, spec, digest, provenance):
    """Save with embedded fonts and provenance metadata, atomically."""
    import matplotlib as mpl

    meta = {"Title": spec.title or "gwclock figure", "Creator": provenance["tool"],
            "Subject": f"spec sha256 {digest}; " + "; ".join(provenance["missions"])}
    with mpl.rc_context({"pdf.fonttype": 42, "ps.fonttype": 42, "svg.fonttype": "path"}):
        return save_figure(fig, path, dpi=spec.dpi, metadata=meta)
