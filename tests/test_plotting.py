"""Figures checked through their artists (scales, labels with units, curves, legend)."""

import numpy as np
import pytest
from matplotlib.figure import Figure

from gwclock.config.mission import load_mission
from gwclock.engine import envelope, window
from gwclock.outputs.plotting import merged_noises, noise_styles, plot_budget


def test_budget_plot_artists():
    m, _ = load_mission(None)
    b = envelope(m.design(), np.geomspace(1e-4, 10, 60))
    fig = Figure()
    ax = fig.add_subplot()
    artists = plot_budget(b, ax=ax, title=m.name)
    assert set(artists) == {"total", "projection", "shot", "laser", "receiver", "acceleration"}
    assert ax.get_xscale() == "log" and ax.get_yscale() == "log"
    assert "[Hz]" in ax.get_xlabel() and "Hz" in ax.get_ylabel()
    assert m.name in ax.get_title()
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    # one per line drawn: the two lasers of the default mission share one specification, so one line
    assert artists["laser"] is artists["receiver"] and "laser residual ≈ receiving laser" in labels
    assert len(labels) == len({id(a) for a in artists.values()}) and any("envelope" in s for s in labels)
    assert artists["total"].get_linewidth() > artists["shot"].get_linewidth()


def test_noises_are_merged_only_where_they_coincide():
    f = np.geomspace(1, 10, 5)
    groups = merged_noises({"a": f**-1, "b": f**-1 * (1 + 1e-4), "c": f**-1 * 1.5, "d": 0 * f})
    assert [names for names, _ in groups] == [["a", "b"], ["c"]]


def test_window_plot_label_names_the_tuning():
    m, _ = load_mission(None)
    w = window(m.design(), np.geomspace(1e-3, 1, 40), tune=0.1)
    artists = plot_budget(w, components=False)
    assert set(artists) == {"total"}
    assert "0.1 Hz" in artists["total"].get_label()


def test_a_figure_saved_twice_is_the_same_file(tmp_path):
    # reproducible outputs (common practice, no source): no date, no random element ids
    import time

    from gwclock.outputs.plotting import save_figure
    fig = Figure()
    fig.add_subplot().plot([1, 2, 3], [3, 1, 2], label="a")
    for suffix in (".svg", ".pdf", ".png"):
        a, b = tmp_path / f"a{suffix}", tmp_path / f"b{suffix}"
        save_figure(fig, a, metadata={"Title": "t"})
        time.sleep(1.1)
        save_figure(fig, b, metadata={"Title": "t"})
        assert a.read_bytes() == b.read_bytes(), suffix


def test_every_pdf_embeds_truetype_fonts(tmp_path, capsys):
    # journals ask for Type 1 or TrueType fonts, not Type 3 (common practice, no source); the PDF
    # names each font's subtype in its font dictionary and embeds TrueType programs as /FontFile2
    # (PDF 1.7, ISO 32000-1, sec. 9.6 and 9.9, from memory)
    from gwclock.cli import main
    out = tmp_path / "b.pdf"
    assert main(["curve", "--points", "30", "--plot", str(out)]) == 0
    data = out.read_bytes()
    assert b"/FontFile2" in data and b"/Type3" not in data


class TestStyleRegistry:
    """One look per object across figures (common practice in concept documents, no source)."""

    def test_a_mission_keeps_its_colour_in_every_figure(self, tmp_path):
        from gwclock.config.mission import load_mission
        from gwclock.outputs.figures import render_spec
        from gwclock.outputs.plotting import plot_comparison

        from .conftest import MISSIONS
        flagship = next(p for p in MISSIONS if p.stem == "flagship")
        m, _ = load_mission(flagship)
        assert m.colour == "#332288"
        _, art, _ = render_spec({"form": "asd", "mission": [{"file": str(flagship)}, {"file": "default"}]},
                                base_dir=flagship.parent)
        f = np.geomspace(1e-3, 1, 5)
        comp = plot_comparison(["Lodestar reference", m.name], f, [f, f], colours=[None, m.colour])
        assert art["curves"][0].get_color() == comp["curves"][1].get_color() == "#332288"

    def test_missions_without_a_colour_never_share_one(self):
        from gwclock.outputs.styles import MISSION_PALETTE, StyleBook
        book = StyleBook()
        colours = [book.mission(f"mission {i}")["color"] for i in range(len(MISSION_PALETTE))]
        assert sorted(colours) == sorted(MISSION_PALETTE)
        assert StyleBook().mission("mission 3")["color"] == colours[3]  # stable: chosen from the name
        assert book.mission("mission 3")["color"] == colours[3]

    def test_noise_reference_and_mission_hues_are_disjoint(self):
        from gwclock.outputs.styles import MISSION_PALETTE, REFERENCE_LOOKS
        noise = {s["color"].upper() for s in noise_styles().values()}
        refs = {s["color"].upper() for s in REFERENCE_LOOKS.values()}
        missions = {c.upper() for c in MISSION_PALETTE}
        assert not (noise & refs) and not (noise & missions) and not (refs & missions)


def test_the_two_panel_budget_shares_add_up_and_mark_the_sequence_changes():
    # the shares of a PSD add up to 100 % (identity); a change of sequence is marked between the two
    # grid points where the pulse count goes from 0 to > 0; the wall sits at 1/(2 t_pi) (common practice)
    from gwclock.outputs.plotting import plot_budget_panels
    m, _ = load_mission(None)
    f = np.geomspace(1e-4, 100, 120)
    b = envelope(m.design(), f)
    art = plot_budget_panels(b)
    top_edge = art["bands"][-1].get_paths()[0].vertices[:, 1].max()
    assert top_edge == pytest.approx(100.0, rel=1e-9, abs=0)
    xs = sorted({float(line.get_xdata()[0]) for line in art["changes"]})
    dd = b.pulses > 0
    switches = [np.sqrt(f[i] * f[i + 1]) for i in np.flatnonzero(dd[1:] != dd[:-1])]
    wall = 1 / (2 * m.design().pi_pulse_duration)
    assert all(any(abs(x / s - 1) < 1e-12 for x in xs) for s in switches) and switches
    assert any(abs(x / wall - 1) < 1e-12 for x in xs)
    lo, hi = art["asd"].get_ylim()
    for name, line in art["lines"].items():  # every noise in the legend shows inside the axes
        y = np.asarray(line.get_ydata(), dtype=float)
        assert np.any((y > lo) & (y < hi)), name
