"""The command line, run for real: outputs, provenance, one-line errors, safe files.

Truth: the README's command reference (column names, units, exit codes) and the physics checks
elsewhere; here the numbers must be finite and carry the right units.
"""

import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from astropy.table import QTable, Table

from gwclock.cli import main
from gwclock.config.mission import load_mission
from gwclock.engine import envelope
from gwclock.errors import InputError

from .conftest import MISSIONS


def run(argv, capsys):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.parametrize("path", MISSIONS, ids=lambda p: p.stem)
def test_curve_for_every_shipped_mission(tmp_path, capsys, path):
    table, plot = tmp_path / "t.ecsv", tmp_path / "f.png"
    code, out, _ = run(["curve", path, "--table", table, "--plot", plot, "--points", 120], capsys)
    assert code == 0
    t = QTable.read(table)
    assert t["frequency"].unit == "Hz" and t["asd"].unit == "Hz(-1/2)"
    assert t["frequency"][0].value == pytest.approx(1e-5, rel=1e-12, abs=0) and t["frequency"][-1].value == pytest.approx(100, rel=1e-12, abs=0)
    for col in ("asd", "asd_projection", "asd_shot", "asd_laser", "asd_acceleration"):
        assert np.all(np.isfinite(t[col].value)) and np.all(t[col].value >= 0)
    # the table carries what the library computes at its frequencies (the grid and the writer)
    b = envelope(load_mission(path)[0].design(), np.geomspace(1e-5, 100, 120))
    np.testing.assert_allclose(t["frequency"].value, b.frequency, rtol=1e-12, atol=0)
    for col, noise in (("asd_projection", "projection"), ("asd_shot", "shot"), ("asd_acceleration", "acceleration")):
        np.testing.assert_allclose(t[col].value, b.asd_of(noise), rtol=1e-9, atol=0)
    assert t.meta["curve"] == "envelope" and "no single tuning" in t.meta["note"]
    assert t.meta["mission_sha256"] and t.meta["tool"] == "gwclock"
    assert plot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert "best strain ASD" in out


def test_default_mission_csv_and_svg(tmp_path, capsys):
    code, _, _ = run(["curve", "--table", tmp_path / "t.csv", "--plot", tmp_path / "f.svg", "--points", 20,
                      "--fmin", "1 mHz", "--fmax", "1 Hz"], capsys)
    assert code == 0
    t = Table.read(tmp_path / "t.csv")  # plain CSV: any reader opens it without options
    assert len(t) == 20 and t["frequency [Hz]"][0] == pytest.approx(1e-3, rel=1e-12, abs=0)
    import csv
    with open(tmp_path / "t.csv", newline="") as fh:
        rows = list(csv.reader(fh))  # the standard library's reader (RFC 4180, Shafranovich 2005)
    assert rows[0][:2] == ["frequency [Hz]", "asd [1 / Hz(1/2)]"] and len(rows) == 21
    b = envelope(load_mission(None)[0].design(), np.geomspace(1e-3, 1, 20))
    np.testing.assert_allclose([float(r[1]) for r in rows[1:]], b.asd, rtol=1e-9, atol=0)  # 10 digits printed
    assert (tmp_path / "f.svg").read_text().lstrip().startswith("<?xml")


def test_window_command(tmp_path, capsys):
    code, out, _ = run(["window", "--tune", "100 mHz", "--table", tmp_path / "w.ecsv", "--points", 50], capsys)
    assert code == 0
    t = QTable.read(tmp_path / "w.ecsv")
    assert t.meta["curve"] == "window"
    np.testing.assert_allclose(t["tuning"].value, 0.1, rtol=1e-5, atol=0)
    i = np.argmin(t["asd"].value)
    assert 0.05 < t["frequency"][i].value < 0.2


def test_check_prints_units(capsys):
    code, out, _ = run(["check"], capsys)
    assert code == 0
    assert "baseline = 3e+10 m" in out and "coherence_time = 100 s" in out


def test_species_and_cite_and_version(capsys):
    assert run(["species"], capsys)[0] == 0
    code, out, _ = run(["--cite"], capsys)
    assert code == 0 and "Robson, Cornish & Liu 2019" in out
    with pytest.raises(SystemExit) as e:
        main(["--version"])
    assert e.value.code == 0


