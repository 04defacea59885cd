"""Ramsey interrogation (no pi pulse): a low-pass detector with |G| = |sin(pi f T)| / (pi f).

References
----------
Dick, G. J. 1987, Proc. 19th PTTI, 133; Santarelli et al. 1998, IEEE Trans. UFFC 45, 887
(aliasing of stationary noise into a cycled clock; from memory)."""

from __future__ import annotations

import numpy as np
from scipy import special

from .. import filters
from .integrals import int_power, power_integral

__all__ = ["Ramsey", "closed_form_red", "RAMSEY_FLICKER_CONSTANT"]


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
            value = term.level * int_power(fa, term.alpha)
            if edge:
                value = np.where((fa < term.cutoff) & (fa >= term.low), value, 0.0)
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
    search = "interrogation"
    linear_in_interrogation = False

    def __init__(self, harmonics=16, tail=True):
        # harmonics=0 and tail=False keep only terms of the full sum: a strict lower bound of it
        self.harmonics, self.tail = harmonics, tail

    @staticmethod
    def pulse_error(design):
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
            plateau = (term.level / np.pi**2) * (Tc * power_integral(term.alpha, lo, term.cutoff))
            if term.alpha == 0:
                # white FM without a lower edge: exact, sum_m S |G(f_m)|^2 = S T Tc (Poisson)
                low = np.asarray(term.low)
                white = term.level * (Tc * T)
                plateau = plateau if np.all(low > 0) else (white if not np.any(low) else
                                                           np.where(low > 0, plateau, white))
            if term.alpha > 0:
                plateau = plateau + _main_lobe(term, T, Tc)
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
            out = out + (term.level / np.pi**2) * (Tc * power_integral(term.alpha, lo, term.cutoff))
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


def _main_lobe(term, T, Tc):
    """Rising noise (alpha = 1, 2) inside Ramsey's main lobe f < 1/T, where |G|^2 = sin^2(pi f T)/(pi f)^2
    is not its plateau: ``2 Tc integral_low^min(1/T, cutoff) S |G|^2 df`` in closed form, with
    ``integral sin^2(pi f T) df = f/2 - sin(2 pi f T)/(4 pi T)`` (alpha = 2) and
    ``integral sin^2(pi f T)/f df = Cin(2 pi f T)/2``, ``Cin(x) = gamma + ln x - Ci(x)`` (alpha = 1)."""
    lo = np.asarray(term.low, dtype=float) * np.ones_like(T)
    hi = np.maximum(np.minimum(1.0 / T, term.cutoff), lo)
    if term.alpha == 2:
        def F(x):
            return x / 2 - np.sin(2 * np.pi * T * x) / (4 * np.pi * T)
    elif term.alpha == 1:
        def F(x):
            u = 2 * np.pi * T * x
            with np.errstate(divide="ignore", invalid="ignore"):
                ci = special.sici(u)[1]
                cin = np.where(u > 1e-4, np.euler_gamma + np.log(np.where(u > 0, u, 1.0)) - ci, u**2 / 4)
            return cin / 2
    else:
        raise ValueError("Ramsey's main lobe handles rising noise of power 1 and 2 only")
    return 2 * Tc * term.level / np.pi**2 * (F(hi) - F(lo))


#: c0 with integral_x^inf sinc^2(u)/u du = ln(1/x) + c0 + O(x^2) for small x (sinc(u) = sin(pi u)/(pi u));
#: computed by quadrature (checked in the tests).
RAMSEY_FLICKER_CONSTANT = -0.9150927313110225


def _ramsey_flicker_constant():
    return RAMSEY_FLICKER_CONSTANT
