"""Contrast lost to imperfect pi pulses, against Bloch-vector simulations (exact compositions of
rotations, numpy only).

A flip-angle error delta per pulse leaves one pulse's perpendicular spin with contrast cos(delta)
(so eps = 1 - cos delta). Systematic errors about one axis add up, cos(n delta), for a spin
perpendicular to the pulse axis, the worst phase (the accumulation of pulse errors in Carr-Purcell
trains: Souza, Alvarez & Suter 2012, Phil. Trans. R. Soc. A 370, 4748). Independent random errors
multiply the mean contrast per pulse, E[cos(sum delta_k)] = prod E[cos delta_k] = (1 - eps)^n for
symmetric independent delta_k (characteristic function of a sum, analytic)."""

import numpy as np
import pytest

from gwclock.engine.formula import pulse_log_contrast
from gwclock.physics.sequences import SEQUENCES

from .conftest import quiet_design


def rotation(axis, angle):
    a = np.asarray(axis, dtype=float) / np.linalg.norm(axis)
    K = np.array([[0, -a[2], a[1]], [a[2], 0, -a[0]], [-a[1], a[0], 0]])
    return np.eye(3) + np.sin(angle) * K + (1 - np.cos(angle)) * K @ K


def worst_contrast(axes, n, delta, phases=361):
    """Smallest equatorial length of the Bloch vector after n pulses, over the spin's phase."""
    worst = 1.0
    for phi in np.linspace(0, np.pi, phases):
        v = np.array([np.cos(phi), np.sin(phi), 0.0])
        for k in range(n):
            v = rotation(axes[k % len(axes)], np.pi + delta) @ v
        worst = min(worst, float(np.hypot(v[0], v[1])))
    return worst


X, Y = (1, 0, 0), (0, 1, 0)


@pytest.mark.parametrize("n, delta", [(1, 0.02), (10, 0.02), (40, 0.03), (70, 0.02)])
def test_coherent_errors_of_a_one_axis_train_against_the_bloch_vector(n, delta):
    d = quiet_design(pulse_error=1 - np.cos(delta), pulse_errors="coherent")
    model = np.exp(pulse_log_contrast(d, SEQUENCES["cpmg"], n))
    assert model == pytest.approx(worst_contrast([X], n, delta), rel=1e-6, abs=0)


def test_coherent_errors_past_a_quarter_turn_leave_no_contrast():
    d = quiet_design(pulse_error=1 - np.cos(0.05), pulse_errors="coherent")
    assert np.exp(pulse_log_contrast(d, SEQUENCES["cpmg"], 40)) < 1e-100  # 40 x 0.05 rad > pi/2


def test_incoherent_errors_against_random_flip_angles():
    # Gaussian flip errors of rms 0.03 rad, independent per pulse: the mean contrast of 20000 trains
    rng = np.random.default_rng(3)
    sigma, n = 0.03, 50
    total = rng.normal(0, sigma, (20000, n)).sum(axis=1)
    mc = np.mean(np.cos(total))
    eps = 1 - np.exp(-sigma**2 / 2)  # 1 - E[cos delta]
    d = quiet_design(pulse_error=eps, pulse_errors="incoherent")
    model = np.exp(pulse_log_contrast(d, SEQUENCES["cpmg"], n))
    # MC scatter: std(cos)/sqrt(20000) ~ 2e-4
    assert model == pytest.approx(mc, rel=1.5e-3, abs=0)


@pytest.mark.parametrize("errors", ["coherent", "incoherent"])
def test_xy8_model_is_conservative_for_flip_angle_errors(errors):
    # XY-8's phase cycling cancels flip-angle errors to high order (the simulated loss grows as
    # n^2 delta^6); the model's eps^2 per pulse is an assumption that over-states the loss
    delta, n = 0.03, 64
    d = quiet_design(pulse_error=1 - np.cos(delta), pulse_errors=errors)
    model = np.exp(pulse_log_contrast(d, SEQUENCES["xy8"], n))
    true = worst_contrast([X, Y, X, Y, Y, X, Y, X], n, delta, phases=91)
    assert model <= true
    assert 1 - true < 1e-2 * (1 - model)
