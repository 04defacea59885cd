"""The engine: from a mission design to the equivalent strain PSD and its noise budget.

For a tuning frequency f0 the clock pair returns one number per cycle; the equivalent
fractional-frequency PSD is (PHYSICS.md, master formula)::

    S_y,eq(f0) = 2 Tc sigma_phi^2 / ((2 pi nu0)^2 |G(f0)|^2)
               + sum_m S_y,stat(|f0 + m/Tc|) |G(f0 + m/Tc)|^2 / |G(f0)|^2

and the strain sensitivity is ``S_n = S_y,eq / R_y(f0)``, in the sky-averaged normalisation of
Robson, Cornish & Liu (2019), so that ``SNR^2 = h0^2 T_obs / S_n`` for a monochromatic source.
The *envelope* re-optimises the sequence at every frequency (no single tuning reaches it at all
frequencies at once); a *window* is the response of one fixed tuning at every frequency.

Every command and library entry point goes through :func:`envelope` or :func:`window`.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from . import noises, projection, response
from .mission import Design
from .sequences import SEQUENCES, Ramsey, optimal_interrogation

__all__ = ["Budget", "envelope", "window", "window_psd", "evaluate", "optimise", "frequency_grid", "signal_response", "CHUNK"]

#: Frequencies evaluated at once (bounds memory on large grids).
CHUNK = 4096
_COARSE = 14
_REFINE = 6
_RAMSEY = SEQUENCES["ramsey"]


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

    @property
    def characteristic_noise(self):
        """Noise characteristic strain h_n = sqrt(f S_n) (dimensionless)."""
        return np.sqrt(self.frequency * self.total)


def frequency_grid(fmin, fmax, points):
    """Logarithmic grid from fmin to fmax inclusive (Hz)."""
    if not (np.isfinite(fmin) and np.isfinite(fmax)) or fmin <= 0:
        raise ValueError("fmin and fmax must be positive and finite")
    if fmin >= fmax:
        raise ValueError(f"fmin ({fmin:g} Hz) must be below fmax ({fmax:g} Hz)")
    if int(points) < 2:
        raise ValueError("points must be at least 2")
    return np.geomspace(fmin, fmax, int(points))


def _check_grid(frequency):
    f = np.asarray(frequency, dtype=float)
    if f.ndim != 1 or f.size == 0:
        raise ValueError("frequencies must be a non-empty one-dimensional array")
    if not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise ValueError("frequencies must be positive and finite")
    if np.any(np.diff(f) <= 0):
        raise ValueError("frequencies must increase strictly (no repeats, sorted)")
    return f


def evaluate(design: Design, kind, f0, n, T):
    """Noise budget of given sequences (n pulses, interrogation T) tuned to f0.

    Parameters broadcast together. Returns a dict with the equivalent fractional-frequency PSD
    of every noise (``noises.NOISES`` keys, 1/Hz), ``log_contrast``, ``correlated`` and ``cycle``.
    """
    f0, n, T = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (f0, n, T)))
    Tc = T + design.dead_time
    eps = kind.pulse_error(design)
    log_c = -T / design.coherence_time + n * np.log1p(-eps)
    G0sq = kind.fundamental(design, f0, n, T) ** 2
    if design.comparison == "auto":
        cm = kind.common_mode(design, noises.laser_terms(design), f0, n, T)
        correlated = cm > projection.CORRELATED_THRESHOLD
    else:
        correlated = np.full(f0.shape, design.comparison == "correlated")
    var = projection.phase_variance(design.atom_number, log_c, design.squeezing, correlated)
    out = {"projection": 2 * Tc * var / ((2 * np.pi * design.nu0) ** 2 * G0sq)}
    for name, terms_of in noises.STATIONARY_NOISES.items():
        terms = terms_of(design)
        out[name] = kind.aliased(design, terms, f0, n, T, Tc) / G0sq if terms else np.zeros(f0.shape)
    out.update(log_contrast=log_c, correlated=correlated, cycle=Tc, pulses=n, interrogation=T)
    return out


def _total(parts):
    return sum(parts[k] for k in noises.NOISES)


def _pick(parts, index):
    return {k: np.take_along_axis(np.asarray(v), index[..., None], axis=-1)[..., 0] for k, v in parts.items()}


def optimise(design: Design, f0, kind: str | None = None):
    """Best sequence of one kind at each tuning f0 (no Ramsey fallback).

    Parameters
    ----------
    design : Design
    f0 : array_like
        Tuning frequencies in Hz (1-D).
    kind : str, optional
        Sequence kind (default: the mission's).

    Returns
    -------
    (dict, ndarray of bool)
        Per-f0 arrays as from :func:`evaluate` for the chosen sequence, and whether any
        sequence of that kind reaches f0.
    """
    return _best(design, SEQUENCES[kind or design.kind], np.atleast_1d(np.asarray(f0, dtype=float)))


def _best(design, kind, f0):
    """Optimise the interrogation at each tuning f0 (1-D); returns per-f0 arrays and validity."""
    f0 = f0[:, None]
    t_lo = np.full(f0.shape, max(1e-3 * design.max_interrogation, 2.5 * design.pi_pulse_duration))
    if kind.dd:
        t_lo = np.maximum(t_lo, 1 / (2 * f0))
    t_hi = design.max_interrogation
    eps = -np.log1p(-kind.pulse_error(design))
    tau_eff = 1 / (1 / design.coherence_time + 2 * f0 * eps)
    t_opt = optimal_interrogation(tau_eff, design.dead_time)
    grid = np.linspace(0.0, 1.0, _COARSE)
    wish = np.concatenate([t_lo * (t_hi / np.minimum(t_lo, t_hi)) ** grid, t_opt], axis=1)
    n, T, valid = kind.snap(design, f0, wish)
    parts = evaluate(design, kind, f0, n, T)
    score = np.where(valid, _total(parts), np.inf)
    i = np.argmin(score, axis=1)
    # refine between the neighbours of the coarse optimum
    lo = np.take_along_axis(wish, np.clip(i - 1, 0, _COARSE - 1)[:, None], 1)
    hi = np.take_along_axis(wish, np.clip(i + 1, 0, _COARSE - 1)[:, None], 1)
    lo, hi = np.minimum(lo, hi), np.maximum(lo, hi)
    wish2 = lo * (hi / lo) ** np.linspace(0, 1, _REFINE)[None, :]
    n2, T2, valid2 = kind.snap(design, f0, wish2)
    parts2 = evaluate(design, kind, f0, n2, T2)
    score2 = np.where(valid2, _total(parts2), np.inf)
    merged = {k: np.concatenate([np.broadcast_to(parts[k], score.shape), np.broadcast_to(parts2[k], score2.shape)], axis=1)
              for k in parts}
    allscore = np.concatenate([score, score2], axis=1)
    k = np.argmin(allscore, axis=1)
    best = _pick(merged, k)
    ok = np.isfinite(np.take_along_axis(allscore, k[:, None], 1)[:, 0])
    return best, ok


def signal_response(design: Design, frequency):
    """Sky-averaged signal response of the mission: link response times the phase-lock transfer."""
    return (response.link_response(frequency, design.baseline, design.path)
            * response.phase_lock_transfer(frequency, design.phase_lock_bandwidth))


def _assemble(design, f, tuning, parts, mode, scale=None):
    Ry = signal_response(design, f)
    psd = {}
    for name in noises.NOISES:
        value = parts[name] if scale is None else parts[name] * scale
        psd[name] = value / Ry
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


def _best_with_fallback(design, f0):
    """Best sequence at each f0: the mission's kind, or Ramsey where no DD sequence fits or
    where Ramsey does better (at low frequency, and where pulse leakage of white phase noise
    outweighs the longer DD interrogation)."""
    kind = SEQUENCES[design.kind]
    best, ok = _best(design, kind, f0)
    if isinstance(kind, Ramsey):
        return best, ok
    look = np.ones(f0.shape, dtype=bool)
    if np.any(look):
        rb, rok = _best(design, _RAMSEY, f0[look])
        mine = {k: np.asarray(v)[look] for k, v in best.items()}
        take = rok & (~ok[look] | (_total(rb) < _total(mine)))
        idx = np.flatnonzero(look)[take]
        best = {k: np.array(v, dtype=bool if k == "correlated" else float) for k, v in best.items()}
        for key in best:
            best[key][idx] = np.asarray(rb[key])[take]
        ok = ok.copy()
        ok[idx] = True
    return best, ok


def window_psd(design: Design, tunings, frequency):
    """Total strain PSD of many fixed tunings at once: ``S_n(f; f_k)``.

    Parameters
    ----------
    design : Design
    tunings : array_like, shape (K,)
        Tuning frequencies in Hz (each gets the envelope's best sequence, Ramsey fallback
        included).
    frequency : array_like, shape (K, P) or (P,)
        GW frequencies in Hz at which to evaluate each tuning's window.

    Returns
    -------
    (ndarray, dict)
        ``S_n`` of shape (K, P) in 1/Hz, and the per-tuning sequence (``pulses``,
        ``interrogation``, ...).
    """
    fk = np.atleast_1d(np.asarray(tunings, dtype=float))
    f = np.asarray(frequency, dtype=float)
    f = np.broadcast_to(f, (fk.size, f.shape[-1]))
    best, ok = _best_with_fallback(design, fk)
    if not np.all(ok):
        raise ValueError("some tunings cannot be reached by any sequence")
    sy = _total(best)
    n = np.asarray(best["pulses"], dtype=float)[:, None]
    T = np.asarray(best["interrogation"], dtype=float)[:, None]
    kind = SEQUENCES[design.kind]
    ramsey = n[:, 0] == 0
    G0 = np.empty(fk.size)
    Gf = np.empty(f.shape)
    for mask, k in ((ramsey, _RAMSEY), (~ramsey, kind)):
        if np.any(mask):
            G0[mask] = k.modulus(design, fk[mask][:, None], n[mask], T[mask])[:, 0]
            Gf[mask] = k.modulus(design, f[mask], n[mask], T[mask])
    scale = G0[:, None] ** 2 / np.maximum(Gf**2, 1e-24 * G0[:, None] ** 2)
    return sy[:, None] * scale / signal_response(design, f), best


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
    f = _check_grid(frequency)
    pieces = []
    for start in range(0, f.size, CHUNK):
        best, _ = _best_with_fallback(design, f[start:start + CHUNK])
        pieces.append(best)
    parts = {k: np.concatenate([p[k] for p in pieces]) for k in pieces[0]}
    return _assemble(design, f, f, parts, "envelope")


def window(design: Design, frequency, tune: float | None = None) -> Budget:
    """Response at one fixed tuning: ``S_n(f; f0) = S_y,eq(f0) |G(f0)|^2 / (|G(f)|^2 R_y(f))``.

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
        With ``mode == "window"``. |G(f)|^2 is floored at 1e-24 |G(f0)|^2 so that the exact
        zeros of the filter function show as a finite (very poor) sensitivity.
    """
    f = _check_grid(frequency)
    f0 = design.tune if tune is None else float(tune)
    if f0 is None:
        raise ValueError("a window needs a tuning frequency")
    kind = SEQUENCES[design.kind]
    best, ok = _best(design, kind, np.array([f0]))
    if not ok[0]:
        raise ValueError(f"no {design.kind} sequence can be tuned to {f0:g} Hz within max_interrogation "
                         "and the pi-pulse duration")
    n, T = float(best["pulses"][0]), float(best["interrogation"][0])
    G0 = kind.modulus(design, np.array([f0]), n, T)[0]
    Gf = kind.modulus(design, f, n, T)
    scale = G0**2 / np.maximum(Gf**2, 1e-24 * G0**2)
    parts = {k: v[0] for k, v in best.items()}
    return _assemble(design, f, f0, parts, "window", scale)
