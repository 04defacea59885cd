"""User-given pi-pulse times, scaled to put the filter maximum at the tuning frequency; the noise
integrals use numerical moments of the unit-length timing."""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from .. import filters
from .integrals import power_integral
from .periodic import Periodic

__all__ = ["Custom"]


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
        return inner + self.plateau * power_integral(alpha, self.u_max, u_cut)


@lru_cache(maxsize=64)
def _unit_sequence(fractions):
    return _UnitSequence(fractions)


class Custom:
    """User-given pi-pulse times (fractions of the interrogation), scaled to put the filter
    maximum at the tuning frequency: T = x_peak / f0 with x_peak the peak of |G| for T = 1."""

    dd = True
    name = "custom"
    search = "single"
    linear_in_interrogation = False

    @staticmethod
    def pulse_error(design):
        return design.pulse_error

    def unit(self, design):
        return _unit_sequence(tuple(design.pulse_times))


    def shortest(self, design, n=None):
        """The interrogation below which the pi pulses (and the pi/2 pulses at the ends) overlap (s)."""
        fr = self.unit(design).fractions
        gaps = np.diff(np.concatenate(([0.0], fr, [1.0])))
        gaps[0] *= 2
        gaps[-1] *= 2
        return design.pi_pulse_duration / gaps.min()

    def snap(self, design, f0, T_wish):
        unit = self.unit(design)
        f0 = np.asarray(f0, dtype=float)
        T = np.broadcast_to(unit.peak / f0, np.broadcast(f0, T_wish).shape)
        fits = T > self.shortest(design)
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
        low = np.minimum(term.low, term.cutoff)  # an empty band [low, cutoff) holds nothing
        inner = unit.moment(term.alpha, term.cutoff * T) - unit.moment(term.alpha, low * T)
        return term.level * T ** (1.0 - term.alpha) * inner

    aliased = Periodic.aliased
    common_mode = Periodic.common_mode
