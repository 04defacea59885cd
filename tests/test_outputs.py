"""Figures from specifications and concept-document reports.

Truth: the specification rules of the README (one curve per item, units on the axes, fonts
embedded, provenance in the metadata) and the HTML standard (a self-contained page references
no external resource); figure content is checked through the returned artists, not pixels.
"""

import re
import shutil
import subprocess
import zlib
from pathlib import Path

import numpy as np
import pytest

from gwclock.cli import main
from gwclock.config.figure_spec import load_spec
from gwclock.errors import InputError
from gwclock.outputs.figures import render_spec

from .conftest import MISSIONS, ROOT

SPEC = """
title = "test figure"
form = "{form}"
size = "one-column"
dpi = 120

[axes]
fmin = "1e-4 Hz"
fmax = "100 Hz"

[[mission]]
file = "default"

[[mission]]
file = "{mission}"
mode = "window"
tune = "0.1 Hz"

[[reference]]
name = "lisa"
confusion = 1

[[reference]]
name = "aligo"

[[track]]
mass1 = 1e4
mass2 = 1e4
redshift = 1

[[point]]
frequency = "3 mHz"
h0 = 1e-22
"""


def spec_file(tmp_path, form="asd"):
    p = tmp_path / "fig.toml"
    p.write_text(SPEC.format(form=form, mission=(ROOT / "mission_configs" / "pathfinder.toml").as_posix()))
    return p


@pytest.mark.parametrize("form, curves", [("asd", 5), ("hc", 5), ("omega", 4)])
def test_spec_artists(tmp_path, form, curves):
    spec, digest = load_spec(spec_file(tmp_path, form))
    fig, artists, prov = render_spec(spec, base_dir=tmp_path)
    ax = fig.axes[0]
    assert ax.get_xscale() == "log" and ax.get_yscale() == "log"
    assert ax.get_xlabel() == "frequency [Hz]"
    if form == "asd":
        assert "Hz$^{-1/2}$" in ax.get_ylabel()
    assert len(artists["curves"]) == curves  # two missions, two references, one track (not in Omega form)
    labels = [t.get_text() for t in artists["legend"].get_texts()]
    assert len(labels) == curves + (0 if form == "omega" else 1)  # + the monochromatic source
    assert any("tuned envelope" in s for s in labels) and any("tuned to 0.1 Hz" in s for s in labels)
    if form != "omega":
        assert len(artists["marks"]) >= 3  # time-before-merger marks and the point source
    assert len(prov["missions"]) == 2 and len(digest) == 16


@pytest.mark.parametrize("form", ["asd", "hc", "omega"])
def test_curve_values_in_each_form(tmp_path, form):
    # the drawn mission curve against the envelope converted by hand: ASD = sqrt(S_n); noise
    # characteristic strain h_n = sqrt(f S_n) (Moore, Cole & Berry 2015, CQG 32, 015014);
    # Omega_n = 4 pi^2 f^3 S_n / (3 H0^2) for a sky-averaged S_n (Thrane & Romano 2013, PRD 88,
    # 124032, with the single-detector factor 2 of P_n / Gamma), H0 from astropy's Planck18
    import numpy as np
    from astropy.cosmology import Planck18

    from gwclock.config.mission import load_mission
    from gwclock.engine import envelope
    spec, _ = load_spec(spec_file(tmp_path, form))
    fig, artists, _ = render_spec(spec, base_dir=tmp_path)
    line = artists["curves"][0]
    f, y = (np.asarray(v, dtype=float) for v in line.get_data())
    m, _ = load_mission(None)
    s = envelope(m.design(), f).total
    H0 = Planck18.H0.to_value("1/s")
    want = {"asd": np.sqrt(s), "hc": np.sqrt(f * s), "omega": 4 * np.pi**2 * f**3 * s / (3 * H0**2)}[form]
    np.testing.assert_allclose(y, want, rtol=1e-12, atol=0)


def test_every_output_type_with_provenance(tmp_path, capsys):
    p = spec_file(tmp_path)
    for suffix in (".png", ".pdf", ".svg"):
        out = tmp_path / f"f{suffix}"
        assert main(["plot", str(p), "--out", str(out)]) == 0
        data = out.read_bytes()
        assert len(data) > 1000
        if suffix == ".pdf":
            assert b"/FontFile2" in data  # TrueType fonts embedded (fonttype 42)
            assert b"gwclock" in data
        elif suffix == ".svg":
            text = data.decode()
            assert "<text" not in text  # text drawn as paths: no font needed
            assert "spec sha256" in text
        else:
            assert b"spec sha256" in data or b"spec sha256" in zlib.decompress(data[data.find(b"zTXt") + 4:], -15)


def test_default_output_name_from_the_spec(tmp_path, capsys):
    p = spec_file(tmp_path)
    assert main(["plot", str(p)]) == 0
    assert (tmp_path / "fig.pdf").exists()


