"""GW response of an optical Doppler link between two drag-free spacecraft.

The link measures the fractional frequency ``y`` of light received from a distant emitter. For a
plane GW, the sky- and polarisation-averaged squared response per polarisation is (for
``a = pi f L / c``)::

    R1(a) = 1/3 - 1/(8 a^2) + sin(4a)/(32 a^3)                       (one-way)
    R2(a) = 1/2 - cos(4a)/6 - (3 + cos 4a)/(8 a^2) + sin(4a)/(8 a^3)  (two-way, round trip)

derived from the one-way Doppler formula of Estabrook & Wahlquist (1975) and the three-pulse
two-way form of Armstrong (2006, eq. 1). gwclock stores the response summed over both
polarisations, ``R_y = 2 R``, which is the normalisation of Robson, Cornish & Liu (2019) for LISA.

References
----------
Estabrook, F. B. & Wahlquist, H. D. 1975, Gen. Rel. Grav. 6, 439.
Armstrong, J. W. 2006, Living Rev. Relativity 9, 1.
Robson, T., Cornish, N. J. & Liu, C. 2019, Class. Quantum Grav. 36, 105011.
"""

from __future__ import annotations

import numpy as np

from ..constants import c
from ..errors import UnknownNameError

__all__ = [
    "phase_lock_transfer",
    "phase_lock_error",
    "one_way_average",
    "two_way_average",
    "link_response",
    "directional_response",
    "LINK_PATHS",
]

# Taylor series of R1: sum_k (-1)^(k+1) 2^(4k+1) a^(2k) / (2k+3)!  (term-by-term integration).
_R1_SERIES = np.array(
    [(-1) ** (k + 1) * 2.0 ** (4 * k + 1) / float(np.prod(np.arange(1, 2 * k + 4, dtype=float)))
     for k in range(1, 16)]
)
_GL_X, _GL_W = np.polynomial.legendre.leggauss(48)


def one_way_average(a):
    """Per-polarisation, sky- and polarisation-averaged response of a one-way link.

    Parameters
    ----------
    a : array_like
        ``pi f L / c`` (dimensionless, >= 0).

    Returns
    -------
    ndarray
        ``R1(a)``: ``4 a^2/15`` for small ``a``, ``1/3`` for large ``a``.

    Examples
    --------
    >>> round(float(one_way_average(np.pi / 2)), 11)  # 1/3 - 1/(2 pi^2)
    0.28267274151
    """
    a = np.asarray(a, dtype=float)
    small = a < 1.0
    asafe = np.where(small, 1.0, a)
    closed = 1.0 / 3.0 - 1.0 / (8.0 * asafe**2) + np.sin(4.0 * asafe) / (32.0 * asafe**3)
    a2 = np.where(small, a, 0.0) ** 2
    series = np.polynomial.polynomial.polyval(a2, np.concatenate(([0.0], _R1_SERIES)))
    return np.where(small, series, closed)


def _two_way_quadrature(a):
    """R2 by Gauss-Legendre quadrature of a cancellation-free integrand (small ``a``)."""
    mu = _GL_X
    a = np.asarray(a, dtype=float)[..., None]

    def em1(x):  # exp(-i x) - 1 without cancellation
        return -2j * np.sin(x / 2) * np.exp(-0.5j * x)

    amp = -mu * em1(2 * a * (1 + mu)) + 0.5 * (1 + mu) * em1(4 * a)
    return 0.25 * np.sum(_GL_W * np.abs(amp) ** 2, axis=-1)


def two_way_average(a):
    """Per-polarisation, sky- and polarisation-averaged response of a two-way (round-trip) link.

    Parameters
    ----------
    a : array_like
        ``pi f L / c`` with L the one-way baseline.

    Returns
    -------
    ndarray
        ``R2(a)``: ``16 a^2/15`` for small ``a``; oscillates about 1/2 at large ``a``.
    """
    a = np.asarray(a, dtype=float)
    small = a < 1.0
    asafe = np.where(small, 1.0, a)
    c4 = np.cos(4 * asafe)
    closed = 0.5 - c4 / 6 - (3 + c4) / (8 * asafe**2) + np.sin(4 * asafe) / (8 * asafe**3)
    if np.any(small):
        quad = _two_way_quadrature(np.where(small, a, 0.0))
    else:
        quad = 0.0
    return np.where(small, quad, closed)


