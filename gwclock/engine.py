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

from . import filters, noises, projection, response
from .mission import Design
from .sequences import SEQUENCES, Periodic, Ramsey, closed_form_red, optimal_interrogation

__all__ = ["Budget", "envelope", "window", "window_psd", "evaluate", "optimise", "frequency_grid", "signal_response", "CHUNK"]

#: Frequencies evaluated at once (bounds memory on large grids).
CHUNK = 4096
_RAMSEY = SEQUENCES["ramsey"]
#: Ramsey aliasing with only the harmonic nearest zero and no tail: a strict lower bound of the full sum.
_RAMSEY_FLOOR = Ramsey(harmonics=0, tail=False)
#: Log-spaced Ramsey interrogation candidates (the first rows of the Ramsey candidate list).
_RAMSEY_LADDER = 16
#: Safeguarded Newton steps for the continuous interrogation optimum.
_NEWTON_STEPS = 4


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


def _linear_noise(design, kind, f0):
    """For a kind whose noise integrals are linear in T (CPMG timing): per stationary noise the
    (slope, edge) of ``sum_terms integral S |G|^2 df = slope * T + edge`` at each f0, and the same
    for the shared laser's common mode (key ``"common"``), computed once per tuning."""
    out = {}
    groups = dict(noises.STATIONARY_NOISES, common=noises.laser_terms)
    for name, terms_of in groups.items():
        slope, edge = 0.0, 0.0
        for term in terms_of(design):
            if name != "common" and not np.any(term.level):
                continue
            s, e = kind.noise_coefficients(design, term, f0)
            slope, edge = slope + s, edge + e
        out[name] = (slope, edge)
    return out


def evaluate(design: Design, kind, f0, n, T, linear=None):
    """Noise budget of given sequences (n pulses, interrogation T) tuned to f0.

    Parameters broadcast together; ``linear`` takes the per-f0 coefficients of
    :func:`_linear_noise` (same f0) to skip recomputing them. Returns a dict with the equivalent
    fractional-frequency PSD of every noise (``noises.NOISES`` keys, 1/Hz), ``log_contrast``,
    ``correlated`` and ``cycle``.
    """
    f0, n, T = (np.asarray(v, dtype=float) for v in (f0, n, T))
    shape = np.broadcast(f0, n, T).shape
    n, T = np.broadcast_to(n, shape), np.broadcast_to(T, shape)
    Tc = T + design.dead_time
    eps = kind.pulse_error(design)
    log_c = -T / design.coherence_time + n * np.log1p(-eps)
    G0sq = kind.fundamental(design, f0, n, T) ** 2
    if design.comparison == "auto":
        if linear is None:
            cm = kind.common_mode(design, noises.laser_terms(design), f0, n, T)
        else:
            cm = kind.common_mode(design, (), f0, n, T, linear=linear["common"])
        correlated = cm > projection.CORRELATED_THRESHOLD
    else:
        correlated = np.full(shape, design.comparison == "correlated")
    var = projection.phase_variance(design.atom_number, log_c, design.squeezing, correlated)
    inv_G0sq = 1.0 / G0sq
    out = {"projection": _projection_term(design, Tc, var, G0sq)}
    for name, terms_of in noises.STATIONARY_NOISES.items():
        if linear is not None:
            out[name] = kind.aliased(design, (), f0, n, T, Tc, linear=linear[name]) * inv_G0sq
            continue
        terms = terms_of(design)
        out[name] = kind.aliased(design, terms, f0, n, T, Tc) * inv_G0sq if terms else np.zeros(shape)
    out = {k: np.broadcast_to(v, shape) for k, v in out.items()}
    out.update(log_contrast=np.broadcast_to(log_c, shape), correlated=np.broadcast_to(correlated, shape),
               cycle=Tc, pulses=n, interrogation=T)
    return out


def _projection_term(design, Tc, var, G0sq):
    """Projection part of S_y,eq: ``2 Tc sigma^2 / ((2 pi nu0)^2 |G(f0)|^2)`` (one value per cycle Tc)."""
    return 2 * Tc * var / ((2 * np.pi * design.nu0) ** 2 * G0sq)


def _total(parts):
    return sum(parts[k] for k in noises.NOISES)


