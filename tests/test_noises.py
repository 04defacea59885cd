"""Noise terms: link budget, laser noise conversions, acceleration noise, species data.

Truth: the far-field link budget and heterodyne shot noise (top-hat far-field diffraction, Born & Wolf,
Principles of Optics, ch. 8, from memory; S_phi = h nu / P_r for heterodyne detection, common
practice, no source), Robson, Cornish & Liu 2019 (CQG 36, 105011) for the LISA metrology allocation,
the Lorentzian-linewidth and Allan-variance relations of Barnes et al. (1971, IEEE Trans. Instrum.
Meas. 20, 105), the acceleration-to-Doppler conversion (derivation: y = Delta v / c, Armstrong 2006, LRR 9, 1), the CIPM 2009
Recommendation 2 clock frequencies, and astropy's constants.
"""

import numpy as np
import pytest
from astropy import constants as const
from scipy import integrate

import gwclock.constants as sc
from gwclock.physics import noises
from gwclock.physics.projection import correlation_penalty
from gwclock.physics.response import link_response
from gwclock.physics.species import SPECIES

from .conftest import quiet_design, rows


def test_constants_agree_with_astropy():
    assert sc.c == const.c.value
    assert sc.h == pytest.approx(const.h.value, rel=1e-15, abs=0)


class TestLinkBudget:
    def lisa_like(self):
        return quiet_design(nu0=sc.c / 1064e-9, transmit_power=2.0, transmit_aperture=0.3,
                            receive_aperture=0.3, baseline=2.5e9, optical_efficiency=1.0)

    def test_lisa_like_received_power(self):
        # analytic link budget: 2 W, 0.3 m / 0.3 m, 1064 nm, 2.5e9 m -> 1.4123 nW (top hat, eta = 1)
        assert noises.received_power(self.lisa_like()) == pytest.approx(1.4123e-9, rel=1e-4, abs=0)

    def test_lisa_like_shot_displacement_below_the_allocation(self):
        # (lambda/2pi) sqrt(h nu / P_r) = 1.95 pm/rtHz (analytic); the total optical
        # metrology allocation of Robson, Cornish & Liu 2019 is 15 pm/rtHz, several times larger.
        d = self.lisa_like()
        pr = noises.received_power(d)
        disp = 1064e-9 / (2 * np.pi) * np.sqrt(sc.h * d.nu0 / pr)
        assert disp == pytest.approx(1.947e-12, rel=1e-3, abs=0)
        assert disp < 15e-12 / 3

    def test_clock_link_and_shot_phase_noise(self):
        # analytic link budget: 1 W, 1 m / 1 m, 698 nm, 3e10 m, eta = 0.8145 -> 1.14436 nW,
        # S_phi = h nu / P_r = 2.48531e-10 rad^2/Hz
        d = quiet_design(transmit_power=1.0, transmit_aperture=1.0, receive_aperture=1.0,
                         baseline=3e10, optical_efficiency=0.8145, phase_lock_bandwidth=10.0,
                         pi_pulse_duration=0.01)
        pr = noises.received_power(d)
        assert pr == pytest.approx(1.14436e-9, rel=1e-5, abs=0)
        (term,) = [t for t in noises.shot_terms(d) if t.alpha == 2]
        (plateau,) = [t for t in noises.shot_terms(d) if t.alpha == 0]
        # above the loop bandwidth the loop passes (B/f)^2: continuous at B
        # the white-phase piece covers [0, B), the plateau [B, top): they meet continuously at B
        assert plateau(10.0) == pytest.approx(term(10.0 * (1 - 1e-12)), rel=1e-10, abs=0)
        assert term(10.0) == 0.0 and plateau(10.0 * (1 - 1e-12)) == 0.0
        assert term.level * d.nu0**2 == pytest.approx(2.48531e-10, rel=1e-5, abs=0)
        assert term.cutoff == 10.0

    def test_shot_scales_as_inverse_square_of_baseline(self):
        # far field: P_r proportional to 1/L^2 (scaling law)
        a = noises.received_power(quiet_design(baseline=1e9))
        b = noises.received_power(quiet_design(baseline=1e10))
        assert a / b == pytest.approx(100, rel=1e-12, abs=0)

    def test_two_way_link_doubles_the_shot_noise(self):
        one = noises.shot_terms(quiet_design(path="one-way"))[0].level
        two = noises.shot_terms(quiet_design(path="two-way"))[0].level
        assert two / one == pytest.approx(2.0, rel=1e-12, abs=0)


