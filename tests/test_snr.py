"""SNR engine, horizons and stochastic backgrounds.

Truth: independent scipy quadrature of the frequency-domain SNR integral; the monochromatic
identity SNR^2 = h0^2 T / S_n (derivation in the convention of Robson, Cornish & Liu 2019, eq. 2 and sec. 2); the aLIGO-fit optimal horizon of
a 1.4+1.4 Msun binary (498 Mpc, an independent quadrature of the fit, no source); Thrane & Romano (2013, PRD 88,
124032) for Omega_gw with astropy's Planck18 H0; scaling laws.
"""

import numpy as np
import pytest
from astropy import constants as const
from scipy import integrate

from gwclock.astro.references import get_reference
from gwclock.astro.sources import Inspiral, Monochromatic
from gwclock.config.mission import load_mission
from gwclock.constants import MPC
from gwclock.studies import background as bg
from gwclock.studies.horizon import horizon
from gwclock.studies.snr import TunedCurve, broadband_snr, clock_snr, reference_snr, time_domain_snr

from .conftest import quiet_design

MSUN = const.M_sun.value


@pytest.fixture(scope="module")
def curve():
    m, _ = load_mission(None)
    return TunedCurve(m.design().replace(atom_number=1e8))


class TestBroadband:
    def test_against_scipy_quadrature(self):
        b = Inspiral.from_masses(30, 30, distance=400 * MPC)
        al = get_reference("aligo")
        fisco = b.isco_frequency
        k = 1 / 12 * np.pi ** (-4 / 3) * (const.G.value * b.chirp_mass) ** (5 / 3) / (const.c.value**3 * b.distance**2)
        quad = integrate.quad(lambda f: 4 * k * f ** (-7 / 3) / al.sky_averaged(f), 10.0, fisco, limit=400)[0]
        assert broadband_snr(b, al.sky_averaged, 10.0, fisco) == pytest.approx(np.sqrt(quad), rel=1e-5, abs=0)

    def test_time_domain_engine_equals_frequency_domain(self):
        b = Inspiral.from_masses(1e4, 1e4, redshift=1.0)
        lisa = get_reference("lisa")
        f1, f2 = 1e-3, 0.05
        fd = broadband_snr(b, lisa.sky_averaged, f1, f2)
        td = time_domain_snr(b, lambda f, tau: lisa.sky_averaged(f), b.time_to_merger(f1), b.time_to_merger(f2))
        assert td == pytest.approx(fd, rel=1e-5, abs=0)

    def test_aligo_optimal_horizon_of_a_neutron_star_binary(self):
        # independent quadrature: optimal SNR-8 horizon of 1.4+1.4 Msun, 10 Hz to f_ISCO, no redshift:
        # 498 Mpc (a range near the design figure)
        d = 100 * MPC
        b = Inspiral("bns", (1.4 * 1.4) ** 0.6 / 2.8**0.2 * MSUN, 2.8 * MSUN, d)
        snr = broadband_snr(b, get_reference("aligo").native, 10.0, b.isco_frequency, averaged=False, points=20000)
        assert d * snr / 8 / MPC == pytest.approx(498.16, rel=2e-3, abs=0)

    def test_monochromatic_in_a_reference(self):
        m = Monochromatic("gb", 3e-3, 1e-21)
        T = 3.15576e7
        r = reference_snr(get_reference("lisa"), m, T)
        # SNR^2 = h0^2 T / S_n per channel, summed over LISA's two channels A and E (Robson, Cornish &
        # Liu 2019, sec. 2; from memory)
        assert r.snr == pytest.approx(1e-21 * np.sqrt(2 * T / get_reference("lisa").sky_averaged(3e-3)), rel=1e-12, abs=0)


