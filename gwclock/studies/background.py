"""Stochastic backgrounds: Omega_gw sensitivity and power-law integrated curves.

Energy density and strain PSD: ``Omega_gw(f) = 2 pi^2 f^3 S_h(f) / (3 H0^2)`` with S_h the
one-sided PSD of the GW field summed over polarisations (Thrane & Romano 2013). With the
sky-averaged S_n of Robson, Cornish & Liu, the noise in Omega units is
``Omega_n = 4 pi^2 f^3 S_n / (3 H0^2)`` (Thrane & Romano 2013: the single-detector effective noise
is P_n / Gamma = 2 S_n). H0 is astropy's Planck18 value.

Broadband references use the single-detector known-noise power-law integrated curve
``Omega_beta = rho / sqrt(T integral (f/f_ref)^(2 beta) / Omega_n^2 df)``. The clock mission is a
narrow-band detector and is computed per cycle (after Thrane & Romano 2013): at tuning i with N_i cycles
the known-noise SNR is ``sqrt(N_i/2) sigma_s^2 / sigma_n^2``, with the signal variance the exact
integral over the sequence's filter function; the time is shared evenly among
the tunings of a scan (the time-sharing assumption, stated in every output). A single link is one
detector: it needs a noise model, or a second independent link to cross-correlate.

References
----------
Thrane, E. & Romano, J. D. 2013, Phys. Rev. D 88, 124032.
"""

from __future__ import annotations

import numpy as np

from ..engine import best_sequence
from ..engine.formula import total_psd
from ..errors import OutOfReachError
from ..physics import noises, response
from ..physics.sequences import SEQUENCES

__all__ = ["hubble_constant", "omega_from_strain_psd", "strain_psd_from_omega", "omega_noise",
           "power_law_integrated", "clock_scan_power_law", "signal_kernel", "SCAN_ASSUMPTION", "BETAS"]

BETAS = np.linspace(-8, 8, 161)
SCAN_ASSUMPTION = ("clock scan: observing time shared evenly among the tunings listed; signal integrated over "
                   "each sequence's filter from 1/dwell to the pulse bandwidth, cycles as independent samples; "
                   "known-noise single-link detection (needs a noise model or a second link)")


def hubble_constant():
    """H0 of astropy's Planck18 in 1/s."""
    from astropy.cosmology import Planck18
    return Planck18.H0.to_value("1/s")


def omega_from_strain_psd(f, s_h, h0=None):
    """Omega_gw(f) for the GW-field PSD S_h (1/Hz)."""
    h0 = h0 or hubble_constant()
    f = np.asarray(f, dtype=float)
    return 2 * np.pi**2 * f**3 * np.asarray(s_h) / (3 * h0**2)


def strain_psd_from_omega(f, omega, h0=None):
    """S_h(f) in 1/Hz for an energy-density spectrum Omega_gw(f)."""
    h0 = h0 or hubble_constant()
    f = np.asarray(f, dtype=float)
    return 3 * h0**2 * np.asarray(omega) / (2 * np.pi**2 * f**3)


def omega_noise(f, s_n, h0=None):
    """Noise in Omega units for a sky-averaged S_n: 4 pi^2 f^3 S_n / (3 H0^2)."""
    return 2.0 * omega_from_strain_psd(f, s_n, h0)


def power_law_integrated(f, s_n, observation, snr=1.0, f_ref=None, betas=BETAS, h0=None):
    """Power-law integrated sensitivity (Thrane & Romano 2013) of one known-noise detector.

    Returns Omega_PI(f) on the grid f (Hz) for a sky-averaged S_n (1/Hz).
    """
    f = np.asarray(f, dtype=float)
    f_ref = f_ref or float(np.sqrt(f[0] * f[-1]))
    om = omega_noise(f, s_n, h0)
    x = f / f_ref
    lf = np.log(f)
    out = np.zeros_like(f)
    for beta in betas:
        integrand = x ** (2 * beta) / om**2 * f
        omega_beta = snr / np.sqrt(observation * np.trapezoid(integrand, lf))
        out = np.maximum(out, omega_beta * x**beta)
    return out


#: Frequency grid of the signal integral: points per decade on the smooth parts, points per 1/T
#: on the lobes of |G|^2, the highest harmonic resolved before the smooth tail, and the width in
#: ln f of the bins that carry the integral into the sum over spectral indices.
LOG_POINTS = 48
LOBE_POINTS = 16
LOBE_HARMONICS = 201
BIN_WIDTH = 2e-3


def _log_panel(a, b):
    """Trapezoid nodes and weights in ln f on [a, b] (empty when b <= a)."""
    if not b > a:
        return np.zeros(0), np.zeros(0)
    m = max(int(np.ceil(LOG_POINTS * np.log10(b / a))), 2) + 1
    f = np.geomspace(a, b, m)
    w = np.full(m, np.log(b / a) / (m - 1))
    w[[0, -1]] *= 0.5
    return f, w * f


