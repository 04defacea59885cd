"""The search for the best sequence at each tuning frequency.

For a CPMG-timed kind the candidates are the analytic optimum of each read-out mode (snapped to
allowed pulse counts, with both neighbours), the switch point between read-out modes and the ends
of the allowed range; for Ramsey, a log-spaced ladder plus the analytic candidates, each ladder
candidate evaluated only where a lower bound does not already lose. :func:`best_sequence` adds the
Ramsey fallback to the mission's own kind."""

from __future__ import annotations

import numpy as np

from ..physics import filters, noises, projection
from ..physics.design import Design
from ..physics.filters import finite_pulse_factor
from ..physics.sequences import SEQUENCES, Ramsey, closed_form_red, optimal_interrogation
from .budget import hertz
from .formula import evaluate, evaluate_free, linear_noise, pick, projection_term, total_psd
from .optimum import continuous_optimum

__all__ = ["optimise", "best_of_kind", "best_sequence", "RAMSEY"]

RAMSEY = SEQUENCES["ramsey"]
#: Ramsey aliasing with only the harmonic nearest zero and no tail: a strict lower bound of the full sum.
RAMSEY_FLOOR = Ramsey(harmonics=0, tail=False)
#: Iterations of the discrete pulse-count descent (each halves the jump or moves).
_DESCENT_STEPS = 64
#: Golden-section steps of the continuous Ramsey refinement (the bracket shrinks by 0.618 each).
_GOLDEN_STEPS = 16
#: Where Ramsey is polished beside a DD result: unpolished Ramsey below this factor times the DD total.
RAMSEY_POLISH = 1.25
#: Log-spaced Ramsey interrogation candidates (the first rows of the Ramsey candidate list).
RAMSEY_LADDER = 24
#: Most steps of the bracketed parabolic search over a free interrogation time (one evaluation each).
FREE_STEPS = 16
#: Its tolerance, a fraction of the first bracket in ln T: a kink of slope 0.1 in ln S then costs
#: about 1e-6 on the widest (one-pulse) bracket.
FREE_XTOL = 1e-5
_GOLD = (3 - np.sqrt(5)) / 2


#: Root of x tan x = 1/2 (the projection-limited optimum under coherent pulse errors).
_COHERENT_X = 0.6532711870944031


