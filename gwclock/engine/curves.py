"""Curves: the tuned envelope and the window of a fixed tuning, the two ways a sequence becomes a
strain sensitivity.

The *envelope* re-optimises the sequence at every frequency (no single tuning reaches it at all
frequencies at once); a *window* is the response of one fixed tuning at every frequency. Strain
PSDs are in the sky-averaged normalisation of Robson, Cornish & Liu (2019, Class. Quantum Grav.
36, 105011), so that ``SNR^2 = h0^2 T_obs / S_n`` for a monochromatic source."""

from __future__ import annotations

import numpy as np

from ..errors import InputError, OutOfReachError
from ..physics import noises
from ..physics.design import Design
from ..physics.sequences import SEQUENCES
from .budget import Budget, check_grid, hertz
from .formula import signal_response, total_psd
from .search import RAMSEY, best_sequence

__all__ = ["envelope", "window", "tuning_band", "check_tuning", "window_psd", "window_parts", "envelope_parts", "CHUNK"]

#: Frequencies evaluated at once (bounds memory on large grids).
CHUNK = 32768


def _assemble(design, f, tuning, parts, mode):
    Ry = signal_response(design, f)
    psd = {name: parts[name] / Ry for name in noises.NOISES}
    total = sum(psd.values())
    return Budget(
        frequency=f, psd=psd, total=total, tuning=np.broadcast_to(tuning, f.shape).astype(float),
        interrogation=np.broadcast_to(parts["interrogation"], f.shape).astype(float),
        cycle=np.broadcast_to(parts["cycle"], f.shape).astype(float),
        pulses=np.broadcast_to(parts["pulses"], f.shape).astype(int),
        contrast=np.broadcast_to(np.exp(parts["log_contrast"]), f.shape).astype(float),
        correlated=np.broadcast_to(parts["correlated"], f.shape).astype(bool),
        mode=mode, design=design,
    )


def window_parts(design: Design, tunings, frequency):
    """Per-noise equivalent fractional-frequency PSD of fixed tunings at signal frequencies.

    Each tuning f_k gets the sequence the envelope uses at f_k (:func:`~gwclock.engine.search.best_sequence`,
    Ramsey fallback included: one meaning of "tuned to f_k" everywhere). With that sequence fixed,
    the noise at signal frequency f is ``N(f) / |G(f)|^2``: the projection noise and the smooth
    aliasing integral of a DD sequence do not depend on f (``N = S_y,eq(f_k) |G(f_k)|^2``); for
    Ramsey the red-noise aliasing sum runs over the lattice f + m/Tc of the signal frequency
    itself, so it is evaluated there. |G(f)|^2 is floored at 1e-24 |G(f_k)|^2, so that exact zeros
    of the filter function show as a finite (very poor) sensitivity.

    Returns
    -------
    (dict, dict)
        Per noise an array of shape (K, P) in 1/Hz (fractional frequency), and the per-tuning
        sequence (``pulses``, ``interrogation``, ...).
    """
    fk = np.atleast_1d(np.asarray(tunings, dtype=float))
    f = np.asarray(frequency, dtype=float)
    f = np.broadcast_to(f, (fk.size, f.shape[-1]))
    best, ok = best_sequence(design, fk)
    if not np.all(ok):
        raise OutOfReachError("some tunings cannot be reached by any sequence")
    n = np.asarray(best["pulses"], dtype=float)[:, None]
    T = np.asarray(best["interrogation"], dtype=float)[:, None]
    Tc = np.asarray(best["cycle"], dtype=float)[:, None]
    kind = SEQUENCES[design.kind]
    ramsey = n[:, 0] == 0
    G0 = np.empty(fk.size)
    Gf = np.empty(f.shape)
    for mask, k in ((ramsey, RAMSEY), (~ramsey, kind)):
        if np.any(mask):
            G0[mask] = k.modulus(design, fk[mask][:, None], n[mask], T[mask])[:, 0]
            Gf[mask] = k.modulus(design, f[mask], n[mask], T[mask])
    G0sq = G0[:, None] ** 2
    inv = 1.0 / np.maximum(Gf**2, 1e-24 * G0sq)
    parts = {}
    stationary = noises.stationary_noises()
    for name in noises.NOISES:
        numerator = np.broadcast_to(np.asarray(best[name], dtype=float)[:, None] * G0sq, f.shape).copy()
        if name in stationary and np.any(ramsey):
            terms = stationary[name](design)
            if terms:
                numerator[ramsey] = RAMSEY.aliased(design, terms, f[ramsey], 0.0, T[ramsey], Tc[ramsey])
        parts[name] = numerator * inv
    return parts, best


