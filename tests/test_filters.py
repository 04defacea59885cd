"""Dynamical-decoupling filter functions.

Truth: the square-wave (CPMG) filter function of Cywinski, Lutchyn, Nave & Das Sarma (2008,
Phys. Rev. B 77, 174509) and Degen, Reinhard & Cappellaro (2017, Rev. Mod. Phys. 89, 035002):
peak |G(f0)| = 2T/pi, odd-harmonic weights 1/3 and 1/5, Parseval's theorem; the finite-pulse
reduction cos(pi d/2)/(1 - d^2) (analytic: Fourier transform of the cosine ramp g(t)
during a pulse, checked here by quadrature); and direct numerical Fourier
transforms of g(t) with scipy.
"""

import numpy as np
import pytest
from scipy import integrate

from gwclock.config.mission import load_mission
from gwclock.physics import filters
from gwclock.physics.filters import (
    filter_function,
    finite_pulse_factor,
    periodic_filter_modulus,
    periodic_noise_integral,
    sensitivity_function,
)


def cpmg_times(n, T):
    return (np.arange(1, n + 1) - 0.5) * T / n


@pytest.mark.parametrize("n", [1, 2, 3, 8, 64])
def test_cpmg_peak_is_two_T_over_pi(n):
    T = 1.7
    f0 = n / (2 * T)
    G = filter_function(f0, T, cpmg_times(n, T))
    assert abs(G) == pytest.approx(2 * T / np.pi, rel=1e-12, abs=0)
    assert abs(G.imag) < 1e-12 * T  # the imaginary part vanishes identically


@pytest.mark.parametrize("n", [2, 8, 64])
def test_odd_harmonic_weights(n):
    T = 1.0
    f0 = n / (2 * T)
    g = np.abs(filter_function(np.array([f0, 3 * f0, 5 * f0]), T, cpmg_times(n, T)))
    assert g[1] / g[0] == pytest.approx(1 / 3, rel=1e-10, abs=0)
    assert g[2] / g[0] == pytest.approx(1 / 5, rel=1e-10, abs=0)


def test_general_closed_form_matches_textbook_sum():
    # G(f) = [1 + 2 sum (-1)^k e^{-2 pi i f t_k} - (-1)^n e^{-2 pi i f T}] / (2 pi i f)
    rng = np.random.default_rng(3)
    T = 2.0
    times = np.sort(rng.uniform(0.05, 1.95, 5))
    f = np.linspace(0.01, 9, 300)
    w = 2 * np.pi * f
    n = times.size
    s = 1 + sum(2 * (-1) ** (k + 1) * np.exp(-1j * w * t) for k, t in enumerate(times)) \
        - (-1) ** n * np.exp(-1j * w * T)
    np.testing.assert_allclose(filter_function(f, T, times), s / (1j * w), rtol=1e-11, atol=0)


@pytest.mark.parametrize("tp", [0.0, 0.02])
def test_against_numerical_fourier_transform_of_g(tp):
    T = 1.0
    times = np.array([0.2, 0.45, 0.8])
    breaks = sorted({0.0, T, *(times - tp / 2), *(times + tp / 2)})
    for f in (0.3, 1.1, 4.2):
        def part(fun, f=f):
            return sum(integrate.quad(lambda t: sensitivity_function(t, T, times, tp) * fun(2 * np.pi * f * t),
                                      a, b, limit=200)[0] for a, b in zip(breaks, breaks[1:]))
        num = part(np.cos) - 1j * part(np.sin)
        assert filter_function(f, T, times, tp) == pytest.approx(num, rel=1e-9, abs=0)


def test_cell_form_equals_piecewise_form_with_finite_pulses():
    T, n, tp = 3.0, 12, 0.04
    f = np.geomspace(1e-3, 30, 500)
    a = periodic_filter_modulus(f, T, n, tp)
    b = np.abs(filter_function(f, T, cpmg_times(n, T), tp))
    np.testing.assert_allclose(a, b, rtol=1e-9, atol=0)


