"""The engine: equivalent noise, strain sensitivity, envelope and window.

Truth: the Ramsey projection-noise stability of Itano et al. (1993, PRA 47, 3554) in the form of
Leroux et al. (2017, Metrologia 54, 307, eq. 2); the QPN-limited DD sensitivity and the band-edge
laws (analytic limits derived from the filter-function formalism of Cywinski et al. 2008, PRB 77,
174509, and the Dick-effect sampling picture of Santarelli et al. 1998, IEEE UFFC 45, 887); Poisson summation for the aliasing
sum of white noise; scaling laws; and brute-force aliasing sums.
"""

import numpy as np
import pytest

from gwclock import engine
from gwclock.config.mission import load_mission
from gwclock.engine import curves, envelope, evaluate, optimise, window
from gwclock.physics.filters import periodic_filter_modulus
from gwclock.physics.response import link_response
from gwclock.physics.sequences import SEQUENCES

from .conftest import MISSIONS, quiet_design

RAMSEY, CPMG = SEQUENCES["ramsey"], SEQUENCES["cpmg"]


def projection_psd(d, kind, f0, n, T):
    return evaluate(d, kind, f0, n, T)["projection"]


class TestRamseyProjectionNoise:
    """sigma_y(tau) = sqrt(xi^2 Tc / (N tau)) / (2 pi nu0 T C) for one clock (Leroux et al. 2017,
    eq. 2; Itano et al. 1993). The engine returns the pair; one clock is half of it."""

    @pytest.mark.parametrize("N, T, dead, tau, expected", [
        (1e4, 1.0, 0.0, 1.0, 3.70793e-18),
        (1e4, 1.0, 0.5, 1.0, 4.54127e-18),
        (1e5, 100.0, 0.0, 100.0, 1.17255e-20),
    ])
    def test_allan_deviation(self, N, T, dead, tau, expected):
        d = quiet_design(atom_number=N, dead_time=dead)
        s_pair = projection_psd(d, RAMSEY, 1e-9, 0, T)
        sigma = np.sqrt(s_pair / 2 / (2 * tau))  # white FM: sigma_y^2 = h0 / (2 tau)
        assert sigma == pytest.approx(expected, rel=1e-5, abs=0)

    def test_dd_costs_pi_squared_over_four_at_equal_times(self):
        # QPN-limited DD vs Ramsey at DC: exactly pi^2/4 in PSD (analytic: |G(f0)| = 2T/pi for
        # a square-wave filter, Cywinski et al. 2008, against G(0) = T for Ramsey)
        d = quiet_design()
        T = 10.0
        dd = projection_psd(d, CPMG, 0.5, 10, T)
        ramsey = projection_psd(d, RAMSEY, 1e-12, 0, T)
        assert dd / ramsey == pytest.approx(np.pi**2 / 4, rel=1e-9, abs=0)


class TestDesignA:
    """Analytic QPN-limited DD values (|G(f0)| = 2T/pi, Cywinski et al. 2008; R_y of Estabrook &
    Wahlquist 1975) for an invented 'design A' (Sr, N = 1e5 per clock,
    T = Tc = 100 s, C = xi = 1, L = 3e10 m), QPN only, analytic."""

    def sy(self):
        d = quiet_design(atom_number=1e5, baseline=3e10, nu0=429_228_004_229_873.0)
        return d, projection_psd(d, CPMG, 0.1, 20, 100.0)

    def test_equivalent_psd_of_the_pair(self):
        _, s = self.sy()
        assert s == pytest.approx(1.35695e-37, rel=1e-5, abs=0)

    def test_high_frequency_plateau(self):
        d, s = self.sy()
        # S_n -> 3 Tc / (8 nu0^2 T^2 N), ASD 4.51157e-19
        assert np.sqrt(s / link_response(10.0, d.baseline)) == pytest.approx(4.51157e-19, rel=1e-5, abs=0)

    @pytest.mark.parametrize("f, expected", [(3e-3, 6.3021e-19), (1e-2, 4.5996e-19)])
    def test_near_the_knee(self, f, expected):
        d, s = self.sy()
        assert np.sqrt(s / link_response(f, d.baseline)) == pytest.approx(expected, rel=1e-4, abs=0)