class TestLaser:
    def test_lorentzian_linewidth(self):
        # FWHM = pi S_nu (Lorentzian line of white FM; Di Domenico et al. 2010,
        # Appl. Opt. 49, 4801, from memory): 1 Hz -> S_y = 1.72772e-30 /Hz at 429 THz
        d = quiet_design(linewidth=1.0, flicker_floor=0.0)
        (t,) = [x for x in noises.laser_terms(d) if x.alpha == 0]
        assert t.level == pytest.approx(1.72772e-30, rel=1e-5, abs=0)

    def test_flicker_floor_to_h_minus_one(self):
        # flicker FM: sigma_y^2 = 2 ln2 h_-1 (Barnes et al. 1971); 4e-17 -> 1.15416e-33
        d = quiet_design(linewidth=0.0, flicker_floor=4e-17)
        (t,) = [x for x in noises.laser_terms(d) if x.alpha == -1]
        assert t.level == pytest.approx(1.15416e-33, rel=1e-5, abs=0)

    def test_flicker_allan_variance_by_quadrature(self):
        # sigma_y^2(tau) = 2 int S_y sin^4(pi f tau)/(pi f tau)^2 df; for h_-1/f it is 2 ln 2 h_-1
        val = integrate.quad(lambda x: 2 * np.sin(np.pi * x) ** 4 / (np.pi * x) ** 2 / x, 0, 200, limit=2000)[0]
        tail = integrate.quad(lambda x: 2 * 0.375 / (np.pi * x) ** 2 / x, 200, np.inf)[0]
        assert val + tail == pytest.approx(2 * np.log(2), rel=1e-3, abs=0)

    @pytest.mark.parametrize("f, dt, expected", [(0.1, 1e-6, 3.9478e-13), (1.0, 1e-6, 3.9478e-11)])
    def test_timing_mismatch_residual(self, f, dt, expected):
        # 4 sin^2(pi f dt) (analytic: a delay dt between the two samples of one laser), small-angle form used by the model
        d = quiet_design(linewidth=1.0, flicker_floor=0.0, timing_mismatch=dt, gain_mismatch=0.0)
        (white_laser,) = [x for x in noises.laser_terms(d) if x.alpha == 0]
        (res,) = [x for x in noises.laser_residual_terms(d) if x.alpha == 2]
        assert res(f) / white_laser(f) == pytest.approx(expected, rel=1e-4, abs=0)

    def test_gain_mismatch_leaves_eps_squared(self):
        d = quiet_design(linewidth=1.0, flicker_floor=4e-17, gain_mismatch=1e-3)
        total = noises.psd(noises.laser_residual_terms(d), 0.3)
        assert total == pytest.approx(1e-6 * noises.psd(noises.laser_terms(d), 0.3), rel=1e-12, abs=0)


class TestAcceleration:
    def design(self):
        return quiet_design(acceleration_noise=3e-15, baseline=3e10)

    def test_doppler_level(self):
        # S_y = 2 S_a / ((2 pi f)^2 c^2) = 5.0731e-42 /Hz at 1 mHz for 3 fm s^-2 Hz^-1/2 each
        s = noises.psd(noises.acceleration_terms(self.design()), 1e-3)
        assert s == pytest.approx(5.0731e-42, rel=1e-4, abs=0)

    @pytest.mark.parametrize("f, expected", [(1e-3, 9.9962e-21), (1e-2, 2.8124e-22), (1e-4, 9.8122e-19)])
    def test_strain_asd(self, f, expected):
        d = self.design()
        s = noises.psd(noises.acceleration_terms(d), f) / link_response(f, d.baseline)
        assert np.sqrt(s) == pytest.approx(expected, rel=1e-4, abs=0)

    def test_low_frequency_form(self):
        # S_n -> 15 S_a / (16 pi^4 f^4 L^2) (analytic low-frequency limit, with R_y -> 16/15 a^2)
        d = self.design()
        f = 1e-6
        s = noises.psd(noises.acceleration_terms(d), f) / link_response(f, d.baseline)
        assert s == pytest.approx(15 * (3e-15) ** 2 / (16 * np.pi**4 * f**4 * 3e10**2), rel=1e-6, abs=0)

    def test_low_frequency_corner(self):
        # S_a = a^2 [1 + (f_c/f)^2] per test mass (the shape of the LISA requirement used by
        # Robson, Cornish & Liu 2019, eq. 11): the PSD doubles at f = f_c and is x101 at f_c/10
        d = quiet_design(acceleration_noise=3e-15, acceleration_corner=4e-4)
        flat = quiet_design(acceleration_noise=3e-15)
        for f, factor in ((4e-4, 2.0), (4e-5, 101.0), (4e-2, 1.0001)):
            ratio = noises.psd(noises.acceleration_terms(d), f) / noises.psd(noises.acceleration_terms(flat), f)
            assert ratio == pytest.approx(factor, rel=1e-12, abs=0)

    def test_pathfinder_per_test_mass(self):
        # LISA Pathfinder measured 5.2 fm s^-2 Hz^-1/2 for two test masses (Armano et al. 2016,
        # PRL 116, 231101): per test mass 5.2/sqrt(2) = 3.68 if equal and independent.
        d1 = quiet_design(acceleration_noise=5.2e-15 / np.sqrt(2))
        relative = np.sqrt(noises.psd(noises.acceleration_terms(d1), 1e-3) * (2 * np.pi * 1e-3 * sc.c) ** 2)
        assert relative == pytest.approx(5.2e-15, rel=1e-12, abs=0)