@pytest.mark.parametrize("argv, fragment", [
    (["curve", "nope.toml"], "mission file not found"),
    (["curve", "--fmin", "10", "--fmax", "1"], "must be below --fmax"),
    (["curve", "--fmin", "3 kg"], "--fmin: got '3 kg'; wrong dimension"),
    (["curve", "--fmin", "-1 Hz"], "expected a frequency from 1e-09 Hz to 1e+06 Hz"),
    (["curve", "--fmin", "1e-300"], "expected a frequency from 1e-09 Hz"),
    (["curve", "--fmax", "1e300"], "expected a frequency from 1e-09 Hz"),
    (["curve", "--points", "1"], "--points"),
    (["curve", "--points", "many"], "invalid int value"),
    (["curve", "--table", "no/such/dir/t.ecsv"], "the output folder does not exist"),
    (["curve", "--table", "t.txt"], "unsupported file type '.txt'"),
    (["curve", "--plot", "f.jpg"], "unsupported file type '.jpg'"),
    (["curve", "--table", "x" * 260 + ".ecsv"], "file name longer than 255 bytes"),
    (["curve", "--table", "/proc/t.ecsv"], "cannot write in the output folder"),
    (["track", "--mass1", "30", "--mass2", "30", "--redshift", "0.1", "--points", "0"], "--points: got 0"),
    (["snr", "--frequency", "3 mHz", "--h0", "1e-22", "--table", "-"], "takes the table of curve and window only"),
    (["window"], "required: --tune"),
    (["window", "--tune", "200 Hz"], "outside the band"),
    (["bogus"], "invalid choice"),
])
def test_bad_command_lines(tmp_path, monkeypatch, capsys, argv, fragment):
    monkeypatch.chdir(tmp_path)
    code, out, err = run(argv, capsys)
    assert code == 2
    assert fragment in err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert list(tmp_path.iterdir()) == []  # no output file created


@pytest.mark.parametrize("name, content, fragment", [
    ("deep.toml", "a = " + "[" * 100_000 + "]" * 100_000 + "\n", "nested too deeply"),
    ("big.toml", "# " + "x" * (17 * 2**20) + "\n", "larger than 16 MiB"),
    # keys a terminal would not show as themselves are escaped, so the message stays one honest line
    ("newline.toml", '[link]\n"bad\\nkey" = 1\n', "link.bad\\nkey: unknown key"),
    ("bidi.toml", '[link]\n"bad\\u202ekey" = 1\n', "link.bad\\u202ekey: unknown key"),
    ("nul.toml", '[link]\n"bad\\u0000key" = 1\n', "link.bad\\x00key: unknown key"),
    ("power.toml", None, "link.transmit_power: got '5e-324 W'; expected a value >= 1e-15 W"),
    ("aperture.toml", None, "link.transmit_aperture: got '1e-300 m'; expected a value >= 0.001 m"),
])
def test_hostile_mission_files_get_one_line(tmp_path, capsys, name, content, fragment):
    p = tmp_path / name
    if content is None:
        text = (Path(__file__).parents[1] / "gwclock" / "data" / "default.toml").read_text()
        text = text.replace('transmit_power = "1 W"', 'transmit_power = "5e-324 W"') if name == "power.toml" else \
            text.replace('transmit_aperture = "0.4 m"', 'transmit_aperture = "1e-300 m"')
        p.write_text(text)
    else:
        p.write_text(content)
    code, _, err = run(["curve", p, "--table", tmp_path / "t.ecsv"], capsys)
    assert code == 2 and fragment in err and err.count("\n") == 1
    assert not (tmp_path / "t.ecsv").exists()


def test_failure_keeps_an_existing_output(tmp_path, capsys):
    table = tmp_path / "t.ecsv"
    table.write_text("precious")
    bad = tmp_path / "bad.toml"
    bad.write_text('name = "x"\n[link]\nbaseline = "5 kg"\n')
    code, _, _ = run(["curve", bad, "--table", table], capsys)
    assert code == 2
    assert table.read_text() == "precious"