class TestAliasingSum:
    def brute(self, d, term_psd, f0, n, T, Tc, M=200_000):
        m = np.arange(-M, M + 1)
        fm = np.abs(f0 + m / Tc)
        fm = np.where(fm == 0, 1e-300, fm)
        G2 = periodic_filter_modulus(fm, T, n, d.pi_pulse_duration) ** 2
        G0 = periodic_filter_modulus(f0, T, n, d.pi_pulse_duration) ** 2
        return np.sum(term_psd(fm) * G2) / G0

    def test_white_noise_is_exact(self):
        # Poisson summation: sum_m |G(f0 + m/Tc)|^2 = Tc integral |G|^2 when Tc >= T
        d = quiet_design(linewidth=1.0, gain_mismatch=1.0, dead_time=10.0, phase_lock_bandwidth=1e12)
        f0, n, T = 0.05, 4, 40.0
        got = evaluate(d, CPMG, f0, n, T)["laser"]
        h0 = 1.0 / (np.pi * d.nu0**2)
        assert got == pytest.approx(self.brute(d, lambda f: h0 + 0 * f, f0, n, T, T + 10.0), rel=2e-4, abs=0)

    def test_random_walk_in_the_smooth_noise_limit(self):
        # acceleration (f^-2): the smooth form 2 Tc int S |G|^2 against the discrete sum
        d = quiet_design(acceleration_noise=3e-15, dead_time=2.0)
        f0, n, T = 0.2, 20, 50.0
        got = evaluate(d, CPMG, f0, n, T)["acceleration"]
        level = 2 * (3e-15) ** 2 / ((2 * np.pi) ** 2 * 299792458.0**2)
        assert got == pytest.approx(self.brute(d, lambda f: level / f**2, f0, n, T, T + 2.0), rel=2e-2, abs=0)

    def test_ramsey_red_noise_matches_a_long_sum(self):
        d = quiet_design(acceleration_noise=3e-15, dead_time=3.0)
        f0, T = 2e-3, 30.0
        got = evaluate(d, RAMSEY, f0, 0, T)["acceleration"]
        level = 2 * (3e-15) ** 2 / ((2 * np.pi) ** 2 * 299792458.0**2)
        m = np.arange(-200_000, 200_001)
        fm = np.abs(f0 + m / (T + 3.0))
        G2 = (T * np.sinc(fm * T)) ** 2
        brute = np.sum(level / fm**2 * G2) / (T * np.sinc(f0 * T)) ** 2
        assert got == pytest.approx(brute, rel=1e-3, abs=0)


class TestScalingLaws:
    f = np.geomspace(1e-3, 3.0, 9)

    def test_projection_scales_with_atom_number(self):
        a = envelope(quiet_design(atom_number=1e4), self.f).asd
        b = envelope(quiet_design(atom_number=1e6), self.f).asd
        np.testing.assert_allclose(a / b, 10.0, rtol=1e-9, atol=0)

    def test_projection_scales_with_squeezing(self):
        # xi^2 = 10^(-dB/10): ASD x 10^(-dB/20) in the linear read-out
        a = envelope(quiet_design(squeezing=1.0), self.f).asd
        b = envelope(quiet_design(squeezing=10 ** (-6 / 10)), self.f).asd
        np.testing.assert_allclose(b / a, 10 ** (-6 / 20), rtol=1e-9, atol=0)

    def test_shot_limited_scales_with_power(self):
        kw = dict(atom_number=1e12, phase_lock_bandwidth=10.0, pi_pulse_duration=0.01)
        a = envelope(quiet_design(transmit_power=1e-3, **kw), self.f)
        b = envelope(quiet_design(transmit_power=4e-3, **kw), self.f)
        assert np.all(a.psd["shot"] > 100 * a.psd["projection"])
        np.testing.assert_allclose(a.asd / b.asd, 2.0, rtol=1e-4, atol=0)

    def test_low_frequency_scales_inverse_with_baseline(self):
        f = np.array([1e-6, 3e-6])
        a = envelope(quiet_design(baseline=1e9), f).asd
        b = envelope(quiet_design(baseline=1e10), f).asd
        np.testing.assert_allclose(a / b, 10.0, rtol=1e-6, atol=0)


