"""An exhaustive search for the best sequence at a frequency, by brute force with the engine's own
per-sequence physics: the oracle the envelope is tested against (common practice, no source)."""

from __future__ import annotations

import numpy as np

from gwclock.engine.formula import evaluate, total_psd
from gwclock.physics.sequences import SEQUENCES

R = SEQUENCES["ramsey"]


def brute(d, f):
    """min over every allowed pulse count (T = n/(2f)) and Ramsey interrogations: a dense grid below
    the first lobe maximum, every lobe maximum beyond it, and the shortest (S_y,eq units)."""
    kind = SEQUENCES[d.kind]
    out = np.full(f.size, np.inf)
    floor = 2 * d.pi_pulse_duration * (1 + 1e-9)
    for i, fi in enumerate(f):
        best = np.inf
        if kind.dd and kind.search == "pulses":
            step = kind.step
            nmax = np.floor(2 * fi * d.max_interrogation * (1 + 1e-12) / step) * step
            if nmax >= kind.min_pulses() and 2 * fi * d.pi_pulse_duration < 1:
                n = np.arange(kind.min_pulses(), nmax + 1, step, dtype=float)
                best = min(best, np.min(total_psd(evaluate(d, kind, np.full(n.size, fi), n, n / (2 * fi)))))
        top = min(0.5 / fi, d.max_interrogation)
        T = np.geomspace(floor, top, 20000) if top > floor else np.array([])
        k = np.arange(0, int(fi * d.max_interrogation) + 1)
        Tl = (k + 0.5) / fi
        T = np.concatenate([T, Tl[(Tl > floor) & (Tl <= d.max_interrogation)], [floor]])
        v = total_psd(evaluate(d, R, np.full(T.size, fi), np.zeros(T.size), T))
        out[i] = min(best, np.nanmin(v))
    return out

