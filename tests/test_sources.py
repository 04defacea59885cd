"""Sources at leading order and reference detectors.

Truth: Peters (1964, Phys. Rev. 136, B1224) for the chirp; the first binary-black-hole detection
(Abbott et al. 2016, PRL 116, 061102; PRD 93, 122004) for the time spent from 35 Hz to merger;
astropy's Planck18 cosmology; the published analytic models of the reference detectors
(Robson, Cornish & Liu 2019; Sathyaprakash & Schutz 2009; Mishra et al. 2010; Yagi & Seto 2011),
evaluated at their formulas' values (computed independently with scipy/astropy).
"""

import re

import numpy as np
import pytest
from astropy import constants as const
from astropy import units as u
from astropy.cosmology import Planck18

from gwclock.astro.references import get_reference, lisa_confusion, lisa_psd, user_curve
from gwclock.astro.sources import Inspiral, Monochromatic, chirp_mass, load_sources
from gwclock.constants import MPC
from gwclock.errors import InputError

from .conftest import rows

MSUN = const.M_sun.value


class TestInspiral:
    def binary(self):
        return Inspiral.from_masses(30, 30, distance=400 * MPC)

    def test_cosmology_against_astropy(self):
        # z(D_L = 400 Mpc) = 0.0849182 (astropy 8.0.2, Planck18)
        assert self.binary().redshift == pytest.approx(0.0849182, rel=1e-5, abs=0)
        b = Inspiral.from_masses(30, 30, redshift=1.0)
        assert b.distance == pytest.approx(Planck18.luminosity_distance(1.0).to_value(u.m), rel=1e-10, abs=0)
        assert b.distance / MPC == pytest.approx(6791.27, rel=1e-5, abs=0)

    def test_chirp_masses(self):
        assert chirp_mass(30, 30) == pytest.approx(26.11652, rel=1e-6, abs=0)
        assert self.binary().chirp_mass / MSUN == pytest.approx(28.33428, rel=1e-5, abs=0)  # detector frame

    @pytest.mark.parametrize("f, tau, fdot, A, h0, hc", rows("inspiral_30_30_400Mpc.ecsv", "frequency", "time_to_merger",
                                                             "frequency_derivative", "amplitude", "h0", "hc"))
    def test_check_table(self, f, tau, fdot, A, h0, hc):
        # tests/data/inspiral_30_30_400Mpc.ecsv: Peters (1964) at quadrupole order, evaluated independently
        b = self.binary()
        assert b.time_to_merger(f) == pytest.approx(tau, rel=1e-4, abs=0)
        assert b.frequency_derivative(f) == pytest.approx(fdot, rel=1e-4, abs=0)
        assert b.amplitude(f) == pytest.approx(A, rel=1e-4, abs=0)
        assert b.rms_amplitude(f) == pytest.approx(h0, rel=1e-4, abs=0)
        assert b.characteristic_strain(f) == pytest.approx(hc, rel=1e-4, abs=0)

    def test_first_detection_duration(self):
        # GW150914: about 0.2 s from 35 Hz to merger for a detector-frame chirp mass near 30 Msun
        # (Abbott et al. 2016, PRL 116, 061102; PRD 93, 122004); tau(35 Hz) = 0.1704 s
        b = Inspiral("GW150914-like", 30 * MSUN, 70 * MSUN, 410 * MPC)
        assert b.time_to_merger(35.0) == pytest.approx(0.1704, rel=1e-3, abs=0)
        assert 0.1 < b.time_to_merger(35.0) < 0.3
        src = Inspiral.from_masses(36, 29, redshift=0.09)
        assert chirp_mass(36, 29) == pytest.approx(28.0956, rel=1e-5, abs=0)
        assert src.chirp_mass / MSUN == pytest.approx(30.6, rel=2e-3, abs=0)

    def test_peters_scalings(self):
        # tau ~ Mc^(-5/3) f^(-8/3) (Peters 1964)
        a = Inspiral("a", 10 * MSUN, 25 * MSUN, MPC)
        b = Inspiral("b", 20 * MSUN, 50 * MSUN, MPC)
        assert a.time_to_merger(1.0) / b.time_to_merger(1.0) == pytest.approx(2 ** (5 / 3), rel=1e-12, abs=0)
        assert a.time_to_merger(1.0) / a.time_to_merger(2.0) == pytest.approx(2 ** (8 / 3), rel=1e-12, abs=0)
        # tau = (3/8) f / fdot, and frequency_at inverts time_to_merger
        assert a.time_to_merger(0.3) == pytest.approx(0.375 * 0.3 / a.frequency_derivative(0.3), rel=1e-12, abs=0)
        assert a.frequency_at(a.time_to_merger(0.3)) == pytest.approx(0.3, rel=1e-12, abs=0)

    def test_characteristic_strain_forms_agree(self):
        # h_c = 2 f |h~| = h0 f / sqrt(fdot) (Moore, Cole & Berry 2015)
        b = self.binary()
        f = np.geomspace(1e-3, 10, 7)
        np.testing.assert_allclose(b.characteristic_strain(f), b.rms_amplitude(f) * f / np.sqrt(b.frequency_derivative(f)), rtol=1e-12, atol=0)

    def test_track_stops_at_last_stable_orbit(self):
        b = self.binary()
        tau, f, hc = b.track(1e-3, 1e4, 50)
        assert f[-1] == pytest.approx(b.isco_frequency, rel=1e-12, abs=0)
        # f_ISCO = c^3 / (6^(3/2) pi G M), 4400 Hz (M/Msun)^-1 for a point mass (common practice, from memory)
        assert b.isco_frequency * b.total_mass / MSUN == pytest.approx(4397, rel=1e-3, abs=0)
        assert np.all(np.diff(tau) < 0)