class TestBandEdges:
    """Analytic limits (derivation from the contrast model C = C0 exp(-T/tau) (1 - eps)^n): S_n ~ Tc / (T^2 C^2) with C = exp(-T/tau) (1 - eps)^n."""

    tau = 118.0

    def dd_projection(self, d, f0):
        # the analytic limits hold for sequences locked to f0 (T = n / (2 f0))
        best, ok = optimise(d, np.atleast_1d(f0), "cpmg", locked=True)
        assert ok.all()
        return best["projection"]

    def test_optimal_interrogation(self):
        from gwclock.physics.sequences import optimal_interrogation
        assert optimal_interrogation(118.0, 0.0) == pytest.approx(59.0, rel=1e-12, abs=0)
        assert optimal_interrogation(118.0, 10.0) == pytest.approx(66.693, rel=1e-5, abs=0)

    def test_low_edge_penalty(self):
        # below 1/tau the sequence must stretch: penalty f0 tau exp(1/(f0 tau) - 1),
        # x1.36 at 1/(2 tau) and x5.0 at 1/(4 tau). Common practice, no source: a coherence of
        # order 100 s puts the low edge of the flat band at a few mHz, about 1/(2 tau).
        d = quiet_design(coherence_time=self.tau, max_interrogation=1e4)
        plateau = self.dd_projection(d, 10 / self.tau)
        for x in (0.5, 0.25):
            penalty = self.dd_projection(d, x / self.tau) / plateau
            assert penalty == pytest.approx(x * np.exp(1 / x - 1), rel=1e-6, abs=0)

    def test_pulse_error_high_edge(self):
        # with T re-optimised, S_n grows as (1 + 2 f0 eps' tau): doubled at 1/(2 eps' tau),
        # 4.24 Hz for eps = 1e-3 and tau = 118 s. Common practice, no source: the band reaches
        # from a few mHz to a few Hz for realistic pulse errors.
        eps = 1e-3
        d = quiet_design(coherence_time=self.tau, max_interrogation=1e4, pulse_error=eps)
        ep = -np.log1p(-eps)
        f_pe = 1 / (2 * ep * self.tau)
        f_lo = 0.05
        ratio = self.dd_projection(d, f_pe) / self.dd_projection(d, f_lo)
        assert ratio == pytest.approx(2 / (1 + 2 * f_lo * ep * self.tau), rel=2e-3, abs=0)

    def test_finite_pulse_wall(self):
        # f0 < 1/(2 t_pi) is a hard limit (analytic: the fundamental vanishes at duty d = 1)
        d = quiet_design(pi_pulse_duration=0.01)
        _, ok = optimise(d, np.array([49.0, 51.0]), "cpmg")
        assert ok.tolist() == [True, False]


