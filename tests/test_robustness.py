"""Robustness: the corners of the parameter space, random mission files, interrupted runs.

Truth: finiteness and positivity everywhere (a PSD is positive), the scaling laws of projection
noise (Itano et al. 1993) and of the far-field link (P_r ~ 1/L^2), and the rule that bad input
only ever gives the one-line error.
"""

import os
import signal
import subprocess
import sys
import time
import tomllib
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from gwclock.config.mission import load_mission, mission_from_dict
from gwclock.engine import envelope, window
from gwclock.errors import InputError

from .conftest import quiet_design

BASE, _ = load_mission(None)
FREQ = np.geomspace(1e-7, 1e4, 60)

designs = st.builds(
    lambda L, N, eps, tau, tpi, dead, P, kind, comp, acc, lw, fl: BASE.design().replace(
        baseline=L, atom_number=N, pulse_error=eps, coherence_time=tau, pi_pulse_duration=tpi, dead_time=dead,
        transmit_power=P, kind=kind, comparison=comp, acceleration_noise=acc, linewidth=lw, flicker_floor=fl,
        max_interrogation=min(3 * tau, 1e6)),
    L=st.floats(1e6, 1e13), N=st.floats(1, 1e12), eps=st.floats(0, 0.5), tau=st.floats(1e-3 * 10, 1e5),
    tpi=st.floats(1e-5, 1e-3), dead=st.floats(0, 100), P=st.floats(1e-6, 1e3),
    kind=st.sampled_from(["ramsey", "echo", "cpmg", "xy8"]), comp=st.sampled_from(["linear", "correlated", "auto"]),
    acc=st.floats(0, 1e-12), lw=st.floats(0, 10), fl=st.floats(0, 1e-14),
)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(designs)
def test_envelope_is_finite_and_positive_everywhere(d):
    # no NaN, no inf, no warning (warnings are errors in this suite) from 1e-7 to 1e4 Hz
    b = envelope(d, FREQ)
    for arr in (b.total, *b.psd.values()):
        assert np.all(np.isfinite(arr))
        assert np.all(arr >= 0)
    assert np.all(b.total > 0)


custom_designs = st.builds(
    lambda times, B, tpi: BASE.design().replace(kind="custom", pulse_times=tuple(sorted(times)),
                                                phase_lock_bandwidth=B, pi_pulse_duration=tpi),
    times=st.lists(st.floats(0.02, 0.98), min_size=1, max_size=6, unique=True).filter(
        lambda t: np.min(np.diff(np.concatenate(([0.0], sorted(t), [1.0])))) > 0.01),
    B=st.floats(0.1, 1e3), tpi=st.floats(1e-4, 1e-2),
)


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(custom_designs)
def test_custom_timings_give_finite_positive_noise(d):
    # a PSD is finite and positive (definition); a band whose lower edge lies above its upper one
    # (the shot noise's plateau when the phase lock is wider than the pulse bandwidth) holds nothing
    b = envelope(d, np.geomspace(1e-4, 100, 40))
    for arr in (b.total, *b.psd.values()):
        assert np.all(np.isfinite(arr)) and np.all(arr >= 0)
    assert np.all(b.total > 0)


@settings(max_examples=30, deadline=None)
@given(designs, st.floats(1e-3, 10))
def test_windows_are_finite(d, f0):
    try:
        w = window(d, FREQ, tune=f0)
    except ValueError as exc:  # a tuning that no sequence can reach is refused, not computed
        assert "can be tuned" in str(exc)
        return
    assert np.all(np.isfinite(w.total)) and np.all(w.total > 0)


@settings(max_examples=25, deadline=None)
@given(st.floats(1, 1e7), st.floats(1.5, 100), st.floats(1e-4, 10))
def test_projection_scaling_law(N, k, f):
    # quantum projection noise: S_n ~ 1/N (Itano et al. 1993), whatever the frequency
    a = envelope(quiet_design(atom_number=N), np.array([f])).total[0]
    b = envelope(quiet_design(atom_number=N * k), np.array([f])).total[0]
    assert a / b == pytest.approx(k, rel=1e-6, abs=0)


@settings(max_examples=25, deadline=None)
@given(st.floats(1e6, 1e12), st.floats(1.5, 10))
def test_received_power_scaling_law(L, k):
    from gwclock.physics.noises import received_power
    assert received_power(quiet_design(baseline=L)) / received_power(quiet_design(baseline=k * L)) == pytest.approx(k**2, rel=1e-12, abs=0)