class TestClockSchedules:
    def test_monochromatic_fixed_tuning(self, curve):
        # SNR^2 = h0^2 T / S_n exactly at a fixed tuning on the source frequency (matched filter, Robson, Cornish & Liu 2019 convention)
        from gwclock.engine import envelope
        m = Monochromatic("gb", 0.02, 1e-20)
        T = 1e7
        s = envelope(curve.design, np.array([0.02])).total[0]
        assert clock_snr(curve, m, "fixed", T).snr == pytest.approx(1e-20 * np.sqrt(T / s), rel=1e-9, abs=0)

    def test_tracking_a_slow_chirp_reaches_the_envelope_integral(self, curve):
        # retuning that follows f(t) gives SNR^2 = integral 4 |h~|^2 / S_n^env df (stationary phase,
        # Cutler & Flanagan 1994, PRD 49, 2658, from memory)
        b = Inspiral.from_masses(1e4, 1e4, redshift=1.0)
        T = 1e7
        r = clock_snr(curve, b, "track", T, cadence=60.0)
        expected = broadband_snr(b, curve.psd, r.f_start, r.f_end)
        assert r.snr == pytest.approx(expected, rel=2e-2, abs=0)

    def test_overhead_costs_its_duty_cycle(self, curve):
        b = Inspiral.from_masses(1e4, 1e4, redshift=3.0)
        a = clock_snr(curve, b, "track", 1e7, cadence=100.0, overhead=0.0).snr
        c = clock_snr(curve, b, "track", 1e7, cadence=100.0, overhead=36.0).snr
        assert c / a == pytest.approx(np.sqrt(0.64), rel=1e-6, abs=0)

    def test_best_plan_is_at_least_as_good_as_the_last_stretch(self, curve):
        b = Inspiral.from_masses(3e4, 3e4, redshift=2.0)
        for T in (1e5, 1e6, 3e7):
            best = clock_snr(curve, b, "best", T).snr
            track = clock_snr(curve, b, "track", T, cadence=30.0).snr
            fixed = clock_snr(curve, b, "fixed", T).snr
            # the last stretch before merger is one possible placement of the time
            assert best >= 0.99 * track
            assert best >= 0.99 * fixed

    def test_snr_scales_inverse_with_distance(self, curve):
        a = Inspiral("a", 2e4 * MSUN, 4.6e4 * MSUN, 1e3 * MPC)
        b = Inspiral("b", 2e4 * MSUN, 4.6e4 * MSUN, 4e3 * MPC)
        assert clock_snr(curve, a, "track", 1e7).snr / clock_snr(curve, b, "track", 1e7).snr == pytest.approx(4.0, rel=1e-9, abs=0)


def test_horizon_is_the_root():
    lisa = get_reference("lisa")

    def snr(src):
        return reference_snr(lisa, src, 3.15576e7).snr

    z, d = horizon(snr, 2e5, threshold=8.0)
    assert 0 < z < 1e3
    assert snr(Inspiral.from_masses(1e5, 1e5, redshift=z)) == pytest.approx(8.0, rel=1e-5, abs=0)