def _pick(parts, index):
    """Select along the leading (candidate) axis."""
    return {k: np.take_along_axis(np.asarray(v), index[None], axis=0)[0] for k, v in parts.items()}


def _log_plus_linear_root(L, steps=3):
    """v with ``e^v + v = L`` (z = e^v solves z + ln z = L, the Lambert W of e^L), by Newton from
    the asymptotic start ln(L - ln L) (or L below 1.5): the function is convex in v, so after at
    most one overshoot the steps close in monotonically."""
    L = np.asarray(L, dtype=float)
    big = L > 1.5
    Ls = np.where(big, L, 2.0)
    v = np.where(big, np.log(Ls - np.log(Ls)), L - 0.5 * np.exp(np.minimum(L, 1.5)))
    for _ in range(steps):
        e = np.exp(v)
        v = v - (e + v - L) / (e + 1)
    return v


def _continuous_optimum(design, lo, hi, a, b, q, tau_e, iterations=_NEWTON_STEPS):
    """Continuous T in [lo, hi] minimising (T + Td) [a/T + (b + q exp(2T/tau_e))/T^2].

    The stationary point solves ``phi = ln q + 2T/tau_e + ln P(T) - ln R(T) = 0`` with
    P = (2/tau_e) T^2 + (2 Td/tau_e - 1) T - 2 Td = (2/tau_e)(T - T_P)(T - T_m) and
    R = (b + a Td) T + 2 b Td. T_P, the root of P, is the projection-only optimum; phi grows from
    -inf there without bound, so the root is unique. In u = ln(T - T_P) it reads
    ``u + 2 e^u / tau_e = K(T)`` with K = ln R - ln(T - T_m) - ln(2 q / tau_e) - 2 T_P / tau_e
    varying slowly (constant without dead time): with K frozen at T = 2 T_P it is a Lambert-W
    equation, whose root starts Newton steps on the full phi(u), kept inside a shrinking bracket
    (bisection whenever a step would leave it). ``lo`` must not be below T_P.
    """
    Td = design.dead_time
    tau_e = np.asarray(tau_e, dtype=float)
    T_P = optimal_interrogation(tau_e, Td)
    T_m = -Td * tau_e / T_P
    span = np.maximum(hi - T_P, 0.0)
    with np.errstate(divide="ignore"):
        left = np.log(np.maximum(lo - T_P, 1e-15 * T_P))
        right = np.log(np.maximum(span, 1e-300))
    log_q = np.log(q) + np.log(2 / tau_e)
    k2 = b + a * Td
    c0 = 2 * b * Td

    def phi(u):
        e = np.exp(u)
        T = T_P + e
        R = k2 * T + c0
        Rs = np.where(R > 0, R, 1.0)
        grow = np.minimum(2 * T / tau_e, 1e300)
        value = np.where(R > 0, log_q + grow + u + np.log(T - T_m) - np.log(Rs), np.inf)
        slope = e * (2 / tau_e - k2 / Rs + 1 / (T - T_m)) + 1
        return value, slope

    at_hi = ~(phi(right)[0] > 0) | (span <= 0)  # derivative still negative at hi: the optimum is hi
    at_lo = phi(left)[0] >= 0  # already rising at lo (lo above T_P): the optimum is lo
    T_g = 2 * T_P
    K = np.log(np.maximum(k2 * T_g + c0, 1e-300)) - np.log(T_g - T_m) - log_q - 2 * T_P / tau_e
    x = np.clip(_log_plus_linear_root(K + np.log(2 / tau_e)) + np.log(tau_e / 2), left, right)
    for _ in range(iterations):
        value, slope = phi(x)
        up = value > 0
        right = np.where(up, x, right)
        left = np.where(up, left, x)
        step = x - value / slope
        inside = np.isfinite(step) & (step >= left) & (step <= right)
        x = np.where(inside, step, 0.5 * (left + right))
    return np.where(at_hi, hi, np.where(at_lo, lo, np.clip(T_P + np.exp(x), lo, hi)))


