"""Trade studies: sweeps, requirements, uncertainty, execution back-ends.

Truth: direct evaluation of each grid point through the engine, the projection-noise scaling
N^-1/2 (Itano et al. 1993), and root-finding tolerances (scipy.optimize.brentq).
"""

import numpy as np
import pytest
from astropy.table import QTable, Table

from gwclock.cli import main
from gwclock.config.mission import load_mission
from gwclock.engine import envelope, window
from gwclock.errors import InputError
from gwclock.studies.sweep import parse_metric, parse_vary, require

QUIET = """
name = "quiet"
[link]
baseline = "3e10 m"
transmit_power = "1e4 W"
transmit_aperture = "1 m"
receive_aperture = "1 m"
optical_efficiency = 1.0
timing_mismatch = "0 s"
phase_lock_bandwidth = "10 Hz"  # both lasers are noiseless: a narrow lock only narrows the shot noise
[clock]
species = "Sr87"
atom_number = 1e5
coherence_time = "100 s"
dead_time = "0 s"
pulse_error = 0
pi_pulse_duration = "1 ms"
[laser]
linewidth = "0 Hz"
flicker_floor = 0
[spacecraft]
acceleration_noise = "0 m / (s2 Hz(1/2))"
[sequence]
comparison = "linear"
"""


@pytest.fixture
def quiet(tmp_path):
    p = tmp_path / "quiet.toml"
    p.write_text(QUIET)
    return p


def run(argv, capsys):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_sweep_equals_direct_evaluation(tmp_path, capsys):
    p = tmp_path / "s.ecsv"
    code, _, _ = run(["sweep", "--vary", "clock.atom_number=1e4:1e6:3:log", "--vary", "link.baseline=1e10 m:3e10 m:2",
                      "--metric", "asd@0.1 Hz", "--metric", "asd@3 mHz", "--table", p], capsys)
    assert code == 0
    t = QTable.read(p)
    assert len(t) == 6 and t["link.baseline"].unit == "m"
    m, _ = load_mission(None)
    for row in t:
        d = m.clone(**{"clock.atom_number": float(row["clock.atom_number"]),
                       "link.baseline": f"{float(row['link.baseline'].value)!r} m"}).design()
        direct = np.sqrt(envelope(d, np.array([3e-3, 0.1])).total)
        assert row["asd@0.1Hz"].value == pytest.approx(direct[1], rel=1e-12, abs=0)
        assert row["asd@0.003Hz"].value == pytest.approx(direct[0], rel=1e-12, abs=0)


def test_a_sweep_over_the_tuning_gives_each_tuning_its_window(tmp_path, capsys):
    # a fixed tuning's response is its window; the window meets the envelope at its own tuning
    # (the lock-in picture of a dynamical-decoupling clock: Kotler et al. 2011, Nature 473, 61)
    # and a fixed-schedule SNR of a monochromatic source uses the swept tuning: h0 sqrt(T / S_n(f; f0))
    # (matched filter, Robson, Cornish & Liu 2019, Class. Quantum Grav. 36, 105011)
    p, src = tmp_path / "s.ecsv", tmp_path / "gb.csv"
    src.write_text("name,frequency,h0\ngb,30 mHz,1e-21\n")
    code, _, _ = run(["sweep", "--vary", "sequence.tune=3 mHz:0.3 Hz:3:log", "--metric", "asd@30 mHz",
                      "--metric", f"snr:{src}:fixed", "--table", p], capsys)
    assert code == 0
    t = QTable.read(p)
    assert t["sequence.tune"].unit == "Hz" and list(t["status"]) == ["ok"] * 3
    m, _ = load_mission(None)
    d = m.design()
    for row in t:
        f0 = float(row["sequence.tune"].value)
        s_n = window(d, np.array([0.01, 0.03]), tune=f0).total[1]
        assert row["asd@0.03Hz"].value == pytest.approx(np.sqrt(s_n), rel=1e-12, abs=0)
        assert float(row["snr[fixed]:gb"]) == pytest.approx(1e-21 * np.sqrt(d.duration / s_n), rel=1e-6, abs=0)
    # tuned to the measured frequency: the envelope there; detuned by a decade either way: worse
    at = np.sqrt(envelope(d, np.array([0.01, 0.03])).total[1])
    assert t["asd@0.03Hz"][1].value == pytest.approx(at, rel=1e-9, abs=0)
    assert t["asd@0.03Hz"][0].value > 1.5 * at and t["asd@0.03Hz"][2].value > 1.5 * at