def _periodic_wishes(design, kind, f0, linear):
    """Candidate interrogation times for a CPMG-timed kind: the analytic optimum of each read-out
    mode, both sides of the linear/correlated switch, and the ends of the allowed range."""

    lo = kind.min_pulses() / (2 * f0)
    hi = np.broadcast_to(design.max_interrogation, f0.shape)
    eps = -np.log1p(-kind.pulse_error(design))
    tau_e = 1 / (1 / design.coherence_time + 2 * f0 * eps)
    G0fac = (2 / np.pi) ** 2 * finite_pulse_factor(2 * f0 * design.pi_pulse_duration) ** 2
    U = sum(linear[name][0] for name in noises.stationary_noises())
    V = sum(linear[name][1] for name in noises.stationary_noises())
    a, b = 2 * U / G0fac, 2 * V / G0fac
    base = 4 / (design.atom_number * (2 * np.pi * design.nu0) ** 2 * G0fac)
    t_qpn = np.clip(optimal_interrogation(tau_e, design.dead_time), lo, hi)
    wishes = []
    if design.comparison in ("linear", "auto"):
        wishes.append(continuous_optimum(design, t_qpn, hi, a, b, base * design.squeezing, tau_e))
    if design.comparison in ("correlated", "auto"):
        t_guess = wishes[0] if wishes else t_qpn
        kappa = projection.correlation_penalty(np.exp(-t_guess / tau_e))
        wishes.append(continuous_optimum(design, t_qpn, hi, a, b, base * kappa, tau_e))
    if design.comparison == "auto":
        cm1 = kind.common_mode(design, (), f0, 1.0, 1.0, linear=linear["common"])
        with np.errstate(divide="ignore"):
            t_sw = np.where(cm1 > 0, projection.CORRELATED_THRESHOLD / cm1, hi)
        wishes.append(np.clip(t_sw, lo, hi))
    if design.pulse_errors == "coherent":
        # coherent pulse errors: contrast cos(n beta_1), n = 2 f0 T. Projection-limited, S ~ 1/(T cos^2(k T))
        # with k = 2 f0 beta_1 is least at x tan x = 1/2, x = k T = 0.6533 (the incoherent wishes above
        # overshoot into trains whose contrast is gone)
        beta = np.arccos(1.0 - kind.pulse_error(design))
        with np.errstate(divide="ignore"):
            t_coh = np.where(beta > 0, _COHERENT_X / (2 * f0 * np.maximum(beta, 1e-300)), hi)
        wishes.append(np.clip(t_coh, lo, hi))
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
    lo = np.broadcast_to(_ramsey_floor(design), np.shape(f0)).astype(float)
    tau = np.broadcast_to(design.coherence_time, np.shape(f0)).astype(float)
    a = 0.0
    b = 0.0
    for terms_of in noises.stationary_noises().values():
        for term in terms_of(design):
            if term.alpha == 0:
                a = a + term.level * np.where(np.asarray(term.low) > 0, 0.0, 1.0)
            elif term.alpha == 2:
                b = b + 2 * term.level * np.maximum(term.cutoff - term.low, 0.0) / (2 * np.pi**2)
    base = 4 / (design.atom_number * (2 * np.pi * design.nu0) ** 2)
    t_qpn = np.clip(optimal_interrogation(tau, design.dead_time), lo, hi)
    x = np.linspace(0.0, 1.0, RAMSEY_LADDER).reshape((-1,) + (1,) * np.ndim(f0))
    wishes = list(lo * (hi / lo) ** x) + [t_qpn, 1 / (2 * f0)]
    if design.comparison in ("linear", "auto"):
        wishes.append(continuous_optimum(design, t_qpn, hi, a, b, base * design.squeezing, tau))
    if design.comparison in ("correlated", "auto"):
        kappa = projection.correlation_penalty(np.exp(-t_qpn / tau))
        wishes.append(continuous_optimum(design, t_qpn, hi, a, b, base * kappa, tau))
    if design.comparison == "auto":
        # the read-out switches where the common-mode phase crosses the threshold: the budget jumps
        # there, so the interrogation just below the switch is a candidate of its own
        t_sw = _ramsey_switch(design, f0, lo, hi)
        wishes += [t_sw * (1 - 1e-9), np.minimum(t_sw * (1 + 1e-9), hi)]
    return np.stack(np.broadcast_arrays(*wishes))


def _ramsey_switch(design, f0, lo, hi, steps=60):
    """Interrogation time where the Ramsey common-mode laser phase reaches the correlated read-out
    threshold (it grows monotonically with T: white FM as T, flicker FM as T^2 ln T), by bisection
    in ln T; ``hi`` where it never does, ``lo`` where it always does."""
    terms = noises.laser_terms(design)

    def over(T):
        return RAMSEY.common_mode(design, terms, f0, 0.0, T) > projection.CORRELATED_THRESHOLD

    a, b = np.log(lo), np.log(hi)
    never, always = ~over(hi), over(lo)
    for _ in range(steps):
        m = 0.5 * (a + b)
        up = over(np.exp(m))
        a, b = np.where(up, a, m), np.where(up, m, b)
    return np.where(never, hi, np.where(always, lo, np.exp(a)))


def best_of_kind(design, kind, f0, locked=False):
    """Optimise the interrogation at each tuning f0 (1-D); returns per-f0 arrays and validity.
    ``locked`` keeps a DD sequence locked to f0 (T = n/(2 f0) for CPMG timing)."""
    f0 = np.asarray(f0, dtype=float)
    linear = linear_noise(design, kind, f0) if kind.linear_in_interrogation else None
    if kind.search == "pulses":
        wish = _periodic_wishes(design, kind, f0, linear)
    elif kind.search == "single":  # echo, custom: one sequence per tuning
        wish = (1.0 / (2 * f0))[None]
    else:
        return _best_ramsey(design, kind, f0)
    n, T, valid = _safe(design, kind, f0, *kind.snap(design, f0, wish))
    parts = evaluate(design, kind, f0, n, T, linear)
    score = np.where(valid, total_psd(parts), np.inf)
    i = np.argmin(score, axis=0)
    best = pick(parts, i)
    ok = np.isfinite(np.take_along_axis(score, i[None], axis=0)[0])
    if kind.search == "pulses":
        best = _descend(design, kind, f0, linear, best, ok)
    if locked:
        return best, ok
    return _free_interrogation(design, kind, f0, best, ok), ok