class TestWindow:
    def test_window_matches_envelope_at_the_tuning_and_harmonics(self):
        d = quiet_design(baseline=3e10)
        f0 = 0.1
        w = window(d, np.array([f0, 3 * f0, 5 * f0]), tune=f0)
        best, _ = optimise(d, [f0])
        assert w.total[0] == pytest.approx(best["projection"][0] / link_response(f0, d.baseline), rel=1e-9, abs=0)
        R = link_response(w.frequency, d.baseline)
        # the 9x and 25x worse windows at 3 f0 and 5 f0 (odd harmonics of a square wave)
        assert w.total[1] * R[1] / (w.total[0] * R[0]) == pytest.approx(9.0, rel=1e-6, abs=0)
        assert w.total[2] * R[2] / (w.total[0] * R[0]) == pytest.approx(25.0, rel=1e-6, abs=0)

    def test_a_tuning_beyond_the_pulse_bandwidth_falls_back_to_ramsey_as_the_envelope_does(self):
        # above 1/(2 t_pi) no pi pulse fits; "tuned to f0" means the envelope's sequence at f0
        # everywhere, so the window is Ramsey there and meets the envelope at f0 (common practice, no source)
        d = quiet_design(pi_pulse_duration=0.01)
        w = window(d, np.array([1.0, 80.0, 90.0]), tune=80.0)
        assert np.all(w.pulses == 0)
        assert w.total[1] == pytest.approx(envelope(d, np.array([80.0])).total[0], rel=1e-12, abs=0)

    def test_zeros_of_the_filter_stay_finite(self):
        d = quiet_design()
        f0 = 0.1
        best, _ = optimise(d, [f0])
        T = best["interrogation"][0]
        f = np.sort(np.concatenate([np.geomspace(1e-4, 10, 300), [2 * f0, 1 / T * 3]]))
        w = window(d, f, tune=f0)
        assert np.all(np.isfinite(w.total)) and np.all(w.total > 0)


class TestEnvelope:
    @pytest.mark.parametrize("path", [None, *MISSIONS], ids=lambda p: "default" if p is None else p.stem)
    def test_finite_positive_over_the_whole_range(self, path):
        m, _ = load_mission(path)
        b = envelope(m.design(), np.geomspace(1e-5, 100, 300))
        for arr in (b.total, *b.psd.values()):
            assert np.all(np.isfinite(arr))
        assert np.all(b.total > 0)
        assert np.all((b.contrast > 0) & (b.contrast <= 1))

    def test_chunked_evaluation_equals_whole(self, monkeypatch):
        m, _ = load_mission(None)
        f = np.geomspace(1e-4, 10, 101)
        whole = envelope(m.design(), f).total
        monkeypatch.setattr(curves, "CHUNK", 7)
        assert np.array_equal(envelope(m.design(), f).total, whole)

    def test_bad_grids_are_refused(self):
        d = quiet_design()
        for bad in ([1.0, 1.0, 2.0], [2.0, 1.0], [-1.0, 1.0], [0.0, 1.0], [np.nan, 1.0]):
            with pytest.raises(ValueError):
                envelope(d, np.array(bad))


class TestCustomSequence:
    def test_custom_cpmg_timing_reproduces_cpmg(self):
        # a custom sequence with CPMG-4 timing must behave as CPMG-4: same peak (f0 = n/(2T)) and,
        # from its numerically integrated noise moments, the closed-form noise integrals
        d_c = quiet_design(kind="custom", pulse_times=(0.125, 0.375, 0.625, 0.875), acceleration_noise=3e-15,
                           linewidth=1.0, gain_mismatch=1e-2, dead_time=1.0)
        d_p = d_c.replace(kind="cpmg", pulse_times=())
        f0 = 0.04
        kind = SEQUENCES["custom"]
        n, T, ok = kind.snap(d_c, np.array([f0]), np.array([1.0]))
        # custom sequences are tuned to the true maximum of |G|, slightly above n/(2T) for few
        # pulses (as for the echo, whose maximum is at 1.48 f0)
        assert ok[0] and n[0] == 4
        assert 1.0 < T[0] / (4 / (2 * f0)) < 1.06
        T = 4 / (2 * f0)
        a = evaluate(d_c, kind, f0, 4, T)
        b = evaluate(d_p, CPMG, f0, 4, T)
        assert a["projection"] == pytest.approx(b["projection"], rel=1e-6, abs=0)
        assert a["acceleration"] == pytest.approx(b["acceleration"], rel=1e-3, abs=0)
        assert a["laser"] == pytest.approx(b["laser"], rel=1e-2, abs=0)