@pytest.mark.parametrize("d, expected", [(0.1, 0.99767), (0.5, 0.94281)])
def test_finite_pulse_reduction_of_the_fundamental(d, expected):
    # analytic: cos(pi d/2)/(1 - d^2), the fundamental of a square wave with cosine ramps
    assert finite_pulse_factor(d) == pytest.approx(expected, rel=1e-5, abs=0)
    n, T = 16, 1.0
    f0 = n / (2 * T)
    tp = d / (2 * f0)
    ratio = periodic_filter_modulus(f0, T, n, tp) / (2 * T / np.pi)
    assert ratio == pytest.approx(np.cos(np.pi * d / 2) / (1 - d**2), rel=1e-10, abs=0)


def test_finite_pulse_limit_pi_over_4():
    assert finite_pulse_factor(1.0 - 1e-12) == pytest.approx(np.pi / 4, rel=1e-9, abs=0)


def test_parseval():
    # integral_0^inf |G|^2 df = T/2 (Parseval: integral g^2 dt = T, one-sided)
    T, n = 1.0, 4
    f = np.linspace(1e-9, 4000, 4_000_001)
    G2 = np.abs(filter_function(f, T, cpmg_times(n, T))) ** 2
    assert np.trapezoid(G2, f) == pytest.approx(T / 2, rel=1e-3, abs=0)


def test_main_lobe_width():
    # FWHM of |G|^2 around f0 tends to 0.886/T (0.8859/T at n = 64); analytic, the
    # half-power width of sinc^2 (Cywinski et al. 2008, eq. for F(omega T))
    T, n = 1.0, 64
    f0 = n / (2 * T)
    f = np.linspace(f0 - 2, f0 + 2, 200_001)
    G2 = periodic_filter_modulus(f, T, n) ** 2
    above = f[G2 >= G2.max() / 2]
    assert above[-1] - above[0] == pytest.approx(0.8859 / T, rel=2e-3, abs=0)


def test_echo_true_maximum():
    # n = 1: |G| = 2 sin^2(x)/(pi f) with x = pi f T/2 peaks where tan x = 2x (analytic,
    # x = 1.16556): at 1.4840 f0 with height 1.1382 x 2T/pi. (The derivative of sin^2(x)/x gives these values; 1.30 f0 and 1.118, seen quoted,
    # are wrong.)
    from scipy.optimize import brentq
    x = brentq(lambda x: np.tan(x) - 2 * x, 0.5, 1.5)
    T = 1.0
    f = np.linspace(0.1, 2.0, 400_001)
    g = periodic_filter_modulus(f, T, 1)
    i = np.argmax(g)
    assert f[i] / 0.5 == pytest.approx(4 * x / np.pi, rel=1e-5, abs=0)
    assert g[i] / (2 * T / np.pi) == pytest.approx(np.pi * np.sin(x) ** 2 / (2 * x), rel=1e-9, abs=0)
    # and for n = 8 the shift is only about 1.1 % (same derivative, n = 8)
    f = np.linspace(3.0, 5.0, 400_001)
    i = np.argmax(periodic_filter_modulus(f, T, 8))
    assert f[i] / 4.0 == pytest.approx(1.011, rel=1e-3, abs=0)


class TestNoiseIntegrals:
    """Closed-form integral f^alpha |G|^2 against direct quadrature (scipy)."""

    T, n = 1.0, 4
    f0 = n / (2 * T)
    f = np.linspace(1e-7, 3000, 6_000_001)
    G2 = np.abs(filter_function(f, T, cpmg_times(n, T))) ** 2

    def numeric(self, alpha, cutoff=np.inf, low=0.0):
        m = (self.f <= cutoff) & (self.f >= low)
        return np.trapezoid(self.G2[m] * self.f[m] ** alpha, self.f[m])

    def test_white(self):
        assert periodic_noise_integral(0, self.T, self.f0) == pytest.approx(self.numeric(0), rel=2e-3, abs=0)

    def test_random_walk_is_exact(self):
        # time domain: (2 pi)^2/2 integral W(t)^2 dt with W a triangle wave, = pi^2 T tau^2 / 6
        tau = self.T / self.n
        exact = np.pi**2 * self.T * tau**2 / 6
        assert periodic_noise_integral(-2, self.T, self.f0) == pytest.approx(exact, rel=1e-12, abs=0)
        assert exact == pytest.approx(self.numeric(-2), rel=1e-4, abs=0)

    def test_white_phase_with_cutoff(self):
        # analytic (Parseval over the pulse derivatives): integral_0^B f^2 |G|^2 df = B (4n + 2) / (4 pi^2) for B >> f0
        B = 100.0
        assert periodic_noise_integral(2, self.T, self.f0, B) == pytest.approx(B * (4 * self.n + 2) / (4 * np.pi**2), rel=1e-12, abs=0)
        assert periodic_noise_integral(2, self.T, self.f0, B) == pytest.approx(self.numeric(2, B), rel=2e-3, abs=0)

    def test_flicker_is_approximate(self):
        # lobe approximation: within 5 % for n = 4 (better for more pulses)
        assert periodic_noise_integral(-1, self.T, self.f0) == pytest.approx(self.numeric(-1), rel=5e-2, abs=0)


    def test_flicker_formula_with_zeta(self):
        # analytic (odd-harmonic sum, lambda(3) = 7/8 zeta(3)): common-mode excursion 16 nu0^2 T h_-1 (7/8) zeta(3) / f0
        from scipy.special import zeta
        T, f0 = 100.0, 0.1
        h = 1.0
        nu0 = 1.0
        value = (2 * np.pi * nu0) ** 2 * h * periodic_noise_integral(-1, T, f0)
        assert value == pytest.approx(16 * nu0**2 * T * h * 7 / 8 * zeta(3) / f0, rel=1e-12, abs=0)