@pytest.mark.parametrize("out", ["../escape.png", "/tmp/escape.png", "sub/../../escape.png"])
def test_a_spec_writes_only_inside_its_folder(tmp_path, capsys, out):
    # a file's paths reach its own folder only (common practice, no source); --out may go anywhere
    folder = tmp_path / "specs"
    folder.mkdir()
    p = spec_file(folder)
    p.write_text(f'out = "{out}"\n' + p.read_text())
    assert main(["plot", str(p)]) == 2
    err = capsys.readouterr().err
    assert "out: got" in err and "must stay inside its folder" in err
    assert not (tmp_path / "escape.png").exists()
    assert main(["plot", str(p), "--out", str(tmp_path / "escape.png")]) == 0


@pytest.mark.parametrize("change, fragment", [
    (("form = \"asd\"", "form = \"power\""), "form"),
    (("title", "titel"), "titel: unknown key; did you mean 'title'?"),
    (("tune = \"0.1 Hz\"", ""), "a window needs 'tune'"),
    (("name = \"aligo\"", "name = \"virgo\""), "unknown reference"),
    (("fmin = \"1e-4 Hz\"", "fmin = \"1e3 Hz\""), "fmin must be below fmax"),
    (("redshift = 1", "redshift = 1\ndistance = \"1 Gpc\""), "exactly one of distance and redshift"),
    (("h0 = 1e-22", "h0 = -1"), "point[0].h0"),
    # errors found while drawing name the spec file and the item too
    (("confusion = 1", "confusion = 3"), "fig.toml: reference[0].confusion: got 3.0; the galactic confusion is tabulated"),
    (("tune = \"0.1 Hz\"", "tune = \"1e5 Hz\""), "fig.toml: mission[1].tune: got 100000.0; sequence.tune 100000 Hz is outside"),
    (("file = \"default\"", "file = \"nope.toml\""), "fig.toml: mission[0].file: "),
    (("file = \"default\"", "file = \"/etc/hostname\""), "fig.toml: mission[0].file: got '/etc/hostname'; a path in this file must stay inside"),
])
def test_bad_specs(tmp_path, capsys, change, fragment):
    p = spec_file(tmp_path)
    p.write_text(p.read_text().replace(*change))
    code = main(["plot", str(p), "--out", str(tmp_path / "x.png")])
    err = capsys.readouterr().err
    assert code == 2 and fragment in err and err.count("\n") == 1
    assert not (tmp_path / "x.png").exists()


def test_empty_spec_is_refused(tmp_path):
    p = tmp_path / "e.toml"
    p.write_text('title = "nothing"\n')
    with pytest.raises(InputError, match="the figure is empty"):
        load_spec(p)


@pytest.mark.parametrize("path", [None, *MISSIONS], ids=lambda p: "default" if p is None else p.stem)
def test_report_for_every_mission_is_self_contained(tmp_path, capsys, path):
    out = tmp_path / "rep"
    argv = ["report", "--out", str(out)] + ([str(path)] if path else [])
    assert main(argv) == 0
    html = (out / "report.html").read_text()
    md = (out / "report.md").read_text()
    for name in ("budget.png", "references.png", "scan.png"):
        assert (out / name).exists() and f"({name})" in md
        pdf = (out / name.replace(".png", ".pdf")).read_bytes()  # the same figure for a document
        assert pdf[:5] == b"%PDF-" and b"/FontFile2" in pdf and b"/Type3" not in pdf
    for name in ("mission.tex", "budget.tex"):
        tex = (out / name).read_text()
        assert r"\toprule" in tex and r"\bottomrule" in tex and "% mission: " in tex and f"`{name}`" in md
    refs = re.findall(r"""(?:src|href)\s*=\s*["']([^"']*)["']""", html)
    assert refs and all(r.startswith("data:") for r in refs)  # nothing fetched from anywhere
    assert "http://" not in html and "https://" not in html
    assert "Concept-study estimate" in html and "Best strain ASD" in html
    assert html.count("<img") == 3


def test_a_mission_name_is_text_in_the_report(tmp_path, capsys):
    # user text never becomes live HTML, in the Markdown or in the HTML (common practice, no source)
    text = (Path(__file__).parents[1] / "gwclock" / "data" / "default.toml").read_text()
    m = tmp_path / "m.toml"
    m.write_text(text.replace('name = "Lodestar reference"', 'name = "<script>alert(1)</script> & co"'))
    assert main(["report", "--out", str(tmp_path / "rep"), str(m)]) == 0
    md = (tmp_path / "rep" / "report.md").read_text()
    page = (tmp_path / "rep" / "report.html").read_text()
    prose = re.sub(r"```.*?```", "", md, flags=re.S)  # a fenced block is shown as it is, never run
    assert "<script>" not in prose and "&lt;script&gt;alert(1)&lt;/script&gt; &amp; co" in prose
    assert "<script>" not in page and "&lt;script&gt;alert(1)&lt;/script&gt; &amp; co" in page