def _periodic_wishes(design, kind, f0, linear):
    """Candidate interrogation times for a CPMG-timed kind: the analytic optimum of each read-out
    mode, both sides of the linear/correlated switch, and the ends of the allowed range."""
    from .filters import finite_pulse_factor
    lo = kind.min_pulses() / (2 * f0)
    hi = np.broadcast_to(design.max_interrogation, f0.shape)
    eps = -np.log1p(-kind.pulse_error(design))
    tau_e = 1 / (1 / design.coherence_time + 2 * f0 * eps)
    G0fac = (2 / np.pi) ** 2 * finite_pulse_factor(2 * f0 * design.pi_pulse_duration) ** 2
    U = sum(linear[name][0] for name in noises.STATIONARY_NOISES)
    V = sum(linear[name][1] for name in noises.STATIONARY_NOISES)
    a, b = 2 * U / G0fac, 2 * V / G0fac
    base = 4 / (design.atom_number * (2 * np.pi * design.nu0) ** 2 * G0fac)
    t_qpn = np.clip(optimal_interrogation(tau_e, design.dead_time), lo, hi)
    wishes = []
    if design.comparison in ("linear", "auto"):
        wishes.append(_continuous_optimum(design, t_qpn, hi, a, b, base * design.squeezing, tau_e))
    if design.comparison in ("correlated", "auto"):
        t_guess = wishes[0] if wishes else t_qpn
        kappa = projection.correlation_penalty(np.exp(-t_guess / tau_e))
        wishes.append(_continuous_optimum(design, t_qpn, hi, a, b, base * kappa, tau_e))
    if design.comparison == "auto":
        cm1 = kind.common_mode(design, (), f0, 1.0, 1.0, linear=linear["common"])
        with np.errstate(divide="ignore"):
            t_sw = np.where(cm1 > 0, projection.CORRELATED_THRESHOLD / cm1, hi)
        wishes.append(np.clip(t_sw, lo, hi))
    step = kind.step / (4 * f0)
    out = [lo, hi]
    for w in wishes:
        out += [w - step, w + step]
    return np.stack(np.broadcast_arrays(*out))


def _ramsey_wishes(design, f0):
    """Candidate Ramsey interrogation times: the analytic optimum of projection plus white and
    white-phase noise (|G(f0)| ~ T at low frequency) for each read-out mode, and the range ends;
    ``snap`` moves long ones onto a lobe maximum of |sin(pi f0 T)|."""
    hi = np.broadcast_to(design.max_interrogation, np.shape(f0)).astype(float)
    lo = np.broadcast_to(np.maximum(1e-3 * design.max_interrogation, 2.5 * design.pi_pulse_duration),
                         np.shape(f0)).astype(float)
    tau = np.broadcast_to(design.coherence_time, np.shape(f0)).astype(float)
    a = 0.0
    b = 0.0
    for terms_of in noises.STATIONARY_NOISES.values():
        for term in terms_of(design):
            if term.alpha == 0:
                a = a + term.level * np.where(np.asarray(term.low) > 0, 0.0, 1.0)
            elif term.alpha == 2:
                b = b + 2 * term.level * np.maximum(term.cutoff - term.low, 0.0) / (2 * np.pi**2)
    base = 4 / (design.atom_number * (2 * np.pi * design.nu0) ** 2)
    t_qpn = np.clip(optimal_interrogation(tau, design.dead_time), lo, hi)
    x = np.linspace(0.0, 1.0, _RAMSEY_LADDER).reshape((-1,) + (1,) * np.ndim(f0))
    wishes = list(lo * (hi / lo) ** x) + [t_qpn, 1 / (2 * f0)]
    if design.comparison in ("linear", "auto"):
        wishes.append(_continuous_optimum(design, t_qpn, hi, a, b, base * design.squeezing, tau))
    if design.comparison in ("correlated", "auto"):
        kappa = projection.correlation_penalty(np.exp(-t_qpn / tau))
        wishes.append(_continuous_optimum(design, t_qpn, hi, a, b, base * kappa, tau))
    if design.comparison == "auto":
        cm1 = _RAMSEY.common_mode(design, noises.laser_terms(design), f0, 0.0, 1.0)
        with np.errstate(divide="ignore"):
            wishes.append(np.clip(np.where(cm1 > 0, projection.CORRELATED_THRESHOLD / cm1, hi), lo, hi))
    return np.stack(np.broadcast_arrays(*wishes))