class TestTwoWayAcceleration:
    """The round trip A -> B -> A: y2 = [v_A(t - 2L/c) + v_A(t) - 2 v_B(t - L/c)] / c (Armstrong 2006,
    Living Rev. Relativ. 9, 1, the three-pulse structure of the two-way Doppler response). With
    independent velocities of PSD S_a / (2 pi f)^2 the transfer is taken here straight from the
    delays, |1 + exp(-2 i w L/c)|^2 S_a,A + 4 S_a,B."""

    L = 3e10

    def design(self):
        return quiet_design(acceleration_noise=3e-15, baseline=self.L, path="two-way")

    def three_pulse(self, f):
        w = 2 * np.pi * np.asarray(f, dtype=float)
        sv = (3e-15) ** 2 / w**2
        return (np.abs(1 + np.exp(-2j * w * self.L / sc.c)) ** 2 * sv + 4 * sv) / sc.c**2

    def test_low_frequency_limit_is_four_times_the_sum(self):
        # f << c/(2 pi L): both terms of the A test mass add coherently, S_y -> 4 (S_A + S_B) / (w c)^2
        f = 1e-7 * sc.c / self.L
        model = noises.psd(noises.acceleration_terms(self.design()), f)
        assert model == pytest.approx(self.three_pulse(f), rel=1e-6, abs=0)
        one_way = noises.psd(noises.acceleration_terms(quiet_design(acceleration_noise=3e-15, baseline=self.L)), f)
        assert model / one_way == pytest.approx(4.0, rel=1e-12, abs=0)

    @pytest.mark.parametrize("start", [3.0, 41.5, 400.25])
    def test_ripple_mean_above_the_split(self, start):
        # the mean of f^2 S_y over one ripple period c/(2L) equals the model's (by quadrature)
        period = sc.c / (2 * self.L)
        a = start * period
        exact = integrate.quad(lambda f: f**2 * self.three_pulse(f), a, a + period, limit=200)[0]
        model = integrate.quad(lambda f: f**2 * noises.psd(noises.acceleration_terms(self.design()), f),
                               a, a + period, limit=200)[0]
        assert model == pytest.approx(exact, rel=1e-6, abs=0)

    def test_within_the_ripple_everywhere(self):
        # below the split the model bounds the exact PSD (at most 4/3 above); above it is the mean,
        # between 3/4 and 3/2 of the exact value (the ripple runs from 4 S_a to 8 S_a about 6 S_a)
        f = np.geomspace(1e-3, 1e3, 4001) * sc.c / self.L
        ratio = noises.psd(noises.acceleration_terms(self.design()), f) / self.three_pulse(f)
        below = f < sc.c / (8 * self.L)
        assert np.all(ratio[below] >= 1 - 1e-12) and np.all(ratio[below] <= 4 / 3 + 1e-12)
        assert np.all(ratio >= 0.75 - 1e-12) and np.all(ratio <= 1.5 + 1e-12)


def test_correlation_penalty_values():
    # analytic (Fisher information averaged over a uniform common phase): kappa = 1.14 at C = 0.99, 1.44 at 0.9, 1.87 at 0.5, -> 2 as C -> 0
    assert correlation_penalty(0.99) == pytest.approx(1.14, rel=5e-3, abs=0)
    assert correlation_penalty(0.9) == pytest.approx(1.44, rel=5e-3, abs=0)
    assert correlation_penalty(0.5) == pytest.approx(1.87, rel=5e-3, abs=0)
    assert correlation_penalty(1e-6) == pytest.approx(2.0, rel=1e-9, abs=0)


@pytest.mark.parametrize("C", [0.3, 0.8, 0.97])
def test_correlation_penalty_from_fisher_information(C):
    # mean over a uniform common phase of C^2 sin^2 a / (1 - C^2 cos^2 a) is 1 - sqrt(1 - C^2);
    # kappa = C^2 / that (derivation; the correlated read-out of Chou et al. 2011, PRX 1, 011002), checked by quadrature
    mean = integrate.quad(lambda a: C**2 * np.sin(a) ** 2 / (1 - C**2 * np.cos(a) ** 2), 0, 2 * np.pi)[0] / (2 * np.pi)
    assert correlation_penalty(C) == pytest.approx(C**2 / mean, rel=1e-9, abs=0)


class TestSpecies:
    # typed from the sources in tests/data/clock_species.ecsv (its header says which were read)
    @pytest.mark.parametrize("key, digits, life", rows("clock_species.ecsv", "key", "frequency_digits", "lifetime"))
    def test_published_values(self, key, digits, life):
        from decimal import Decimal
        assert Decimal(SPECIES[key].digits.replace(" ", "")) == Decimal(digits)  # the digits as printed
        assert SPECIES[key].frequency == pytest.approx(float(digits), rel=1e-15, abs=0)
        assert SPECIES[key].lifetime == pytest.approx(float(life), rel=2e-3, abs=0)

    def test_strontium_wavelength(self):
        # lambda = c / nu = 698.4457 nm (from the CIPM 2009 value and the exact SI c)
        assert const.c.value / SPECIES["Sr87"].frequency == pytest.approx(698.4457e-9, rel=1e-7, abs=0)