def test_report_opens_in_headless_chromium(tmp_path):
    browser = shutil.which("chromium") or shutil.which("chromium-browser")
    if browser is None:
        pytest.skip("chromium is not installed (.ci/run installs Debian's chromium)")
    out = tmp_path / "rep"
    assert main(["report", "--out", str(out)]) == 0
    proc = subprocess.run(
        [browser, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         f"--user-data-dir={tmp_path / 'profile'}", "--enable-logging=stderr", "--v=0", "--dump-dom",
         (out / "report.html").as_uri()], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0
    assert ":CONSOLE" not in proc.stderr  # no console message of any level
    assert "<h1>" in proc.stdout and proc.stdout.count("<img") == 3


def test_report_refuses_a_missing_parent(tmp_path, capsys):
    assert main(["report", "--out", str(tmp_path / "no" / "such")]) == 2
    assert "parent folder does not exist" in capsys.readouterr().err


def test_a_spec_may_be_a_dict():
    # library use without a file: the same validation, the same one-line errors
    from gwclock.outputs.figures import render_spec
    fig, artists, _ = render_spec({"title": "t", "form": "asd", "mission": [{"file": "default"}],
                                   "reference": [{"name": "lisa"}]})
    assert len(artists["curves"]) == 2
    with pytest.raises(InputError, match="form"):
        render_spec({"title": "t", "form": "power"})


@pytest.mark.parametrize("size", ["two-column", "one-column"])
def test_the_caption_and_band_label_sit_clear_of_the_legend_and_the_axes_labels(tmp_path, size):
    # layout regression (common practice, no source): the convention caption under the axes and below
    # the x label, the band label above the curves' usual region, neither over the legend
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    spec, _ = load_spec(ROOT / "plots" / "comparison.toml")
    spec = spec.model_copy(update={"size": size})
    fig, artists, _ = render_spec(spec, base_dir=ROOT / "plots")
    FigureCanvasAgg(fig).draw()
    r = fig.canvas.get_renderer()
    ax = fig.axes[0]
    caption = artists["caption"].get_window_extent(r)
    legend = artists["legend"].get_window_extent(r)
    xlabel = ax.xaxis.label.get_window_extent(r)
    band = [a for a in artists["annotations"] if hasattr(a, "get_text") and a.get_text().startswith("ASD <")]
    assert len(band) == 1
    band = band[0].get_window_extent(r)
    assert caption.y1 <= xlabel.y0 + 0.5 and not caption.overlaps(legend)
    assert not band.overlaps(legend) and not band.overlaps(caption)
    assert caption.y0 >= 0 and caption.x1 <= fig.bbox.x1 + 0.5  # inside the figure


def test_the_caption_speaks_only_of_what_is_drawn():
    # a figure of one mission states its convention only; references and sources add their parts
    only = render_spec({"form": "asd", "mission": [{"file": "default"}]})[1]["caption"].get_text()
    both = render_spec({"form": "asd", "mission": [{"file": "default"}], "reference": [{"name": "lisa"}],
                        "point": [{"frequency": "3 mHz", "h0": 1e-22}]})[1]["caption"].get_text()
    assert only == "sky-averaged"
    assert "references S_n / channels" in both and "h0 sqrt(T)" in both


def test_time_marks_chosen_by_the_user_sit_where_the_chirp_puts_them():
    # leading-order chirp: f(tau) = (1/pi) (5 / (256 tau))^(3/8) (G M_c / c^3)^(-5/8)
    # (Peters 1964, Phys. Rev. 136, B1224; Maggiore 2008, Gravitational Waves vol. 1, eq. 4.19)
    from astropy import constants as const

    from gwclock.astro.sources import Inspiral
    spec = {"form": "asd", "axes": {"fmin": "1e-5 Hz", "fmax": "1 Hz"},
            "track": [{"mass1": 1e5, "mass2": 1e5, "redshift": 1, "marks": ["1 week", "10 min"]}]}
    _, art, _ = render_spec(spec)
    labels = [a.get_text() for a in art["annotations"] if hasattr(a, "get_text")]
    assert labels == ["1 week", "10 min"]
    src = Inspiral.from_masses(1e5, 1e5, redshift=1)
    tm = const.G.value * src.chirp_mass / const.c.value**3
    for mark, tau in zip(art["marks"], (7 * 86400.0, 600.0)):
        f = (5 / (256 * tau)) ** (3 / 8) * tm ** (-5 / 8) / np.pi
        assert float(mark.get_xdata()[0]) == pytest.approx(f, rel=1e-9, abs=0)
    with pytest.raises(InputError, match=r"track\[0\]\.marks"):
        render_spec({**spec, "track": [{"mass1": 1e5, "mass2": 1e5, "redshift": 1, "marks": ["1 kg"]}]})
