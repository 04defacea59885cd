"""Sensitivity function g(t) and filter function G(f) of a clock pulse sequence.

The atomic phase read out at the end of one interrogation of length T is
``phi = 2 pi nu0 * integral g(t) y(t) dt`` with g = +-1 flipping sign at each pi pulse. For a
finite pi pulse of duration t_pi centred on t_k, g follows ``cos(pi (t - t_k + t_pi/2) / t_pi)``
from +1 to -1 (or the reverse); pi/2 pulses are taken as instantaneous. The Fourier transform
``G(f) = integral g(t) exp(-2 pi i f t) dt`` is integrated exactly, piece by piece.

References
----------
Cywinski, L., Lutchyn, R. M., Nave, C. P. & Das Sarma, S. 2008, Phys. Rev. B 77, 174509.
Degen, C. L., Reinhard, F. & Cappellaro, P. 2017, Rev. Mod. Phys. 89, 035002.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy import special

from ..errors import InputError

__all__ = [
    "sensitivity_function",
    "filter_function",
    "periodic_filter_modulus",
    "ramsey_filter_modulus",
    "ramsey_random_walk_alias",
    "ramsey_walk4_alias",
    "finite_pulse_factor",
    "odd_harmonic_sum",
    "periodic_noise_integral",
]


def _check_times(T, times, pulse_duration):
    times = np.asarray(times, dtype=float)
    if times.ndim != 1:
        raise InputError("pulse times must be a one-dimensional sequence")
    if times.size and (np.any(np.diff(times) <= pulse_duration) or times[0] - pulse_duration / 2 < 0
                       or times[-1] + pulse_duration / 2 > T):
        raise InputError("pi pulses overlap or do not fit inside the interrogation")
    return times


def sensitivity_function(t, T, times, pulse_duration=0.0):
    """Sensitivity function g(t) of a sequence.

    Parameters
    ----------
    t : array_like
        Times in s.
    T : float
        Interrogation time in s (from the first to the last pi/2 pulse).
    times : array_like
        Centres of the pi pulses in s, increasing, inside (0, T).
    pulse_duration : float
        Duration of each pi pulse in s.

    Returns
    -------
    ndarray
        g(t), zero outside [0, T].
    """
    times = _check_times(T, times, pulse_duration)
    t = np.asarray(t, dtype=float)
    g = np.where((t >= 0) & (t <= T), 1.0, 0.0)
    half = pulse_duration / 2
    for k, tk in enumerate(times):
        sign_before = (-1.0) ** k
        after = t >= tk + half
        g = np.where(after, -g, g)
        if pulse_duration > 0:
            inside = (t > tk - half) & (t < tk + half)
            g = np.where(inside, sign_before * np.cos(np.pi * (t - tk + half) / pulse_duration), g)
    return g


def _constant_piece(f, start, stop, sign):
    width = stop - start
    return sign * width * np.sinc(f * width) * np.exp(-2j * np.pi * f * (start + stop) / 2)


def _pulse_piece(f, centre, duration, sign):
    # integral over the pulse of sign*cos(pi (t - t0)/duration) exp(-2 pi i f t), t0 = centre - duration/2
    x = np.pi * f * duration
    shape = np.sinc(0.5 - x / np.pi) / (np.pi / 2 + x)
    return sign * np.exp(-2j * np.pi * f * centre) * 1j * 2 * np.pi * f * duration**2 / 2 * shape


def filter_function(f, T, times, pulse_duration=0.0):
    """Complex filter function G(f) of an arbitrary pi-pulse timing, integrated exactly.

    Parameters
    ----------
    f : array_like
        Frequencies in Hz (>= 0).
    T : float
        Interrogation time in s.
    times : array_like
        Centres of the pi pulses in s.
    pulse_duration : float
        Duration of each pi pulse in s (0 for ideal pulses).

    Returns
    -------
    ndarray of complex
        G(f) in s. For ideal pulses this equals
        ``[1 + 2 sum_k (-1)^k exp(-2 pi i f t_k) - (-1)^n exp(-2 pi i f T)] / (2 pi i f)``.

    Examples
    --------
    Ramsey: ``|G(0)| = T``.

    >>> float(abs(filter_function(0.0, 2.0, [])))
    2.0
    """
    times = _check_times(T, times, pulse_duration)
    f = np.asarray(f, dtype=float)
    half = pulse_duration / 2
    edges = np.concatenate(([0.0], np.repeat(times, 2) + np.tile([-half, half], times.size), [T]))
    G = np.zeros(f.shape, dtype=complex)
    for k in range(times.size + 1):
        G = G + _constant_piece(f, edges[2 * k], edges[2 * k + 1], (-1.0) ** k)
    if pulse_duration > 0:
        for k, tk in enumerate(times):
            G = G + _pulse_piece(f, tk, pulse_duration, (-1.0) ** k)
    return G


def _dirichlet_modulus(phi_half, n):
    """|sin(n x) / sin(x)| without loss of precision near x = m pi."""
    x = phi_half - np.pi * np.round(phi_half / np.pi)
    return n * np.abs(np.sinc(n * x / np.pi) / np.sinc(x / np.pi))


def periodic_filter_modulus(f, T, n, pulse_duration=0.0):
    """|G(f)| of a CPMG-timed sequence (n pi pulses at (k - 1/2) T/n), finite pulses included.

    The sequence is n copies of one cell of length tau = T/n with alternating sign, so
    ``G = U(f) * sum_k (-1)^k exp(-2 pi i f k tau)``; both factors are evaluated in closed form.
    Broadcasts over ``f``, ``T`` and ``n``.

    Parameters
    ----------
    f : array_like
        Frequencies in Hz.
    T : array_like
        Interrogation time in s.
    n : array_like of int
        Number of pi pulses (>= 1).
    pulse_duration : float
        pi-pulse duration in s; must be shorter than T/n.

    Returns
    -------
    ndarray
        |G(f)| in s. At the tuning f0 = n/(2T) with ideal pulses it is exactly 2T/pi.
    """
    f = np.asarray(f, dtype=float)
    n = np.asarray(n, dtype=float)
    tau = np.asarray(T, dtype=float) / n
    half = pulse_duration / 2
    a = tau / 2 - half
    U = _constant_piece(f, 0.0, a, 1.0) + _constant_piece(f, tau - a, tau, -1.0)
    if pulse_duration > 0:
        U = U + _pulse_piece(f, tau / 2, pulse_duration, 1.0)
    return np.abs(U) * _dirichlet_modulus(np.pi * f * tau - np.pi / 2, n)


def ramsey_filter_modulus(f, T):
    """|G(f)| = |sin(pi f T)| / (pi f) of a Ramsey interrogation (``T`` at f = 0)."""
    f = np.asarray(f, dtype=float)
    T = np.asarray(T, dtype=float)
    w = np.pi * f
    nonzero = w != 0
    return np.where(nonzero, np.abs(np.sin(w * T)) / np.where(nonzero, w, 1.0), T)


def _csc2_minus_pole(z):
    """``csc^2 z - 1/z^2`` (1/3 at z = 0) for |z| <= pi/2, by its Laurent series near 0."""
    z = np.asarray(z, dtype=float)
    small = np.abs(z) < 0.1
    zs = np.where(small, 1.0, z)
    direct = 1.0 / np.sin(zs) ** 2 - 1.0 / zs**2
    z2 = z * z
    series = 1 / 3 + z2 * (1 / 15 + z2 * (2 / 189 + z2 * (1 / 675 + z2 * 2 / 10395)))
    return np.where(small, series, direct)


def _sin2_defect(y):
    """``(y^2 - sin^2 y) / y^4`` (1/3 at y = 0), by its Taylor series near 0."""
    y = np.asarray(y, dtype=float)
    small = np.abs(y) < 0.1
    ys = np.where(small, 1.0, y)
    direct = (ys**2 - np.sin(ys) ** 2) / ys**4
    y2 = y * y
    series = 1 / 3 + y2 * (-2 / 45 + y2 * (1 / 315 + y2 * (-2 / 14175)))
    return np.where(small, series, direct)


def ramsey_random_walk_alias(f0, T, Tc, floor=0.0):
    """``sum_m |G(f_m)|^2 / max(|f_m|, floor)^2`` over all m, f_m = f0 + m/Tc, for Ramsey |G|.

    The aliasing sum of random-walk FM (S_y = h f^-2, h = 1) into a clock cycled every Tc with
    interrogation T <= Tc. With x = f0 Tc and r = T/Tc, ``|G(f_m)|^2 / f_m^2 =
    Tc^4 sin^2(pi r (x + m)) / (pi^2 (x + m)^4)`` and the lattice sum is exact:

        sum_m sin^2(pi r (x + m)) / (x + m)^4 = pi^4 r^2 [csc^2(pi x) - 2 r / 3],   0 < r <= 1,

    from ``sum_m e^{2 pi i a (x+m)} / (x+m)^n``, whose a-derivative is 2 pi i times the n - 1 sum
    and vanishes for n = 0 and 0 < a < 1 (a Dirac comb), with the n = 1 sum
    ``pi cot(pi x) + i pi`` and the classical ``sum_m (x+m)^-2 = pi^2 csc^2(pi x)`` (e.g. Abramowitz &
    Stegun 4.3.92, from memory). The harmonic nearest zero, f* = (x - round(x))/Tc, is taken out
    of the closed form without cancellation and added back with its PSD floored at ``floor``
    (the 1/duration floor of the explicit sums).
    """
    return _ramsey_red_alias(2, f0, T, Tc, floor)


# Laurent coefficients of csc^2 z - 1/z^2 = c0 + c1 z^2 + c2 z^4 + ... (from the Bernoulli numbers)
_C0, _C1, _C2, _C3, _C4 = 1 / 3, 1 / 15, 2 / 189, 1 / 675, 2 / 10395


def _csc4_minus_poles(z):
    """``csc^4 z - 1/z^4 - 2/(3 z^2)`` (11/45 at z = 0) for |z| <= pi/2 (square of the csc^2 series)."""
    z = np.asarray(z, dtype=float)
    small = np.abs(z) < 0.1
    zs = np.where(small, 1.0, z)
    direct = 1.0 / np.sin(zs) ** 4 - 1.0 / zs**4 - 2 / (3 * zs**2)
    z2 = z * z
    series = (2 * _C1 + _C0**2) + z2 * ((2 * _C2 + 2 * _C0 * _C1) + z2 * ((2 * _C3 + 2 * _C0 * _C2 + _C1**2)
                                                                        + z2 * (2 * _C4 + 2 * _C0 * _C3 + 2 * _C1 * _C2)))
    return np.where(small, series, direct)


def _sin2_defect6(y):
    """``(sin^2 y - y^2 + y^4/3) / y^6`` (2/45 at y = 0), by its Taylor series near 0."""
    y = np.asarray(y, dtype=float)
    small = np.abs(y) < 0.3
    ys = np.where(small, 1.0, y)
    direct = (np.sin(ys) ** 2 - ys**2 + ys**4 / 3) / ys**6
    y2 = y * y
    series = 2 / 45 + y2 * (-1 / 315 + y2 * (2 / 14175 + y2 * (-2.0**11 / 479001600 + y2 * 2.0**13 / 87178291200)))
    return np.where(small, series, direct)


def ramsey_walk4_alias(f0, T, Tc, floor=0.0):
    """``sum_m |G(f_m)|^2 / max(|f_m|, floor)^4`` over all m, f_m = f0 + m/Tc, for Ramsey |G|.

    The f^-4 companion of :func:`ramsey_random_walk_alias` (the low-frequency corner of drag-free
    acceleration noise). By the same lattice sums, with s = csc^2(pi x), x = f0 Tc, r = T/Tc:

        sum_m sin^2(pi r (x + m)) / (x + m)^6 = pi^6 [r^2 s^2 - (2 r^2/3 + r^4/3) s + 2 r^5/15].

    The harmonic nearest zero is handled as there, with its Laurent poles removed in closed form.
    """
    return _ramsey_red_alias(4, f0, T, Tc, floor)


def _ramsey_red_alias(power, f0, T, Tc, floor):
    """The lattice sums of :func:`ramsey_random_walk_alias` (power 2) and :func:`ramsey_walk4_alias`
    (power 4). The harmonic nearest zero frequency, f* = d/Tc with d = x - round(x), is split off
    only where the floor bites (|f*| < floor): there the closed form minus that harmonic is
    written without its poles (no cancellation) and the harmonic is added with its PSD floored."""
    f0 = np.asarray(f0, dtype=float)
    T = np.asarray(T, dtype=float)
    Tc = np.asarray(Tc, dtype=float)
    x = f0 * Tc
    d = x - np.round(x)
    r = T / Tc
    floored = np.abs(d) < floor * Tc
    sn = np.sin(np.pi * np.where(floored, 0.5, d))
    csc2 = 1.0 / (sn * sn)
    r2 = r * r
    if power == 2:
        out = (np.pi * T * Tc) ** 2 * (csc2 - (2 / 3) * r)
    else:
        out = np.pi**4 * Tc**6 * (r2 * csc2 * csc2 - (2 * r2 / 3 + r2 * r2 / 3) * csc2 + 2 * r2 * r2 * r / 15)
    if not np.any(floored):
        return out
    d, r, T, Tc = (np.broadcast_to(v, out.shape)[floored] for v in (d, r, T, Tc))
    r2 = r * r
    z, y = np.pi * d, np.pi * r * d
    if power == 2:
        rest = Tc**4 * np.pi**2 * (r2 * _csc2_minus_pole(z) + r2 * r2 * _sin2_defect(y) - (2 / 3) * r2 * r)
    else:
        rest = np.pi**4 * Tc**6 * (r2 * _csc4_minus_poles(z) - (2 * r2 / 3 + r2 * r2 / 3) * _csc2_minus_pole(z)
                                   + 2 * r2 * r2 * r / 15 - r2**3 * _sin2_defect6(y))
    f_near = d / Tc
    w = np.pi * f_near
    G2 = np.where(w != 0, np.sin(w * T) ** 2 / np.where(w != 0, w, 1.0) ** 2, T * T)
    out = np.array(out)
    out[floored] = rest + G2 / np.maximum(np.abs(f_near), np.broadcast_to(floor, floored.shape)[floored]) ** power
    return out


def finite_pulse_factor(d):
    """Reduction of the fundamental of a CPMG filter by finite pi pulses.

    ``cos(pi d / 2) / (1 - d^2)`` with duty ``d = 2 f0 t_pi`` in [0, 1); written in a form that is
    exact through d -> 1 (limit pi/4).
    """
    d = np.asarray(d, dtype=float)
    return (np.pi / 2) * np.sinc((1 - d) / 2) / (1 + d)


#: Partial sums up to this many terms come from a table (exact, computed once per exponent).
_TABLE_TERMS = 10_000


@lru_cache(maxsize=16)
def _partial_odd_table(s):
    """``sum_{j=0}^{k-1} (2j + 1)^(-s)`` for k = 0 .. _TABLE_TERMS (read-only)."""
    k = np.arange(_TABLE_TERMS + 1, dtype=float)
    table = _partial_odd_direct(s, k)
    table.setflags(write=False)
    return table


def _partial_odd_direct(s, count):
    """The closed forms: digamma (s = 1), complete minus Hurwitz-zeta tail (s > 1)."""
    finite = np.isfinite(count)
    c = np.where(finite, np.maximum(count, 0.0), 1.0) + 0.5
    if s == 1:
        value = 0.5 * (special.digamma(c) - special.digamma(0.5))
        return np.where(finite, np.where(count > 0, value, 0.0), np.inf)
    full = (1 - 2.0 ** (-s)) * special.zeta(s)
    # Hurwitz zeta; for large q its Euler-Maclaurin series q^(1-s)/(s-1) + q^(-s)/2 + s q^(-s-1)/12
    # is exact to double precision and much cheaper
    big = c > 1e4
    qs = np.where(big, c, 1e4)
    series = qs ** (1 - s) / (s - 1) + 0.5 * qs ** (-s) + s * qs ** (-s - 1) / 12
    small = ~big & finite
    hz = np.zeros(c.shape)
    if small.any():
        hz[small] = special.zeta(s, c[small])
    tail = np.where(finite, 2.0 ** (-s) * np.where(big, series, hz), 0.0)
    return np.where(count > 0, full - tail, 0.0)


def _partial_odd(s, count):
    """``sum_{j=0}^{count-1} (2j + 1)^(-s)`` (count >= 0 whole, may be inf)."""
    count = np.asarray(count, dtype=float)
    if s == 0:
        return count
    if s < 1:
        raise ValueError("s must be 0, 1 or greater than 1")
    # whole counts up to the table size are looked up; the rest use the closed forms
    flat = count.reshape(-1)
    inside = (flat >= 0) & (flat <= _TABLE_TERMS)
    index = np.where(inside, flat, 0.0).astype(np.intp)
    out = _partial_odd_table(s)[index]
    rest = ~(inside & (index == flat))
    if rest.any():
        out[rest] = _partial_odd_direct(s, flat[rest])
    return out.reshape(count.shape)


def odd_harmonic_sum(s, count=np.inf, first=0):
    """``sum_{j=first}^{count-1} (2j + 1)^(-s)`` for s in {0, 1} or s > 1, vectorised.

    Uses the Hurwitz zeta function (s > 1), the digamma function (s = 1) and plain counting
    (s = 0).
    """
    first = np.asarray(first, dtype=float)
    count = np.asarray(count, dtype=float)
    if s > 1 and not first.any() and not np.isfinite(count).any():
        return np.full(np.broadcast(first, count).shape, (1 - 2.0 ** (-s)) * special.zeta(s))
    count = np.maximum(count, first)
    hi = _partial_odd(s, count)
    lo = _partial_odd(s, first)
    return np.where(count > first, hi - np.where(first > 0, lo, 0.0), 0.0)


#: Half-width, in harmonics of f0, of the ramp over which a band edge takes in the first lobe.
_EDGE_RAMP = 0.25


def _first_share(x):
    """Share of the first lobe (harmonic 1) below the point x of the harmonic axis: 0 below
    1 - _EDGE_RAMP, 1 above 1 + _EDGE_RAMP, a smoothstep (continuous slope) between."""
    t = np.clip((np.asarray(x, dtype=float) - 1 + _EDGE_RAMP) / (2 * _EDGE_RAMP), 0.0, 1.0)
    return t * t * (3 - 2 * t)


def _odd_sum_through(s, x):
    """``sum_k share_k(x) k^(-s)`` over odd k for a point x >= 0 of the harmonic axis (inf gives
    the complete sum). The lobe of harmonic k >= 3 is spread evenly over its cell [k - 1, k + 1]
    (share_k rises linearly across it), which makes the count of harmonics below x exactly x/2
    beyond the first cell; the first lobe, narrow against the empty axis below it, comes in over
    [1 - _EDGE_RAMP, 1 + _EDGE_RAMP]."""
    x = np.asarray(x, dtype=float)
    finite = np.isfinite(x)
    xf = np.where(finite, x, 0.0)
    k = 2 * np.floor(xf / 2) + 1  # the odd harmonic whose cell holds x
    part = np.where(k > 1, (xf - k + 1) / 2, _first_share(xf)) * k ** (-float(s))
    whole = np.where(finite, (k - 1) / 2, np.inf)
    return odd_harmonic_sum(s, whole) + np.where(finite, part, 0.0)


def periodic_noise_integral(alpha, T, f0, cutoff=np.inf, low=0.0):
    """``integral_low^cutoff f^alpha |G(f)|^2 df`` for an ideal CPMG sequence tuned to f0.

    The square-wave g(t) has odd harmonics k f0 with lobes of area ``4 T / (pi^2 k^2)`` (Parseval:
    the areas add to T/2). A power law that varies slowly across a lobe gives the odd-harmonic sum
    ``(4 T / pi^2) f0^alpha sum_k k^(alpha - 2)``, exact for alpha = 0 (Parseval) and alpha = -2
    (time-domain integral of the triangle wave). The two instantaneous pi/2 pulses add the
    high-frequency plateau ``2 / (4 pi^2 f^2)`` of |G|^2 (it matters for rising noise only), so
    that for alpha = 2 and cutoff >> f0 the result is ``cutoff (4n + 2) / (4 pi^2)``.

    Parameters
    ----------
    alpha : int
        Power-law index of the noise PSD (-4, -2, -1, 0, 1 or 2).
    T, f0 : array_like
        Interrogation time in s and tuning frequency in Hz (n = 2 f0 T).
    cutoff : array_like
        Upper frequency in Hz (needed for alpha >= 1).
    low : array_like
        Lower frequency in Hz (harmonics below it are left out).

    Returns
    -------
    ndarray
        In s^2 Hz^(alpha+1).
    """
    slope, edge = periodic_noise_coefficients(alpha, f0, cutoff, low)
    return slope * np.asarray(T, dtype=float) + edge


class coefficient_cache:
    """Within this context, :func:`periodic_noise_coefficients` remembers its results for the same
    tuning array (the same object) and the same power law and band: the noises of one budget share
    many terms (the master and the receiving laser, the common-mode phase), and each would
    otherwise recompute the same harmonic sums. The results are exactly those of a fresh call."""

    _active: dict | None = None

    def __enter__(self):
        self._outer = coefficient_cache._active
        if self._outer is None:
            coefficient_cache._active = {}
        return self

    def __exit__(self, *exc):
        if self._outer is None:
            coefficient_cache._active = None
        return False


def _band_key(x):
    x = np.asarray(x, dtype=float)
    return float(x) if x.ndim == 0 else (x.shape, x.tobytes())


def periodic_noise_coefficients(alpha, f0, cutoff=np.inf, low=0.0):
    """(slope, edge) with ``integral f^alpha |G|^2 df = slope * T + edge`` (see
    :func:`periodic_noise_integral`): the odd-harmonic lobes scale with T, the pi/2-pulse plateau
    does not."""
    cache = coefficient_cache._active
    if cache is None or not isinstance(f0, np.ndarray):
        return _periodic_noise_coefficients(alpha, f0, cutoff, low)
    key = (alpha, id(f0), _band_key(cutoff), _band_key(low))
    hit = cache.get(key)
    if hit is not None and hit[0] is f0:
        return hit[1]
    out = _periodic_noise_coefficients(alpha, f0, cutoff, low)
    cache[key] = (f0, out)  # the tuning array is kept alive, so that its id is not reused
    return out


def _periodic_noise_coefficients(alpha, f0, cutoff=np.inf, low=0.0):
    f0 = np.asarray(f0, dtype=float)
    cutoff = np.asarray(cutoff, dtype=float)
    low = np.asarray(low, dtype=float)
    if alpha >= 1 and not np.isfinite(cutoff).all():
        raise ValueError("a rising noise needs a finite cutoff")
    s = 2 - alpha  # lobe k carries 4 T / (pi^2 k^2) of |G|^2 and k^alpha f0^alpha of the noise
    scale = (4 / np.pi**2) * f0**alpha
    if cutoff.ndim == 0 and low.ndim == 0 and not np.isfinite(cutoff) and not low > 0:
        # the whole axis (a falling or white noise): the complete odd-harmonic sum, no edges
        return scale * odd_harmonic_sum(s), np.zeros(f0.shape)
    # a term covers [low, cutoff). A band edge takes a share of the lobe whose cell it falls in (see
    # _odd_sum_through; one half on the harmonic itself), so that terms meeting at a band edge (the
    # shot noise at the phase-lock bandwidth) partition the axis and the budget neither jumps nor
    # ripples as a sequence's tuning moves its harmonics across the edge.
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        upper = np.maximum(cutoff / f0, 0.0)
        lower = np.where(low > 0, np.maximum(low / f0, 0.0), 0.0)
        lower = np.minimum(lower, upper)  # an empty band [low, cutoff) holds nothing
    below = _odd_sum_through(s, lower) if low.ndim or low > 0 else 0.0
    slope = scale * (_odd_sum_through(s, upper) - below)
    if alpha == 2:
        # the pi/2-pulse plateau: integral_0^x f^2 |G|^2 df = (odd-harmonic lobes below x) + x / (2 pi^2)
        # once x has passed the first lobe (exact between lobes, by Parseval on g'), and about 0 below
        # f0 where |G|^2 is tiny; it comes in with the first lobe's share; a band [low, cutoff) takes
        # the difference
        def plateau(x):
            return np.where(np.isfinite(x), x * _first_share(np.where(np.isfinite(x), x, 0.0) / f0), x)
        edge = np.maximum(plateau(cutoff) - plateau(low), 0.0) / (2 * np.pi**2)
    elif alpha == 1:
        edge = np.log(np.maximum(cutoff / np.maximum(low, f0), 1.0)) / (2 * np.pi**2)
    else:
        edge = np.zeros(np.shape(slope))
    return slope, edge