def test_projection_limited_sweep_follows_inverse_square_root(tmp_path, capsys, quiet):
    # quantum projection noise: ASD ~ N^-1/2 (Itano et al. 1993, PRA 47, 3554)
    p = tmp_path / "s.ecsv"
    assert run(["sweep", quiet, "--vary", "clock.atom_number=1e3:1e7:5:log", "--metric", "asd@0.05 Hz",
                "--table", p], capsys)[0] == 0
    t = QTable.read(p)
    N = np.asarray(t["clock.atom_number"], dtype=float)
    asd = np.asarray(t["asd@0.05Hz"].value)
    # the 1e4 W link (the schema's bound) still leaves shot noise of ~1e-5 of the projection PSD at
    # N = 1e7, so the law holds to ~1e-5 here, not to rounding
    np.testing.assert_allclose(asd * np.sqrt(N), asd[0] * np.sqrt(N[0]), rtol=5e-5, atol=0)


def test_require_inverts_the_sweep(quiet):
    m, _ = load_mission(quiet)
    metric = parse_metric("asd@0.05 Hz")
    value, unit, msg = require(m, metric, "<=", 1e-19, "clock.atom_number", (1e3, 1e10))
    assert "smallest" in msg
    d = m.clone(**{"clock.atom_number": value}).design()
    assert np.sqrt(envelope(d, np.array([0.05])).total[0]) == pytest.approx(1e-19, rel=1e-8, abs=0)
    # N^-1/2 law predicts the answer from one evaluation (Itano et al. 1993)
    a = np.sqrt(envelope(m.design(), np.array([0.05])).total[0])
    assert value == pytest.approx(1e5 * (a / 1e-19) ** 2, rel=1e-4, abs=0)  # shot noise at 1e4 W adds ~1e-5


def test_require_says_when_the_target_is_out_of_reach(quiet):
    m, _ = load_mission(quiet)
    value, _, msg = require(m, parse_metric("asd@0.05 Hz"), "<=", 1e-30, "clock.atom_number", (1e3, 1e6))
    assert value is None and "cannot be reached" in msg


def test_invalid_points_are_reported_and_the_sweep_goes_on(tmp_path, capsys):
    p = tmp_path / "s.ecsv"
    assert run(["sweep", "--vary", "clock.pulse_error=0.1:0.9:3", "--metric", "asd@0.1 Hz", "--table", p], capsys)[0] == 0
    t = Table.read(p)
    assert list(t["status"][:2]) == ["ok", "ok"]
    assert "clock.pulse_error" in t["status"][2] and np.isnan(t["asd@0.1Hz"][2])


def test_workers_give_the_same_table(tmp_path, capsys):
    args = ["sweep", "--vary", "clock.atom_number=1e4:1e6:70:log", "--metric", "asd@0.1 Hz", "--metric", "band@1e-17"]
    assert run(args + ["--table", tmp_path / "a.ecsv"], capsys)[0] == 0
    assert run(args + ["--table", tmp_path / "b.ecsv", "--workers", "2"], capsys)[0] == 0
    # identical but for the creation time and the command line (which names the file and the workers)
    strip = lambda p: [ln for ln in p.read_text().splitlines() if "created" not in ln and "command" not in ln]  # noqa: E731
    assert strip(tmp_path / "a.ecsv") == strip(tmp_path / "b.ecsv")