def _best(design, kind, f0):
    """Optimise the interrogation at each tuning f0 (1-D); returns per-f0 arrays and validity."""
    f0 = np.asarray(f0, dtype=float)
    linear = _linear_noise(design, kind, f0) if isinstance(kind, Periodic) else None
    if isinstance(kind, Periodic) and kind.fixed is None:
        wish = _periodic_wishes(design, kind, f0, linear)
    elif kind.dd:  # echo, custom: one sequence per tuning
        wish = (1.0 / (2 * f0))[None]
    else:
        return _best_ramsey(design, kind, f0)
    n, T, valid = _safe(design, kind, f0, *kind.snap(design, f0, wish))
    parts = evaluate(design, kind, f0, n, T, linear)
    score = np.where(valid, _total(parts), np.inf)
    i = np.argmin(score, axis=0)
    best = _pick(parts, i)
    ok = np.isfinite(np.take_along_axis(score, i[None], axis=0)[0])
    return best, ok


def _safe(design, kind, f0, n, T, valid):
    """Replace candidates that are not allowed by harmless ones (they are discarded anyway), so
    that no absurd interrogation is ever evaluated."""
    T_ok = np.minimum(T, design.max_interrogation)
    n_ok = np.where(valid, n, 0.0 if not kind.dd else np.maximum(np.round(2 * f0 * T_ok), 1.0))
    return n_ok, np.where(valid, T, T_ok), valid


def _best_ramsey(design, kind, f0):
    """Ramsey: the best of the analytic candidates and the log-spaced ladder, each with its exact
    aliasing sum; a ladder candidate is evaluated only where its projection noise alone does not
    already lose to the analytic candidates."""
    wish = _ramsey_wishes(design, f0)
    n, T, valid = _safe(design, kind, f0, *kind.snap(design, f0, wish))
    return _best_ramsey_pruned(design, f0, n, T, valid)


def _open_red_noise(design):
    """Whether some nonzero red-noise term needs Ramsey's explicit harmonic sum (no closed form)."""
    return any(term.alpha < 0 and np.any(term.level) and not closed_form_red(term)
               for terms_of in noises.STATIONARY_NOISES.values() for term in terms_of(design))


def _ramsey_projection_of(design, f0, T):
    """A lower bound of the Ramsey S_y,eq of interrogation T at f0: its projection noise with the
    smaller of the two read-out factors (xi^2 or kappa >= 1), with the engine's own contrast clamp."""
    var = projection.phase_variance(design.atom_number, -T / design.coherence_time, np.minimum(design.squeezing, 1.0))
    return _projection_term(design, T + design.dead_time, var, filters.ramsey_filter_modulus(f0, T) ** 2)