def _bracket_search(x_lo, x_mid, x_hi, objective, steps=FREE_STEPS, xtol=FREE_XTOL):
    """Minimise ``objective(x, idx)`` on [x_lo, x_hi] at many points at once by Brent's method
    (Brent 1973, Algorithms for Minimization without Derivatives, ch. 5): parabolic interpolation
    through the three best points, a golden-section step where the parabola leaves the bracket or
    does not shrink fast enough, never a step below the tolerance. The three given points seed it.
    A point stops once its bracket is within ``xtol`` times its first width of its best point
    (Brent's test), so that
    smooth minima cost a few evaluations and only kinks take all ``steps``. ``objective`` gets
    the trial x of the points ``idx`` still running, returns one score each and keeps the best
    sequence itself."""
    pts = [np.array(v, dtype=float) for v in (x_lo, x_mid, x_hi)]
    every = np.arange(pts[0].size)
    vals = [objective(v, every) for v in pts]
    a, b = pts[0].copy(), pts[2].copy()
    order = np.argsort(np.stack(vals), axis=0, kind="stable")
    P, V = np.stack(pts), np.stack(vals)
    x, w, v = (np.take_along_axis(P, order[i][None], 0)[0] for i in range(3))
    fx, fw, fv = (np.take_along_axis(V, order[i][None], 0)[0] for i in range(3))
    d = np.zeros_like(x)
    e = b - a  # lets the first step be parabolic
    scale = xtol * (b - a) + 1e-300  # the tolerance scales with the bracket: the response of n pulses narrows as 1/n
    live = every
    for _ in range(steps):
        tol1 = scale[live]
        m = 0.5 * (a[live] + b[live])
        running = np.abs(x[live] - m) > 2 * tol1 - 0.5 * (b[live] - a[live])
        live, tol1, m = live[running], tol1[running], m[running]
        if live.size == 0:
            break
        xl, wl, vl, al, bl = x[live], w[live], v[live], a[live], b[live]
        fxl, fwl, fvl, el, dl = fx[live], fw[live], fv[live], e[live], d[live]
        r = (xl - wl) * (fxl - fvl)
        q = (xl - vl) * (fxl - fwl)
        p = (xl - vl) * q - (xl - wl) * r
        q = 2 * (q - r)
        p = np.where(q > 0, -p, p)
        q = np.abs(q)
        with np.errstate(divide="ignore", invalid="ignore"):
            step = p / q
        parabolic = (np.abs(el) > tol1) & np.isfinite(step) & (np.abs(p) < np.abs(0.5 * q * el)) \
            & (p > q * (al - xl)) & (p < q * (bl - xl))
        u = xl + step
        near_edge = (u - al < 2 * tol1) | (bl - u < 2 * tol1)
        step = np.where(parabolic & near_edge, np.where(m > xl, tol1, -tol1), step)
        e_gold = np.where(xl >= m, al - xl, bl - xl)
        e[live] = np.where(parabolic, dl, e_gold)
        dl = np.where(parabolic, step, _GOLD * e_gold)
        d[live] = dl
        u = xl + np.where(np.abs(dl) >= tol1, dl, np.where(dl >= 0, tol1, -tol1))
        fu = objective(u, live)
        fu = np.where(np.isnan(fu), np.inf, fu)
        better = fu <= fxl
        a[live] = np.where(better, np.where(u >= xl, xl, al), np.where(u < xl, u, al))
        b[live] = np.where(better, np.where(u >= xl, bl, xl), np.where(u < xl, bl, u))
        second = ~better & ((fu <= fwl) | (wl == xl))
        third = ~better & ~second & ((fu <= fvl) | (vl == xl) | (vl == wl))
        v[live] = np.where(better | second, wl, np.where(third, u, vl))
        fv[live] = np.where(better | second, fwl, np.where(third, fu, fvl))
        w[live] = np.where(better, xl, np.where(second, u, wl))
        fw[live] = np.where(better, fxl, np.where(second, fu, fwl))
        x[live] = np.where(better, u, xl)
        fx[live] = np.where(better, fu, fxl)


