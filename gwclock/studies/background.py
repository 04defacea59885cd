"""Stochastic backgrounds: Omega_gw sensitivity and power-law integrated curves.

Energy density and strain PSD: ``Omega_gw(f) = 2 pi^2 f^3 S_h(f) / (3 H0^2)`` with S_h the
one-sided PSD of the GW field summed over polarisations (Thrane & Romano 2013). With the
sky-averaged S_n of Robson, Cornish & Liu, the noise in Omega units is
``Omega_n = 4 pi^2 f^3 S_n / (3 H0^2)`` (Thrane & Romano 2013: the single-detector effective noise
is P_n / Gamma = 2 S_n). H0 is astropy's Planck18 value.

Broadband references use the single-detector known-noise power-law integrated curve
``Omega_beta = rho / sqrt(T integral (f/f_ref)^(2 beta) / Omega_n^2 df)``. The clock mission is a
narrow-band detector and is computed per cycle (after Thrane & Romano 2013): at tuning i with N_i cycles
the known-noise SNR is ``sqrt(N_i/2) sigma_s^2 / sigma_n^2``; the time is shared evenly among
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
from ..physics import response
from ..physics.sequences import SEQUENCES

__all__ = ["hubble_constant", "omega_from_strain_psd", "strain_psd_from_omega", "omega_noise",
           "power_law_integrated", "clock_scan_power_law", "SCAN_ASSUMPTION", "BETAS"]

BETAS = np.linspace(-8, 8, 161)
SCAN_ASSUMPTION = ("clock scan: observing time shared evenly among the tunings listed; "
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


def clock_scan_power_law(design, tunings, observation, grid, snr=1.0, f_ref=None, betas=BETAS, h0=None, harmonics=40):
    """Power-law integrated curve of the clock mission scanning ``tunings`` with equal dwell.

    For each tuning the per-cycle signal variance of a background of unit amplitude,
    ``(2 pi nu0)^2 integral R1 |H_PLL|^2 S_h |G|^2 df``, is summed over the odd harmonics of the
    DD filter (the kind's ``lobe_areas``, 4T/(pi^2 k^2) for CPMG timing; Ramsey uses its low-pass
    main lobe), and the per-cycle
    noise variance is ``(2 pi nu0)^2 |G(f0)|^2 S_y,eq / (2 Tc)``.

    Returns
    -------
    ndarray
        Omega_PI on ``grid`` (Hz).
    """
    h0 = h0 or hubble_constant()
    fk = np.sort(np.asarray(tunings, dtype=float))
    best, ok = best_sequence(design, fk)
    if not np.all(ok):
        raise ValueError("some scan tunings cannot be reached")
    sy = total_psd(best)
    T = np.asarray(best["interrogation"], dtype=float)
    n = np.asarray(best["pulses"], dtype=float)
    Tc = np.asarray(best["cycle"], dtype=float)
    dd = n > 0
    kind = SEQUENCES[design.kind]
    # the noise of a tuning is quoted at f_k through |G(f_k)|^2 (a sequence with a free interrogation
    # is not centred on f_k); its lobes sit at the odd harmonics of the sequence's own tuning
    G0sq = (T * np.sinc(fk * T)) ** 2
    centre = fk.copy()
    if np.any(dd):
        G0sq[dd] = kind.modulus(design, fk[dd], n[dd], T[dd]) ** 2
        if hasattr(kind, "tuning"):
            centre[dd] = kind.tuning(n[dd], T[dd])
    sigma_n2 = G0sq * sy / (2 * Tc)  # divided by (2 pi nu0)^2, which cancels
    cycles = observation / fk.size / Tc
    k = 2 * np.arange(harmonics) + 1.0
    f_ref = f_ref or float(np.sqrt(fk[0] * fk[-1]))

    if np.any(dd) and not hasattr(kind, "lobe_areas"):
        raise ValueError(f"the clock-scan background needs the lobe areas of the filter function; the {design.kind} "
                         "kind does not provide them (use cpmg, xy8 or echo)")
    weight = kind.lobe_areas(design, centre, n, T, k) if np.any(dd) else np.zeros((fk.size, k.size))

    def signal_variance(beta):
        fh = centre[:, None] * k[None, :]
        resp = 0.5 * response.link_response(fh, design.baseline, design.path) * \
            response.phase_lock_transfer(fh, design.phase_lock_bandwidth)
        sh = strain_psd_from_omega(fh, (fh / f_ref) ** beta, h0)
        dd = np.sum(weight * resp * sh, axis=1)
        # Ramsey: low-pass lobe of area T/2 around f0 (an approximation over the main lobe)
        ramsey = (T / 2) * 0.5 * response.link_response(fk, design.baseline, design.path) * \
            strain_psd_from_omega(fk, (fk / f_ref) ** beta, h0)
        return np.where(n > 0, dd, ramsey)

    grid = np.asarray(grid, dtype=float)
    out = np.zeros_like(grid)
    for beta in betas:
        s2 = signal_variance(beta)
        snr1 = np.sqrt(np.sum(cycles / 2 * (s2 / sigma_n2) ** 2))
        out = np.maximum(out, snr / snr1 * (grid / f_ref) ** beta)
    return out
