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

import numpy as np

from ..astro.references import get_reference
from ..astro.sources import MARKS, Inspiral
from ..config.figure_spec import FONTS, SIZES, FigureSpec, spec_from_dict
from ..config.mission import load_mission
from ..engine import envelope, window
from ..errors import InputError
from ..files import inside
from ..quantities import parse_quantity
from ..studies.background import hubble_constant, omega_noise
from ..version import __version__
from .plotting import merged_noises, noise_styles, save_figure
from .styles import StyleBook, reference_style

__all__ = ["render_spec", "save_spec_figure", "YLABELS"]


def _transform(form, f, s_n, h0):
    if form == "asd":
        return np.sqrt(s_n)
    if form == "hc":
        return np.sqrt(f * s_n)
    return omega_noise(f, s_n, h0)


YLABELS = {"asd": r"strain ASD [Hz$^{-1/2}$]", "hc": "characteristic strain", "omega": r"$\Omega_{\rm gw}$ sensitivity"}


def render_spec(spec: FigureSpec | dict, base_dir=".", ax=None, source="figure spec"):
    """Draw a spec (a FigureSpec, or a dict with the TOML's structure); returns (figure, artists
    dict, provenance dict). Mission files are read relative to ``base_dir`` and must lie inside it
    or the working folder; errors name ``source`` (the spec's file) and the item, e.g.
    ``mission[1].file`` (counted from 0)."""
    import matplotlib as mpl
    if isinstance(spec, dict):
        spec = spec_from_dict(spec, source)
    with mpl.rc_context(FONTS[spec.size]):
        return _render(spec, base_dir, ax, str(source))


def _render(spec, base_dir, ax, source):
    from matplotlib.figure import Figure

    if ax is None:
        fig = Figure(figsize=SIZES[spec.size], layout="constrained")
        ax = fig.add_subplot()
    canvas = _Canvas(spec, ax)
    kinds = [("mission", lambda item: canvas.mission(item, base_dir, source)), ("reference", canvas.reference)]
    if spec.form != "omega":
        kinds += [("track", canvas.track), ("point", canvas.point)]
    for kind, draw in kinds:
        for i, item in enumerate(getattr(spec, kind)):  # counted from 0, as the spec's validation does
            _drawn(draw, item, source, f"{kind}[{i}]")
    canvas.finish()
    return ax.figure, canvas.artists, canvas.provenance


def _drawn(draw, item, source, where):
    """Draw one item; a refusal names the spec file and the item (``mission[1].tune``)."""
    try:
        draw(item)
    except InputError as exc:
        if exc.source not in (None, source):  # a mission file's own error: keep its file name in the message
            raise InputError(str(exc), source=source, field=f"{where}.file") from None
        field = f"{where}.{exc.field}" if exc.field else where
        raise InputError(exc.message, source=source, field=field, value=exc.value) from None
    except ValueError as exc:
        raise InputError(str(exc), source=source, field=where) from None


#: The caption of each form, in parts: the convention in a few words; the parts about reference
#: detectors and sources appear only when the figure has them.
CAPTIONS = {"asd": {"base": "sky-averaged", "reference": "references S_n / channels",
                    "source": "sources: 2 sqrt(f)|h~| (inspirals), h0 sqrt(T) (monochromatic)"},
            "hc": {"base": "sky-averaged; h_n = sqrt(f S_n)", "reference": "references S_n / channels",
                   "source": "monochromatic h_c = h0 sqrt(f T)"},
            "omega": {"base": "Omega_n = 4 pi^2 f^3 S_n / (3 H0^2), Planck18 H0", "reference": "references S_n / channels",
                      "source": ""}}


def caption(form, references=True, sources=True):
    """The caption line of a figure in ``form`` with or without references and sources."""
    parts = CAPTIONS[form]
    return "; ".join(p for p, on in ((parts["base"], True), (parts["reference"], references),
                                      (parts["source"], sources)) if on and p)