def _lattice(f0, Tc, M):
    """|f0 + m/Tc| for |m| <= M (the cycle harmonics of the aliasing sum)."""
    fm = np.abs(f0 + np.arange(-M, M + 1) / Tc)
    return np.where(fm == 0, 1e-300, fm)


class TestEnvelopeAliasing:
    """The envelope's noise at its chosen sequence against the brute-force aliasing sum
    sum_m S_y(|f0 + m/Tc|) |G(f0 + m/Tc)|^2 / |G(f0)|^2 (the Dick-effect sampling picture of
    Santarelli et al. 1998, IEEE UFFC 45, 887; Poisson summation makes it exact for white noise)."""

    f0 = 0.05

    def chosen(self, d):
        b = envelope(d, np.array([self.f0]))
        n, T, Tc = b.pulses[0], b.interrogation[0], b.cycle[0]
        return b, n, T, Tc, engine.signal_response(d, [self.f0])[0]

    def brute(self, d, kind, S, n, T, Tc, M=200_000):
        fm = _lattice(self.f0, Tc, M)
        G2 = kind.modulus(d, fm, n, T) ** 2
        return np.sum(S(fm) * G2) / kind.modulus(d, self.f0, n, T) ** 2

    def test_white_frequency_noise_of_a_dd_sequence(self):
        # the laser's white FM through a gain mismatch eps: S_y = eps^2 Delta_nu / (pi nu0^2)
        d = quiet_design(linewidth=1.0, gain_mismatch=1e-2, dead_time=10.0, atom_number=1e4)
        b, n, T, Tc, R = self.chosen(d)
        assert n > 0
        level = 1e-4 * 1.0 / (np.pi * d.nu0**2)
        brute = self.brute(d, CPMG, lambda f: level + 0 * f, n, T, Tc)
        assert b.psd["laser"][0] * R == pytest.approx(brute, rel=2e-4, abs=0)

    def test_random_walk_noise_of_a_dd_sequence(self):
        d = quiet_design(acceleration_noise=3e-15, dead_time=2.0, atom_number=1e4)
        b, n, T, Tc, R = self.chosen(d)
        assert n > 0
        level = 2 * (3e-15) ** 2 / ((2 * np.pi) ** 2 * 299792458.0**2)
        brute = self.brute(d, CPMG, lambda f: level / f**2, n, T, Tc)
        assert b.psd["acceleration"][0] * R == pytest.approx(brute, rel=2e-2, abs=0)