def test_dask_local_cluster_gives_the_same_table(tmp_path, capsys):
    distributed = pytest.importorskip("distributed")
    args = ["sweep", "--vary", "clock.atom_number=1e4:1e6:70:log", "--metric", "asd@0.1 Hz"]
    assert run(args + ["--table", tmp_path / "a.ecsv"], capsys)[0] == 0
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                                  dashboard_address=None) as cluster:
        assert run(args + ["--table", tmp_path / "b.ecsv", "--scheduler", cluster.scheduler_address], capsys)[0] == 0
    strip = lambda p: [ln for ln in p.read_text().splitlines() if "created" not in ln and "command" not in ln]  # noqa: E731
    assert strip(tmp_path / "a.ecsv") == strip(tmp_path / "b.ecsv")


def test_failing_sweep_leaves_no_table_and_keeps_the_old_one(tmp_path, capsys, monkeypatch):
    from gwclock.studies import executor
    p = tmp_path / "s.ecsv"
    p.write_text("old table")
    calls = {"n": 0}
    real = executor.chunk_rows

    def failing(*a, **k):
        calls["n"] += 1
        if calls["n"] == 2:
            raise KeyboardInterrupt
        return real(*a, **k)

    monkeypatch.setattr(executor, "chunk_rows", failing)
    code, _, err = run(["sweep", "--vary", "clock.atom_number=1e4:1e6:200:log", "--metric", "asd@0.1 Hz",
                        "--table", p], capsys)
    assert code == 130
    assert p.read_text() == "old table"
    assert [x.name for x in tmp_path.iterdir()] == ["s.ecsv"]


def test_seeded_monte_carlo_repeats_exactly(tmp_path, capsys):
    args = ["sweep", "--vary", "clock.atom_number=1e4:1e5:2:log", "--metric", "asd@0.1 Hz",
            "--perturb", "clock.coherence_time=0.2", "--perturb", "link.transmit_power=0.3", "--samples", "40", "--seed", "7"]
    assert run(args + ["--table", tmp_path / "a.ecsv"], capsys)[0] == 0
    assert run(args + ["--table", tmp_path / "b.ecsv"], capsys)[0] == 0
    a, b = QTable.read(tmp_path / "a.ecsv"), QTable.read(tmp_path / "b.ecsv")
    assert np.array_equal(a["asd@0.1Hz"], b["asd@0.1Hz"]) and np.array_equal(a["asd@0.1Hz_p95"], b["asd@0.1Hz_p95"])
    assert np.all(a["asd@0.1Hz_p05"] <= a["asd@0.1Hz"]) and np.all(a["asd@0.1Hz"] <= a["asd@0.1Hz_p95"])
    assert np.all(a["asd@0.1Hz_p05"] < a["asd@0.1Hz_p95"])


def test_one_and_two_axis_plots(tmp_path, capsys):
    assert run(["sweep", "--vary", "clock.atom_number=1e4:1e6:4:log", "--metric", "asd@0.1 Hz", "--plot",
                tmp_path / "a.png"], capsys)[0] == 0
    assert run(["sweep", "--vary", "clock.atom_number=1e4:1e6:4:log", "--vary", "link.transmit_power=0.1 W:10 W:3:log",
                "--metric", "asd@0.1 Hz", "--plot", tmp_path / "b.svg", "--quiet"], capsys)[0] == 0
    assert (tmp_path / "a.png").stat().st_size > 0 and (tmp_path / "b.svg").stat().st_size > 0


def test_scan_command(tmp_path, capsys):
    p = tmp_path / "scan.ecsv"
    assert run(["scan", "--from", "10 mHz", "--to", "1 Hz", "--steps", 3, "--table", p, "--points", 100], capsys)[0] == 0
    t = QTable.read(p)
    cols = [c for c in t.colnames if c.startswith("asd_tune")]
    assert len(cols) == 3
    env = np.min(np.stack([t[c].value for c in cols]), axis=0)
    np.testing.assert_allclose(env, t["asd_scan_envelope"].value, rtol=1e-5, atol=0)