def test_monochromatic_characteristic_strain():
    m = Monochromatic("gb", 3e-3, 1e-22)
    assert m.characteristic_strain(3.15576e7) == pytest.approx(1e-22 * np.sqrt(3e-3 * 3.15576e7), rel=1e-12, abs=0)


def test_source_files(tmp_path):
    p = tmp_path / "s.toml"
    p.write_text('[[source]]\nname = "a"\nmass1 = 30\nmass2 = 30\ndistance = "400 Mpc"\n'
                 '[[source]]\nname = "b"\nfrequency = "3 mHz"\nh0 = 1e-22\n')
    a, b = load_sources(p)
    assert isinstance(a, Inspiral) and a.redshift == pytest.approx(0.0849182, rel=1e-5, abs=0)
    assert isinstance(b, Monochromatic) and b.frequency == pytest.approx(3e-3, rel=1e-12, abs=0)
    c = tmp_path / "s.csv"
    c.write_text("name,mass1,mass2,redshift\nx,1e4,1e4,1\n")
    (x,) = load_sources(c)
    assert x.redshift == 1.0
    bad = tmp_path / "bad.toml"
    bad.write_text('[[source]]\nmass1 = 30\nmas2 = 30\nredshift = 1\n')
    with pytest.raises(InputError, match=r"source\[0\]\.mas2: unknown key; did you mean 'mass2'\?"):
        load_sources(bad)


@pytest.mark.parametrize("name, text, fragment", [
    ("dup.csv", "name,mass1,mass1,redshift\nx,1,2,1\n", "mass1: column given twice"),
    ("long.csv", "name,mass1,mass2,redshift\nx,1e4,1e4,1,9\n", "source[0]: 5 values for 4 columns"),
    ("short.csv", "name,mass1,mass2,redshift\nx,1e4\n", "source[0].mass2: required field is missing"),
    ("bool.toml", '[[source]]\nmass1 = true\nmass2 = 30\nredshift = 1\n', "source[0].mass1: got True; expected a plain number"),
    ("z0.toml", '[[source]]\nmass1 = 30\nmass2 = 30\nredshift = 0\n', "source[0].redshift: got 0; expected a number > 0"),
    ("far.toml", '[[source]]\nmass1 = 30\nmass2 = 30\nredshift = 2000\n', "expected a redshift up to 1000"),
    ("near.toml", '[[source]]\nmass1 = 30\nmass2 = 30\ndistance = "1e-300 m"\n', "expected a distance from 1 pc"),
])
def test_bad_source_files(tmp_path, name, text, fragment):
    p = tmp_path / name
    p.write_text(text)
    with pytest.raises(InputError, match=re.escape(fragment)):
        load_sources(p)


def test_a_csv_with_a_byte_order_mark_and_a_source_at_one_parsec(tmp_path):
    # a BOM is not part of the first key; below z = 1e-6 the redshift is the Hubble law's H0 D / c
    # (Planck18 H0 = 67.66 km/s/Mpc, astropy)
    p = tmp_path / "bom.csv"
    p.write_bytes(b"\xef\xbb\xbfname,mass1,mass2,distance\nx,1,1,1 pc\n")
    (x,) = load_sources(p)
    expected = Planck18.H0.to_value("1/s") * 3.0856775814913673e16 / 299792458.0
    assert x.name == "x" and x.redshift == pytest.approx(expected, rel=1e-9, abs=0)


@pytest.mark.parametrize("value", ["-3", "0", "nan", "abc"])
def test_a_user_curve_needs_a_positive_sky_factor(tmp_path, value):
    p = tmp_path / "c.csv"
    p.write_text(f"# convention: optimal orientation\n# sky_factor: {value}\nfrequency,asd\n1,1e-20\n10,1e-21\n")
    with pytest.raises(InputError, match="sky_factor: got"):
        user_curve(p)