class TestRamseyAliasing:
    """Ramsey's aliasing sum for white, rising and flicker noise against explicit lattice sums
    (Santarelli et al. 1998, IEEE UFFC 45, 887; Dick 1987, PTTI 19, 133, from memory)."""

    def ramsey(self, f0, T, Tc, S, M=400_000, floor=0.0):
        fm = _lattice(f0, Tc, M)
        G2 = (T * np.sinc(fm * T)) ** 2
        return np.sum(S(np.maximum(fm, floor)) * G2) / (T * np.sinc(f0 * T)) ** 2

    def test_white_frequency_noise(self):
        d = quiet_design(linewidth=1.0, gain_mismatch=1e-2, dead_time=3.0)
        f0, T = 2e-3, 30.0
        got = evaluate(d, RAMSEY, f0, 0, T)["laser"]
        level = 1e-4 / (np.pi * d.nu0**2)
        assert got == pytest.approx(self.ramsey(f0, T, T + 3.0, lambda f: level + 0 * f), rel=1e-4, abs=0)

    def test_white_phase_noise_up_to_the_lock(self):
        # shot noise: white PM S_y = (f/nu0)^2 S_phi inside the phase lock (B = 2 Hz), the loop's
        # (B/f)^2 of it above (white FM), both cut at the pulse bandwidth 1/(2 t_pi) = 10 Hz
        d = quiet_design(transmit_power=1e-3, phase_lock_bandwidth=2.0, dead_time=3.1, pi_pulse_duration=0.05)
        f0, T = 2e-3, 30.0
        Tc = T + 3.1
        got = evaluate(d, RAMSEY, f0, 0, T)["shot"]
        from gwclock.physics import noises
        level = noises.shot_terms(d)[0].level
        S = lambda f: np.where(f <= 2.0, level * f**2, np.where(f <= 10.0, level * 4.0, 0.0))  # noqa: E731
        assert got == pytest.approx(self.ramsey(f0, T, Tc, S, M=2000), rel=3e-2, abs=0)

    def test_flicker_noise_above_sixteen_harmonics(self):
        # flicker FM (gain mismatch of the flicker floor) at f0 > 16/Tc: the explicit window must
        # sit where the red noise is, at the lattice member nearest zero, floored at 1/duration
        d = quiet_design(flicker_floor=4e-17, gain_mismatch=1e-2, dead_time=1.0)
        T, Tc = 4.0, 5.0
        f0 = 20.5 / T
        h = 1e-4 * (4e-17) ** 2 / (2 * np.log(2))
        got = evaluate(d, RAMSEY, f0, 0, T)["laser"]
        brute = self.ramsey(f0, T, Tc, lambda f: h / f, M=2_000_000, floor=1.0 / d.duration)
        assert got == pytest.approx(brute, rel=2e-2, abs=0)

    def test_common_mode_phase_of_white_and_flicker_noise(self):
        # (2 pi nu0)^2 integral S_y |G|^2 df: Parseval gives S T / 2 for white FM; flicker by quadrature
        # from 1/duration (scipy)
        from scipy import integrate

        from gwclock.physics import noises
        d = quiet_design(linewidth=0.1)
        T = 7.0
        white = RAMSEY.common_mode(d, noises.laser_terms(d)[:1], 1e-3, 0, T)
        assert white == pytest.approx((2 * np.pi * d.nu0) ** 2 * 0.1 / (np.pi * d.nu0**2) * T / 2, rel=1e-12, abs=0)
        h = 1e-34
        d2 = quiet_design(flicker_floor=np.sqrt(2 * np.log(2) * h))
        flick = RAMSEY.common_mode(d2, noises.laser_terms(d2)[1:], 1e-3, 0, T)
        lo = 1.0 / d2.duration
        u_lo = lo * T
        head = integrate.quad(lambda u: np.sinc(u) ** 2 / u, u_lo, 1.0, limit=400)[0]
        tail = integrate.quad(lambda u: 1.0 / (2 * np.pi**2 * u**3), 1.0, np.inf)[0] \
            - integrate.quad(lambda u: u**-3.0, 1, np.inf, weight="cos", wvar=2 * np.pi)[0] / (2 * np.pi**2)
        expected = (2 * np.pi * d2.nu0) ** 2 * h * T**2 * (head + tail)
        assert flick == pytest.approx(expected, rel=1e-6, abs=0)