@pytest.mark.parametrize("argv, fragment", [
    (["sweep", "--vary", "clock.atom_numbr=1:2:3", "--metric", "asd@1 Hz"], "no such mission field"),
    (["sweep", "--vary", "clock.atom_number=1:2", "--metric", "asd@1 Hz"], "FIELD=START:STOP:COUNT"),
    (["sweep", "--vary", "link.baseline=1e9:1e10:3", "--metric", "asd@1 Hz"], "missing unit"),
    (["sweep", "--vary", "clock.species=1:2:3", "--metric", "asd@1 Hz"], "only numeric fields"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "speed@1 Hz"], "expected asd@FREQ"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@1 Hz", "--workers", "0"], "--workers"),
    (["require", "--target", "asd@1 Hz<1e-19", "--vary", "clock.atom_number"], "--target"),
    (["scan", "--from", "1 Hz", "--to", "0.1 Hz"], "--from below --to"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--vary", "clock.atom_number=1e3:1e5:2", "--metric",
      "asd@1 Hz"], "varied once"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@1 Hz", "--workers", "2", "--scheduler",
      "tcp://127.0.0.1:1"], "either --workers or --scheduler"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@1 Hz", "--perturb", "clock.atom_number=0.1",
      "--samples", "1"], "--samples"),
    (["sweep", "--vary", "clock.atom_numbr=1e3:1e4:3", "--metric", "asd@1 Hz"], "no such mission field"),
    (["sweep", "--vary", "clock.species=1:2:3", "--metric", "asd@1 Hz"], "only numeric fields"),
    (["sweep", "--vary", "clock.atom_number", "--metric", "asd@1 Hz"], "FIELD=START:STOP:COUNT"),
    (["sweep", "--vary", "clock.atom_number=1:2:3:cubic", "--metric", "asd@1 Hz"], "FIELD=START:STOP:COUNT"),
    (["sweep", "--vary", "clock.atom_number=1:2:three", "--metric", "asd@1 Hz"], "whole number"),
    (["sweep", "--vary", "clock.atom_number=1:2:0", "--metric", "asd@1 Hz"], "between 1 and 1e6"),
    (["sweep", "--vary", "link.baseline=1e9:1e10:3", "--metric", "asd@1 Hz"], "missing unit"),
    (["sweep", "--vary", "clock.atom_number=-1:2:3:log", "--metric", "asd@1 Hz"], "positive ends"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "band@-1"], "--metric"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@-1"], "expected a frequency from 1e-09 Hz"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@0"], "expected a frequency from 1e-09 Hz"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "power_needed@-1"], "expected a frequency"),
    (["sweep", "--vary", "coherence_time=10 s:100 s:2", "--metric", "asd@1 Hz"], "did you mean 'clock.coherence_time'"),
    (["sweep", "--vary", "clock.atom_number=nan:1e8:3", "--metric", "asd@1 Hz"], "expected finite ends"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@1 Hz", "--scheduler", "not a url"],
     "--scheduler: got 'not a url'; cannot use this Dask scheduler"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:1000000", "--vary", "clock.pulse_error=0:0.1:1000000",
      "--metric", "asd@1 Hz"], "the grid has 1e+12 points; at most 1e+07"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@1 Hz", "--perturb", "coherence_time=0.1"],
     "no such mission field"),
    (["require", "--target", "asd@-1Hz<=1e-18", "--vary", "clock.atom_number"], "expected a frequency"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@1 Hz", "--perturb", "clock.atom_number=0.1",
      "--seed", "-1"], "--seed: got -1"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@1 Hz", "--perturb", "clock.atom_number=0.1",
      "--samples", "1000000000"], "--samples"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "horizon:-5"], "--metric"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "horizon:inf"], "expected a total mass"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@1 Hz", "--perturb", "clock.atom_number"],
     "FIELD=REL_SIGMA"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@1 Hz", "--perturb", "clock.atom_number=2"],
     "REL_SIGMA"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@1 Hz", "--perturb", "link.baseline=1e-1e"],
     "--perturb link.baseline: got '1e-1e'; REL_SIGMA must be a plain number"),
    (["sweep", "--vary", "clock.atom_number=1e3:1e4:3", "--metric", "asd@1 Hz", "--perturb", "sequence.tune=0.1"],
     "needs a fixed sequence.tune"),
    (["require", "--target", "band@1e-18<=1", "--vary", "clock.atom_number"], "one value"),
    (["require", "--target", "asd@1 Hz<=1e-19", "--vary", "link.baseline", "--bounds", "1e9:1e10"], "--bounds"),
    (["require", "--target", "asd@1 Hz<=1e-19", "--vary", "clock.atom_number", "--bounds", "5:1"], "0 < LO < HI"),
])
def test_bad_study_command_lines(tmp_path, monkeypatch, capsys, argv, fragment):
    monkeypatch.chdir(tmp_path)
    code, _, err = run(argv, capsys)
    assert code == 2 and fragment in err and err.count("\n") == 1
    assert list(tmp_path.iterdir()) == []