class TestHorizonMeasures:
    def test_interferometer_orientation_factors(self):
        # RMS over sky, polarisation and inclination of an interferometer's SNR is 2/5 of the optimal one
        # (<F+^2> = <Fx^2> = 1/5, <((1 + c^2)/2)^2> = 7/15, <c^2> = 1/3; analytic), and the range is the
        # optimal horizon over 2.26 (Finn & Chernoff 1993, PRD 47, 2198; 2.2648 from memory)
        from gwclock.studies.horizon import orientation_factors
        gain, divisor = orientation_factors("interferometer")
        assert gain == pytest.approx(5 / 2, rel=1e-9, abs=0)
        assert divisor == pytest.approx(2.2648, rel=2e-4, abs=0)

    def test_link_orientation_factors_against_monte_carlo(self):
        # a Doppler link at long wavelength responds as (1 - mu^2)/2 (Estabrook & Wahlquist 1975, GRG 6,
        # 439): <(1 - mu^2)^2> = 8/15 gives the gain sqrt(75/16) (analytic); the range divisor against
        # a brute-force Monte Carlo over isotropic orientations (10^6 draws)
        from gwclock.studies.horizon import orientation_factors
        gain, divisor = orientation_factors("link")
        assert gain == pytest.approx(np.sqrt(75 / 16), rel=1e-9, abs=0)
        rng = np.random.default_rng(7)
        mu, ci = rng.uniform(-1, 1, (2, 1_000_000))
        psi = rng.uniform(0, np.pi, 1_000_000)
        theta2 = (1 - mu**2) ** 2 * (np.cos(2 * psi) ** 2 * (1 + ci**2) ** 2 / 4 + np.sin(2 * psi) ** 2 * ci**2)
        assert divisor == pytest.approx(np.mean(theta2**1.5) ** (-1 / 3), rel=3e-3, abs=0)
        assert gain == pytest.approx(np.mean(theta2) ** -0.5, rel=3e-3, abs=0)

    def test_optimal_horizon_and_range(self):
        # the optimal horizon is where 5/2 x the sky-averaged SNR is the threshold; the range is that
        # distance over the range divisor (definitions above)
        from gwclock.astro.sources import distance_at_redshift
        from gwclock.studies.horizon import orientation_factors
        aligo = get_reference("aligo")

        def snr(src):
            return reference_snr(aligo, src, 3.15576e7).snr

        z, d = horizon(snr, 60.0, 8.0, "optimal")
        assert 2.5 * snr(Inspiral.from_masses(30.0, 30.0, redshift=z)) == pytest.approx(8.0, rel=1e-5, abs=0)
        assert d == pytest.approx(distance_at_redshift(z), rel=1e-12, abs=0)
        zr, dr = horizon(snr, 60.0, 8.0, "range")
        assert dr == pytest.approx(d / orientation_factors("interferometer")[1], rel=1e-12, abs=0)
        assert distance_at_redshift(zr) == pytest.approx(dr, rel=1e-6, abs=0)
        za, _ = horizon(snr, 60.0, 8.0)
        assert za < z


class TestBackground:
    def test_hubble_constant_and_conversion(self):
        # Planck18 H0 = 67.66 km/s/Mpc = 2.192711e-18 /s; Omega = 1e-10 -> S_h = 7.3073e-38 /Hz at 1 mHz,
        # scaling as f^-3 (Thrane & Romano 2013, PRD 88, 124032, Omega-S_h relation; equation number from memory)
        assert bg.hubble_constant() == pytest.approx(2.192711e-18, rel=1e-6, abs=0)
        s = bg.strain_psd_from_omega(np.array([1e-3, 1e-2, 1e-1]), 1e-10)
        np.testing.assert_allclose(s, [7.3073e-38, 7.3073e-41, 7.3073e-44], rtol=1e-4, atol=0)
        assert bg.omega_from_strain_psd(1e-2, s[1]) == pytest.approx(1e-10, rel=1e-12, abs=0)

    def test_noise_in_omega_units_uses_four_pi_squared(self):
        f, sn = 1e-2, 1e-40
        assert bg.omega_noise(f, sn) == pytest.approx(4 * np.pi**2 * f**3 * sn / (3 * bg.hubble_constant() ** 2), rel=1e-12, abs=0)

    def test_power_law_integrated_flat_case(self):
        # beta = 0 only, flat Omega_n over [f1, f2]: Omega_0 = rho Omega_n / sqrt(T (f2 - f1))
        f = np.geomspace(1e-3, 1e-1, 4001)
        h0 = bg.hubble_constant()
        om = 1e-8
        sn = bg.strain_psd_from_omega(f, om, h0) / 2
        pi = bg.power_law_integrated(f, sn, 1e7, snr=2.0, betas=[0.0], h0=h0)
        np.testing.assert_allclose(pi, 2.0 * om / np.sqrt(1e7 * (f[-1] - f[0])), rtol=1e-5, atol=0)

    def test_clock_scan_scalings(self):
        d = quiet_design(atom_number=1e6)
        grid = np.geomspace(0.01, 1, 20)
        tunings = np.geomspace(0.01, 1, 6)
        a = bg.clock_scan_power_law(d, tunings, 1e7, grid)
        b = bg.clock_scan_power_law(d, tunings, 4e7, grid)
        c = bg.clock_scan_power_law(d.replace(atom_number=1e7), tunings, 1e7, grid)
        assert np.all(np.isfinite(a)) and np.all(a > 0)
        np.testing.assert_allclose(a / b, 2.0, rtol=1e-9, atol=0)        # SNR ~ sqrt(cycles)
        # projection-limited: noise variance ~ 1/N (to the grid of the signal integral, which follows
        # the interrogation the search settles on: within 1e-3)
        np.testing.assert_allclose(a / c, 10.0, rtol=1e-3, atol=0)