def window_psd(design: Design, tunings, frequency):
    """Total strain PSD of many fixed tunings at once: ``S_n(f; f_k)`` (see :func:`window_parts`).

    Parameters
    ----------
    design : Design
    tunings : array_like, shape (K,)
        Tuning frequencies in Hz.
    frequency : array_like, shape (K, P) or (P,)
        GW frequencies in Hz at which to evaluate each tuning's window.

    Returns
    -------
    (ndarray, dict)
        ``S_n`` of shape (K, P) in 1/Hz, and the per-tuning sequence (``pulses``,
        ``interrogation``, ...).
    """
    tunings, frequency = hertz(tunings), hertz(frequency)
    parts, best = window_parts(design, tunings, frequency)
    f = np.broadcast_to(frequency, next(iter(parts.values())).shape)
    return total_psd(parts) / signal_response(design, f), best


def envelope(design: Design, frequency) -> Budget:
    """Tuned envelope: the sequence re-optimised at every frequency.

    Parameters
    ----------
    design : Design
        From :meth:`gwclock.mission.Mission.design`.
    frequency : array_like
        Increasing positive frequencies in Hz.

    Returns
    -------
    Budget
        With ``mode == "envelope"``. Where no DD sequence fits (below 1/(2 T_max) or above
        1/(2 t_pi)) the clock falls back to Ramsey interrogation.
    """
    f = check_grid(frequency)
    return _assemble(design, f, f, envelope_parts(design, f), "envelope")


def envelope_parts(design, f):
    """Best sequence at every point, in chunks (design fields may be arrays matching f)."""
    pieces = []
    for start in range(0, f.size, CHUNK):
        part = slice(start, start + CHUNK)
        best, _ = best_sequence(design.take(part, f.size), f[part])
        pieces.append(best)
    return {k: np.concatenate([p[k] for p in pieces]) for k in pieces[0]}


def tuning_band(design: Design):
    """The tunings (Hz) a fixed sequence can have: ``(n_min / (2 T_max), 1 / (2 t_pi))`` for the
    CPMG-timed kinds, whose pulse spacing sets the tuning (T = n / (2 f0)); ``None`` for kinds
    without a tuning band of that form."""
    kind = SEQUENCES[design.kind]
    if kind.dd and hasattr(kind, "min_pulses"):
        return kind.min_pulses() / (2 * float(design.max_interrogation)), 1 / (2 * float(design.pi_pulse_duration))
    return None


def check_tuning(design: Design, f0: float) -> float:
    """``f0`` if a mission file may fix its tuning there (:func:`tuning_band`); otherwise
    OutOfReachError. (The library's :func:`window` is more lenient: beyond 1/(2 t_pi) it gives the
    Ramsey sequence the envelope uses there.)"""
    band = tuning_band(design)
    if band is not None and not band[0] <= f0 < band[1]:
        raise OutOfReachError(f"sequence.tune {f0:g} Hz is outside the band the sequence can reach "
                              f"({band[0]:.4g} Hz to {band[1]:.4g} Hz, set by max_interrogation and pi_pulse_duration)")
    return f0


def window(design: Design, frequency, tune: float | None = None) -> Budget:
    """Response at one fixed tuning: ``S_n(f; f0) = N(f) / (|G(f)|^2 R_y(f))`` for the sequence the
    envelope uses at f0 (see :func:`window_parts`); at f = f0 it equals the envelope.

    Parameters
    ----------
    design : Design
    frequency : array_like
        Increasing positive frequencies in Hz.
    tune : float, optional
        Tuning frequency f0 in Hz (default: the mission's fixed tuning).

    Returns
    -------
    Budget
        With ``mode == "window"``.
    """
    f = check_grid(frequency)
    f0 = design.tune if tune is None else float(hertz(tune))
    if f0 is None:
        raise InputError("a window needs a tuning frequency")
    try:
        parts, best = window_parts(design, [f0], f)
    except ValueError:
        raise OutOfReachError(f"no sequence can be tuned to {f0:g} Hz within max_interrogation and the pi-pulse duration") from None
    seq = {k: np.asarray(v)[0] for k, v in best.items()}
    return _assemble(design, f, f0, {**seq, **{k: v[0] for k, v in parts.items()}}, "window")