def _free_interrogation(design, kind, f, best, ok):
    """The DD optimum with the interrogation free: for the winning pulse count, the shortest
    trains and, by a discrete descent, the winner's neighbours, T is searched continuously around
    n/(2f) (the response of a short train peaks away from it: a spin echo's |G(f)| is largest at
    T = 1/f, twice the locked T). The bracket is ``r = 2 f T / n`` in [1 - 1/n, 1 + 2.5/n^2]
    ([0.1, 2.5] for one pulse): |G| of n pulses at fixed f is largest at ``r ~ 1 + 2/n^2`` and
    the noise a cycle carries grows with T, so the optimum lies below that peak; at r = 1 - 1/n
    the count n - 1 is locked to f. Where the automatic read-out switches inside a bracket the
    budget jumps, and each side is searched on its own. A count is searched only where a strict
    lower bound of its projection noise does not already lose."""
    best = {k: np.array(np.broadcast_to(v, f.shape)) for k, v in best.items()}
    score = np.where(ok, total_psd(best), np.inf)
    locked = getattr(kind, "tuning", None) is not None
    T_best = np.asarray(best["interrogation"], dtype=float).copy()
    hi_T = np.broadcast_to(design.max_interrogation, f.shape) * (1 + 1e-12)

    def attempt(idx, n_c):
        before = score[idx].copy()
        fi = f[idx]
        sub = design.take(idx, f.size)
        mid = n_c / (2 * fi) if locked else T_best[idx]
        one = n_c <= 1
        lo = mid * np.where(one, 0.1, 1 - 1 / np.maximum(n_c, 1))
        hi = mid * np.where(one, 2.5, 1 + 2.5 / np.maximum(n_c, 1) ** 2)
        lo = np.maximum(lo, kind.shortest(sub, n_c) * (1 + 1e-9))
        hi = np.minimum(hi, hi_T[idx])
        with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
            room = (lo < hi) & ~(_projection_bound(sub, fi, lo, hi, n_c) > before)
        j = np.flatnonzero(room)
        if j.size == 0:
            return np.zeros(idx.size, dtype=bool)
        pts, sub, nj, lo, hi = idx[j], sub.take(j, idx.size), n_c[j], lo[j], hi[j]
        mid = np.clip(mid[j], lo, hi)
        pieces = [(np.arange(j.size), lo, mid, hi)]
        if design.comparison == "auto":
            t_sw = _free_switch(sub, kind, f[pts], nj, lo, hi)
            split = (t_sw > lo) & (t_sw < hi)
            if np.any(split):
                s = np.flatnonzero(split)
                below, above = t_sw[s] * (1 - 1e-9), t_sw[s] * (1 + 1e-9)
                pieces = [(np.flatnonzero(~split), lo[~split], mid[~split], hi[~split]),
                          (s, lo[s], np.sqrt(lo[s] * below), below),
                          (s, above, np.sqrt(above * hi[s]), hi[s])]
        for which, a, m, b in pieces:
            if which.size == 0:
                continue
            p, dsub, n_p = pts[which], sub.take(which, j.size), nj[which]

            def objective(x, live, p=p, dsub=dsub, n_p=n_p):
                q = p[live]
                T = np.minimum(np.exp(x), hi_T[q])
                parts = evaluate_free(dsub.take(live, p.size), kind, f[q], n_p[live], T)
                return _log_kept(best, score, q, parts, total_psd(parts))

            _bracket_search(np.log(a), np.log(m), np.log(b), objective)
        return score[idx] < before * (1 - 1e-15)

    active = ok & np.isfinite(score)
    n = np.asarray(best["pulses"], dtype=float).copy()
    if not np.any(active):
        return best
    attempt(np.flatnonzero(active), n[active])
    if kind.search == "pulses":
        step = float(kind.step)
        n_min = float(kind.min_pulses())
        # the shortest trains: a spin echo's broad response can beat every longer count
        for c in (n_min, n_min + step):
            idx = np.flatnonzero(active & (n != c))
            if idx.size:
                attempt(idx, np.full(idx.size, c))
        n = np.asarray(best["pulses"], dtype=float).copy()
        n_max = np.floor((2 * f * design.max_interrogation + 1) / step) * step
        # jumps of two counts first: the free optimum alternates between odd and even counts
        jump = np.full(f.shape, 2 * step)
        _integer_descent(n, n_min, n_max, jump, step, active, attempt)
    return best


