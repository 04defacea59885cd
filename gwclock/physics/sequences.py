"""Pulse-sequence kinds: how each is tuned, its filter function and its noise integrals.

A kind turns a tuning frequency f0 and a wished-for interrogation time into an allowed
sequence (``snap``), gives the modulus of its filter function, and passes stationary
power-law noise through its aliasing sum. A new kind is one class and one entry in
:data:`SEQUENCES`.

References
----------
Cywinski et al. 2008, Phys. Rev. B 77, 174509 (filter functions of CPMG-type sequences).
Dick, G. J. 1987, Proc. 19th PTTI, 133; Santarelli et al. 1998, IEEE Trans. UFFC 45, 887
(aliasing of stationary noise into a cycled clock; from memory).
Souza, Alvarez & Suter 2012, Phil. Trans. R. Soc. A 370, 4748 (robust phase-cycled sequences;
from memory).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from . import filters

__all__ = ["SEQUENCES", "get_sequence", "Periodic", "Ramsey", "Custom", "optimal_interrogation"]


def optimal_interrogation(coherence, dead_time):
    """T minimising ``(T + T_d) exp(2T/tau) / T^2``: the projection-limited optimum.

    ``((tau - 2 T_d) + sqrt((tau - 2 T_d)^2 + 16 tau T_d)) / 4``; tau/2 without dead time.
    """
    tau = np.asarray(coherence, dtype=float)
    b = tau - 2 * dead_time
    return (b + np.sqrt(b**2 + 16 * tau * dead_time)) / 4


def _power_integral(alpha, lo, hi):
    """integral_lo^hi f^(alpha-2) df, hi may be inf for alpha < 1; zero when hi <= lo."""
    lo = np.asarray(lo, dtype=float)
    hi = np.asarray(hi, dtype=float)
    ok = hi > lo
    if alpha == 1:
        return np.where(ok, np.log(np.where(ok, hi, 2 * lo) / lo), 0.0)
    e = alpha - 1
    with np.errstate(over="ignore"):
        if hi.ndim == 0:  # the usual case: one cutoff (often infinite) for every point
            top = float(hi) ** e if np.isfinite(hi) and hi > 0 else 0.0  # hi <= 0 gives zero below
        else:
            hi_s = np.where(ok, hi, 2 * lo)
            top = np.where(np.isfinite(hi_s), _int_power(hi_s, e), 0.0)
        val = (top - _int_power(lo, e)) / e
    return np.where(ok, val, 0.0)


def _int_power(x, alpha):
    """x**alpha for a whole alpha by repeated products (cheaper than a float power)."""
    if alpha == 0:
        return np.ones_like(x)
    base = x if alpha > 0 else 1.0 / x
    out = base
    for _ in range(abs(int(alpha)) - 1):
        out = out * base
    return out


def _ramsey_harmonic_sum(terms, f0, T, Tc, harmonics, floor):
    """``sum_{|m| <= harmonics} S(max(|f_m|, floor)) |G(f_m)|^2`` with f_m = f* + m/Tc (f* the member of
    the lattice f0 + m/Tc nearest zero) and the Ramsey
    ``|G(f)|^2 = sin^2(pi f T) / (pi f)^2`` (T^2 at f = 0).

    ``sin(pi f_m T) = Im[e^{i pi f0 T} r^m]`` with ``r = e^{i pi T/Tc}``: the powers of r are built by
    repeated products (unitary, so rounding grows only linearly in m), two complex exponentials
    per point instead of one sine per harmonic. (The sine itself is squared, not 1 - cos, so that
    small angles keep their relative precision.)
    """
    T = np.asarray(T, dtype=float)
    Tc = np.asarray(Tc, dtype=float)
    # the lattice f0 + m/Tc is the same from its member nearest zero frequency, where red noise
    # and |G|^2 are largest: centre the explicit window there (the tail covers |f| > (H + 1/2)/Tc)
    x = np.asarray(f0, dtype=float) * Tc
    f0 = (x - np.round(x)) / Tc
    w0 = np.exp(1j * np.pi * f0 * T)
    r = np.exp(1j * np.pi * T / Tc)
    step = 1.0 / Tc
    top = (harmonics + 0.5) * step
    # band edges matter only where a harmonic can cross them
    edged = [bool(np.any(np.asarray(t.cutoff) < np.max(top, initial=0.0)) or np.any(t.low)) for t in terms]

    def weight(fm):
        fa = np.maximum(np.abs(fm), floor)
        out = 0.0
        for term, edge in zip(terms, edged):
            value = term.level * _int_power(fa, term.alpha)
            if edge:
                value = np.where((fa <= term.cutoff) & (fa >= term.low), value, 0.0)
            out = out + value
        return out

    # m = 0: f* may be exactly zero (|G|^2 = T^2 there)
    pf2 = (np.pi * f0) ** 2
    G2 = np.where(pf2 > 0, w0.imag**2 / np.where(pf2 > 0, pf2, 1.0), T * T)
    total = weight(f0) * G2
    rm = r
    for m in range(1, harmonics + 1):
        for rot, fm in ((w0 * rm, f0 + m * step), (w0 * np.conj(rm), f0 - m * step)):
            # |f_m| >= 1/(2 Tc) > 0 for m != 0
            total = total + weight(fm) * (rot.imag**2 / (np.pi**2 * (fm * fm)))
        rm = rm * r
    return total


class Periodic:
    """CPMG-timed sequences: n pi pulses at (k - 1/2) T/n, tuned to f0 = n / (2T).

    Parameters
    ----------
    name : str
    step : int
        Pulse counts allowed are multiples of ``step`` (8 for XY-8).
    fixed : int or None
        A single allowed pulse count (1 for the spin echo).
    error_order : int
        Contrast loss per pulse is ``pulse_error ** error_order``: phase-cycled sequences
        (XY-8) cancel pulse errors to first order, which the model takes as order 2.
    """

    dd = True

    def __init__(self, name, step=1, fixed=None, error_order=1):
        self.name, self.step, self.fixed, self.error_order = name, step, fixed, error_order

    def min_pulses(self):
        return self.fixed or self.step

    def lowest_tuning(self, design):
        return self.min_pulses() / (2 * design.max_interrogation)

    def pulse_error(self, design):
        return design.pulse_error**self.error_order

    def snap(self, design, f0, T_wish):
        """Allowed (n, T, valid) nearest to the wished interrogation at tuning f0."""
        f0 = np.asarray(f0, dtype=float)
        n_min = self.min_pulses()
        if self.fixed:
            n = np.full(np.broadcast(f0, T_wish).shape, float(self.fixed))
            n_max = np.floor(2 * f0 * design.max_interrogation * (1 + 1e-12))
        else:
            n_max = np.floor(2 * f0 * design.max_interrogation * (1 + 1e-12) / self.step) * self.step
            n = np.round(2 * f0 * T_wish / self.step) * self.step
            n = np.clip(n, n_min, np.maximum(n_max, n_min))
        valid = (n_max >= n) & (2 * f0 * design.pi_pulse_duration < 1)
        return n, n / (2 * f0), valid

    def fundamental(self, design, f0, n, T):
        return (2 * T / np.pi) * filters.finite_pulse_factor(2 * f0 * design.pi_pulse_duration)

    def modulus(self, design, f, n, T):
        return filters.periodic_filter_modulus(f, T, n, design.pi_pulse_duration)

    def noise_coefficients(self, design, term, f0):
        """(slope, edge) of the noise integral, ``slope * T + edge`` (it is linear in T)."""
        slope, edge = filters.periodic_noise_coefficients(term.alpha, f0, term.cutoff, term.low)
        return term.level * slope, term.level * edge

    def noise_integral(self, design, term, f0, n, T):
        # linear in T: evaluate the harmonic sums once on f0's own shape, then scale by T
        slope, edge = self.noise_coefficients(design, term, f0)
        return edge + slope * np.asarray(T, dtype=float)

    def aliased(self, design, terms, f0, n, T, Tc, linear=None):
        """sum_m S(|f0 + m/Tc|) |G|^2 in its smooth-noise form 2 Tc integral S |G|^2 df.

        ``linear`` = (slope, edge) summed over ``terms`` (from :meth:`noise_coefficients`, same f0)
        skips recomputing the harmonic sums: the integral is then ``slope * T + edge``."""
        if linear is not None:
            slope, edge = linear
            return 2 * Tc * (edge + slope * T)
        out = 0.0
        for term in terms:
            if np.any(term.level):
                out = out + self.noise_integral(design, term, f0, n, T)
        return 2 * Tc * out

    def common_mode(self, design, terms, f0, n, T, linear=None):
        """Common-mode laser phase variance (rad^2) through the filter; ``linear`` as in :meth:`aliased`."""
        if linear is not None:
            slope, edge = linear
            return (2 * np.pi * design.nu0) ** 2 * (edge + slope * np.asarray(T, dtype=float))
        out = 0.0
        for term in terms:
            out = out + self.noise_integral(design, term, f0, n, T)
        return (2 * np.pi * design.nu0) ** 2 * out


#: Red power laws whose Ramsey aliasing sum over all harmonics has a closed form (alpha -> function).
_CLOSED_RED = {-2: filters.ramsey_random_walk_alias, -4: filters.ramsey_walk4_alias}


def closed_form_red(term):
    """Whether the Ramsey aliasing sum of a red term has the closed form (random-walk FM, whole band)."""
    return term.alpha in _CLOSED_RED and not np.any(np.isfinite(term.cutoff)) and not np.any(term.low)


class Ramsey:
    """Ramsey interrogation (no pi pulse): a low-pass detector, |G| = |sin(pi f T)| / (pi f).

    Stationary noise that rises towards low frequency is passed through the exact aliasing sum:
    in closed form for f^-2 and f^-4 (:func:`gwclock.filters.ramsey_random_walk_alias`,
    :func:`gwclock.filters.ramsey_walk4_alias`), and
    otherwise over the cycle harmonics m / Tc (|m| <= 16) plus its smooth tail; white and rising
    noise use the smooth (plateau) form.
    """

    dd = False
    name = "ramsey"

    def __init__(self, harmonics=16, tail=True):
        # harmonics=0 and tail=False keep only terms of the full sum: a strict lower bound of it
        self.harmonics, self.tail = harmonics, tail

    @staticmethod
    def pulse_error(design):
        return 0.0

    def lowest_tuning(self, design):
        return 0.0

    def snap(self, design, f0, T_wish):
        f0 = np.asarray(f0, dtype=float)
        T = np.minimum(T_wish, design.max_interrogation)
        x = f0 * T
        lobe = np.floor(x) + 0.5  # sit on a lobe maximum of |sin(pi f0 T)|
        T_lobe = lobe / f0
        T_lobe = np.where(T_lobe > design.max_interrogation, (lobe - 1) / f0, T_lobe)
        T = np.where(x > 0.5, T_lobe, T)
        return np.zeros_like(T), T, T > 2 * design.pi_pulse_duration

    def fundamental(self, design, f0, n, T):
        return filters.ramsey_filter_modulus(f0, T)

    def modulus(self, design, f, n, T):
        return filters.ramsey_filter_modulus(f, T)

    def aliased(self, design, terms, f0, n, T, Tc):
        T = np.asarray(T, dtype=float)
        Tc = np.asarray(Tc, dtype=float)
        shape = np.broadcast(f0, T, Tc).shape
        out = np.zeros(shape)
        red = []
        inv_T = 1.0 / T
        for term in terms:
            if not np.any(term.level):
                continue
            if term.alpha < 0:
                red.append(term)
                continue
            # the plateau 1/(2 pi^2 f^2) of |G|^2 above the main lobe: 2 Tc S integral / (2 pi^2)
            lo = np.maximum(term.low, inv_T)
            plateau = (term.level / np.pi**2) * (Tc * _power_integral(term.alpha, lo, term.cutoff))
            if term.alpha == 0:
                # white FM without a lower edge: exact, sum_m S |G(f_m)|^2 = S T Tc (Poisson)
                low = np.asarray(term.low)
                white = term.level * (Tc * T)
                plateau = plateau if np.all(low > 0) else (white if not np.any(low) else
                                                           np.where(low > 0, plateau, white))
            out = out + plateau
        if not red:
            return out
        floor = 1.0 / np.asarray(design.duration, dtype=float)
        # f^-2 and f^-4 over the whole band: the infinite aliasing sum in closed form
        for term in red:
            if closed_form_red(term):
                out = out + term.level * _CLOSED_RED[term.alpha](f0, T, Tc, floor)
        red = [t for t in red if not closed_form_red(t)]
        if not red:
            return out
        # other red noise: exact discrete sum over the cycle harmonics f_m = f0 + m/Tc, then the tail
        out = out + _ramsey_harmonic_sum(red, f0, T, Tc, self.harmonics, floor)
        if not self.tail:
            return out
        f_edge = (self.harmonics + 0.5) / Tc
        for term in red:
            lo = np.maximum(f_edge, term.low)
            out = out + (term.level / np.pi**2) * (Tc * _power_integral(term.alpha, lo, term.cutoff))
        return out

    def common_mode(self, design, terms, f0, n, T):
        T = np.asarray(T, dtype=float)
        out = np.zeros(np.broadcast(f0, T).shape)
        for term in terms:
            if not np.any(term.level):
                continue
            if term.alpha == 0:
                out = out + term.level * T / 2
            elif term.alpha == -1:
                x_lo = T / design.duration
                out = out + term.level * T**2 * (np.log(1 / x_lo) + _ramsey_flicker_constant())
            else:
                raise ValueError("Ramsey common-mode integral handles white and flicker FM only")
        return (2 * np.pi * design.nu0) ** 2 * out


#: c0 with integral_x^inf sinc^2(u)/u du = ln(1/x) + c0 + O(x^2) for small x (sinc(u) = sin(pi u)/(pi u));
#: computed by quadrature (checked in the tests).
RAMSEY_FLICKER_CONSTANT = -0.9150927313110225


def _ramsey_flicker_constant():
    return RAMSEY_FLICKER_CONSTANT


class _UnitSequence:
    """Numerical moments of a custom timing for T = 1 and ideal pulses."""

    def __init__(self, fractions):
        from scipy import integrate  # only custom timings need it; it is slow to import

        self.fractions = np.asarray(fractions, dtype=float)
        n = self.fractions.size
        self.n = n
        self.u_max = 40.0 * (n + 2)
        u = np.concatenate((np.geomspace(1e-7, 0.05, 400, endpoint=False), np.arange(0.05, self.u_max, 0.002)))
        g2 = np.abs(filters.filter_function(u, 1.0, self.fractions)) ** 2
        self.u = u
        peak_zone = u <= n + 2
        self.peak = float(u[peak_zone][np.argmax(g2[peak_zone])])
        self.cumulative = {a: integrate.cumulative_trapezoid(u**a * g2, u, initial=0.0)
                           for a in (-4, -2, -1, 0, 1, 2)}
        self.plateau = (4 * n + 2) / (4 * np.pi**2)

    def moment(self, alpha, u_cut):
        """integral_0^u_cut u^alpha |G_1(u)|^2 du (plateau beyond the tabulated range)."""
        u_cut = np.asarray(u_cut, dtype=float)
        inner = np.interp(np.minimum(u_cut, self.u_max), self.u, self.cumulative[alpha])
        return inner + self.plateau * _power_integral(alpha, self.u_max, u_cut)


@lru_cache(maxsize=64)
def _unit_sequence(fractions):
    return _UnitSequence(fractions)


class Custom:
    """User-given pi-pulse times (fractions of the interrogation), scaled to put the filter
    maximum at the tuning frequency: T = x_peak / f0 with x_peak the peak of |G| for T = 1."""

    dd = True
    name = "custom"

    @staticmethod
    def pulse_error(design):
        return design.pulse_error

    def unit(self, design):
        return _unit_sequence(tuple(design.pulse_times))

    def lowest_tuning(self, design):
        return self.unit(design).peak / design.max_interrogation

    def snap(self, design, f0, T_wish):
        unit = self.unit(design)
        f0 = np.asarray(f0, dtype=float)
        T = np.broadcast_to(unit.peak / f0, np.broadcast(f0, T_wish).shape)
        fr = unit.fractions
        gaps = np.diff(np.concatenate(([0.0], fr, [1.0])))
        gaps[0] *= 2
        gaps[-1] *= 2
        fits = T * gaps.min() > design.pi_pulse_duration
        return np.full(T.shape, float(unit.n)), T, (T <= design.max_interrogation) & fits

    def _G(self, design, f, T):
        tp = design.pi_pulse_duration
        fr = self.unit(design).fractions
        f = np.asarray(f, dtype=float)
        T = np.asarray(T, dtype=float)
        half = tp / 2
        edges = [np.zeros_like(T)]
        for x in fr:
            edges += [x * T - half, x * T + half]
        edges.append(T)
        G = 0.0
        for k in range(fr.size + 1):
            G = G + filters._constant_piece(f, edges[2 * k], edges[2 * k + 1], (-1.0) ** k)
        for k, x in enumerate(fr):
            G = G + filters._pulse_piece(f, x * T, tp, (-1.0) ** k)
        return G

    def fundamental(self, design, f0, n, T):
        return np.abs(self._G(design, f0, T))

    def modulus(self, design, f, n, T):
        return np.abs(self._G(design, f, T))

    def noise_integral(self, design, term, f0, n, T):
        T = np.asarray(T, dtype=float)
        unit = self.unit(design)
        inner = unit.moment(term.alpha, term.cutoff * T) - unit.moment(term.alpha, term.low * T)
        return term.level * T ** (1.0 - term.alpha) * inner

    aliased = Periodic.aliased
    common_mode = Periodic.common_mode


SEQUENCES = {
    "ramsey": Ramsey(),
    "echo": Periodic("echo", fixed=1),
    "cpmg": Periodic("cpmg"),
    "xy8": Periodic("xy8", step=8, error_order=2),
    "custom": Custom(),
}


def get_sequence(kind: str):
    """The sequence kind registered as ``kind``; unknown kinds list the valid ones."""
    try:
        return SEQUENCES[kind]
    except KeyError:
        raise KeyError(f"unknown sequence kind {kind!r}; expected one of {', '.join(SEQUENCES)}") from None
