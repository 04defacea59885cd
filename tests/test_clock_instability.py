"""Each clock's own frequency instability: white FM, flicker FM and a slow random-walk drift, given
as Allan deviations and passed through the same filter functions as the lasers' noise.

Truth: the definition of the Allan variance of a one-sided PSD,
sigma_y^2(tau) = 2 integral S_y(f) sin^4(pi f tau) / (pi f tau)^2 df (Barnes et al. 1971, IEEE Trans.
Instrum. Meas. 20, 105; Rutman 1978, Proc. IEEE 66, 1048), evaluated here by scipy quadrature, and
a brute-force lattice sum of the aliased noise (Dick 1987, Proc. 19th PTTI, 133)."""

import numpy as np
import pytest
from scipy import integrate

from gwclock.engine.formula import evaluate
from gwclock.physics import filters, noises
from gwclock.physics.sequences import SEQUENCES

from .conftest import quiet_design


def allan_variance(terms, tau, per_clock=2):
    """sigma_y^2(tau) of one clock by the definition integral (the terms hold both clocks)."""
    def integrand(x):  # x = f tau
        return 2 * noises.psd(terms, x / tau) * np.sin(np.pi * x) ** 4 / (np.pi * x) ** 2 / tau
    edges = np.concatenate(([0.0], np.arange(1, 400, dtype=float)))
    inner = sum(integrate.quad(integrand, a, b, limit=200)[0] for a, b in zip(edges[:-1], edges[1:]))
    # beyond x = 399 sin^4 averages 3/8: the tail of each power law in closed form
    x0 = edges[-1]
    tail = 0.0
    for t in terms:
        if t.alpha == 0:
            tail += 2 * t.level * (3 / 8) / (np.pi**2 * x0) / tau
        elif t.alpha == -1:
            tail += 2 * t.level * (3 / 8) / (2 * np.pi**2 * x0**2)
        elif t.alpha == -2:
            tail += 2 * t.level * (3 / 8) * tau / (3 * np.pi**2 * x0**3)
    return (inner + tail) / per_clock


@pytest.mark.parametrize("field, value, tau", [("clock_white", 3e-16, 1.0), ("clock_white", 3e-16, 100.0),
                                               ("clock_flicker", 2e-18, 1e3),
                                               ("clock_walk", 1e-18, noises.WALK_TAU)])
def test_allan_deviation_of_the_model(field, value, tau):
    d = quiet_design(**{field: value})
    sigma = np.sqrt(allan_variance(noises.clock_terms(d), tau))
    expected = value / np.sqrt(tau) if field == "clock_white" else value
    assert sigma == pytest.approx(expected, rel=2e-3, abs=0)


def test_random_walk_grows_as_the_root_of_tau():
    # random-walk FM: sigma_y^2 = (2 pi^2 / 3) h_-2 tau (Barnes et al. 1971)
    d = quiet_design(clock_walk=1e-18)
    (walk,) = [t for t in noises.clock_terms(d) if t.alpha == -2]
    tau = noises.WALK_TAU / 16
    assert np.sqrt(2 * np.pi**2 / 3 * (walk.level / 2) * tau) == pytest.approx(1e-18 / 4, rel=1e-12, abs=0)


@pytest.mark.parametrize("kind, f0, n", [("cpmg", 0.05, 8), ("cpmg", 0.3, 60)])
def test_budget_against_a_brute_force_lattice_sum(kind, f0, n):
    # sum_m S(|f_m|) |G(f_m)|^2 / |G(f0)|^2 over f_m = f0 + m/Tc, exact |G| of ideal CPMG pulses
    d = quiet_design(clock_flicker=2e-17, clock_walk=1e-17, dead_time=1.0, pi_pulse_duration=1e-6,
                     duration=3e7)
    T = n / (2 * f0)
    Tc = T + d.dead_time
    model = evaluate(d, SEQUENCES[kind], f0, n, T)["clock"]
    m = np.arange(-200_000, 200_001)
    fm = np.abs(f0 + m / Tc)
    times = (np.arange(1, n + 1) - 0.5) * T / n
    G2 = np.abs(filters.filter_function(fm, T, times)) ** 2
    G02 = np.abs(filters.filter_function(f0, T, times)) ** 2
    brute = np.sum(noises.psd(noises.clock_terms(d), np.maximum(fm, 1 / d.duration)) * G2) / G02
    assert model == pytest.approx(brute, rel=0.05, abs=0)


def test_dd_suppresses_a_slow_drift_that_ramsey_sees():
    # random-walk FM through CPMG at its tuning f0: the odd-harmonic lobes 4T/(pi^2 k^2) against
    # |G(f0)|^2 = 4T^2/pi^2 give S_eq = (2 Tc / T) S(f0) sum_k k^-4 = (2 Tc / T) S(f0) pi^4 / 96 (sum over
    # odd k, the Dirichlet lambda(4), e.g. Abramowitz & Stegun 23.2.20, from memory): the drift is
    # seen at f0 only. Ramsey at the same f0 = 1/(2T) is exposed to it down to 1/duration.
    d = quiet_design(clock_walk=1e-17, dead_time=1.0, pi_pulse_duration=1e-6)
    f0, n = 0.2, 40
    T = n / (2 * f0)
    s_f0 = noises.psd(noises.clock_terms(d), f0)
    cpmg = evaluate(d, SEQUENCES["cpmg"], f0, n, T)["clock"]
    assert cpmg / s_f0 == pytest.approx(2 * (T + 1.0) / T * np.pi**4 / 96, rel=1e-3, abs=0)
    ramsey = evaluate(d, SEQUENCES["ramsey"], f0, 0, 1 / (2 * f0))["clock"]
    assert ramsey > 5 * cpmg