def test_parse_vary_units():
    m, _ = load_mission(None)
    a = parse_vary("link.baseline=1e6 km:1e8 km:3:log", m)
    np.testing.assert_allclose(a.values, [1e9, 1e10, 1e11], rtol=1e-12, atol=0)
    assert a.unit == "m"
    with pytest.raises(InputError):
        parse_vary("link.baseline=-1 m:1 m:3:log", m)


class TestStudyMetrics:
    """Each sweep metric against an independent value: the defining equation solved or evaluated
    directly through the library (root of shot = projection, SNR at the reported horizon, the
    matched-filter SNR of a monochromatic source, the envelope at the band edges)."""

    def table(self, tmp_path, capsys, metric, mission=None, vary="clock.atom_number=1e5:1e6:2:log"):
        p = tmp_path / "m.ecsv"
        argv = ["sweep"] + ([mission] if mission else []) + ["--vary", vary, "--metric", metric, "--table", p]
        assert run(argv, capsys)[0] == 0
        return QTable.read(p)

    def designs(self, t, mission=None):
        m, _ = load_mission(mission)
        return [m.clone(**{"clock.atom_number": float(N)}).design() for N in t["clock.atom_number"]]

    def test_power_needed_is_where_shot_equals_projection(self, tmp_path, capsys):
        t = self.table(tmp_path, capsys, "power_needed@1 Hz")
        for d, p in zip(self.designs(t), np.asarray(t["power_needed@1Hz"].value)):
            b = envelope(d.replace(transmit_power=float(p)), np.array([1.0]))
            assert b.psd["shot"][0] / b.psd["projection"][0] == pytest.approx(1.0, rel=1e-6, abs=0)

    def test_horizon_is_where_the_tracked_snr_is_eight(self, tmp_path, capsys):
        from gwclock.astro.sources import Inspiral
        from gwclock.studies.snr import TunedCurve, clock_snr
        from gwclock.studies.sweep import BAND_GRID
        t = self.table(tmp_path, capsys, "horizon:2e4")
        for d, z in zip(self.designs(t), np.asarray(t["horizon_z@20000Msun"], dtype=float)):
            src = Inspiral.from_masses(1e4, 1e4, redshift=float(z))
            snr = clock_snr(TunedCurve(d, BAND_GRID[0], BAND_GRID[-1], BAND_GRID.size), src, "track").snr
            assert snr == pytest.approx(8.0, rel=1e-4, abs=0)

    def test_snr_of_a_monochromatic_source_file(self, tmp_path, capsys):
        # SNR = h0 sqrt(T_obs / S_n(f)) at the envelope (matched filter, Robson, Cornish & Liu 2019)
        src = tmp_path / "gb.csv"
        src.write_text("name,frequency,h0\ngb,20 mHz,1e-21\n")
        t = self.table(tmp_path, capsys, f"snr:{src}:fixed")
        for d, snr in zip(self.designs(t), np.asarray(t["snr[fixed]:gb"], dtype=float)):
            s = envelope(d, np.array([0.02])).total[0]
            assert snr == pytest.approx(1e-21 * np.sqrt(d.duration / s), rel=1e-9, abs=0)

    def test_band_edges_bracket_the_level(self, tmp_path, capsys):
        from gwclock.studies.sweep import BAND_GRID
        level = 3e-18
        t = self.table(tmp_path, capsys, f"band@{level:g}")
        for d, lo, hi in zip(self.designs(t), np.asarray(t[f"band_low@{level:g}"].value),
                             np.asarray(t[f"band_high@{level:g}"].value)):
            asd = envelope(d, BAND_GRID).asd
            inside = BAND_GRID[asd <= level]
            assert lo == inside.min() and hi == inside.max()
            step = BAND_GRID[1] / BAND_GRID[0]
            edges = envelope(d, np.array([lo / step, lo, hi, hi * step])).asd
            assert edges[0] > level >= edges[1] and edges[2] <= level < edges[3]