class TestScheduleIntegrals:
    """Each schedule against an independent quadrature of SNR^2 = integral h0(t)^2 / S_n dt (the
    matched-filter SNR of a slowly evolving source in the convention of Robson, Cornish & Liu 2019)."""

    def test_fixed_tuning_integrates_the_window_along_the_track(self, curve):
        # the schedule samples the track at 800 points; the reference uses 40001 (the window's lobes
        # are narrow) and the same fixed-tuning window, S_n(f; f0) at every point of the track
        from gwclock.engine import window_psd
        b = Inspiral.from_masses(1e4, 1e4, redshift=1.0)
        T_obs, tune = 3.15576e7, 0.01
        r = clock_snr(curve, b, "fixed", T_obs, tune=tune)
        tau_end = float(b.time_to_merger(min(100.0, b.isco_frequency)))
        tau = np.geomspace(tau_end, tau_end + T_obs, 40001)
        f = b.frequency_at(tau)
        s = window_psd(curve.design, [tune], f[None, :])[0][0]
        expected = np.sqrt(np.trapezoid(b.rms_amplitude(f) ** 2 / s * tau, np.log(tau)))
        assert r.snr == pytest.approx(expected, rel=1e-3, abs=0)

    def test_best_over_the_whole_inspiral_leaves_out_only_the_chirped_phase(self):
        # per-cycle picture: a cycle sees a nearly monochromatic signal only while (df/dt) T^2 <= 1
        # (derivation; beyond it chirped pulse timing would be needed). On the flagship mission
        # the cut removes ~0.17 % of a 1e4 + 1e4 Msun binary's SNR at z = 0.1.
        from .conftest import ROOT
        m, _ = load_mission(ROOT / "mission_configs" / "flagship.toml")
        curve = TunedCurve(m.design())
        b = Inspiral.from_masses(1e4, 1e4, redshift=0.1)
        # the allocation plan of "best" (best also compares it with fixed and track, which here
        # comes out 0.06 % higher through its explicitly simulated last windows)
        from gwclock.studies.snr import _best_schedule
        r = _best_schedule(curve, b, 1e4 * 3.15576e7, "flagship")
        # best is the best of the plans: here tracking beats the allocation (definition, no source)
        best = clock_snr(curve, b, "best", 1e4 * 3.15576e7).snr
        assert best >= clock_snr(curve, b, "track", 1e4 * 3.15576e7).snr > r.snr
        f = np.geomspace(max(1e-5, float(b.frequency_at(1e3 * 3.15576e7))), min(100.0, b.isco_frequency), 200001)
        ok = b.frequency_derivative(f) * curve.interrogation_at(f) ** 2 <= 1.0
        rate = 4 * b.fourier_amplitude_squared(f) / curve.psd(f) * f
        expected = np.sqrt(np.trapezoid(np.where(ok, rate, 0.0), np.log(f)))
        assert r.snr == pytest.approx(expected, rel=3e-4, abs=0)
        assert expected < 0.999 * np.sqrt(np.trapezoid(rate, np.log(f)))  # the cut matters here

    def test_scheduled_time_adds_up_to_the_observation(self, curve):
        b = Inspiral.from_masses(1e4, 1e4, redshift=1.0)
        for T_obs in (1e5, 3.15576e7):
            for schedule in ("track", "best", "fixed"):
                assert clock_snr(curve, b, schedule, T_obs).observed == pytest.approx(T_obs, rel=1e-9, abs=0)