def test_odd_harmonic_sums_against_brute_force():
    for s in (0, 1, 2, 3, 4, 6):
        for count, first in ((1, 0), (7, 0), (50, 3), (1000, 10)):
            k = 2 * np.arange(first, count) + 1.0
            # a partial sum far from the first term is a difference of two sums of order 1: for
            # s = 6 from k = 21 the tail is 3e-8 of them, so 1e-16 rounding becomes ~3e-9 relative
            assert filters.odd_harmonic_sum(s, count, first) == pytest.approx(np.sum(k ** (-s)), rel=1e-8, abs=0)
    # infinite sums: lambda(s) = (1 - 2^-s) zeta(s); lambda(2) = pi^2/8, lambda(4) = pi^4/96
    assert filters.odd_harmonic_sum(2) == pytest.approx(np.pi**2 / 8, rel=1e-14, abs=0)
    assert filters.odd_harmonic_sum(4) == pytest.approx(np.pi**4 / 96, rel=1e-14, abs=0)


def test_ramsey_flicker_constant_by_quadrature():
    # integral_x^inf sinc^2(u)/u du = ln(1/x) + c0 for x -> 0, evaluated with scipy
    from gwclock.physics.sequences import RAMSEY_FLICKER_CONSTANT
    x = 1e-4
    head = integrate.quad(lambda u: np.sinc(u) ** 2 / u, x, 1, limit=200)[0]
    tail = (0.5 - integrate.quad(lambda u: u**-3.0, 1, np.inf, weight="cos", wvar=2 * np.pi)[0]) / (2 * np.pi**2)
    assert head + tail - np.log(1 / x) == pytest.approx(RAMSEY_FLICKER_CONSTANT, rel=1e-7, abs=0)


def test_odd_harmonic_sums_table_and_closed_form_agree():
    # whole counts below 1e4 come from a table, larger ones from the Hurwitz-zeta / digamma forms;
    # both against brute-force summation, in one mixed array
    counts = np.array([3.0, 9_999.0, 10_000.0, 10_001.0, 25_000.0])
    for s in (1, 2, 3):
        want = [np.sum((2 * np.arange(c) + 1.0) ** (-s)) for c in counts]
        assert filters.odd_harmonic_sum(s, counts) == pytest.approx(want, rel=1e-12, abs=0)


# Ramsey lattice sums of f^-power noise: (function, power, explicit harmonics M, tolerance, near-harmonic case)
_LATTICE = {2: (filters.ramsey_random_walk_alias, 2_000_000, 1e-11, 1.0 / 33.0),
            4: (filters.ramsey_walk4_alias, 1_000_000, 1e-9, 1.0 / 33.0 + 1e-9)}