LINK_PATHS = {"one-way": one_way_average, "two-way": two_way_average}


def link_response(frequency, baseline, path: str = "one-way"):
    """Response ``R_y(f)`` summed over both polarisations (Robson, Cornish & Liu normalisation).

    Parameters
    ----------
    frequency : array_like
        GW frequency in Hz.
    baseline : float or array_like
        One-way arm length L in m.
    path : {"one-way", "two-way"}

    Returns
    -------
    ndarray
        ``2 R1(pi f L/c)`` or ``2 R2(pi f L/c)``.
    """
    try:
        average = LINK_PATHS[path]
    except KeyError:
        raise UnknownNameError(f"unknown link path {path!r}; expected one of {', '.join(LINK_PATHS)}") from None
    a = np.pi * np.asarray(frequency, dtype=float) * np.asarray(baseline, dtype=float) / c
    return 2.0 * average(a)


def phase_lock_transfer(frequency, bandwidth):
    """Power transfer ``1 / (1 + (f/B)^2)`` of the receiver's phase lock (single pole at B).

    The receiving laser follows the received light, and so the GW Doppler signal, only inside the
    loop bandwidth B; gwclock applies this factor to the signal response. (A modelling
    assumption: a first-order loop.)
    """
    f = np.asarray(frequency, dtype=float)
    return 1.0 / (1.0 + (f / bandwidth) ** 2)


def phase_lock_error(frequency, bandwidth):
    """Power of the tracking error ``|1 - H|^2 = (f/B)^2 / (1 + (f/B)^2)`` of the same first-order
    loop ``H = 1 / (1 + i f/B)``: the share of the reference's noise (and of the receiving laser's
    own noise) that the lock does not follow. ``phase_lock_transfer + phase_lock_error = 1``."""
    x = (np.asarray(frequency, dtype=float) / bandwidth) ** 2
    return x / (1.0 + x)


def directional_response(frequency, baseline, mu, psi, path: str = "one-way"):
    """Squared response of the link to each polarisation for one source direction.

    Parameters
    ----------
    frequency : array_like
        GW frequency in Hz.
    baseline : float
        One-way arm length in m.
    mu : array_like
        Cosine of the angle between the GW propagation direction and the link direction
        (emitter to receiver).
    psi : array_like
        Polarisation angle in rad, measured from the projection of the link on the wave plane.
    path : {"one-way", "two-way"}

    Returns
    -------
    (ndarray, ndarray)
        ``|y/h_+|^2`` and ``|y/h_x|^2``. Their sum averaged over ``mu`` in [-1, 1] and ``psi``
        equals :func:`link_response`.
    """
    a = np.pi * np.asarray(frequency, dtype=float) * baseline / c
    mu = np.asarray(mu, dtype=float)
    psi = np.asarray(psi, dtype=float)
    if path == "one-way":
        # |y| = |n n : h| |sin(a (1 - mu))| / (1 - mu), with n n : e+ = sin^2(theta) cos 2psi
        geom = (1 + mu) ** 2 * np.sin(a * (1 - mu)) ** 2
    elif path == "two-way":
        # three-pulse form; Psi = h+ cos 2psi + hx sin 2psi independent of theta
        def em1(x):
            return -2j * np.sin(x / 2) * np.exp(-0.5j * x)
        geom = np.abs(-mu * em1(2 * a * (1 + mu)) + 0.5 * (1 + mu) * em1(4 * a)) ** 2
    else:
        raise UnknownNameError(f"unknown link path {path!r}; expected one of {', '.join(LINK_PATHS)}")
    return geom * np.cos(2 * psi) ** 2, geom * np.sin(2 * psi) ** 2
