"""GW response of the one-way and two-way Doppler link.

Truth: the closed forms re-derived (sky average of |y/h|^2 over mu and psi) from the one-way Doppler formula of
Estabrook & Wahlquist (1975, Gen. Rel. Grav. 6, 439) and the three-pulse two-way form of
Armstrong (2006, Living Rev. Relativity 9, 1, eq. 1), their analytic limits, and an independent
Monte Carlo over explicit polarisation tensors.
"""

import numpy as np
import pytest
from astropy import constants as const

from gwclock.physics.response import directional_response, link_response, one_way_average, phase_lock_transfer, two_way_average

from .conftest import rows

C = const.c.value


class TestExactValues:
    # analytic values of the closed form (derivation from Estabrook & Wahlquist 1975)
    def test_one_way_at_pi_over_2(self):
        assert one_way_average(np.pi / 2) == pytest.approx(1 / 3 - 1 / (2 * np.pi**2), rel=1e-12, abs=0)

    def test_one_way_pi_over_4_equals_two_way_pi_over_2(self):
        expected = 1 / 3 - 2 / np.pi**2
        assert one_way_average(np.pi / 4) == pytest.approx(expected, rel=1e-12, abs=0)
        assert two_way_average(np.pi / 2) == pytest.approx(expected, rel=1e-12, abs=0)

    @pytest.mark.parametrize("path, a, expected, digits", rows("link_response.ecsv", "path", "a", "response", "digits"))
    def test_reference_table(self, path, a, expected, digits):
        # tests/data/link_response.ecsv: exact values and independent quadratures, to their digits
        average = one_way_average if path == "one-way" else two_way_average
        assert average(a) == pytest.approx(expected, rel=10.0 ** (1 - digits), abs=0)

    @pytest.mark.parametrize("f, expected", [(1e-3, 0.0507692), (1e-2, 0.6413889), (0.1, 0.6664139)])
    def test_summed_response_for_3e10_m(self, f, expected):
        # summed over polarisations: R_y = 2 R1 (Robson, Cornish & Liu 2019 normalisation)
        assert link_response(f, 3e10) == pytest.approx(expected, rel=1e-6, abs=0)


class TestLimits:
    def test_low_frequency_series(self):
        # R1 = 4a^2/15 - 32a^4/315 + ... (analytic limit)
        a = np.array([1e-6, 1e-4, 1e-3, 0.05])
        series = 4 * a**2 / 15 - 32 * a**4 / 315
        np.testing.assert_allclose(one_way_average(a), series, rtol=1e-6, atol=0)
        np.testing.assert_allclose(two_way_average(a[:3]), 16 * a[:3] ** 2 / 15, rtol=1e-5, atol=0)

    def test_high_frequency_one_way_settles_at_one_third(self):
        a = np.geomspace(1e3, 1e6, 20)
        np.testing.assert_allclose(one_way_average(a), 1 / 3, rtol=1e-6, atol=0)

    def test_two_way_keeps_oscillating(self):
        # high-f limit 1/2 - cos(4a)/6 with no settling (derivation from Armstrong 2006, eq. 1)
        a = np.linspace(1e4, 1e4 + 3, 50)
        np.testing.assert_allclose(two_way_average(a), 0.5 - np.cos(4 * a) / 6, rtol=1e-5, atol=0)

    def test_branches_join_smoothly(self):
        a = np.array([1 - 1e-9, 1 + 1e-9])
        assert one_way_average(a)[0] == pytest.approx(one_way_average(a)[1], rel=1e-7, abs=0)
        assert two_way_average(a)[0] == pytest.approx(two_way_average(a)[1], rel=1e-7, abs=0)

    def test_knee_for_5e10_m_near_one_millihertz(self):
        # common practice, no source: a 5e10 m baseline puts the knee of the link response near
        # a mHz, c/(2 pi L); below it the response falls as f^2, above it is flat.
        L = 5e10
        knee = C / (2 * np.pi * L)
        assert 0.5e-3 < knee < 2e-3
        high = 2 / 3
        assert link_response(10 * knee, L) > 0.9 * high
        assert link_response(knee / 10, L) / link_response(knee / 100, L) == pytest.approx(100, rel=1e-2, abs=0)