def test_require_command_finds_the_atom_number(quiet, capsys):
    # quantum projection noise: ASD ~ N^-1/2 (Itano et al. 1993, PRA 47, 3554) predicts the answer
    # from one evaluation; the command prints it
    code, out, _ = run(["require", quiet, "--target", "asd@0.05 Hz<=1e-19", "--vary", "clock.atom_number",
                        "--bounds", "1e3:1e10"], capsys)
    assert code == 0 and "smallest clock.atom_number" in out
    value = float(out.split(":")[-1].split()[0])
    m, _ = load_mission(quiet)
    a = np.sqrt(envelope(m.design(), np.array([0.05])).total[0])
    assert value == pytest.approx(1e5 * (a / 1e-19) ** 2, rel=1e-4, abs=0)
    code, out, _ = run(["require", quiet, "--target", "asd@0.05 Hz<=1e-40", "--vary", "clock.atom_number"], capsys)
    assert code == 1 and "cannot be reached" in out


def test_monte_carlo_of_a_fixed_design_has_no_spread(tmp_path, capsys):
    # perturbing a field the metric does not depend on leaves every sample equal to the nominal
    # value (median = 5 % = 95 %); perturbing N spreads the ASD as N^-1/2 (Itano et al. 1993)
    p = tmp_path / "mc.ecsv"
    assert run(["sweep", "--vary", "clock.atom_number=1e4:1e5:2:log", "--metric", "asd@0.05 Hz", "--perturb",
                "observation.duration=0.3", "--samples", "8", "--seed", "3", "--table", p, "--plot",
                tmp_path / "mc.png", "--quiet"], capsys)[0] == 0
    t = QTable.read(p)
    m, _ = load_mission(None)
    for row in t:
        d = m.clone(**{"clock.atom_number": float(row["clock.atom_number"])}).design()
        nominal = np.sqrt(envelope(d, np.array([0.05])).total[0])
        for col in ("asd@0.05Hz", "asd@0.05Hz_p05", "asd@0.05Hz_p95"):
            assert float(np.asarray(row[col].value if hasattr(row[col], "value") else row[col])) == \
                pytest.approx(nominal, rel=1e-12, abs=0)


def test_scan_writes_a_figure(tmp_path, capsys):
    assert run(["scan", "--from", "10 mHz", "--to", "1 Hz", "--steps", 3, "--points", 60, "--plot",
                tmp_path / "s.png"], capsys)[0] == 0
    assert (tmp_path / "s.png").read_bytes()[:4] == b"\x89PNG"


def test_a_chunk_ships_only_its_slice_of_the_axes(tmp_path):
    # a worker is sent the values its points use, not a million-value axis; the table is the same
    import pickle

    from gwclock.studies import executor
    m, _ = load_mission(None)
    big = parse_vary("clock.atom_number=1e4:1e7:1000000:log", m)
    small = parse_vary("link.baseline=1e10 m:3e10 m:3", m)
    combos = [(i, j) for i in range(5000, 5022) for j in range(3)][:64]
    cut, local, indices = executor._task([big, small], combos)
    assert len(pickle.dumps((cut, local, indices))) < 20_000 < len(pickle.dumps([big, small]))
    assert indices == [i * 3 + j for i, j in combos]
    whole = executor.chunk_rows(m, [big, small], ["asd@0.1 Hz"], combos, (), 1, 0)
    sliced = executor.chunk_rows(m, cut, ["asd@0.1 Hz"], local, (), 1, 0, indices)
    for c in whole.colnames:
        assert list(whole[c]) == list(sliced[c])