class TestReferences:
    @pytest.mark.parametrize("f, sn", rows("lisa_instrument_rcl2019.ecsv", "frequency", "psd"))
    def test_lisa_instrument(self, f, sn):
        # Robson, Cornish & Liu 2019 eqs. 10-13 (tests/data/lisa_instrument_rcl2019.ecsv)
        assert lisa_psd(f) == pytest.approx(sn, rel=1e-4, abs=0)

    @pytest.mark.parametrize("f, one, four", rows("lisa_confusion_rcl2019.ecsv", "frequency", "psd_1yr", "psd_4yr"))
    def test_lisa_confusion(self, f, one, four):
        # Robson, Cornish & Liu 2019 eq. 14 with Table 1 (tests/data/lisa_confusion_rcl2019.ecsv)
        assert lisa_confusion(f, 1) == pytest.approx(one, rel=1e-4, abs=0)
        assert lisa_confusion(f, 4) == pytest.approx(four, rel=1e-4, abs=0)
        assert lisa_psd(f, confusion_years=1) == pytest.approx(lisa_psd(f) + one, rel=1e-4, abs=0)

    def test_confusion_is_off_by_default_and_vanishes_at_high_frequency(self):
        assert get_reference("lisa").native(1e-3) == pytest.approx(lisa_psd(1e-3), rel=1e-12, abs=0)
        assert lisa_confusion(0.1, 1) == 0.0

    @pytest.mark.parametrize("key, f, asd", rows("reference_fits.ecsv", "detector", "frequency", "asd"))
    def test_analytic_fits(self, key, f, asd):
        # Sathyaprakash & Schutz 2009 (aLIGO), the ET-B fit, Yagi & Seto 2011 eq. 5 (DECIGO):
        # tests/data/reference_fits.ecsv, printed to 6 digits
        assert np.sqrt(get_reference(key).native(f)) == pytest.approx(asd, rel=1e-5, abs=0)

    def test_aligo_fit_at_its_knee_is_exact(self):
        # x = 1: S_h = S0 (1 - 5 + 111 / 3) = 33 S0, ASD sqrt(33) x 10^-24.5 (analytic)
        assert np.sqrt(get_reference("aligo").native(215.0)) == pytest.approx(np.sqrt(33) * 10**-24.5, rel=1e-12, abs=0)

    def test_conventions(self):
        # optimal-orientation PSDs divided by the sky-averaged response: x5/2 (90 deg), x10/3 (60 deg)
        assert get_reference("aligo").sky_averaged(100.0) == pytest.approx(2.5 * get_reference("aligo").native(100.0), rel=1e-12, abs=0)
        assert get_reference("decigo").sky_factor == pytest.approx(10 / 3, rel=1e-12, abs=0)
        assert get_reference("lisa").sky_factor == 1.0

    def test_the_two_et_b_fits_part_where_recalled(self):
        # ASD of the four-power-law fit (Keppel & Ajith 2010, PRD 82, 122001) over the rational fit
        # (Mishra et al. 2010, PRD 82, 064010, eq. 2.2): 9.5 at 1 Hz, 0.78 at 100 Hz (both from memory)
        ratio = np.sqrt(get_reference("et-powerlaw").native([1.0, 100.0]) / get_reference("et").native([1.0, 100.0]))
        np.testing.assert_allclose(ratio, [9.5, 0.78], rtol=1e-2, atol=0)

    def test_snr_adds_over_the_channels(self):
        # LISA: two noise-independent channels A and E with the one-channel S_n of Robson, Cornish & Liu
        # 2019 (sec. 2; from memory), so SNR^2 = 2 h0^2 T / S_n; ET-B is one L-shaped interferometer
        from gwclock.astro.sources import Monochromatic
        from gwclock.studies.snr import reference_snr
        lisa, et = get_reference("lisa"), get_reference("et")
        assert (lisa.channels, et.channels, get_reference("decigo").channels) == (2, 1, 1)
        m = Monochromatic("m", 3e-3, 1e-21)
        assert reference_snr(lisa, m, 1e7).snr == pytest.approx(1e-21 * np.sqrt(2 * 1e7 / lisa_psd(3e-3)), rel=1e-12, abs=0)
        assert lisa.network(3e-3) == pytest.approx(lisa_psd(3e-3) / 2, rel=1e-12, abs=0)
        assert lisa.network_label == "LISA, 2 channels"

    def test_unknown_reference(self):
        with pytest.raises(KeyError, match="expected one of lisa"):
            get_reference("virgo")

    def test_user_curve(self, tmp_path):
        bare = tmp_path / "bare.csv"
        bare.write_text("frequency,asd\n1,1e-23\n10,1e-24\n100,1e-24\n")
        with pytest.raises(InputError, match="declare the convention"):
            user_curve(bare)
        p = tmp_path / "c.csv"
        p.write_text("# convention: optimal orientation\nfrequency,asd\n1,1e-23\n10,1e-24\n100,1e-24\n")
        assert user_curve(p).convention == "optimal orientation"
        r = user_curve(bare, convention="optimal")
        assert r.native(10.0) == pytest.approx(1e-48, rel=1e-12, abs=0)
        assert r.sky_averaged(np.sqrt(10.0)) == pytest.approx(2.5 * 10 ** (-47), rel=1e-9, abs=0)  # log-log interpolation
        with pytest.raises(ValueError, match="covers"):
            r.native(1000.0)
