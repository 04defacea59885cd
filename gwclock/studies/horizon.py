"""Horizons: the distance and redshift at which a source reaches a chosen SNR.

For equal-mass binaries of total source-frame mass M, the SNR at redshift z is computed with
detector-frame masses (1 + z) M and the Planck18 luminosity distance D_L(z), and the redshift
where it equals the threshold is found by bracketed root finding (scipy.optimize.brentq).
"""

from __future__ import annotations

import numpy as np

from ..astro.sources import Inspiral, distance_at_redshift

__all__ = ["horizon", "Z_MIN", "Z_MAX"]

Z_MIN, Z_MAX = 1e-7, 1e3


def horizon(snr_of_source, total_mass, threshold=8.0):
    """Redshift and luminosity distance (m) where ``snr_of_source(source)`` equals ``threshold``.

    Parameters
    ----------
    snr_of_source : callable
        Maps an :class:`~gwclock.sources.Inspiral` to its SNR.
    total_mass : float
        Source-frame total mass in solar masses (equal components).
    threshold : float

    Returns
    -------
    (float, float)
        (z, D_L in m); (0, 0) when the source is below threshold even at z = 1e-7, and
        (inf, inf) when it is above threshold at z = 1000.
    """
    from scipy.optimize import brentq  # slow to import; only horizons need it
    def excess(logz):
        z = float(np.exp(logz))
        src = Inspiral.from_masses(total_mass / 2, total_mass / 2, redshift=z)
        return np.log(max(snr_of_source(src), 1e-300)) - np.log(threshold)

    lo, hi = np.log(Z_MIN), np.log(Z_MAX)
    a, b = excess(lo), excess(hi)
    if a < 0:
        return 0.0, 0.0
    if b > 0:
        return np.inf, np.inf
    logz = brentq(excess, lo, hi, xtol=1e-6, rtol=1e-8)
    z = float(np.exp(logz))
    return z, float(distance_at_redshift(z))