def signal_kernel(design, kind, n, T, centre, f_low):
    """Nodes f_j and weights c_j (s) with ``sum_j c_j S_h(f_j) ~ integral R1 |H|^2 S_h |G|^2 df``.

    The integral runs from ``f_low`` to the pulse bandwidth 1/(2 t_pi), with the sequence's exact
    |G(f)| (``kind.modulus``): on a log grid below 1/(4T), where |G|^2 is smooth (its leakage at low
    frequency, which dominates for steep red spectra); on a uniform grid of LOBE_POINTS per 1/T across
    the lobes up to the LOBE_HARMONICS-th harmonic of ``centre``; above that with |G|^2 replaced by
    its mean ``A / f^2`` (A measured over the last harmonic cells of the uniform grid). The
    weights are then summed into bins of BIN_WIDTH in ln f (at the weighted mean ln f of each bin),
    which keeps a power law f^p exact to ~p^2 BIN_WIDTH^2 / 24.
    """
    top = noises.pulse_bandwidth(design)
    split = min(1.0 / (4 * T), top)
    f_a, c_a = _log_panel(f_low, split)
    hi = min(top, max(LOBE_HARMONICS * centre, 64.0 / T))
    step = 1.0 / (LOBE_POINTS * T)
    m = max(int(np.ceil((hi - split) / step)), 1) + 1
    f_b = np.linspace(split, hi, m) if hi > split else np.zeros(0)
    c_b = np.full(f_b.size, (hi - split) / max(m - 1, 1))
    if f_b.size:
        c_b[[0, -1]] *= 0.5
    f_ab = np.concatenate((f_a, f_b))
    G2 = kind.modulus(design, f_ab, n, T) ** 2
    c_ab = np.concatenate((c_a, c_b)) * G2
    f_c, c_c = _log_panel(hi, top)
    if f_c.size and f_b.size:
        cell = f_b >= hi - max(4 * centre, 8.0 / T)
        A = np.mean(f_b[cell] ** 2 * G2[f_a.size:][cell])
        c_c = c_c * A / f_c**2
    f = np.concatenate((f_ab, f_c))
    c = np.concatenate((c_ab, c_c if f_b.size else np.zeros(f_c.size)))
    c = c * 0.5 * response.link_response(f, design.baseline, design.path) * \
        response.phase_lock_transfer(f, design.phase_lock_bandwidth)
    keep = c > 0
    f, c = f[keep], c[keep]
    lf = np.log(f)
    index = np.floor((lf - lf.min()) / BIN_WIDTH).astype(np.intp)
    weight = np.bincount(index, c)
    used = weight > 0
    mean_lf = np.bincount(index, c * lf)[used] / weight[used]
    return np.exp(mean_lf), weight[used]


def clock_scan_power_law(design, tunings, observation, grid, snr=1.0, f_ref=None, betas=BETAS, h0=None):
    """Power-law integrated curve of the clock mission scanning ``tunings`` with equal dwell.

    For each tuning the per-cycle signal variance of a background of unit amplitude,
    ``(2 pi nu0)^2 integral R1 |H_PLL|^2 S_h |G|^2 df``, is the exact integral over the sequence's
    filter function (:func:`signal_kernel`, any kind), from 1/dwell (slower signal is a constant
    offset over a tuning's dwell) to the pulse bandwidth; the per-cycle noise variance is
    ``(2 pi nu0)^2 |G(f0)|^2 S_y,eq / (2 Tc)``. Cycles are taken as independent samples of the
    signal (conservative for signal that is correlated from cycle to cycle).

    Returns
    -------
    ndarray
        Omega_PI on ``grid`` (Hz).
    """
    h0 = h0 or hubble_constant()
    fk = np.sort(np.asarray(tunings, dtype=float))
    best, ok = best_sequence(design, fk)
    if not np.all(ok):
        raise OutOfReachError("some scan tunings cannot be reached")
    sy = total_psd(best)
    T = np.asarray(best["interrogation"], dtype=float)
    n = np.asarray(best["pulses"], dtype=float)
    Tc = np.asarray(best["cycle"], dtype=float)
    kind = SEQUENCES[design.kind]
    ramsey = SEQUENCES["ramsey"]
    dwell = observation / fk.size
    cycles = dwell / Tc
    f_ref = f_ref or float(np.sqrt(fk[0] * fk[-1]))
    G0sq = np.empty(fk.size)
    kernels = []
    for i in range(fk.size):
        # the noise of a tuning is quoted at f_k through |G(f_k)|^2 (a sequence with a free
        # interrogation is not centred on f_k); its lobes sit at the harmonics of its own tuning
        k = kind if n[i] > 0 else ramsey
        centre = kind.tuning(n[i], T[i]) if n[i] > 0 and hasattr(kind, "tuning") else fk[i]
        G0sq[i] = k.modulus(design, fk[i:i + 1], n[i], T[i])[0] ** 2
        kernels.append(signal_kernel(design, k, n[i], T[i], centre, 1.0 / dwell))
    sigma_n2 = G0sq * sy / (2 * Tc)  # divided by (2 pi nu0)^2, which cancels
    nodes = np.concatenate([f for f, _ in kernels])
    owner = np.repeat(np.arange(fk.size), [f.size for f, _ in kernels])
    weights = np.concatenate([c for _, c in kernels])
    base = weights * strain_psd_from_omega(nodes, 1.0, h0)
    log_x = np.log(nodes / f_ref)

    grid = np.asarray(grid, dtype=float)
    out = np.zeros_like(grid)
    for beta in betas:
        s2 = np.bincount(owner, base * np.exp(beta * log_x), minlength=fk.size)
        snr1 = np.sqrt(np.sum(cycles / 2 * (s2 / sigma_n2) ** 2))
        out = np.maximum(out, snr / snr1 * (grid / f_ref) ** beta)
    return out
