"""Closed-form integrals shared by the sequence kinds."""

from __future__ import annotations

import numpy as np

__all__ = ["optimal_interrogation", "power_integral", "int_power"]


def optimal_interrogation(coherence, dead_time):
    """T minimising ``(T + T_d) exp(2T/tau) / T^2``: the projection-limited optimum.

    ``((tau - 2 T_d) + sqrt((tau - 2 T_d)^2 + 16 tau T_d)) / 4``; tau/2 without dead time.
    """
    tau = np.asarray(coherence, dtype=float)
    b = tau - 2 * dead_time
    return (b + np.sqrt(b**2 + 16 * tau * dead_time)) / 4


def power_integral(alpha, lo, hi):
    """integral_lo^hi f^(alpha-2) df, hi may be inf for alpha < 1; zero when hi <= lo."""
    lo = np.asarray(lo, dtype=float)
    hi = np.asarray(hi, dtype=float)
    ok = hi > lo
    if alpha == 1:
        return np.where(ok, np.log(np.where(ok, hi, 2 * lo) / lo), 0.0)
    e = alpha - 1
    with np.errstate(over="ignore"):
        if hi.ndim == 0:  # the usual case: one cutoff (often infinite) for every point
            top = float(hi) ** e if np.isfinite(hi) and hi > 0 else 0.0  # hi <= 0 gives zero below
        else:
            hi_s = np.where(ok, hi, 2 * lo)
            top = np.where(np.isfinite(hi_s), int_power(hi_s, e), 0.0)
        val = (top - int_power(lo, e)) / e
    return np.where(ok, val, 0.0)


def int_power(x, alpha):
    """x**alpha for a whole alpha by repeated products (cheaper than a float power)."""
    if alpha == 0:
        return np.ones_like(x)
    base = x if alpha > 0 else 1.0 / x
    out = base
    for _ in range(abs(int(alpha)) - 1):
        out = out * base
    return out
