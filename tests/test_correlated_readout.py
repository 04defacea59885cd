"""The correlated (synchronous) read-out of two clocks whose common laser phase is random from shot
to shot: its variance bound kappa(C) and the cost of the differential phase offset it needs.

Truth: a Monte-Carlo estimator. Each shot draws a uniform common phase, two binomial read-outs of
N atoms with fringes (1 + C cos(theta +- psi/2)) / 2 (Itano et al. 1993, Phys. Rev. A 47, 3554),
inverts them for the differential phase (the offset picks the branch) and combines the shots
weighted by their Fisher information; the scatter of that estimate over many batches is compared
with the engine's per-cycle phase variance."""

import numpy as np
import pytest

from gwclock.physics.projection import correlation_penalty, offset_cost, phase_variance


def info(C, x):
    return C**2 * np.sin(x) ** 2 / (1 - C**2 * np.cos(x) ** 2)


def monte_carlo_variance(C, offset, N, shots, batches, seed):
    rng = np.random.default_rng(seed)
    theta = rng.uniform(0, 2 * np.pi, (batches, shots))
    pa = (1 + C * np.cos(theta + offset / 2)) / 2
    pb = (1 + C * np.cos(theta - offset / 2)) / 2
    ca = np.clip((2 * rng.binomial(N, pa) / N - 1) / C, -1, 1)
    cb = np.clip((2 * rng.binomial(N, pb) / N - 1) / C, -1, 1)
    xa, xb = np.arccos(ca), np.arccos(cb)
    best, est, weight = np.full(theta.shape, np.inf), np.zeros(theta.shape), np.zeros(theta.shape)
    for sa in (1, -1):
        for sb in (1, -1):
            psi = np.angle(np.exp(1j * (sa * xa - sb * xb)))
            miss = np.abs(psi - offset)
            take = miss < best
            best = np.where(take, miss, best)
            est = np.where(take, psi, est)
            t = (sa * xa + sb * xb) / 2
            a, b = info(C, t + offset / 2), info(C, t - offset / 2)
            weight = np.where(take, a * b / (a + b), weight)
    means = np.sum(weight * est, axis=1) / np.sum(weight, axis=1)
    return np.var(means, ddof=1) * shots


@pytest.mark.parametrize("C, offset", [(0.8, 0.05), (0.8, 1.0), (0.5, 1.2)])
def test_per_cycle_variance_against_a_monte_carlo_estimator(C, offset):
    N = 200_000
    mc = monte_carlo_variance(C, offset, N, shots=400, batches=1200, seed=11)
    model = phase_variance(N, np.log(C), correlated=True, offset=offset)
    # 1200 batches: the sample variance scatters by sqrt(2/1199) = 4 %; allow 4 sigma
    assert mc == pytest.approx(float(model), rel=0.16, abs=0)


def test_the_offset_cost_is_resolved_by_the_monte_carlo():
    # at 1.2 rad and C = 0.5 the offset costs ~60 %: the Monte-Carlo sees it (kappa alone is too low)
    C, offset, N = 0.5, 1.2, 200_000
    mc = monte_carlo_variance(C, offset, N, shots=400, batches=1200, seed=5)
    bare = 2 / N / C**2 * correlation_penalty(C)
    assert offset_cost(C, offset) > 1.4
    assert mc > 1.25 * bare


def test_offset_cost_limits():
    # no cost without an offset or at full contrast (a = b = 1 for every phase); ~1 % at 0.1 rad
    # (second order in the offset: about 4x less at half the offset, to the next order)
    C = np.array([0.3, 0.6, 0.9])
    np.testing.assert_array_equal(offset_cost(C, 0.0), 1.0)
    assert float(offset_cost(1.0, 0.3)) == pytest.approx(1.0, rel=1e-9, abs=0)
    small, half = offset_cost(C, 0.1) - 1, offset_cost(C, 0.05) - 1
    assert np.all((small > 0.008) & (small < 0.012))
    np.testing.assert_allclose(small / half, 4.0, rtol=0.12, atol=0)


def test_offset_cost_elementwise_for_swept_offsets():
    # a sweep of sequence.phase_offset hands the engine one offset per point: the same values as
    # one offset at a time, and none (1) where the offset is zero
    C = np.array([0.3, 0.6, 0.9, 0.6])
    offsets = np.array([0.1, 1.0, 0.1, 0.0])
    got = offset_cost(C, offsets)
    one_by_one = [float(offset_cost(c, o)) for c, o in zip(C, offsets)]
    np.testing.assert_array_equal(got, one_by_one)
    assert got[-1] == 1.0
    var = phase_variance(1e5, np.log(C), correlated=True, offset=offsets)
    np.testing.assert_allclose(var / phase_variance(1e5, np.log(C), correlated=True), got, rtol=1e-14, atol=0)
