"""Figures checked through their artists (scales, labels with units, curves, legend)."""

import numpy as np
from matplotlib.figure import Figure

from gwclock.config.mission import load_mission
from gwclock.engine import envelope, window
from gwclock.outputs.plotting import plot_budget


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
    assert len(labels) == len(artists) and any("envelope" in s for s in labels)  # one per line drawn
    assert artists["total"].get_linewidth() > artists["shot"].get_linewidth()


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