@settings(max_examples=20, deadline=None)
@given(st.floats(1e-9, 1e-3))
def test_many_pulses_stay_finite(tpi):
    # a tuning near the pulse limit with a long interrogation: tens of thousands of pi pulses
    d = quiet_design(pi_pulse_duration=tpi, max_interrogation=1e4, coherence_time=1e5, pulse_error=0.5)
    b = envelope(d, np.array([1.0, 100.0, 1e4]))
    assert np.all(np.isfinite(b.total)) and np.all(b.total > 0)


# fuzzing the mission loader -----------------------------------------------------------------
keys = st.sampled_from(["name", "link", "clock", "baseline", "transmit_power", "species", "atom_number", "kind",
                        "sequence", "tune", "laser", "linewidth", "x", "observation", "duration", "pulse_times"])
scalars = st.one_of(st.integers(-10**6, 10**6), st.floats(allow_nan=True, allow_infinity=True), st.booleans(),
                    st.text(max_size=12), st.sampled_from(["3e10 m", "1 W", "Sr87", "auto", "5 kg", "nan m", "cpmg"]))
documents = st.recursive(scalars, lambda inner: st.one_of(st.lists(inner, max_size=3),
                                                           st.dictionaries(keys, inner, max_size=5)), max_leaves=20)


@settings(max_examples=300, deadline=None)
@given(st.dictionaries(keys, documents, max_size=6))
def test_random_documents_only_give_the_clean_error(doc):
    try:
        mission_from_dict(doc, "fuzz.toml")
    except InputError as exc:
        assert str(exc).startswith("fuzz.toml") and "\n" not in str(exc)


@settings(max_examples=100, deadline=None)
@given(st.binary(max_size=200))
def test_random_bytes_only_give_the_clean_error(tmp_path_factory, data):
    p = tmp_path_factory.mktemp("fz") / "m.toml"
    p.write_bytes(data)
    try:
        load_mission(p)
    except InputError as exc:
        assert "\n" not in str(exc)


def test_fuzzed_valid_toml_mutations(tmp_path):
    # delete or corrupt every line of a shipped mission in turn: only clean errors (or success)
    with open(os.path.join(os.path.dirname(__file__), "..", "mission_configs", "flagship.toml")) as fh:
        text = fh.read()
    lines = text.splitlines()
    for i in range(len(lines)):
        for variant in (lines[:i] + lines[i + 1:], lines[:i] + [lines[i].replace("=", "= 1 +")] + lines[i + 1:]):
            p = tmp_path / "m.toml"
            p.write_text("\n".join(variant))
            try:
                tomllib.loads(p.read_text())
            except tomllib.TOMLDecodeError:
                pass
            try:
                load_mission(p)
            except InputError as exc:
                assert "\n" not in str(exc)


# interrupted runs ----------------------------------------------------------------------------
def _plain_env():
    """The environment without coverage's subprocess hooks: the child must run our own signal
    handling only (and at full speed), whatever measures the parent."""
    return {k: v for k, v in os.environ.items() if not k.startswith(("COV_CORE", "COVERAGE"))}


@pytest.mark.parametrize("sig", [signal.SIGTERM, signal.SIGKILL])
def test_killed_run_leaves_the_old_output_intact(tmp_path, sig):
    out = tmp_path / "table.ecsv"
    out.write_text("previous results\n")
    proc = subprocess.Popen([sys.executable, "-m", "gwclock", "sweep", "--vary", "clock.atom_number=1e3:1e7:20000:log",
                             "--metric", "band@1e-17", "--table", str(out), "--quiet"],
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, cwd=tmp_path, env=_plain_env())
    # signal the run once its first chunk is in the temporary file: mid-write, whatever the machine's speed
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline and proc.poll() is None:
        if any(p.stat().st_size > 0 for p in tmp_path.glob(".table.*.part.ecsv")):
            break
        time.sleep(0.02)
    assert time.monotonic() < deadline  # the temporary file has its first chunk
    assert proc.poll() is None  # still writing
    proc.send_signal(sig)
    proc.wait(timeout=60)
    assert out.read_text() == "previous results\n"
    leftovers = [p.name for p in tmp_path.iterdir() if p.name != "table.ecsv"]
    if sig == signal.SIGTERM:
        assert leftovers == []  # cleaned up on a polite stop
    else:  # a SIGKILL cannot be answered: the next run writing the same output removes the leftover
        assert len(leftovers) == 1
        done = subprocess.run([sys.executable, "-m", "gwclock", "sweep", "--vary", "clock.atom_number=1e3:1e4:2",
                               "--metric", "asd@1 Hz", "--table", str(out), "--quiet"],
                              capture_output=True, cwd=tmp_path, env=_plain_env(), timeout=120)
        assert done.returncode == 0
        assert [p.name for p in tmp_path.iterdir()] == ["table.ecsv"]


