"""The receiving laser's phase lock: what the comparison of the two clocks keeps of both lasers.

A first-order loop H = 1 / (1 + i f/B) follows the received light with power transfer |H|^2 and
leaves the tracking error |1 - H|^2 = (f/B)^2 / (1 + (f/B)^2) (standard control theory, e.g.
Gardner 2005, Phaselock Techniques, 3rd ed., ch. 2; from memory). The engine carries it as power
laws bounded by the asymptotes; these tests hold the result against a brute-force lattice sum with
the exact transfer and the exact filter function of the pulse train."""

import tomllib
from importlib import resources

import numpy as np
import pytest

from gwclock.config.mission import load_mission, mission_from_dict
from gwclock.engine.formula import evaluate
from gwclock.physics import filters, noises, response
from gwclock.physics.sequences import SEQUENCES

from .conftest import quiet_design


def test_transfer_and_error_add_to_one():
    # H + (1 - H) = 1 and, for a single pole, |H|^2 + |1 - H|^2 = 1 (analytic)
    f = np.geomspace(1e-3, 1e3, 31)
    total = response.phase_lock_transfer(f, 7.0) + response.phase_lock_error(f, 7.0)
    np.testing.assert_allclose(total, 1.0, rtol=1e-14, atol=0)
    h = 1 / (1 + 1j * f / 7.0)
    np.testing.assert_allclose(response.phase_lock_error(f, 7.0), np.abs(1 - h) ** 2, rtol=1e-12, atol=0)


def brute_force_laser(d, f0, n, T, who="master"):
    """sum_m |1 - H(f_m)|^2 S(|f_m|) |G(f_m)|^2 / |G(f0)|^2 over the lattice f_m = f0 + m/Tc inside
    the pulse bandwidth, with the exact first-order |1 - H|^2 and the exact |G| of ideal pulses at
    the CPMG times (k - 1/2) T / n (Dick 1987, Proc. 19th PTTI, 133, for the lattice sum)."""
    Tc = T + d.dead_time
    top = noises.pulse_bandwidth(d)
    m = np.arange(-int(top * Tc) - 2, int(top * Tc) + 3)
    fm = np.abs(f0 + m / Tc)
    fm = fm[(fm < top) & (fm > 0)]
    times = (np.arange(1, n + 1) - 0.5) * T / n
    G2 = np.abs(filters.filter_function(fm, T, times)) ** 2
    G02 = np.abs(filters.filter_function(f0, T, times)) ** 2
    width = d.linewidth if who == "master" else d.receiver_linewidth
    flicker = d.flicker_floor if who == "master" else d.receiver_flicker_floor
    S = width / (np.pi * d.nu0**2) + flicker**2 / (2 * np.log(2)) / fm
    return np.sum(response.phase_lock_error(fm, d.phase_lock_bandwidth) * S * G2) / G02


@pytest.mark.parametrize("B", [0.05, 10.0, 1e3])
@pytest.mark.parametrize("who", ["master", "receiver"])
def test_laser_left_by_the_lock_against_a_brute_force_lattice_sum(B, who):
    # the power-law bounds are >= the exact |1 - H|^2 everywhere and at most 2x above it (at f = B)
    lw = dict(linewidth=0.01, flicker_floor=4e-17) if who == "master" else \
        dict(receiver_linewidth=0.05, receiver_flicker_floor=1e-16)
    d = quiet_design(phase_lock_bandwidth=B, pi_pulse_duration=0.01, dead_time=1.0, **lw)
    f0, n = 0.25, 50
    T = n / (2 * f0)
    key = "laser" if who == "master" else "receiver"
    model = evaluate(d, SEQUENCES["cpmg"], f0, n, T)[key]
    brute = brute_force_laser(d, f0, n, T, who)
    if B > noises.pulse_bandwidth(d):   # the loop follows everything the pulses sample: the f^2 law is exact
        assert model == pytest.approx(brute, rel=0.03, abs=0)
    else:
        assert 0.97 * brute <= model <= 2.0 * brute


def test_a_narrow_lock_leaves_the_laser_above_projection():
    # the default design with a 10 Hz lock: the laser left above B dwarfs the atom projection noise
    # (the reason the shipped missions lock much wider than the pulse bandwidth)
    base = load_mission(None)[0].design()
    narrow = base.replace(phase_lock_bandwidth=10.0)
    kind = SEQUENCES["cpmg"]
    f0, n = 0.5, 100
    wide, tight = (evaluate(d, kind, f0, n, n / (2 * f0)) for d in (base, narrow))
    assert tight["laser"] > 10 * tight["projection"]
    assert wide["laser"] < 0.01 * wide["projection"]
    # inside the loop the tracking error scales as 1/B^2 (f^2/B^2 law): 10x wider, 100x less
    wider = evaluate(base.replace(phase_lock_bandwidth=1e5), kind, f0, n, n / (2 * f0))
    ratio = (wide["receiver"] / wider["receiver"])[()]
    assert ratio == pytest.approx(100.0, rel=1e-9, abs=0)


def test_receiving_laser_defaults_to_the_master_laser():
    m, _ = load_mission(None)
    d = m.design()
    assert d.receiver_linewidth == d.linewidth and d.receiver_flicker_floor == d.flicker_floor
    data = tomllib.loads(resources.files("gwclock.data").joinpath("default.toml").read_text())
    data["laser"].update(receiver_linewidth="0.5 Hz", receiver_flicker_floor=3e-16)
    d2 = mission_from_dict(data, "test").design()
    assert d2.receiver_linewidth == pytest.approx(0.5, rel=1e-15, abs=0)
    assert d2.receiver_flicker_floor == 3e-16


def test_check_shows_the_receiving_laser_in_force():
    from gwclock.outputs.summary import describe_mission
    m, digest = load_mission(None)
    text = describe_mission(m, digest)
    assert "receiver_linewidth = 0.01 Hz  (same as linewidth)" in text
    assert "receiver_flicker_floor = 4e-17  (same as flicker_floor)" in text