def _free_switch(design, kind, f, n, lo, hi, steps=40):
    """Interrogation in [lo, hi] where the common-mode laser phase of n pulses (T free) reaches
    the correlated read-out threshold, by bisection in ln T (it grows with T); NaN where the
    bracket does not straddle it."""
    terms = noises.laser_terms(design)
    tuning = getattr(kind, "tuning", None)

    def over(T):
        fs = tuning(n, T) if tuning is not None else f
        return kind.common_mode(design, terms, fs, n, T) > projection.CORRELATED_THRESHOLD

    out = np.full(np.shape(lo), np.nan)
    straddle = np.flatnonzero(~over(lo) & over(hi))
    if straddle.size == 0:
        return out
    size = out.size
    # the closure reads these names: the bisection runs on the straddling points only
    design, f, n = design.take(straddle, size), np.asarray(f)[straddle], np.asarray(n)[straddle]
    terms = noises.laser_terms(design)
    a, b = np.log(lo[straddle]), np.log(hi[straddle])
    for _ in range(steps):
        m = 0.5 * (a + b)
        up = over(np.exp(m))
        a, b = np.where(up, a, m), np.where(up, m, b)
    out[straddle] = np.exp(b)
    return out


def _projection_bound(design, f, lo, hi, n):
    """A strict lower bound of S_y,eq over sequences of n pi pulses (0: Ramsey) with T in [lo, hi]
    at f: the projection term with C = 1, the smallest read-out factor and |G(f)| <= min(T,
    (n + 1)/(pi f)) (each of the n + 1 pieces of constant sign adds at most 2/(2 pi f)); the
    other noises only add."""
    Td = design.dead_time
    cap = (np.asarray(n, dtype=float) + 1) / (np.pi * f)
    T = np.clip(cap, lo, hi)  # (T + Td) / min(T, cap)^2 is least where T meets the cap
    g = (T + Td) / np.minimum(T, cap) ** 2
    var = projection.phase_variance(design.atom_number, 0.0, np.minimum(design.squeezing, 1.0))
    return projection_term(design, g, var, 1.0)


def _integer_descent(x, lo, hi, jump, unit, active, attempt):
    """Minimise over a lattice ``x in [lo, hi]`` (spacing ``unit``) at every active point at once:
    try x +- jump, move where ``attempt(idx, candidates)`` reports an improvement (it keeps the
    winners itself and returns the improved mask), halve the jump where neither side improves,
    stop below one unit or after ``_DESCENT_STEPS`` rounds."""
    for _ in range(_DESCENT_STEPS):
        if not np.any(active):
            break
        moved = np.zeros(x.shape, dtype=bool)
        for sign in (1.0, -1.0):
            cand = x + sign * jump
            idx = np.flatnonzero(active & ~moved & (cand >= lo) & (cand <= hi))
            if idx.size == 0:
                continue
            win = idx[attempt(idx, cand[idx])]
            x[win] = cand[win]
            moved[win] = True
        jump = np.where(moved, jump, np.floor(jump / (2 * unit)) * unit)
        active = active & (jump >= unit)
    return x


def _descend(design, kind, f0, linear, best, ok):
    """Discrete descent over the pulse count from the best candidate. The analytic optimum uses a
    fixed read-out penalty and a smooth model of the noise integrals, so the best count can lie a
    few steps away; the descent finds the local minimum of the exact budget."""
    step = float(kind.step)
    n_min = float(kind.min_pulses())
    n_max = np.floor(2 * f0 * design.max_interrogation * (1 + 1e-12) / step) * step
    n = np.asarray(best["pulses"], dtype=float).copy()
    score = np.where(ok, total_psd(best), np.inf)
    best = {k: np.array(np.broadcast_to(v, f0.shape)) for k, v in best.items()}

    def attempt(idx, cand):
        lin = None if linear is None else {k: tuple(np.asarray(c)[idx] if np.ndim(c) else c for c in v)
                                           for k, v in linear.items()}
        trial = evaluate(design.take(idx, f0.size), kind, f0[idx], cand, cand / (2 * f0[idx]), lin)
        return _keep_better(best, score, idx, trial)

    jump = np.maximum(np.round(0.04 * n / step), 1.0) * step
    _integer_descent(n, n_min, n_max, jump, step, ok & (n_max > n_min), attempt)
    return best