class TestReadout:
    def test_auto_switches_to_the_correlated_readout_at_a_quarter_radian_squared(self):
        # common practice, no source: above 0.25 rad^2 of common-mode laser phase (a contrast loss
        # of 1 - exp(-1/8) = 12 %) the linear read-out fails; for white FM through Ramsey the
        # excursion is (2 pi nu0)^2 S_y T / 2 = 2 pi Delta_nu T (Parseval), so it crosses at
        # T* = 0.25 / (2 pi Delta_nu)
        d = quiet_design(linewidth=1e-3, comparison="auto")
        T_star = 0.25 / (2 * np.pi * 1e-3)
        below = evaluate(d, RAMSEY, 1e-4, 0, 0.98 * T_star)["correlated"]
        above = evaluate(d, RAMSEY, 1e-4, 0, 1.02 * T_star)["correlated"]
        assert not below and above

    def test_xy8_contrast_is_one_minus_eps_squared_per_pulse(self):
        # phase-cycled XY-8 cancels pulse errors to first order; the model keeps (1 - eps^2)^n (an
        # assumption, after Souza, Alvarez & Suter 2012, Phil. Trans. R. Soc. A 370, 4748, from memory)
        eps, tau, T, n = 1e-2, 118.0, 40.0, 64
        d = quiet_design(pulse_error=eps, coherence_time=tau)
        got = evaluate(d, SEQUENCES["xy8"], n / (2 * T), n, T)["log_contrast"]
        assert got == pytest.approx(-T / tau + n * np.log(1 - eps**2), rel=1e-12, abs=0)
        cpmg = evaluate(d, CPMG, n / (2 * T), n, T)["log_contrast"]
        assert cpmg == pytest.approx(-T / tau + n * np.log(1 - eps), rel=1e-12, abs=0)


def test_band_below_finds_the_extent_of_a_v_shaped_curve():
    # analytic: asd = 1 + |log10 f| is at or below 1 + k exactly on [10^-k, 10^k]; rows are independent
    from gwclock.engine.budget import band_below
    f = np.logspace(-3, 3, 61)
    asd = 1 + np.abs(np.log10(f))
    lo, hi = band_below(f, np.stack([asd, asd, 10 + asd]), np.array([2.0 + 1e-9, 3.0 + 1e-9, 2.0]))
    np.testing.assert_allclose(lo[:2], [0.1, 0.01], rtol=1e-12, atol=0)
    np.testing.assert_allclose(hi[:2], [10.0, 100.0], rtol=1e-12, atol=0)
    assert np.isnan(lo[2]) and np.isnan(hi[2])


def test_a_ramsey_window_is_the_ramsey_budget_at_each_signal_frequency():
    # with the sequence fixed, the noise of a cycled Ramsey measurement at signal frequency f is the
    # aliasing sum over the lattice f + m/Tc of that frequency (Dick 1987, Proc. 19th PTTI, 133, from
    # memory): the window equals the one-sequence budget evaluated at f, not at the tuning
    from gwclock.engine import signal_response, window_psd
    from gwclock.engine.formula import evaluate, total_psd
    from gwclock.physics.sequences import SEQUENCES

    from .conftest import ROOT
    d = load_mission(ROOT / "mission_configs" / "flagship.toml")[0].design()
    f = np.geomspace(1e-4, 0.05, 25)
    s, best = window_psd(d, [0.0756], f)
    assert best["pulses"][0] == 0  # Ramsey is the envelope's sequence at this tuning
    T = float(best["interrogation"][0])
    direct = total_psd(evaluate(d, SEQUENCES["ramsey"], f, 0.0, T)) / signal_response(d, f)
    np.testing.assert_allclose(s[0], direct, rtol=1e-10, atol=0)


@pytest.mark.parametrize("path", [None, *MISSIONS], ids=lambda p: p.stem if p else "default")
def test_the_envelope_of_every_shipped_mission_is_the_exhaustive_minimum(path):
    # brute force over every allowed sequence (tests/exhaustive.py), 1e-4 Hz to 100 Hz: the envelope
    # may not lose to it anywhere by more than 1e-6 (before the pulse-count descent it lost 0.4 % on
    # the default mission; before the read-out switch candidate, 7 % on the flagship at 11 mHz)
    from gwclock.engine import signal_response

    from .exhaustive import brute
    d = load_mission(path)[0].design()
    f = np.geomspace(1e-4, 100, 36)
    sy = envelope(d, f).total * signal_response(d, f)
    assert np.max(sy / brute(d, f) - 1) <= 1e-6