def _best_ramsey_pruned(design, f0, n, T, valid):
    """Best Ramsey candidate: evaluate the analytic candidates, then only the ladder candidates
    whose lower bounds (projection noise alone; then the budget without the explicit harmonics)
    do not already lose to them. The others cannot win: the result is the same as evaluating
    them all."""
    k = _RAMSEY_LADDER
    K, F = T.shape
    head = evaluate(design, _RAMSEY, f0, n[k:], T[k:])
    head_score = np.where(valid[k:], _total(head), np.inf)
    best = np.min(head_score, axis=0)
    with np.errstate(divide="ignore", over="ignore"):
        bound = _ramsey_projection_of(design, f0, T[:k])
    alive = valid[:k] & ~(bound > best * (1 + 1e-9))
    ki, pi = np.nonzero(alive)
    if _open_red_noise(design):
        # a second, tighter bound before the explicit harmonic sums: the same budget with only the
        # harmonic nearest zero frequency of each red term that has no closed form
        low = _total(evaluate(design.take(pi, F), _RAMSEY_FLOOR, f0[pi], n[ki, pi], T[ki, pi]))
        keep = ~(low > best[pi] * (1 + 1e-9))
        ki, pi = ki[keep], pi[keep]
    tail = evaluate(design.take(pi, F), _RAMSEY, f0[pi], n[ki, pi], T[ki, pi])
    score = np.full((K, F), np.inf)
    score[k:] = head_score
    score[ki, pi] = _total(tail)
    i = np.argmin(score, axis=0)
    # gather the winner's parts from the analytic block or from the flat list of ladder survivors
    where = np.zeros((k, F), dtype=np.intp)
    where[ki, pi] = np.arange(ki.size)
    point = np.arange(F)
    from_head = i >= k
    hi_row = np.where(from_head, i - k, 0)
    tail_at = where[np.where(from_head, 0, i), point]
    out = {}
    for key, value in head.items():
        value = np.broadcast_to(np.asarray(value), (K - k, F))
        picked = value[hi_row, point]
        if ki.size:
            picked = np.where(from_head, picked, np.asarray(tail[key])[tail_at])
        out[key] = picked
    return out, np.isfinite(score[i, point])


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
    if isinstance(kind, Ramsey):
        return _best(design, kind, f0)
    # a DD sequence exists at f0 exactly when the longest wished interrogation snaps to a valid one
    reach = kind.snap(design, f0, np.broadcast_to(design.max_interrogation, f0.shape))[2]
    if np.all(reach):
        best, ok = _best(design, kind, f0)
    else:
        best, ok = _scatter(_best(design.take(reach, f0.size), kind, f0[reach]), reach)
    # Ramsey cannot win where even a strict lower bound of its projection noise exceeds the DD total
    look = ~ok | (_ramsey_projection_bound(design, f0) < _total(best))
    if not np.any(look):
        return best, ok
    sub = design.take(look, f0.size)
    rb, rok = _best(sub, _RAMSEY, f0[look])
    idx = np.flatnonzero(look)
    take = rok & (~ok[look] | (_total(rb) < _total({k: np.asarray(v)[look] for k, v in best.items()})))
    if np.any(take):
        best = {k: np.array(v) for k, v in best.items()}
        for k in best:
            best[k][idx[take]] = np.asarray(rb[k])[take]
        ok = ok.copy()
        ok[idx[take]] = True
    lost = ~reach & ~ok  # neither kind fits: report the (invalid) DD candidate, as where DD was tried
    if np.any(lost):
        dd, _ = _best(design.take(lost, f0.size), kind, f0[lost])
        for k in best:
            best[k][lost] = np.asarray(dd[k])
    return best, ok


def _scatter(result, mask):
    """Per-point results computed on ``mask`` placed into full-size arrays (NaN / invalid elsewhere)."""
    part, part_ok = result
    out = {}
    for k, v in part.items():
        v = np.asarray(v)
        full = np.full(mask.shape, np.nan if v.dtype.kind == "f" else 0, dtype=v.dtype)
        full[mask] = v
        out[k] = full
    ok = np.zeros(mask.shape, dtype=bool)
    ok[mask] = part_ok
    return out, ok


def _ramsey_projection_bound(design, f0):
    """A strict lower bound of the Ramsey S_y,eq at f0: the projection term 2 Tc sigma^2 /
    ((2 pi nu0)^2 |G|^2) with C = 1, the smallest read-out penalty, and |G|^2 <= min(T^2, 1/(pi f0)^2),
    minimised over T in the allowed range (the other noises only add)."""
    lo = 2 * design.pi_pulse_duration  # the shortest Ramsey interrogation ``snap`` accepts
    hi = design.max_interrogation
    Td = design.dead_time
    w = np.pi * f0
    cross = np.clip(1.0 / w, lo, hi)  # where 1/T^2 meets (pi f0)^2, inside the range
    g = np.maximum((cross + Td) / cross**2, (cross + Td) * w**2)  # the least Tc / |G|^2
    var = projection.phase_variance(design.atom_number, 0.0, np.minimum(design.squeezing, 1.0))
    return _projection_term(design, g, var, 1.0)


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
    return _assemble(design, f, f, _envelope_parts(design, f), "envelope")


def _envelope_parts(design, f):
    """Best sequence at every point, in chunks (design fields may be arrays matching f)."""
    pieces = []
    for start in range(0, f.size, CHUNK):
        part = slice(start, start + CHUNK)
        best, _ = _best_with_fallback(design.take(part, f.size), f[part])
        pieces.append(best)
    return {k: np.concatenate([p[k] for p in pieces]) for k in pieces[0]}


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