def _monte_carlo(a, path, n=400_000, seed=7):
    """Average of |y|^2 over random directions and polarisation angles from explicit tensors."""
    rng = np.random.default_rng(seed)
    k = rng.normal(size=(n, 3))
    k /= np.linalg.norm(k, axis=1)[:, None]
    psi = rng.uniform(0, np.pi, n)
    nhat = np.array([0.0, 0.0, 1.0])
    # wave-plane basis: p along the projection of n on the plane, rotated by psi
    proj = nhat - k * (k @ nhat)[:, None]
    p0 = proj / np.linalg.norm(proj, axis=1)[:, None]
    q0 = np.cross(k, p0)
    p = np.cos(psi)[:, None] * p0 + np.sin(psi)[:, None] * q0
    q = -np.sin(psi)[:, None] * p0 + np.cos(psi)[:, None] * q0
    ep = np.einsum("ni,nj->nij", p, p) - np.einsum("ni,nj->nij", q, q)
    nn_ep = np.einsum("i,nij,j->n", nhat, ep, nhat)
    mu = k @ nhat
    if path == "one-way":
        transfer = np.abs(np.sin(a * (1 - mu)) / (1 - mu))
        y2 = (nn_ep * transfer) ** 2
    else:
        Psi = nn_ep / (1 - mu**2)
        ph = lambda t: np.exp(-2j * a * t)  # noqa: E731  delay in units of L/c
        y = (mu - 1) / 2 * Psi - mu * Psi * ph(1 + mu) + (1 + mu) / 2 * Psi * ph(2)
        y2 = np.abs(y) ** 2
    return y2.mean()


@pytest.mark.parametrize("a", [0.3, 1.7, 6.0])
@pytest.mark.parametrize("path, average", [("one-way", one_way_average), ("two-way", two_way_average)])
def test_monte_carlo_over_explicit_tensors(a, path, average):
    # independent check: explicit tensors, 4e5 samples give ~0.3 % statistical error
    assert _monte_carlo(a, path) == pytest.approx(float(average(a)), rel=1e-2, abs=0)


def test_directional_response_averages_to_sky_average():
    # quadrature over mu and psi of the directional form reproduces the sky average
    f, L = 3e-3, 3e10
    mu, wmu = np.polynomial.legendre.leggauss(200)
    psi = np.linspace(0, np.pi, 64, endpoint=False)
    for path in ("one-way", "two-way"):
        rp, rx = directional_response(f, L, mu[:, None], psi[None, :], path)
        avg = 0.5 * np.sum(wmu[:, None] * (rp + rx), axis=0).mean()
        assert avg == pytest.approx(float(link_response(f, L, path)), rel=1e-10, abs=0)


def test_phase_lock_transfer_half_power_at_bandwidth():
    # first-order loop: |H|^2 = 1/2 at the bandwidth (analytic)
    assert phase_lock_transfer(10.0, 10.0) == pytest.approx(0.5, rel=1e-12, abs=0)
    assert phase_lock_transfer(1e-3, 10.0) == pytest.approx(1.0, rel=1e-7, abs=0)


def test_phase_lock_transfer_of_a_first_order_loop():
    # a single-pole loop of bandwidth B: |H|^2 = 1/(1 + (f/B)^2) (half power at B; common practice,
    # no source), applied to the signal response of the engine
    from gwclock.engine import signal_response
    from gwclock.physics.response import phase_lock_transfer

    from .conftest import quiet_design
    np.testing.assert_allclose(phase_lock_transfer([10.0, 100.0, 1.0], 10.0), [0.5, 1 / 101, 1 / 1.01], rtol=1e-14, atol=0)
    d = quiet_design(phase_lock_bandwidth=3.0)
    f = np.array([0.3, 3.0, 30.0])
    np.testing.assert_allclose(signal_response(d, f) / link_response(f, d.baseline), 1 / (1 + (f / 3.0) ** 2),
                               rtol=1e-12, atol=0)