@pytest.mark.parametrize("power", [2, 4])
@pytest.mark.parametrize("case", range(5))
def test_ramsey_red_alias_against_a_long_sum(power, case):
    # power 2: pi^4 r^2 [csc^2(pi x) - 2r/3]; power 4: pi^6 [r^2 s^2 - (2r^2/3 + r^4/3) s + 2r^5/15],
    # s = csc^2(pi x); both from sum_m (x+m)^-2 = pi^2 csc^2(pi x) (Abramowitz & Stegun 4.3.92, from
    # memory) and its derivatives. Against 2M + 1 explicit harmonics plus their analytic tail
    # Tc^(p+2) / ((p+1) pi^2 M^(p+1)); the PSD floor 1/(3e7 s) bites on the last two cases
    alias, M, rel, near = _LATTICE[power]
    f0, T, Tc = [(2e-3, 30.0, 33.0), (0.0123, 10.0, 10.0), (3.7, 0.1, 0.2), (near, 30.0, 33.0),
                 (1e-9, 100.0, 150.0)][case]
    floor = 1 / 3e7
    fm = f0 + np.arange(-M, M + 1) / Tc
    brute = (np.sum((T * np.sinc(fm * T)) ** 2 / np.maximum(np.abs(fm), floor) ** power)
             + Tc ** (power + 2) / ((power + 1) * np.pi**2 * M ** (power + 1)))
    assert alias(f0, T, Tc, floor) == pytest.approx(brute, rel=rel, abs=0)


def test_cpmg_lobe_areas_add_up_to_parseval():
    # Parseval: integral_0^inf |G(f)|^2 df = (1/2) integral g(t)^2 dt = T/2 for a +-1 sensitivity function
    # of length T (ideal pulses), and the odd-harmonic lobe areas 4T/(pi^2 k^2) sum to (4T/pi^2)(pi^2/8) = T/2
    # (Cywinski et al. 2008, Phys. Rev. B 77, 174509; sum of 1/k^2 over odd k, analytic)
    from gwclock.physics.sequences import SEQUENCES
    d = load_mission(None)[0].design().replace(pi_pulse_duration=0.0)
    k = 2 * np.arange(200_000) + 1.0
    T = 3.7
    area = SEQUENCES["cpmg"].lobe_areas(d, 2.0, 14, T, k).sum()
    assert area == pytest.approx(T / 2, rel=2e-6, abs=0)  # tail of the sum ~ 1/(2 k_max)


@pytest.mark.parametrize("lo, hi", [(80.0, 400.0), (90.0, 400.0), (100.0, 400.0), (40.0, 2000.0)])
def test_band_limited_white(lo, hi):
    # the odd-harmonic lobe model (Cywinski et al. 2008, Phys. Rev. B 77, 174509) of a band [lo, hi)
    # against trapezoid quadrature of the exact |G|^2 (CPMG, n = 20, T = 1 s, f0 = 10 Hz), with the
    # band edges between lobes, on a lobe (half of it is taken) and a quarter harmonic from one. The
    # lobe model gives the tails of the strong low lobes to those lobes: it is 2-5 % low here (and
    # about 10 % for n = 4; a band edge on a harmonic of n = 4 is 19 % low).
    T, n = 1.0, 20
    f = np.linspace(lo, hi, 4_000_001)
    numeric = np.trapezoid(np.abs(filter_function(f, T, cpmg_times(n, T))) ** 2, f)
    assert float(periodic_noise_integral(0, T, n / (2 * T), hi, lo)) == pytest.approx(numeric, rel=5e-2, abs=0)


def test_a_band_edge_takes_a_lobe_in_smoothly():
    # continuity (analytic requirement of the partition, common practice, no source): the bands
    # [0, c) and [c, inf) of white noise always add to the whole T/2 (Parseval: integral g^2 = T), a
    # band edge on the harmonic takes half its lobe 4T/(pi^2 k^2), and the integral is continuous
    # and monotone as the edge sweeps across the harmonic
    T, f0 = 1.0, 10.0
    c = np.linspace(40.0, 60.0, 2001)
    below = periodic_noise_integral(0, T, f0, c)
    above = periodic_noise_integral(0, T, f0, np.inf, c)
    np.testing.assert_allclose(below + above, T / 2, rtol=1e-12, atol=0)
    whole_below = periodic_noise_integral(0, T, f0, 40.0)
    assert float(periodic_noise_integral(0, T, f0, 50.0)) - whole_below == pytest.approx(
        0.5 * 4 * T / (np.pi**2 * 25), rel=1e-12, abs=0)
    assert np.all(np.diff(below) >= 0) and np.max(np.diff(below)) < 1e-3 * 4 * T / (np.pi**2 * 25) * 20