def test_console_script_runs_as_a_process(tmp_path):
    out = subprocess.run([sys.executable, "-m", "gwclock", "curve", "--points", "10", "--table", str(tmp_path / "t.ecsv")],
                         capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    bad = subprocess.run([sys.executable, "-m", "gwclock", "curve", "missing.toml"], capture_output=True, text=True,
                         timeout=120, cwd=tmp_path)
    assert bad.returncode == 2 and bad.stderr.startswith("gwclock: error: missing.toml")


def test_tables_are_deterministic_apart_from_the_timestamp(tmp_path, monkeypatch, capsys):
    for run_dir in ("a", "b"):  # the same command line in two folders
        (tmp_path / run_dir).mkdir()
        monkeypatch.chdir(tmp_path / run_dir)
        assert run(["curve", "--points", 40, "--table", "t.ecsv"], capsys)[0] == 0
    strip = lambda p: [l for l in p.read_text().splitlines() if "created" not in l]  # noqa: E731
    a, b = strip(tmp_path / "a" / "t.ecsv"), strip(tmp_path / "b" / "t.ecsv")
    assert a == b and any('"command": "gwclock curve --points 40 --table t.ecsv"' in line for line in a)
    assert any("resolved_mission" in line and "link.baseline = 3e+10 m" in line for line in a)


def test_an_exported_reference_csv_reads_back_as_the_same_curve(tmp_path, capsys):
    # the convention and sky factor travel as constant columns; the units in the column names
    from gwclock.astro.references import get_reference, user_curve
    p = tmp_path / "aligo.csv"
    code, _, _ = run(["reference", "aligo", "--points", 30, "--table", p], capsys)
    assert code == 0
    back, ref = user_curve(p), get_reference("aligo")
    f = np.asarray(Table.read(p)["frequency [Hz]"], dtype=float)[1:-1]  # at the tabulated points (log-log exact)
    np.testing.assert_allclose(back.sky_averaged(f), ref.sky_averaged(f), rtol=1e-8, atol=0)
    assert back.convention == ref.convention


def test_reference_export_in_both_conventions(tmp_path, capsys):
    a, b = tmp_path / "n.ecsv", tmp_path / "s.ecsv"
    assert run(["reference", "aligo", "--fmin", "10", "--fmax", "1000", "--points", 5, "--table", a], capsys)[0] == 0
    assert run(["reference", "aligo", "--fmin", "10", "--fmax", "1000", "--points", 5, "--convention", "sky-averaged",
                "--table", b], capsys)[0] == 0
    ta, tb = QTable.read(a), QTable.read(b)
    assert ta.meta["convention"] == "optimal orientation" and tb.meta["convention"] == "sky-averaged"
    # sky average of a 90-degree interferometer: PSD x 5/2 (derivation: sky-averaged response 2/5
    # of an L-shaped detector, Robson, Cornish & Liu 2019, CQG 36, 105011, sec. 2)
    np.testing.assert_allclose((tb["asd"] / ta["asd"]) ** 2, 2.5, rtol=1e-5, atol=0)
    assert ta.colnames == ["frequency", "asd"]


def test_track_table_columns(tmp_path, capsys):
    p = tmp_path / "t.ecsv"
    code, out, _ = run(["track", "--mass1", "30", "--mass2", "30", "--distance", "400 Mpc", "--fmin", "1e-3",
                        "--table", p, "--plot", tmp_path / "t.png"], capsys)
    assert code == 0 and "1 yr" in out
    t = QTable.read(p)
    assert t.colnames == ["time_to_merger", "frequency", "hc"]
    assert t["time_to_merger"].unit == "s" and t["frequency"].unit == "Hz"


def test_snr_horizon_background_commands(tmp_path, capsys):
    code, out, _ = run(["snr", "--mass1", "1e4", "--mass2", "1e4", "--redshift", "1", "--against", "lisa", "decigo",
                        "--table", tmp_path / "s.ecsv"], capsys)
    assert code == 0 and "LISA" in out
    assert len(QTable.read(tmp_path / "s.ecsv")) == 3
    code, out, _ = run(["horizon", "--masses", "1e3", "1e5", "--against", "lisa", "--table", tmp_path / "h.ecsv",
                        "--plot", tmp_path / "h.png"], capsys)
    assert code == 0
    h = QTable.read(tmp_path / "h.ecsv")
    assert "z_lisa" in h.colnames and h["distance_lisa"].unit == "Mpc"
    # a 1e5 Msun binary ends its inspiral near f_ISCO ~ 4.4 kHz / 1e5 = 0.044 Hz, below the aLIGO band
    # (f_ISCO = c^3 / (6^1.5 pi G M), common practice, no source): never reached, said in words
    code, out, _ = run(["horizon", "--masses", "1e5", "--against", "aligo"], capsys)
    assert code == 0 and "not reached" in out.splitlines()[-1]
    # the search stops at a stated redshift and says so
    code, out, _ = run(["horizon", "--masses", "1e4", "--against", "lisa", "--measure", "optimal"], capsys)
    assert code == 0 and "optimal-orientation horizon" in out and "beyond z = 100" in out.splitlines()[-1]
    code, out, _ = run(["background", "--points", 60, "--against", "lisa", "--table", tmp_path / "b.ecsv"], capsys)
    assert code == 0 and "time shared evenly" in out
    b = QTable.read(tmp_path / "b.ecsv")
    assert "assumption" in b.meta and "omega_pi_lisa" in b.colnames


def test_study_commands_against_independent_values(tmp_path, capsys):
    # snr: a monochromatic source in LISA, SNR = h0 sqrt(T / S_n) (Robson, Cornish & Liu 2019,
    # eqs. 10-13 for S_n) over LISA's own observing time (4 yr), whatever the clock's --observation;
    # horizon: LISA's SNR at the printed redshift is the threshold;
    # background: Omega_n = 4 pi^2 f^3 S_n / (3 H0^2) with Planck18's H0 (Thrane & Romano 2013)
    from astropy.cosmology import Planck18

    from gwclock.astro.references import get_reference, lisa_psd
    from gwclock.astro.sources import Inspiral
    from gwclock.studies.snr import reference_snr
    T = 3.15576e7
    assert run(["snr", "--frequency", "3 mHz", "--h0", "1e-21", "--against", "lisa", "--table", tmp_path / "s.ecsv",
                "--observation", "1 yr"], capsys)[0] == 0
    t = QTable.read(tmp_path / "s.ecsv")
    # SNR^2 adds over LISA's two channels A and E (Robson, Cornish & Liu 2019, sec. 2; from memory)
    lisa_row = [r for r in t if r["detector"] == "LISA, 2 channels"][0]
    assert float(lisa_row["snr"]) == pytest.approx(1e-21 * np.sqrt(2 * 4 * T / lisa_psd(3e-3)), rel=1e-9, abs=0)
    assert float(lisa_row["observed"].to_value("s")) == pytest.approx(4 * T, rel=1e-12, abs=0)
    assert run(["horizon", "--masses", "2e5", "--against", "lisa", "--table", tmp_path / "h.ecsv"], capsys)[0] == 0
    z = float(QTable.read(tmp_path / "h.ecsv")["z_lisa"][0])
    src = Inspiral.from_masses(1e5, 1e5, redshift=z)
    assert reference_snr(get_reference("lisa"), src, 4 * T).snr == pytest.approx(8.0, rel=1e-4, abs=0)
    assert run(["background", "--points", 40, "--table", tmp_path / "b.ecsv", "--plot", tmp_path / "b.png"],
               capsys)[0] == 0
    b = QTable.read(tmp_path / "b.ecsv")
    f = np.asarray(b["frequency"], dtype=float)
    sn = envelope(load_mission(None)[0].design(), f).total
    H0 = Planck18.H0.to_value("1/s")
    np.testing.assert_allclose(np.asarray(b["omega_n_clock"], dtype=float), 4 * np.pi**2 * f**3 * sn / (3 * H0**2),
                               rtol=1e-9, atol=0)


def test_listing_commands(capsys):
    code, out, _ = run(["references"], capsys)
    assert code == 0
    for key in ("lisa", "aligo", "et", "decigo"):
        assert key in out
    assert "Robson, Cornish & Liu 2019" in out
    assert "from memory" not in out
    code, out, _ = run(["species"], capsys)
    # the published digits, without floating-point artefacts (CIPM 2009 Recommendation 2)
    assert code == 0 and "429 228 004 229 873.7 Hz" in out and "518 295 836 590 864 Hz" in out
    assert "from memory" not in out


def test_reference_and_track_figures(tmp_path, capsys):
    assert run(["reference", "lisa", "--confusion", "1", "--fmin", "1e-4", "--fmax", "0.1", "--points", 20,
                "--plot", tmp_path / "r.png"], capsys)[0] == 0
    assert (tmp_path / "r.png").read_bytes()[:4] == b"\x89PNG"


@pytest.mark.parametrize("argv, fragment", [
    (["snr"], "give --source FILE"),
    (["snr", "--mass1", "30", "--mass2", "30"], "exactly one of --distance and --redshift"),
    (["snr", "--mass1", "30", "--mass2", "30", "--distance", "3 kg"], "--distance"),
    (["snr", "--mass1", "30", "--mass2", "30", "--redshift", "1", "--against", "virgo"], "unknown reference"),
    (["reference", "lisa", "--confusion", "3"], "--confusion"),
    (["background", "--scan", "1 Hz:0.1 Hz:3"], "--scan"),
    (["background", "--scan", "1 Hz"], "F1:F2:COUNT"),
    (["snr", "--frequency", "3 mHz"], "--h0"),
    (["snr", "--mass1", "1e300", "--mass2", "30", "--redshift", "1"], "--mass1: got '1e300'; expected a mass from 0.001"),
    (["horizon", "--masses", "1e300"], "--masses: got '1e300'; expected a total mass from 0.002"),
    (["snr", "--mass1", "30", "--mass2", "30", "--redshift", "0"], "--redshift: got '0'; expected a redshift above 0"),
    (["snr", "--mass1", "30", "--mass2", "30", "--distance", "1e-300 m"], "expected a distance from 1 pc"),
    (["snr", "--frequency", "3 mHz", "--h0", "1e-22", "--schedule", "fixed", "--tune", "1e5"], "outside the band"),
    (["snr", "--frequency", "3 mHz", "--h0", "1e-22", "--schedule", "fixed", "--tune", "1e-9"], "outside the band"),
    (["background", "--scan", "1 mHz:1 Hz:100000000"], "COUNT <= 10000"),
    (["reference", "lsia"], "NAME: got 'lsia'; unknown reference; did you mean 'lisa'?"),
    (["snr", "--mass1", "30", "--mass2", "30", "--redshift", "1", "--against", "lisa", "m.toml"],
     "give the mission before --against"),
    (["snr", "--mass1", "30", "--mass2", "30", "--redshift", "0.1", "--cadence", "0"], "--cadence: got '0'; expected a positive"),
    (["snr", "--frequency", "3 mHz", "--h0", "big"], "plain number"),
    (["snr", "--frequency", "3 mHz", "--h0", "-1"], "--h0"),
    (["reference", "lisa", "--confusion", "many"], "--confusion"),
    (["track", "--mass1", "30", "--mass2", "30", "--redshift", "0.1", "--fmin", "1e3", "--fmax", "1e4"], "does not radiate"),
])
def test_bad_science_command_lines(tmp_path, monkeypatch, capsys, argv, fragment):
    monkeypatch.chdir(tmp_path)
    code, out, err = run(argv, capsys)
    assert code == 2 and fragment in err and err.count("\n") == 1


def test_an_input_file_is_never_overwritten(tmp_path, capsys):
    curve = tmp_path / "mine.csv"
    curve.write_text("# convention: sky-averaged\nfrequency,asd\n1,1e-20\n10,1e-21\n")
    before = curve.read_text()
    code, _, err = run(["reference", curve, "--fmin", "1", "--fmax", "10", "--table", curve], capsys)
    assert code == 2 and "input files" in err
    assert curve.read_text() == before


class TestEntryPoint:
    """Exit codes and one-line errors of the command line (common practice, no source)."""

    def test_cite_prints_the_model_references(self, capsys):
        code, out, _ = run(["--cite"], capsys)
        assert code == 0 and "Robson, Cornish & Liu 2019" in out and "Itano et al. 1993" in out

    def test_no_command_prints_the_help_and_exits_2(self, capsys):
        code, out, _ = run([], capsys)
        assert code == 2 and "usage: gwclock" in out

    def test_an_unreachable_tuning_is_one_line_and_exit_2(self, capsys):
        code, _, err = run(["window", "--tune", "1e5 Hz"], capsys)
        assert code == 2 and err.count("\n") == 1 and err.startswith("gwclock: error:")

    def test_a_library_refusal_is_one_line_and_exit_2(self, capsys, monkeypatch):
        from gwclock.cli import design

        def refuse(args):
            raise ValueError("no sequence fits\n  at this tuning")
        monkeypatch.setattr(design, "cmd_check", refuse)
        code, _, err = run(["check"], capsys)
        assert (code, err) == (2, "gwclock: error: no sequence fits at this tuning\n")
        with pytest.raises(ValueError):
            main(["--debug", "check"])

    def test_debug_shows_the_exception(self):
        with pytest.raises(InputError):
            main(["--debug", "curve", "--points", "1"])
        with pytest.raises(InputError):  # also after the command
            main(["curve", "--points", "1", "--debug"])

    def test_an_interruption_exits_130(self, capsys, monkeypatch):
        from gwclock.cli import design

        def interrupted(args):
            raise KeyboardInterrupt
        monkeypatch.setattr(design, "cmd_check", interrupted)
        code, _, err = run(["check"], capsys)
        assert code == 130 and "interrupted" in err

    def test_a_closed_pipe_ends_the_run_quietly(self, capsys, monkeypatch):
        from gwclock.cli import design

        def closed(args):
            raise BrokenPipeError
        monkeypatch.setattr(design, "cmd_check", closed)
        code, _, err = run(["check"], capsys)
        assert (code, err) == (0, "")

    def test_sigterm_becomes_an_interruption(self):
        import signal
        main(["--cite"])
        from gwclock.files import STOP
        with pytest.raises(KeyboardInterrupt):
            signal.getsignal(signal.SIGTERM)(signal.SIGTERM, None)
        assert STOP.is_set()
        STOP.clear()

    def test_no_output_is_renamed_into_place_after_a_stop(self, tmp_path):
        # even if the interruption was swallowed somewhere, the finished file is not put in place
        from gwclock.files import STOP, atomic_path
        target = tmp_path / "t.ecsv"
        target.write_text("old")
        STOP.set()
        try:
            with pytest.raises(KeyboardInterrupt):
                with atomic_path(target) as tmp:
                    tmp.write_text("new")
        finally:
            STOP.clear()
        assert target.read_text() == "old" and [p.name for p in tmp_path.iterdir()] == ["t.ecsv"]


def test_a_reference_curve_is_exported_inside_its_valid_band_only(tmp_path, capsys):
    # a published fit holds in its stated band (Sathyaprakash & Schutz 2009, Living Rev. Relativ. 12, 2:
    # the aLIGO fit above 10 Hz; Yagi & Seto 2011 for DECIGO from 1 mHz): the default grid is the band
    from astropy.table import QTable

    from gwclock.astro.references import get_reference
    for name in ("aligo", "decigo"):
        out = tmp_path / f"{name}.ecsv"
        assert run(["reference", name, "--table", out], capsys)[0] == 0
        f = QTable.read(out)["frequency"].to_value("Hz")
        lo, hi = get_reference(name).band
        assert f[0] == pytest.approx(lo, rel=1e-12, abs=0) and f[-1] == pytest.approx(hi, rel=1e-12, abs=0)
    code, _, err = run(["reference", "aligo", "--fmin", "1e-5 Hz"], capsys)
    assert code == 2 and "holds from 10 Hz" in err


@pytest.mark.parametrize("argv", [
    ["snr", "--frequency", "10 MHz", "--h0", "1e-21"],
    ["sweep", "--vary", "clock.atom_number=1e3:1e4:2", "--metric", "asd@1 MHz"],
    ["curve", "--fmin", "0.2 MHz", "--fmax", "1 MHz", "--points", "2"],
    ["sweep", "--vary", "clock.atom_number=1e3:1e4:2", "--metric", "asd@1e5"],
])
def test_a_frequency_far_beyond_the_pulses_is_warned_about(tmp_path, monkeypatch, capsys, argv):
    # the pi pulses sample the light phase up to 1/(2 t_pi) (common practice, no source): 1e4-1e5 times
    # above it is almost surely "MHz" typed for "mHz"; the run goes on and says so on one line
    monkeypatch.chdir(tmp_path)
    code, _, err = run(argv, capsys)
    assert code == 0
    assert err.startswith("gwclock: warning: ") and err.count("\n") == 1 and "times the highest frequency" in err
    assert ("did you mean mHz?" in err) == ("MHz" in " ".join(argv))


def test_valid_runs_print_no_warning(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    for argv in (["curve", "--points", "20"], ["snr", "--frequency", "10 mHz", "--h0", "1e-21"],
                 ["check", str(MISSIONS[0])]):
        code, _, err = run(argv, capsys)
        assert code == 0 and err == ""


class TestCompare:
    """``gwclock compare``: the fields that differ, each mission's curve and the ratio to the first."""

    def test_four_times_the_atoms_halve_a_projection_limited_curve(self, tmp_path, capsys):
        # quantum projection noise: ASD ~ N^-1/2 (Itano et al. 1993, Phys. Rev. A 47, 3554)
        from .test_sweep import QUIET
        a, b = tmp_path / "a.toml", tmp_path / "b.toml"
        a.write_text(QUIET)
        b.write_text(QUIET.replace("atom_number = 1e5", "atom_number = 4e5"))
        table, fig = tmp_path / "c.ecsv", tmp_path / "c.png"
        code, out, _ = run(["compare", a, b, "--points", 60, "--table", table, "--plot", fig], capsys)
        assert code == 0
        assert "differ in 1 field:" in out and "clock.atom_number" in out
        t = QTable.read(table)
        ratio = np.asarray(t["ratio_2"], dtype=float)
        ba = envelope(load_mission(a)[0].design(), t["frequency"].value)
        bb = envelope(load_mission(b)[0].design(), t["frequency"].value)
        pure = (ba.psd["projection"] / ba.total > 0.999) & (bb.psd["projection"] / bb.total > 0.999)
        assert pure.sum() > 20
        np.testing.assert_allclose(ratio[pure], 0.5, rtol=1e-3, atol=0)
        np.testing.assert_allclose(t["asd_2"].value, bb.asd, rtol=1e-12, atol=0)
        assert fig.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"

    def test_a_mission_against_itself_differs_nowhere(self, tmp_path, capsys):
        code, out, _ = run(["compare", "default", MISSIONS[0], MISSIONS[0], "--points", 20, "--table",
                            tmp_path / "c.csv", "--latex", tmp_path / "c.tex"], capsys)
        assert code == 0
        t = Table.read(tmp_path / "c.csv")
        np.testing.assert_array_equal(t["ratio_3"], t["ratio_2"])
        assert np.max(np.abs(np.asarray(t["ratio_2"]) - 1.0)) > 0.01  # the default and the first shipped mission differ
        assert r"\toprule" in (tmp_path / "c.tex").read_text()

    @pytest.mark.parametrize("argv, fragment", [
        (["compare", "default"], "give two or more missions"),
        (["compare", "default", "nope.toml"], "nope.toml: mission file not found"),
        (["compare", "default", "default", "--latex", "x.doc"], "unsupported file type '.doc'"),
    ])
    def test_bad_comparisons(self, tmp_path, monkeypatch, capsys, argv, fragment):
        monkeypatch.chdir(tmp_path)
        code, _, err = run(argv, capsys)
        assert code == 2 and fragment in err and err.count("\n") == 1
        assert list(tmp_path.iterdir()) == []


def test_a_table_can_go_to_standard_output(capsys):
    # "-" for standard output is the common convention of command-line tools (POSIX utility
    # guidelines, from memory); the table is ECSV and the command's own lines move to stderr
    code, out, err = run(["curve", "--points", 7, "--table", "-"], capsys)
    assert code == 0
    t = QTable.read(out, format="ascii.ecsv")
    b = envelope(load_mission(None)[0].design(), np.geomspace(1e-5, 100, 7))
    np.testing.assert_allclose(t["asd"].value, b.asd, rtol=1e-12, atol=0)
    assert "best strain ASD" in err and "best strain ASD" not in out
