"""Evaluating many mission variants at once.

Variants that share their categorical settings (sequence kind, read-out, link path, custom pulse
times) are stacked into one :class:`~gwclock.physics.design.Design` whose numeric fields are arrays, one
value per (variant, frequency) point, and go through the engine in a single vectorised pass
(chunked to bound memory). No Python loop runs per frequency or per variant on this path.
"""

from __future__ import annotations

from dataclasses import fields

import numpy as np

from ..physics import noises
from ..physics.design import Design
from .budget import check_grid, hertz
from .curves import envelope_parts, window_parts
from .formula import signal_response, total_psd

__all__ = ["batch_budget"]

_CATEGORICAL = ("name", "kind", "path", "comparison", "pulse_times", "tune", "pulse_errors")


def _groups(designs):
    keys = {}
    for i, d in enumerate(designs):
        keys.setdefault(tuple(getattr(d, k) for k in _CATEGORICAL), []).append(i)
    return list(keys.values())


def _stack(designs, F):
    """One Design whose numeric fields vary are arrays of length V*F (variant-major)."""
    first = designs[0]
    changes = {}
    for f in fields(Design):
        if f.name in _CATEGORICAL:
            continue
        values = np.array([getattr(d, f.name) for d in designs], dtype=float)
        if np.all(values == values[0]):
            continue
        changes[f.name] = np.repeat(values, F)
    return first.replace(**changes) if changes else first


def batch_budget(designs, frequency, noise_terms=False):
    """Tuned-envelope strain PSD of many designs on one frequency grid; a design with a fixed
    tuning (``design.tune``) gives the window of that tuning instead, as ``gwclock curve`` does.

    Parameters
    ----------
    designs : sequence of Design
    frequency : array_like, shape (F,)
        Positive frequencies in Hz.
    noise_terms : bool
        Also return each noise's PSD.

    Returns
    -------
    dict
        ``"total"`` of shape (V, F) in 1/Hz and, with ``noise_terms``, one array per noise;
        ``"interrogation"`` and ``"pulses"`` of the chosen sequences.
    """
    f = check_grid(frequency) if np.ndim(frequency) == 1 and len(frequency) > 1 else np.atleast_1d(hertz(frequency))
    V, F = len(designs), f.size
    out = {"total": np.empty((V, F)), "interrogation": np.empty((V, F)), "pulses": np.empty((V, F))}
    if noise_terms:
        out.update({k: np.empty((V, F)) for k in noises.NOISES})
    for idx in _groups(designs):
        group = [designs[i] for i in idx]
        if group[0].tune is not None:  # a fixed tuning: its window, not the envelope
            for i, d in zip(idx, group):
                _fill_window(out, i, d, f, noise_terms)
            continue
        d = _stack(group, F)
        ff = np.tile(f, len(group))
        parts = envelope_parts(d, ff)
        R = signal_response(d, ff)
        total = total_psd(parts) / R
        out["total"][idx] = total.reshape(len(group), F)
        out["interrogation"][idx] = np.asarray(parts["interrogation"]).reshape(len(group), F)
        out["pulses"][idx] = np.asarray(parts["pulses"]).reshape(len(group), F)
        if noise_terms:
            for k in noises.NOISES:
                out[k][idx] = (parts[k] / R).reshape(len(group), F)
    return out


def _fill_window(out, i, design, f, noise_terms):
    """Row i of :func:`batch_budget` for a design with a fixed tuning: the window of that tuning."""
    parts, best = window_parts(design, [design.tune], f)
    R = signal_response(design, f)
    out["total"][i] = total_psd(parts)[0] / R
    out["interrogation"][i] = np.asarray(best["interrogation"], dtype=float)[0]
    out["pulses"][i] = np.asarray(best["pulses"], dtype=float)[0]
    if noise_terms:
        for k in noises.NOISES:
            out[k][i] = parts[k][0] / R
