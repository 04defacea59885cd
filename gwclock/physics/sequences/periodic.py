"""CPMG-timed sequences (spin echo, CPMG, XY-8): n pi pulses at (k - 1/2) T/n, tuned to f0 = n/(2T).

References
----------
Cywinski, Lutchyn, Nave & Das Sarma 2008, Phys. Rev. B 77, 174509 (filter functions of CPMG-type
sequences). Souza, Alvarez & Suter 2012, Phil. Trans. R. Soc. A 370, 4748 (robust phase-cycled
sequences; from memory)."""

from __future__ import annotations

import numpy as np

from .. import filters

__all__ = ["Periodic"]


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
    linear_in_interrogation = True

    def __init__(self, name, step=1, fixed=None, error_order=1):
        self.name, self.step, self.fixed, self.error_order = name, step, fixed, error_order

    @property
    def search(self):
        return "single" if self.fixed else "pulses"

    def min_pulses(self):
        return self.fixed or self.step


    def pulse_error(self, design):
        return design.pulse_error**self.error_order

    @staticmethod
    def shortest(design, n):
        """The interrogation below which n pi pulses of duration t_pi do not fit (s)."""
        return np.asarray(n, dtype=float) * design.pi_pulse_duration

    @staticmethod
    def tuning(n, T):
        """The frequency n / (2T) the noise integrals of n pulses in T are built on (odd harmonics
        of it); a signal at another frequency sees the same noise through |G(f)| instead."""
        return np.asarray(n, dtype=float) / (2 * np.asarray(T, dtype=float))

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

    def lobe_areas(self, design, f0, n, T, k):
        """Area (s) of the lobe of |G|^2 at each odd harmonic ``k f0``: ``4 T / (pi^2 k^2)`` times the
        finite-pulse factor squared, so that a smooth spectrum S gives ``integral S |G|^2 df ~
        sum_k S(k f0) area_k`` (Cywinski et al. 2008, Phys. Rev. B 77, 174509)."""
        duty = 2 * np.asarray(f0)[..., None] * design.pi_pulse_duration * k
        return 4 * np.asarray(T)[..., None] / (np.pi**2 * k**2) * filters.finite_pulse_factor(duty) ** 2

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