def _log_kept(best, score, idx, parts, total):
    """Keep the trial where it wins (:func:`_keep_better`) and return ln of its total, the score
    a bracket search minimises (parabolas fit the log of a budget spanning decades better)."""
    total = np.where(np.isfinite(total), total, np.inf)
    _keep_better(best, score, idx, parts, total)
    with np.errstate(divide="ignore"):
        return np.log(total)


def _keep_better(best, score, idx, trial, t_score=None):
    """Put the trial's parts into ``best`` where its total (``t_score``, computed when not given)
    beats ``score`` (both updated in place); returns the improved mask over ``idx``."""
    t_score = total_psd(trial) if t_score is None else t_score
    better = t_score < score[idx]
    win = idx[better]
    score[win] = t_score[better]
    for k in best:
        best[k][win] = np.asarray(np.broadcast_to(trial[k], idx.shape))[better]
    return better


def _safe(design, kind, f0, n, T, valid):
    """Replace candidates that are not allowed by harmless ones (they are discarded anyway), so
    that no absurd interrogation is ever evaluated."""
    T_ok = np.minimum(T, design.max_interrogation)
    n_ok = np.where(valid, n, 0.0 if not kind.dd else np.maximum(np.round(2 * f0 * T_ok), 1.0))
    return n_ok, np.where(valid, T, T_ok), valid


def _best_ramsey(design, kind, f0, refine=True):
    """Ramsey: the best of the analytic candidates and the log-spaced ladder, each with its exact
    aliasing sum; a ladder candidate is evaluated only where its projection noise alone does not
    already lose to the analytic candidates."""
    wish = _ramsey_wishes(design, f0)
    n, T, valid = _safe(design, kind, f0, *kind.snap(design, f0, wish))
    best, ok = _best_ramsey_pruned(design, f0, n, T, valid)
    return (_refine_ramsey(design, f0, best, ok) if refine else best), ok


def _ramsey_floor(design):
    """The shortest Ramsey interrogation ``snap`` accepts (just above two pi pulses), s."""
    return 2 * design.pi_pulse_duration * (1 + 1e-9)