def test_monte_carlo_seeds_come_from_the_place_in_the_whole_grid():
    # the contract that makes a table independent of chunking and workers: point i of the grid
    # draws with seed + i (checked against a direct evaluation of one point past the first chunk)
    from gwclock.studies.executor import CHUNK_POINTS, run_sweep
    from gwclock.studies.sweep import parse_metric, perturbed_metrics
    m, _ = load_mission(None)
    axes = [parse_vary(f"clock.atom_number=1e4:1e6:{CHUNK_POINTS + 6}:log", m)]
    rows = []
    run_sweep(m, axes, ["asd@0.1 Hz"], perturb=[("link.transmit_power", 0.3)], samples=4, seed=7, sink=rows.append)
    i = CHUNK_POINTS + 3
    last = rows[-1]
    point = m.clone(**{"clock.atom_number": axes[0].texts[i]})
    stats, _ = perturbed_metrics(point, [parse_metric("asd@0.1 Hz")], [("link.transmit_power", 0.3)], 4, 7 + i)
    assert float(last["asd@0.1Hz"][i - CHUNK_POINTS]) == stats["asd@0.1Hz"][0]


class TestSweepFigures:
    """What ``sweep --plot`` draws (through the artists, not pixels)."""

    def test_a_band_metric_is_drawn_as_the_band_between_its_edges(self, tmp_path, capsys):
        from matplotlib.collections import PolyCollection

        from gwclock.outputs.plotting import draw_sweep
        p = tmp_path / "b.ecsv"
        assert run(["sweep", "--vary", "clock.atom_number=1e4:1e6:5:log", "--metric", "band@3e-18", "--table", p,
                    "--quiet"], capsys)[0] == 0
        t = QTable.read(p)
        m, _ = load_mission(None)
        axes = [parse_vary("clock.atom_number=1e4:1e6:5:log", m)]
        fig, ax = draw_sweep(None, axes, parse_metric("band@3e-18"), t)
        fills = [c for c in ax.collections if isinstance(c, PolyCollection)]
        assert len(fills) == 1 and ax.get_yscale() == "log" and ax.get_xlabel() == "atom number"
        edges = [np.asarray(line.get_ydata(), dtype=float) for line in ax.get_lines()]
        np.testing.assert_array_equal(edges[0], np.asarray(t["band_low@3e-18"].value))
        np.testing.assert_array_equal(edges[1], np.asarray(t["band_high@3e-18"].value))

    def test_a_third_field_gives_one_panel_per_value(self, tmp_path, capsys):
        out = tmp_path / "f.png"
        code, _, _ = run(["sweep", "--vary", "clock.atom_number=1e4:1e6:3:log", "--vary", "link.baseline=1e10 m:3e10 m:2",
                          "--vary", "clock.dead_time=0.5 s:1 s:2", "--metric", "asd@0.1 Hz", "--plot", out, "--quiet"],
                         capsys)
        assert code == 0 and out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
        from gwclock.outputs.plotting import draw_sweep
        m, _ = load_mission(None)
        axes = [parse_vary(v, m) for v in ("clock.atom_number=1e4:1e6:3:log", "link.baseline=1e10 m:3e10 m:2",
                                           "clock.dead_time=0.5 s:1 s:2")]
        rows = []
        from gwclock.studies.executor import run_sweep
        run_sweep(m, axes, ["asd@0.1 Hz"], sink=rows.append)
        from astropy.table import vstack
        fig, first = draw_sweep(None, axes, parse_metric("asd@0.1 Hz"), vstack(rows))
        panels = [a for a in fig.axes if a.get_label() != "<colorbar>"]
        assert len(panels) == 2 and panels[0].get_ylabel() == "baseline [$\\mathrm{m}$]"
        assert [a.get_title() for a in panels] == ["dead time = 0.5 $\\mathrm{s}$", "dead time = 1 $\\mathrm{s}$"]

    @pytest.mark.parametrize("extra, fragment", [
        (["--vary", "clock.dead_time=0.5 s:1 s:2", "--vary", "clock.squeezing_db=0:3:2"], "at most three"),
        (["--vary", "clock.dead_time=0.5 s:1 s:7"], "at most 6 values"),
        (["--plot-metric", "asd@1Hz"], "--plot-metric: got 'asd@1Hz'; not a column of this sweep"),
    ])
    def test_what_cannot_be_drawn_is_refused_before_the_work(self, tmp_path, monkeypatch, capsys, extra, fragment):
        monkeypatch.chdir(tmp_path)
        argv = ["sweep", "--vary", "clock.atom_number=1e4:1e6:3:log", "--vary", "link.baseline=1e10 m:3e10 m:2",
                "--metric", "asd@0.1 Hz", "--table", "t.ecsv", "--plot", "f.png", *extra]
        code, _, err = run(argv, capsys)
        assert code == 2 and fragment in err and err.count("\n") == 1
        assert list(tmp_path.iterdir()) == []

    def test_axis_labels_carry_typeset_units(self):
        from gwclock.outputs.plotting import axis_label, unit_text
        assert axis_label("link.transmit_power", "W") == "transmit power [$\\mathrm{W}$]"
        assert unit_text("Hz(-1/2)") == "$\\mathrm{Hz^{-1/2}}$"