@pytest.mark.parametrize("kind, fk", [("cpmg", 0.03), ("cpmg", 0.1), ("xy8", 0.1), ("ramsey", 0.003),
                                      ("custom", 0.05)])
@pytest.mark.parametrize("beta", [-2.0, 0.0, 2 / 3, 2.0])
def test_clock_scan_against_the_per_cycle_quadrature(kind, fk, beta):
    # known-noise single detector, per cycle (derivation after Thrane & Romano 2013, PRD 88, 124032):
    # SNR = sqrt(N/2) sigma_s^2 / sigma_n^2 with sigma_s^2 = integral R1 |H|^2 S_h |G|^2 df, here by
    # scipy quadrature of the exact |G|^2 from 1/dwell to the pulse bandwidth, and
    # sigma_n^2 = |G(f0)|^2 S_y,eq / (2 Tc). Steep red spectra (beta = -2) test the filter's leakage
    # at low frequency; Ramsey its low-pass lobe; a custom timing its own |G|.
    from gwclock import engine
    from gwclock.physics import noises, response
    from gwclock.physics.sequences import SEQUENCES
    extra = dict(pulse_times=(0.1, 0.35, 0.6, 0.9)) if kind == "custom" else {}
    d = quiet_design(atom_number=1e6, pi_pulse_duration=1e-3, phase_lock_bandwidth=30.0, kind=kind, **extra)
    h0 = bg.hubble_constant()
    b = engine.envelope(d, np.array([fk]))
    n, T, Tc = b.pulses[0], b.interrogation[0], b.cycle[0]
    assert (n > 0) == (kind != "ramsey")
    seq = SEQUENCES[kind if n > 0 else "ramsey"]
    sy = b.total[0] * engine.signal_response(d, [fk])[0]
    sigma_n2 = seq.modulus(d, np.array([fk]), n, T)[0] ** 2 * sy / (2 * Tc)

    def integrand(lf):
        f = np.exp(lf)
        return (f * 0.5 * response.link_response(f, d.baseline) * response.phase_lock_transfer(f, d.phase_lock_bandwidth)
                * bg.strain_psd_from_omega(f, (f / fk) ** beta, h0) * seq.modulus(d, np.array([f]), n, T)[0] ** 2)

    T_obs = 1e7
    top = noises.pulse_bandwidth(d)
    cuts = np.geomspace(1.0 / (4 * T), top, 60)
    edges = np.log(np.concatenate(([1.0 / T_obs], cuts)))
    sigma_s2 = sum(integrate.quad(integrand, a, c, limit=4000)[0] for a, c in zip(edges[:-1], edges[1:]))
    expected = 1.0 / (np.sqrt(T_obs / Tc / 2) * sigma_s2 / sigma_n2)
    got = bg.clock_scan_power_law(d, [fk], T_obs, [fk], betas=[beta], f_ref=fk)[0]
    assert got == pytest.approx(expected, rel=1e-2, abs=0)


def test_best_schedule_takes_the_last_stretch_when_the_rate_only_grows(curve):
    # where the tracked SNR rate h0^2 / S_n over the last T_obs beats every earlier moment, the best
    # placement of T_obs is the last T_obs before it: SNR^2 = integral of the rate over that stretch
    # (an independent quadrature on a finer grid than the schedule's own)
    b = Inspiral.from_masses(1e4, 1e4, redshift=1.0)
    T_obs = 1e5
    tau_end = float(b.time_to_merger(min(curve.band[1], b.isco_frequency)))
    tau = np.geomspace(tau_end, 1e3 * T_obs, 200001)
    rate = b.rms_amplitude(b.frequency_at(tau)) ** 2 / curve.psd(b.frequency_at(tau))
    last = tau <= tau_end + T_obs
    assert rate[last].min() > rate[~last].max()
    expected = np.sqrt(np.trapezoid((rate * tau)[last], np.log(tau[last])))
    assert clock_snr(curve, b, "best", T_obs).snr == pytest.approx(expected, rel=1e-3, abs=0)