class TestFreeInterrogation:
    """The interrogation is free, not locked to the tuning T = n/(2 f)."""

    def test_a_spin_echo_peaks_away_from_its_locked_timing(self):
        # spin echo, projection noise only, no decay, no dead time: S_y,eq ~ T / |G(f, T)|^2 with the
        # closed form |G| = (4/w) sin^2(w T/4), w = 2 pi f (Cywinski et al. 2008, Phys. Rev. B 77, 174509,
        # eq. for N = 1). With y = pi f T / 2 the budget goes as y / sin^4 y, least where tan y = 4 y
        # (derivative, analytic): T = 2 y / (pi f), and y / sin^4 y against the locked y = pi/4 (value pi)
        from scipy.optimize import brentq
        y = brentq(lambda y: np.tan(y) - 4 * y, 1.0, 1.5)
        d = quiet_design(kind="echo", max_interrogation=1e4)
        f = np.array([0.01, 0.3, 2.0])
        free, ok = optimise(d, f)
        locked, _ = optimise(d, f, locked=True)
        assert ok.all()
        # the minimum is flat (quadratic): T within 1e-4 already puts the budget within 1e-9
        np.testing.assert_allclose(free["interrogation"], 2 * y / (np.pi * f), rtol=1e-4, atol=0)
        np.testing.assert_allclose(locked["interrogation"], 1 / (2 * f), rtol=1e-12, atol=0)
        np.testing.assert_allclose(free["projection"] / locked["projection"], y / np.sin(y) ** 4 / np.pi, rtol=1e-9, atol=0)

    def test_the_free_optimum_never_loses_to_the_locked_one(self):
        # the locked sequences are among the free ones (definition)
        for path in [None, *MISSIONS]:
            d = load_mission(path)[0].design()
            f = np.geomspace(1e-3, 10, 17)
            free, ok = optimise(d, f)
            locked, ok2 = optimise(d, f, locked=True)
            assert (ok == ok2).all()
            from gwclock.engine.formula import total_psd
            assert np.all(total_psd(free)[ok] <= total_psd(locked)[ok] * (1 + 1e-12))


def test_frequencies_given_as_quantities_are_converted():
    # 5 mHz is 0.005 Hz (SI, astropy units): a Quantity is never read as its bare number
    import astropy.units as u

    from gwclock.engine import signal_response, window_psd
    d = load_mission(None)[0].design()
    f = np.array([1.0, 10.0, 100.0])
    np.testing.assert_allclose(envelope(d, f * u.mHz).total, envelope(d, f / 1e3).total, rtol=1e-12, atol=0)
    np.testing.assert_allclose(window(d, f / 1e3, tune=30 * u.mHz).total, window(d, f / 1e3, tune=0.03).total,
                               rtol=1e-12, atol=0)
    np.testing.assert_allclose(signal_response(d, f * u.mHz), signal_response(d, f / 1e3), rtol=1e-12, atol=0)
    s1, _ = window_psd(d, [30 * u.mHz], f * u.mHz)
    s2, _ = window_psd(d, [0.03], f / 1e3)
    np.testing.assert_allclose(s1, s2, rtol=1e-12, atol=0)
    with pytest.raises(ValueError, match="expected a frequency"):
        envelope(d, f * u.m)


def test_a_budget_as_a_quantity_table():
    # the same numbers with their SI units (astropy units): ASD^2 is the total PSD
    import astropy.units as u
    d = load_mission(None)[0].design()
    b = envelope(d, np.geomspace(1e-3, 1, 20))
    t = b.to_qtable()
    np.testing.assert_allclose((t["asd"] ** 2).to_value(u.Hz**-1), b.total, rtol=1e-12, atol=0)
    np.testing.assert_allclose(t["interrogation"].to_value(u.ms), b.interrogation * 1e3, rtol=1e-12, atol=0)
    assert t["frequency"].unit == u.Hz and t.meta["mission"] == d.name
    assert "best strain ASD" in b._repr_html_()