def _refine_ramsey(design, f0, best, ok):
    """Polish the best Ramsey candidate on the exact budget. Below the first lobe maximum
    (f0 T <= 1/2) T is continuous: a golden-section search in ln T over the ladder cell around the
    candidate. Beyond it a discrete descent over the lobe maxima (k + 1/2)/f0, then T continuous
    over the middle of the winning lobe."""
    best = {k: np.array(np.broadcast_to(v, f0.shape), dtype=float) for k, v in best.items()}
    T0 = best["interrogation"]
    score = np.where(ok, total_psd(best), np.inf)
    lo_T = np.broadcast_to(_ramsey_floor(design), f0.shape)
    hi_T = np.broadcast_to(design.max_interrogation, f0.shape)
    cell = (hi_T / lo_T) ** (1.0 / (RAMSEY_LADDER - 1))

    def trial(idx, T):
        sub = design.take(idx, f0.size)
        parts = evaluate(sub, RAMSEY, f0[idx], np.zeros(idx.size), T)
        return parts, total_psd(parts)

    smooth = ok & (f0 * T0 <= 0.5 * (1 + 1e-9))
    idx = np.flatnonzero(smooth)
    if idx.size:
        a = np.log(np.maximum(T0[idx] / cell[idx], lo_T[idx]))
        b = np.log(np.minimum(np.minimum(T0[idx] * cell[idx], 0.5 / f0[idx]), hi_T[idx]))
        g = (np.sqrt(5) - 1) / 2
        x1, x2 = b - g * (b - a), a + g * (b - a)
        p1, s1 = trial(idx, np.exp(x1))
        p2, s2 = trial(idx, np.exp(x2))
        _keep_better(best, score, idx, p1, s1)
        _keep_better(best, score, idx, p2, s2)
        for _ in range(_GOLDEN_STEPS):
            left = s1 < s2  # the minimum lies in [a, x2]
            b = np.where(left, x2, b)
            a = np.where(left, a, x1)
            x2n = np.where(left, x1, a + g * (b - a))
            x1n = np.where(left, b - g * (b - a), x2)
            s_keep = np.where(left, s1, s2)
            new = np.where(left, x1n, x2n)
            pn, sn = trial(idx, np.exp(new))
            _keep_better(best, score, idx, pn, sn)
            x1, x2 = x1n, x2n
            s1, s2 = np.where(left, sn, s_keep), np.where(left, s_keep, sn)
    lobed = ok & ~smooth
    # the shortest interrogation is allowed as it is, between lobe maxima or not
    idx = np.flatnonzero(lobed & (f0 * lo_T > 0.5))
    if idx.size:
        _keep_better(best, score, idx, *trial(idx, lo_T[idx]))
    if np.any(lobed):
        k = np.round(f0 * T0 - 0.5)
        k_max = np.floor(f0 * hi_T - 0.5)
        k_min = np.maximum(np.ceil(f0 * lo_T - 0.5), 0.0)  # no lobe maximum shorter than two pi pulses

        def attempt(idx, cand):
            return _keep_better(best, score, idx, *trial(idx, (cand + 0.5) / f0[idx]))

        jump = np.maximum(np.round(0.04 * k), 1.0)
        _integer_descent(k, k_min, k_max, jump, 1.0, lobed & (k_max > k_min), attempt)
        # the noise a cycle carries grows with T, so the optimum lies a little short of the lobe
        # maximum: T continuous over the middle of the winning lobe
        idx = np.flatnonzero(lobed)
        T1 = best["interrogation"][idx]
        fi = f0[idx]
        k = np.maximum(np.round(fi * T1 - 0.5), 0.0)
        a = np.maximum((k + 0.2) / fi, lo_T[idx])
        b = np.minimum((k + 0.8) / fi, hi_T[idx])
        room = a < b
        idx, a, b, T1 = idx[room], a[room], b[room], T1[room]
        if idx.size:
            def objective(x, live, idx=idx):
                q = idx[live]
                return _log_kept(best, score, q, *trial(q, np.exp(x)))

            _bracket_search(np.log(a), np.log(np.clip(T1, a, b)), np.log(b), objective)
    return best


def _open_red_noise(design):
    """Whether some nonzero red-noise term needs Ramsey's explicit harmonic sum (no closed form)."""
    return any(term.alpha < 0 and np.any(term.level) and not closed_form_red(term)
               for terms_of in noises.stationary_noises().values() for term in terms_of(design))


def _ramsey_projection_of(design, f0, T):
    """A lower bound of the Ramsey S_y,eq of interrogation T at f0: its projection noise with the
    smaller of the two read-out factors (xi^2 or kappa >= 1), with the engine's own contrast clamp."""
    var = projection.phase_variance(design.atom_number, -T / design.coherence_time, np.minimum(design.squeezing, 1.0))
    return projection_term(design, T + design.dead_time, var, filters.ramsey_filter_modulus(f0, T) ** 2)


def _best_ramsey_pruned(design, f0, n, T, valid):
    """Best Ramsey candidate: evaluate the analytic candidates, then only the ladder candidates
    whose lower bounds (projection noise alone; then the budget without the explicit harmonics)
    do not already lose to them. The others cannot win: the result is the same as evaluating
    them all."""
    k = RAMSEY_LADDER
    K, F = T.shape
    head = evaluate(design, RAMSEY, f0, n[k:], T[k:])
    head_score = np.where(valid[k:], total_psd(head), np.inf)
    best = np.min(head_score, axis=0)
    with np.errstate(divide="ignore", over="ignore"):
        bound = _ramsey_projection_of(design, f0, T[:k])
    alive = valid[:k] & ~(bound > best * (1 + 1e-9))
    ki, pi = np.nonzero(alive)
    if _open_red_noise(design):
        # a second, tighter bound before the explicit harmonic sums: the same budget with only the
        # harmonic nearest zero frequency of each red term that has no closed form
        low = total_psd(evaluate(design.take(pi, F), RAMSEY_FLOOR, f0[pi], n[ki, pi], T[ki, pi]))
        keep = ~(low > best[pi] * (1 + 1e-9))
        ki, pi = ki[keep], pi[keep]
    tail = evaluate(design.take(pi, F), RAMSEY, f0[pi], n[ki, pi], T[ki, pi])
    score = np.full((K, F), np.inf)
    score[k:] = head_score
    score[ki, pi] = total_psd(tail)
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