def test_a_scan_colours_each_window_by_its_tuning_on_a_colour_bar():
    # the colour of a window is its tuning on a log colour scale (read back through the colour bar)
    from gwclock.outputs.plotting import draw_scan
    f = np.geomspace(1e-3, 10, 50)
    tunings = np.array([0.01, 0.1, 1.0])
    S = np.array([1e-36 * (1 + (f / t) ** 2) for t in tunings])
    art = draw_scan(None, f, tunings, S, S.min(axis=0))
    cb = art["colourbar"]
    assert cb is not None and cb.norm.vmin == pytest.approx(0.01, rel=1e-12, abs=0)
    for t, line in zip(tunings, art["windows"]):
        assert line.get_color() == cb.cmap(cb.norm(t))


def test_a_target_is_drawn_as_its_own_level(tmp_path, capsys):
    # the target contour is the level set Z = target of the drawn map (checked by interpolating the
    # map's own grid at the contour's vertices, scipy.interpolate); no plain contour repeats it
    from matplotlib.colors import to_hex
    from scipy.interpolate import RegularGridInterpolator

    from gwclock.outputs.plotting import TARGET_COLOUR, draw_sweep
    from gwclock.studies.executor import run_sweep
    m, _ = load_mission(None)
    axes = [parse_vary("clock.atom_number=1e3:1e7:9:log", m), parse_vary("link.baseline=1e10 m:5e10 m:5", m)]
    rows = []
    run_sweep(m, axes, ["asd@0.1 Hz"], sink=rows.append)
    from astropy.table import vstack
    t = vstack(rows)
    fig, ax = draw_sweep(None, axes, parse_metric("asd@0.1 Hz"), t, target=1e-18)
    sets = [c for c in ax.collections if hasattr(c, "levels")]
    target = [c for c in sets if to_hex(c.get_edgecolor()[0]) == TARGET_COLOUR.lower()]
    assert len(target) == 1 and list(target[0].levels) == pytest.approx([-18.0], rel=1e-12, abs=0)
    assert all(abs(v + 18.0) > 1e-6 for c in sets if c not in target for v in c.levels)
    Z = np.log10(np.asarray(t["asd@0.1Hz"], dtype=float).reshape(9, 5))
    grid = RegularGridInterpolator((axes[0].values, axes[1].values), Z)
    vertices = np.concatenate([p.vertices for p in target[0].get_paths()])
    # on the cell edges the level set is exact; the label's gap adds vertices on the straight piece
    # between two edge crossings, where bilinear interpolation differs by a little (< 1e-4 here)
    np.testing.assert_allclose(grid(vertices), -18.0, rtol=1e-4, atol=0)
