"""Horizons: the distance and redshift at which a source reaches a chosen SNR.

For equal-mass binaries of total source-frame mass M, the SNR at redshift z is computed with
detector-frame masses (1 + z) M and the Planck18 luminosity distance D_L(z), and the redshift
where it equals the threshold is found by bracketed root finding (scipy.optimize.brentq).

Three measures, each labelled where it is printed:

* ``sky-averaged``: the distance where the SNR averaged (RMS) over sky position, polarisation and
  inclination reaches the threshold: the SNR of every gwclock curve (normalisation of Robson,
  Cornish & Liu 2019).
* ``optimal``: the horizon of a face-on source at the detector's most sensitive direction: the
  sky-averaged SNR times the antenna pattern's gain ``1 / sqrt(<theta^2>)``, where ``theta`` is
  the SNR of a random orientation relative to the optimal one (5/2 for an interferometer).
* ``range``: the radius of the sphere whose volume equals the volume in which a source of random
  orientation is detected: the optimal horizon divided by ``<theta^3>^(-1/3)`` (2.26 for an
  interferometer, Finn & Chernoff 1993, Phys. Rev. D 47, 2198). It is a Euclidean measure, exact
  where D_L is much smaller than the Hubble distance; it is taken here on D_L.

The antenna patterns are the long-wavelength ones: a Michelson interferometer (any opening angle:
the angle only scales the pattern) and a single Doppler link, whose response to h_ij is
``(1 - mu^2) (h_+ cos 2 psi + h_x sin 2 psi) / 2`` along the link (Estabrook & Wahlquist 1975,
Gen. Rel. Grav. 6, 439, at low frequency). A link much longer than the GW wavelength has a more
peaked pattern, so the clock's optimal horizon here is a lower bound.
"""

from __future__ import annotations

from functools import cache

import numpy as np

from ..astro.sources import Inspiral, distance_at_redshift, redshift_at_distance
from ..errors import UnknownNameError

__all__ = ["horizon", "orientation_factors", "MEASURES", "MEASURE_LABELS", "PATTERNS", "Z_MIN", "Z_MAX"]

#: Redshifts searched. No binary of compact objects is expected before the first stars (z ~ 20-30;
#: common practice, no source); a horizon beyond Z_MAX is reported as "beyond z = 100".
Z_MIN, Z_MAX = 1e-7, 100.0

MEASURES = ("sky-averaged", "optimal", "range")
MEASURE_LABELS = {
    "sky-averaged": "sky-averaged distance (SNR RMS over sky, polarisation and inclination)",
    "optimal": "optimal-orientation horizon (face-on, most sensitive direction)",
    "range": "range (radius of the sphere of equal detection volume, Euclidean)",
}
PATTERNS = ("interferometer", "link")


@cache
def orientation_factors(pattern: str, nodes: int = 24) -> tuple[float, float]:
    """(optimal gain, range divisor) of a long-wavelength antenna pattern: ``1 / sqrt(<theta^2>)``
    and ``<theta^3>^(-1/3)`` over isotropic sky, polarisation and inclination, by Gauss-Legendre
    quadrature in the cosines and the midpoint rule in the angles.

    ``theta^2 = F_+^2 (1 + cos^2 i)^2 / 4 + F_x^2 cos^2 i`` with the patterns normalised to a
    largest ``F_+^2 + F_x^2`` of 1."""
    x, w = np.polynomial.legendre.leggauss(nodes)
    ang = (np.arange(2 * nodes) + 0.5) * np.pi / nodes  # [0, 2 pi)
    mu, phi, psi, ci = np.meshgrid(x, ang, ang, x, indexing="ij", sparse=True)
    weight = (w[:, None, None, None] * w[None, None, None, :]) / (4 * (2 * nodes) ** 2)
    if pattern == "interferometer":
        a, b = 0.5 * (1 + mu**2) * np.cos(2 * phi), mu * np.sin(2 * phi)
        fp = a * np.cos(2 * psi) - b * np.sin(2 * psi)
        fx = a * np.sin(2 * psi) + b * np.cos(2 * psi)
    elif pattern == "link":
        fp = (1 - mu**2) * np.cos(2 * psi) + 0 * phi
        fx = (1 - mu**2) * np.sin(2 * psi) + 0 * phi
    else:
        raise UnknownNameError(f"unknown antenna pattern {pattern!r}; expected one of {', '.join(PATTERNS)}")
    theta2 = fp**2 * (1 + ci**2) ** 2 / 4 + fx**2 * ci**2
    m2 = float(np.sum(weight * theta2))
    m3 = float(np.sum(weight * theta2**1.5))
    return 1 / np.sqrt(m2), m3 ** (-1 / 3)


def horizon(snr_of_source, total_mass, threshold=8.0, measure="sky-averaged", pattern="interferometer"):
    """Redshift and luminosity distance (m) of a horizon ``measure`` (see the module notes).

    Parameters
    ----------
    snr_of_source : callable
        Maps an :class:`~gwclock.sources.Inspiral` to its sky-averaged SNR.
    total_mass : float
        Source-frame total mass in solar masses (equal components).
    threshold : float
    measure : {"sky-averaged", "optimal", "range"}
    pattern : {"interferometer", "link"}
        The detector's antenna pattern (for ``optimal`` and ``range``).

    Returns
    -------
    (float, float)
        (z, D_L in m); (0, 0) when the source is below threshold even at z = 1e-7, and
        (inf, inf) when it is above threshold at z = Z_MAX.
    """
    from scipy.optimize import brentq  # slow to import; only horizons need it
    if measure not in MEASURES:
        raise UnknownNameError(f"unknown horizon measure {measure!r}; expected one of {', '.join(MEASURES)}")
    gain, divisor = orientation_factors(pattern) if measure != "sky-averaged" else (1.0, 1.0)

    def excess(logz):
        z = float(np.exp(logz))
        src = Inspiral.from_masses(total_mass / 2, total_mass / 2, redshift=z)
        return np.log(max(gain * snr_of_source(src), 1e-300)) - np.log(threshold)

    lo, hi = np.log(Z_MIN), np.log(Z_MAX)
    if excess(lo) < 0:
        return 0.0, 0.0
    if excess(hi) > 0:
        return np.inf, np.inf
    z = float(np.exp(brentq(excess, lo, hi, xtol=1e-6, rtol=1e-8)))
    if measure != "range":
        return z, float(distance_at_redshift(z))
    d = float(distance_at_redshift(z)) / divisor
    return float(redshift_at_distance(d)), d