def optimise(design: Design, f0, kind: str | None = None, locked: bool = False):
    """Best sequence of one kind at each tuning f0 (no Ramsey fallback).

    Parameters
    ----------
    design : Design
    f0 : array_like
        Tuning frequencies in Hz (1-D).
    kind : str, optional
        Sequence kind (default: the mission's).
    locked : bool, optional
        Keep a DD sequence's timing locked to f0 (CPMG timing T = n/(2 f0)) instead of the free
        interrogation the envelope uses.

    Returns
    -------
    (dict, ndarray of bool)
        Per-f0 arrays as from :func:`evaluate` for the chosen sequence, and whether any
        sequence of that kind reaches f0.
    """
    return best_of_kind(design, SEQUENCES[kind or design.kind], np.atleast_1d(hertz(f0)), locked)


def best_sequence(design, f0):
    """Best sequence at each f0: the mission's kind, or Ramsey where no DD sequence fits or
    where Ramsey does better (at low frequency, and where pulse leakage of white phase noise
    outweighs the longer DD interrogation)."""
    kind = SEQUENCES[design.kind]
    if not kind.dd:
        return best_of_kind(design, kind, f0)
    # a DD sequence exists at f0 exactly when the longest wished interrogation snaps to a valid one
    reach = kind.snap(design, f0, np.broadcast_to(design.max_interrogation, f0.shape))[2]
    if np.all(reach):
        best, ok = best_of_kind(design, kind, f0)
    else:
        best, ok = _scatter(best_of_kind(design.take(reach, f0.size), kind, f0[reach]), reach)
    # Ramsey cannot win where even a strict lower bound of its projection noise exceeds the DD total
    look = ~ok | (_ramsey_projection_bound(design, f0) < total_psd(best))
    if not np.any(look):
        return best, ok
    sub = design.take(look, f0.size)
    fl = f0[look]
    rb, rok = _best_ramsey(sub, RAMSEY, fl, refine=False)
    # polishing gains a few per cent at most (the ladder cells are a factor ~1.5 wide and the budget
    # is flat near its minimum): polish only where the unpolished Ramsey comes within RAMSEY_POLISH of DD
    dd_look = np.where(ok[look], total_psd({k: np.asarray(v)[look] for k, v in best.items()}), np.inf)
    near = rok & (total_psd(rb) < RAMSEY_POLISH * dd_look)
    if np.any(near):
        j = np.flatnonzero(near)
        polished = _refine_ramsey(sub.take(j, fl.size), fl[j], {k: np.asarray(v)[j] for k, v in rb.items()},
                                  np.ones(j.size, dtype=bool))
        rb = {k: np.array(np.broadcast_to(v, fl.shape), dtype=float) for k, v in rb.items()}
        for k in rb:
            rb[k][j] = polished[k]
    idx = np.flatnonzero(look)
    take = rok & (~ok[look] | (total_psd(rb) < total_psd({k: np.asarray(v)[look] for k, v in best.items()})))
    if np.any(take):
        best = {k: np.array(v) for k, v in best.items()}
        for k in best:
            best[k][idx[take]] = np.asarray(rb[k])[take]
        ok = ok.copy()
        ok[idx[take]] = True
    lost = ~reach & ~ok  # neither kind fits: report the (invalid) DD candidate, as where DD was tried
    if np.any(lost):
        dd, _ = best_of_kind(design.take(lost, f0.size), kind, f0[lost])
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
    """A strict lower bound of the Ramsey S_y,eq at f0 over the allowed interrogations (see
    :func:`_projection_bound` with no pi pulse)."""
    return _projection_bound(design, f0, 2 * design.pi_pulse_duration, design.max_interrogation, 0.0)