class _Canvas:
    """The axes of one spec with its grid, styles and the artists drawn so far; one method per item kind."""

    def __init__(self, spec, ax):
        self.spec, self.ax = spec, ax
        self.small = spec.size == "one-column"
        self.f = np.geomspace(spec.axes.fmin, spec.axes.fmax, spec.axes.points)
        self.h0 = hubble_constant() if spec.form == "omega" else None
        self.artists = {"curves": [], "marks": [], "annotations": []}
        self.provenance = {"tool": f"gwclock {__version__}", "missions": []}
        self.book = StyleBook()  # each mission, reference and source keeps its own look
        self.lw_scale = 0.75 if self.small else 1.0
        self.bands = 0

    def form(self, f, s_n):
        return _transform(self.spec.form, f, s_n, self.h0)

    def line(self, x, y, label, style, **extra):
        st = dict(style)
        st["lw"] = st.get("lw", 1.5) * self.lw_scale
        st.update(extra)
        y = np.where(np.isfinite(y) & (y > 0), y, np.nan)
        (ln,) = self.ax.plot(x, y, label=label, **st)
        self.artists["curves"].append(ln)
        return ln

    def mission(self, item, base_dir, source):
        f, ax = self.f, self.ax
        path = None if item.file == "default" else inside(base_dir, item.file, source, "file")
        mission, digest = load_mission(path)
        self.provenance["missions"].append(f"{mission.name} sha256 {digest}")
        if item.mode == "window":  # the band this sequence can reach, as a mission file's tuning is checked
            try:
                mission = mission.clone(**{"sequence.tune": f"{item.tune!r} Hz"})
            except InputError as exc:
                raise InputError(exc.message, field="tune", value=item.tune) from None
        d = mission.design()
        if item.mode == "envelope":
            b = envelope(d, f)
            label = item.label or f"{mission.name} (tuned envelope)"
        else:
            try:
                b = window(d, f, tune=item.tune)
            except ValueError as exc:
                raise InputError(str(exc), field="tune", value=item.tune) from None
            label = item.label or f"{mission.name} (tuned to {item.tune:.3g} Hz)"
        ln = self.line(f, self.form(f, b.total), label, self.book.mission(mission.name, mission.colour))
        if item.noises:
            styles = noise_styles()
            # a noise the mission does not have gets no legend entry; coinciding ones share one
            for names, y in merged_noises({name: self.form(f, b.psd[name]) for name in styles}):
                nst = styles[names[0]]
                (c,) = ax.plot(f, np.where(y > 0, y, np.nan), color=nst["color"], linestyle=nst["linestyle"],
                               lw=0.9 * self.lw_scale, label="  " + " ≈ ".join(styles[n]["label"] for n in names))
                self.artists["curves"].append(c)
        if item.mode == "window":
            self.artists["annotations"].append(ax.axvline(item.tune, color=ln.get_color(), lw=0.6, linestyle=":"))
        if item.band and self.spec.form == "asd":
            self._band(b, item.band, ln.get_color())

    def _band(self, budget, level, colour):
        lo, hi = budget.band_below(level)
        if not np.isfinite(lo):
            return
        for x in (lo, hi):
            self.artists["annotations"].append(self.ax.axvline(x, color=colour, lw=0.6, linestyle="--"))
        # a bracket near the top of the axes (x in data, y in axes units), clear of the curves and
        # the legend; further bands stack below it
        y = 0.97 - 0.07 * self.bands
        self.bands += 1
        where = self.ax.get_xaxis_transform()
        self.artists["annotations"].append(self.ax.annotate(
            "", xy=(lo, y), xytext=(hi, y), xycoords=where, textcoords=where,
            arrowprops=dict(arrowstyle="<->", color=colour, lw=0.7, shrinkA=0, shrinkB=0)))
        self.artists["annotations"].append(self.ax.text(
            np.sqrt(lo * hi), y - 0.012, f"ASD < {level:.0e}: {lo:.2g}-{hi:.2g} Hz", transform=where,
            fontsize="x-small", ha="center", va="top", color=colour,
            bbox=dict(boxstyle="square,pad=0.1", facecolor="white", edgecolor="none", alpha=0.8)))

    def reference(self, item):
        try:
            ref = get_reference(item.name)
        except KeyError as exc:
            raise InputError(str(exc.args[0]), field="name", value=item.name) from None
        opts = ref.options_for(item.confusion)
        fr = self.f[(self.f >= ref.band[0]) & (self.f <= ref.band[1])]
        if fr.size >= 2:
            try:
                s_n = ref.network(fr, **opts)
            except ValueError as exc:  # the only option a reference takes is the confusion time
                raise InputError(str(exc), field="confusion", value=item.confusion) from None
            self.line(fr, self.form(fr, s_n), item.label or ref.network_label, reference_style(ref.key))

    def _source_value(self, hc, f):
        """An inspiral's h_c in the spec's form: h_c itself, or 2 sqrt(f)|h~| = h_c / sqrt(f)."""
        return hc if self.spec.form == "hc" else hc / np.sqrt(f)

    def track(self, item):
        spec, ax = self.spec, self.ax
        src = Inspiral.from_masses(item.mass1, item.mass2, distance=item.distance, redshift=item.redshift)
        top = min(spec.axes.fmax, src.isco_frequency)
        if top <= spec.axes.fmin:
            return
        ft = np.geomspace(spec.axes.fmin, top, 300)
        ln = self.line(ft, self._source_value(src.characteristic_strain(ft), ft),
                       item.label or f"{item.mass1:g}+{item.mass2:g} Msun", self.book.source())
        if not item.marks:
            return
        marks = MARKS if item.marks is True else {m: float(parse_quantity(m, "s").value) for m in item.marks}
        for label, before in marks.items():
            fm = float(src.frequency_at(before))
            if ft[0] <= fm <= ft[-1]:
                ym = float(self._source_value(src.characteristic_strain(fm), fm))
                self.artists["marks"].append(ax.plot([fm], [ym], marker="o", ms=3, color=ln.get_color())[0])
                self.artists["annotations"].append(ax.annotate(label, (fm, ym), xytext=(3, 3),
                                                               textcoords="offset points", fontsize="xx-small"))

    def point(self, item):
        spec = self.spec
        y = item.h0 * np.sqrt(spec.observation) * (np.sqrt(item.frequency) if spec.form == "hc" else 1.0)
        pt = self.ax.plot([item.frequency], [y], marker="*", ms=7 * self.lw_scale, linestyle="none", color="black",
                          label=item.label or f"source at {item.frequency:.3g} Hz")[0]
        self.artists["marks"].append(pt)

    def finish(self):
        spec, ax = self.spec, self.ax
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
        if self.small:  # one column: the legend goes under the axes, in two columns
            self.artists["legend"] = ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.2), ncol=2, frameon=False)
        else:
            self.artists["legend"] = ax.legend(loc="best", framealpha=0.85)
        # the convention, under the axes (inside the layout, so that nothing is drawn over it)
        text = caption(spec.form, bool(spec.reference), bool(spec.track or spec.point))
        self.artists["caption"] = ax.annotate(text, (1.0, 0.0), xycoords=("axes fraction", ax.xaxis.label),
                                              xytext=(0, -2), textcoords="offset points",
                                              fontsize=4 if self.small else 6, color="0.35", ha="right", va="top")


def save_spec_figure(fig, path, spec, digest, provenance):
    """Save with embedded fonts and provenance metadata, atomically."""
    import matplotlib as mpl

    meta = {"Title": spec.title or "gwclock figure", "Creator": provenance["tool"],
            "Subject": f"spec sha256 {digest}; " + "; ".join(provenance["missions"])}
    with mpl.rc_context({"pdf.fonttype": 42, "ps.fonttype": 42, "svg.fonttype": "path"}):
        return save_figure(fig, path, dpi=spec.dpi, metadata=meta)
