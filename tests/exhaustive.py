"""An exhaustive search for the best sequence at a frequency, by brute force with the engine's own
per-sequence physics: the oracle the envelope is tested against (common practice, no source).

It shares no search code with the engine: grids, then scipy's bounded Brent minimiser
(``scipy.optimize.minimize_scalar``) on the best cells."""

from __future__ import annotations

import numpy as np
from scipy.optimize import minimize_scalar

from gwclock.engine.formula import evaluate, evaluate_free, total_psd
from gwclock.physics.sequences import SEQUENCES

R = SEQUENCES["ramsey"]
#: Pulse counts searched with a free interrogation: every count up to this, and this many steps
#: either side of the best locked count beyond it.
FREE_ALL = 64
FREE_NEAR = 12


def _polish(fun, a, b):
    """Bounded Brent on [a, b] (ln T), to a tolerance far below the 1e-6 the tests ask."""
    if not b > a:
        return fun(a)
    r = minimize_scalar(fun, bounds=(a, b), method="bounded", options={"xatol": 1e-10 * max(1.0, abs(a))})
    return min(float(r.fun), fun(a), fun(b))


def _free_counts(d, kind, fi, counts):
    """The least budget over a free interrogation for each pulse count, by a grid in ln T over a
    wide bracket (r = 2 f T / n in [0.6 (1 - 1/n), 1 + 6/n^2], [0.02, 4] for one pulse) and Brent
    on the best three cells of each of the best five counts."""
    hi_T = d.max_interrogation
    rows = []
    for n in counts:
        if kind.name == "custom":
            mid = float(kind.snap(d, fi, np.array(1.0))[1])
        else:
            mid = n / (2 * fi)
        lo_r, hi_r = (0.02, 4.0) if n <= 1 else (0.6 * (1 - 1 / n), 1 + 6 / n**2)
        lo = max(mid * lo_r, float(kind.shortest(d, n)) * (1 + 1e-9))
        hi = min(mid * hi_r, hi_T)
        if not hi > lo:
            continue
        x = np.linspace(np.log(lo), np.log(hi), 400)
        v = total_psd(evaluate_free(d, kind, np.full(x.size, fi), np.full(x.size, float(n)), np.exp(x)))
        v = np.where(np.isfinite(v), v, np.inf)
        rows.append((float(np.min(v)), n, x, v))
    best = np.inf
    for _, n, x, v in sorted(rows, key=lambda r: r[0])[:5]:
        def fun(xx, n=n):
            s = float(total_psd(evaluate_free(d, kind, np.array([fi]), np.array([float(n)]), np.exp(np.array([xx]))))[0])
            return s if np.isfinite(s) else np.inf
        for i in np.argsort(v)[:3]:
            best = min(best, _polish(fun, x[max(i - 1, 0)], x[min(i + 1, x.size - 1)]))
    return best


def _ramsey(d, fi):
    floor = 2 * d.pi_pulse_duration * (1 + 1e-9)
    top = min(0.5 / fi, d.max_interrogation)
    T = np.geomspace(floor, top, 20000) if top > floor else np.array([])
    k = np.arange(0, int(fi * d.max_interrogation) + 1)
    Tl = (k + 0.5) / fi
    Tl = Tl[(Tl > floor) & (Tl <= d.max_interrogation)]
    T = np.concatenate([T, Tl, [floor, d.max_interrogation]])
    v = total_psd(evaluate(d, R, np.full(T.size, fi), np.zeros(T.size), T))
    v = np.where(np.isfinite(v), v, np.inf)
    best = float(np.min(v))

    def fun(x):
        s = float(total_psd(evaluate(d, R, np.array([fi]), np.zeros(1), np.exp(np.array([x]))))[0])
        return s if np.isfinite(s) else np.inf

    # Brent around the best grid points and across the best lobes (T continuous inside each)
    for i in np.argsort(v)[:4]:
        Ti = T[i]
        if Ti <= top:
            a, b = Ti / 1.01, min(Ti * 1.01, d.max_interrogation)
        else:
            kk = np.floor(fi * Ti)
            a, b = kk / fi, min((kk + 1) / fi, d.max_interrogation)
        best = min(best, _polish(fun, np.log(max(a, floor)), np.log(b)))
    return best


def brute(d, f):
    """min over every allowed sequence (S_y,eq units): every pulse count at T = n/(2f); a free
    interrogation for short trains and around the best locked count; Ramsey on a dense grid below
    the first lobe maximum, at every lobe maximum beyond it, the shortest and the longest, each
    polished by Brent."""
    kind = SEQUENCES[d.kind]
    out = np.full(f.size, np.inf)
    for i, fi in enumerate(f):
        best = np.inf
        if kind.dd and kind.search == "pulses":
            step = kind.step
            nmax = np.floor(2 * fi * d.max_interrogation * (1 + 1e-12) / step) * step
            if nmax >= kind.min_pulses() and 2 * fi * d.pi_pulse_duration < 1:
                n = np.arange(kind.min_pulses(), nmax + 1, step, dtype=float)
                v = total_psd(evaluate(d, kind, np.full(n.size, fi), n, n / (2 * fi)))
                best = min(best, np.min(v))
                n_best = n[np.argmin(v)]
                counts = set(n[n <= FREE_ALL * step]) | set(np.arange(n_best - FREE_NEAR * step,
                                                                      n_best + (FREE_NEAR + 1) * step, step))
                counts = sorted(c for c in counts if c >= kind.min_pulses())
                best = min(best, _free_counts(d, kind, fi, counts))
        elif kind.dd:  # one sequence per tuning (echo, custom), its interrogation free
            n0, T0, ok = kind.snap(d, fi, np.array(1.0))
            if ok:
                best = min(best, _free_counts(d, kind, fi, [float(n0)]))
        out[i] = min(best, _ramsey(d, fi))
    return out
