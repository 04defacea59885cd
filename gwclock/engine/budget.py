"""The result type of the engine: a strain sensitivity with its noise budget, and the frequency grid
checks every entry point shares."""

from __future__ import annotations

from dataclasses import dataclass, field
from html import escape as html_escape

import numpy as np

from ..errors import InputError
from ..physics.design import Design

__all__ = ["Budget", "frequency_grid", "check_grid", "hertz", "band_below", "SPAN"]

#: The frequency span (Hz) gwclock covers by default: every default grid spans it.
SPAN = (1e-5, 100.0)


@dataclass(frozen=True)
class Budget:
    """Strain sensitivity and its noise budget on a frequency grid.

    Attributes
    ----------
    frequency : ndarray
        GW frequency in Hz.
    psd : dict of str -> ndarray
        Equivalent strain PSD of each noise (1/Hz, sky-averaged); they add to ``total``.
    total : ndarray
        Total equivalent strain PSD S_n (1/Hz).
    tuning : ndarray
        Tuning frequency of the sequence in Hz (equal to ``frequency`` for an envelope).
    interrogation, cycle : ndarray
        Interrogation time T and cycle time Tc in s.
    pulses : ndarray
        Number of pi pulses (0 for Ramsey).
    contrast : ndarray
        Fringe contrast after decoherence and pulse errors.
    correlated : ndarray of bool
        Whether the correlated read-out is in use.
    mode : str
        ``"envelope"`` or ``"window"``.
    design : Design
    """

    frequency: np.ndarray
    psd: dict
    total: np.ndarray
    tuning: np.ndarray
    interrogation: np.ndarray
    cycle: np.ndarray
    pulses: np.ndarray
    contrast: np.ndarray
    correlated: np.ndarray
    mode: str
    design: Design = field(repr=False)

    @property
    def asd(self):
        """Total strain ASD in Hz^-1/2."""
        return np.sqrt(self.total)

    def asd_of(self, noise):
        """Strain ASD of one noise in Hz^-1/2."""
        return np.sqrt(self.psd[noise])

    def band_below(self, level):
        """First and last frequency (Hz) where the total ASD is at or below ``level`` (NaN if nowhere)."""
        lo, hi = band_below(self.frequency, self.asd, level)
        return float(lo), float(hi)

    @property
    def characteristic_noise(self):
        """Noise characteristic strain h_n = sqrt(f S_n) (dimensionless)."""
        return np.sqrt(self.frequency * self.total)

    def to_qtable(self):
        """The budget as an :class:`astropy.table.QTable` of Quantities: frequency, total and
        per-noise strain ASD, the sequence (tuning, pulses, interrogation, cycle, contrast,
        read-out) and, in its meta, the mode and the mission's name."""
        import astropy.units as u
        from astropy.table import QTable
        t = QTable()
        t["frequency"] = self.frequency * u.Hz
        t["asd"] = self.asd * u.Hz**-0.5
        for name in self.psd:
            t[f"asd_{name}"] = self.asd_of(name) * u.Hz**-0.5
        t["tuning"] = self.tuning * u.Hz
        t["pulses"] = np.asarray(self.pulses)
        t["interrogation"] = self.interrogation * u.s
        t["cycle"] = self.cycle * u.s
        t["contrast"] = np.asarray(self.contrast)
        t["correlated"] = np.asarray(self.correlated, dtype=bool)
        t.meta.update(mode=self.mode, mission=self.design.name,
                      convention="sky-averaged strain ASD (normalisation of Robson, Cornish & Liu 2019)")
        return t

    def _repr_html_(self):
        """A short summary for notebooks: the best point and the band within x10 of it."""
        i = int(np.argmin(self.total))
        lo, hi = self.band_below(10 * self.asd[i])
        return (f"<p><b>{html_escape(self.design.name)}</b>: {self.mode}, {self.frequency.size} frequencies "
                f"from {self.frequency[0]:.3g} Hz to {self.frequency[-1]:.3g} Hz; best strain ASD "
                f"{self.asd[i]:.3e} Hz<sup>-1/2</sup> at {self.frequency[i]:.4g} Hz; within x10 of it "
                f"from {lo:.3g} Hz to {hi:.3g} Hz.</p>")


def band_below(f, asd, level):
    """First and last frequency (Hz) where ``asd <= level``; NaN where the curve never gets there.

    ``asd`` may be 2-D (one curve per row, on the grid ``f``); ``level`` broadcasts against the
    rows. The band may have gaps inside it: this is its extent.
    """
    f = np.asarray(f, dtype=float)
    asd = np.asarray(asd, dtype=float)
    below = asd <= np.asarray(level, dtype=float)[..., None] if np.ndim(level) else asd <= level
    hit = below.any(axis=-1)
    first = np.argmax(below, axis=-1)
    last = f.size - 1 - np.argmax(below[..., ::-1], axis=-1)
    return np.where(hit, f[first], np.nan), np.where(hit, f[last], np.nan)


def frequency_grid(fmin, fmax, points):
    """Logarithmic grid from fmin to fmax inclusive (Hz)."""
    if not (np.isfinite(fmin) and np.isfinite(fmax)) or fmin <= 0:
        raise InputError("fmin and fmax must be positive and finite")
    if fmin >= fmax:
        raise InputError(f"fmin ({fmin:g} Hz) must be below fmax ({fmax:g} Hz)")
    if int(points) < 2:
        raise InputError("points must be at least 2")
    return np.geomspace(fmin, fmax, int(points))


def hertz(value):
    """A frequency (or array of them) in Hz as floats: an astropy Quantity is converted (``5 *
    u.mHz`` is 0.005), a plain number is taken as Hz; another dimension is refused (ValueError)."""
    def quantity(v):  # duck-typed: the engine does not import astropy for plain numbers
        return hasattr(v, "unit") and hasattr(v, "to_value")

    def to_hz(v):
        try:
            return v.to_value("Hz")
        except ValueError:  # astropy's UnitConversionError
            raise InputError(f"expected a frequency, got a quantity in {v.unit}") from None

    if isinstance(value, (list, tuple)) and any(quantity(v) for v in value):
        return np.array([to_hz(v) if quantity(v) else float(v) for v in value], dtype=float)
    if quantity(value):
        return np.asarray(to_hz(value), dtype=float)
    return np.asarray(value, dtype=float)


def check_grid(frequency):
    """The frequencies as a float array (Hz; a Quantity is converted), refused unless 1-D,
    positive, finite and strictly increasing."""
    f = hertz(frequency)
    if f.ndim != 1 or f.size == 0:
        raise InputError("frequencies must be a non-empty one-dimensional array")
    if not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise InputError("frequencies must be positive and finite")
    if np.any(np.diff(f) <= 0):
        raise InputError("frequencies must increase strictly (no repeats, sorted)")
    return f