@pytest.mark.parametrize("B_over_f0", [0.3, 0.6, 2.0, 4.0, 10.0])
def test_white_phase_integral_below_and_above_the_first_lobe(B_over_f0):
    # direct quadrature of f^2 |G(f)|^2 from the exact filter function (CPMG, n = 20, T = 1 s; analytic
    # check of the lobe-plus-plateau form of Cywinski et al. 2008, Phys. Rev. B 77, 174509): exact between
    # lobes (B an even multiple of f0), and about zero below the first lobe, where |G|^2 is tiny (the
    # pi/2-pulse plateau B / (2 pi^2) must not be added there)
    T, n = 1.0, 20
    times = (np.arange(1, n + 1) - 0.5) * T / n
    f0 = n / (2 * T)
    B = B_over_f0 * f0
    f = np.linspace(1e-9, B, 400_001)
    numeric = np.trapezoid(f**2 * np.abs(filters.filter_function(f, T, times)) ** 2, f)
    model = float(periodic_noise_integral(2, T, f0, B))
    if B_over_f0 < 1:
        assert abs(model - numeric) < 0.1 * B / (2 * np.pi**2)  # the old plateau was off by ~0.95 of it
    else:
        assert model == pytest.approx(numeric, rel=1e-4, abs=0)


def test_shot_noise_is_continuous_across_the_phase_lock_bandwidth():
    # the white-phase piece below B and the white-frequency plateau above it partition the axis:
    # at f0 = B/k a harmonic lies on the edge and must be counted once (PSD continuous at B;
    # common practice, no source). Neighbours at +-0.1 % differ by well under 1 %.
    from gwclock.engine import envelope
    d = load_mission(None)[0].design()
    for k in (1, 3, 5):
        f0 = d.phase_lock_bandwidth / k
        b = envelope(d, np.array([f0, f0 * 1.001]))
        assert b.psd["shot"][0] == pytest.approx(b.psd["shot"][1], rel=0.01, abs=0)


@pytest.mark.parametrize("alpha", [1, 2])
def test_ramsey_rising_noise_inside_the_main_lobe(alpha):
    # smooth-noise form 2 Tc integral S |G|^2 df with the exact Ramsey |G|^2 = sin^2(pi f T)/(pi f)^2
    # (scipy quadrature) for a rising noise whose band ends inside the main lobe (cutoff < 1/T)
    from gwclock.physics.noises import PowerLaw
    from gwclock.physics.sequences import SEQUENCES
    d = load_mission(None)[0].design()
    T, Tc, cutoff = 0.05, 1.05, 8.0
    term = PowerLaw(3e-30, alpha, cutoff)
    got = float(SEQUENCES["ramsey"].aliased(d, [term], 0.1, 0.0, T, Tc))
    quad = integrate.quad(lambda f: term.level * f**alpha * np.sin(np.pi * f * T) ** 2 / (np.pi * f) ** 2, 0, cutoff)[0]
    assert got == pytest.approx(2 * Tc * quad, rel=1e-9, abs=0)


def test_the_coefficient_cache_returns_exactly_a_fresh_computation():
    # the cache only skips recomputation: the same tuning array, power law and band give the same
    # numbers; another band or another tuning array is computed afresh
    from gwclock.physics import filters
    f0 = np.geomspace(1e-3, 10, 40)
    fresh = filters.periodic_noise_coefficients(0, f0, 5.0, 0.0)
    with filters.coefficient_cache():
        first = filters.periodic_noise_coefficients(0, f0, 5.0, 0.0)
        again = filters.periodic_noise_coefficients(0, f0, np.float64(5.0), 0.0)
        other = filters.periodic_noise_coefficients(0, f0, 50.0, 0.0)
        copy = filters.periodic_noise_coefficients(0, f0.copy() * 2, 5.0, 0.0)
    assert again is first  # remembered
    for a, b in zip(first, fresh):
        np.testing.assert_array_equal(a, b)
    direct = filters.periodic_noise_coefficients(0, f0, 50.0, 0.0)
    np.testing.assert_array_equal(other[0], direct[0])
    np.testing.assert_array_equal(copy[0], filters.periodic_noise_coefficients(0, f0 * 2, 5.0, 0.0)[0])