def _alive_in_group(pgid):
    """Processes of a process group that still run (zombies, already dead, are not counted)."""
    alive = []
    for stat in Path("/proc").glob("[0-9]*/stat"):
        try:
            fields = stat.read_text().rsplit(")", 1)[1].split()
        except OSError:
            continue
        if int(fields[2]) == pgid and fields[0] != "Z":
            alive.append(stat.parent.name)
    return alive


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
@pytest.mark.parametrize("how", ["ctrl-c", "sigterm", "sigkill"])
def test_an_interrupted_parallel_sweep_stops_at_once_and_leaves_no_workers(tmp_path, how):
    # Ctrl-C reaches the whole process group, SIGTERM and SIGKILL the parent only (POSIX signal
    # semantics, common practice, no source); the workers must not outlive it, nor print tracebacks
    out = tmp_path / "table.ecsv"
    proc = subprocess.Popen([sys.executable, "-m", "gwclock", "sweep", "--vary", "clock.atom_number=1e3:1e7:200:log",
                             "--metric", "band@1e-17", "--perturb", "clock.atom_number=0.1", "--samples", "400",
                             "--workers", "2", "--table", str(out), "--quiet"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, cwd=tmp_path, env=_plain_env(),
                            start_new_session=True)
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline and len(_alive_in_group(proc.pid)) < 3:  # the parent and two workers
        time.sleep(0.05)
    time.sleep(1.0)  # the workers are inside their first chunks
    assert proc.poll() is None
    t0 = time.monotonic()
    if how == "ctrl-c":
        os.killpg(proc.pid, signal.SIGINT)
    else:
        proc.send_signal(signal.SIGTERM if how == "sigterm" else signal.SIGKILL)
    _, err = proc.communicate(timeout=60)
    assert time.monotonic() - t0 < 10
    if how != "sigkill":
        assert proc.returncode == 130 and err.decode().strip() == "gwclock: interrupted"
    deadline = time.monotonic() + 10
    while _alive_in_group(proc.pid) and time.monotonic() < deadline:
        time.sleep(0.05)
    assert _alive_in_group(proc.pid) == []
    assert not out.exists()


@settings(max_examples=40, deadline=None)
@given(designs)
def test_ramsey_shortcut_bound_is_a_lower_bound(d):
    # the engine skips Ramsey where this bound exceeds the DD result; it must never exceed the
    # Ramsey result itself (analytic bound: C <= 1, kappa >= 1, |G|^2 <= min(T^2, 1/(pi f)^2))
    from gwclock.engine import search as engine
    f = np.geomspace(1e-6, 1e3, 40)
    best, ok = engine.best_of_kind(d, engine.SEQUENCES["ramsey"], f)
    bound = engine._ramsey_projection_bound(d, f)
    assert np.all(bound[ok] <= engine.total_psd(best)[ok] * (1 + 1e-12))


@settings(max_examples=200, deadline=None)
@given(st.floats(0, 100), st.floats(1e-2, 1e5), st.floats(-60, -20), st.floats(-60, -20), st.floats(-60, -20),
       st.floats(1.0001, 1e4), st.floats(0, 1))
def test_continuous_interrogation_optimum_is_the_minimum(dead, tau, log_a, log_b, log_q, stretch, start):
    # the engine's Newton/Lambert-W root must minimise (T + Td)[a/T + (b + q e^{2T/tau})/T^2] on
    # [lo, hi]; checked against scipy.optimize.minimize_scalar (bounded Brent) on the same range
    from scipy.optimize import minimize_scalar

    from gwclock.engine import search as engine
    from gwclock.physics.sequences import optimal_interrogation

    class D:
        dead_time = dead

    a, b, q = 10.0**log_a, 10.0**log_b, 10.0**log_q
    t_p = float(optimal_interrogation(tau, dead))
    hi = t_p * stretch
    lo = t_p * (1 + start * (stretch - 1) * 0.5)

    def cost(T):  # natural log of the objective, without overflow
        parts = [np.log(a / T), np.log(b / T**2), np.log(q / T**2) + 2 * T / tau]
        return np.log(T + dead) + np.logaddexp.reduce(parts)

    found = float(engine.continuous_optimum(D, np.array([lo]), np.array([hi]), a, b, q, tau)[0])
    ref = minimize_scalar(cost, bounds=(lo, hi), method="bounded", options={"xatol": 1e-12 * hi}).x
    assert lo <= found <= hi
    assert cost(found) <= min(cost(ref), cost(lo), cost(hi)) + 1e-9


@settings(max_examples=40, deadline=None)
@given(designs, st.floats(0, 0.3))
def test_pruned_ramsey_search_equals_the_candidate_search(d, gain):
    # the engine skips Ramsey candidates whose lower bounds already lose; evaluating every
    # candidate with the full aliasing sum must pick the same total (a gain mismatch makes the
    # laser flicker term need the explicit harmonic sum)
    from gwclock.engine import search as engine
    d = d.replace(gain_mismatch=gain, flicker_floor=max(d.flicker_floor, 1e-15))
    f = np.geomspace(1e-6, 1e3, 40)
    R = engine.SEQUENCES["ramsey"]
    n, T, valid = engine._safe(d, R, f, *R.snap(d, f, engine._ramsey_wishes(d, f)))
    everything = np.where(valid, engine.total_psd(engine.evaluate(d, R, f, n, T)), np.inf).min(axis=0)
    best, _ = engine._best_ramsey(d, R, f, refine=False)
    ok = np.isfinite(everything)
    np.testing.assert_allclose(engine.total_psd(best)[ok], everything[ok], rtol=1e-12, atol=0)
    # and the polished result never loses to a candidate
    polished, _ = engine.best_of_kind(d, R, f)
    assert np.all(engine.total_psd(polished)[ok] <= everything[ok] * (1 + 1e-12))


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(designs, st.lists(st.floats(-4, 2), min_size=1, max_size=4, unique=True))
def test_the_envelope_is_the_minimum_over_every_allowed_sequence(d, log_f):
    # brute force (tests/exhaustive.py): every allowed pulse count at T = n/(2f), and Ramsey at a dense
    # grid below its first lobe maximum, every lobe maximum beyond, and the shortest interrogation
    from gwclock.engine import signal_response

    from .exhaustive import brute
    f = np.unique(np.round(10.0 ** np.array(log_f), 9))
    sy = envelope(d, f).total * signal_response(d, f)
    assert np.all(sy <= brute(d, f) * (1 + 1e-6))


# one meaning of "tuned to f0" ------------------------------------------------------------------
@settings(max_examples=40, deadline=None)
@given(designs, st.floats(-3, 1.5))
def test_a_window_meets_the_envelope_at_its_tuning(d, log_f0):
    # the sequence of a fixed tuning is the one the envelope chooses there, so the two agree at f0
    # (definition; common practice, no source), and a scan's window is the same window
    from gwclock.engine import window_psd
    f0 = 10.0**log_f0
    f = np.array(sorted({f0 / 3, f0, f0 * 2.5}))
    w = window(d, f, tune=f0)
    e = envelope(d, np.array([f0]))
    i = int(np.flatnonzero(f == f0)[0])
    assert w.total[i] == pytest.approx(e.total[0], rel=1e-12, abs=0)
    assert (w.pulses[0], w.interrogation[0]) == (e.pulses[0], e.interrogation[0])
    s, _ = window_psd(d, [f0], f)
    np.testing.assert_allclose(s[0], w.total, rtol=1e-12, atol=0)


@settings(max_examples=25, deadline=None)
@given(designs, st.floats(-3.5, 0.5), st.floats(-23, -20))
def test_a_monochromatic_source_tuned_to_itself_gives_the_envelope_snr(d, log_f, log_h0):
    # <SNR^2> = h0^2 T / S_n(f) (Robson, Cornish & Liu 2019, CQG 36, 105011, sec. 2) with the
    # envelope's S_n at the source frequency
    from gwclock.astro.sources import Monochromatic
    from gwclock.studies.snr import TunedCurve, clock_snr
    f, h0 = 10.0**log_f, 10.0**log_h0
    curve = TunedCurve(d, points=50)
    r = clock_snr(curve, Monochromatic("m", f, h0), "fixed")
    expected = h0 * np.sqrt(d.duration / envelope(d, np.array([f])).total[0])
    assert r.snr == pytest.approx(expected, rel=1e-12, abs=0)


def test_the_best_schedule_is_never_below_fixed_or_track():
    # "best" is the best of the plans by definition (common practice, no source), on the shipped missions
    from gwclock.astro.sources import Inspiral
    from gwclock.studies.snr import TunedCurve, clock_snr
    from tests.conftest import MISSIONS
    for path in MISSIONS:
        curve = TunedCurve(load_mission(path)[0].design())
        for m1, z in ((1e4, 1.0), (1e3, 0.5), (30.0, 0.1)):
            src = Inspiral.from_masses(m1, m1, redshift=z)
            best = clock_snr(curve, src, "best").snr
            assert best >= clock_snr(curve, src, "fixed").snr * (1 - 1e-12)
            assert best >= clock_snr(curve, src, "track").snr * (1 - 1e-12)
