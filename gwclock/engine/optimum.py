"""The continuous optimum of the interrogation time: a safeguarded Newton root of a smooth cost."""

from __future__ import annotations

import numpy as np

from ..physics.sequences import optimal_interrogation

__all__ = ["continuous_optimum", "log_plus_linear_root", "NEWTON_STEPS"]

#: Safeguarded Newton steps for the continuous interrogation optimum.
NEWTON_STEPS = 4


def log_plus_linear_root(L, steps=3):
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


def continuous_optimum(design, lo, hi, a, b, q, tau_e, iterations=NEWTON_STEPS):
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
    x = np.clip(log_plus_linear_root(K + np.log(2 / tau_e)) + np.log(tau_e / 2), left, right)
    for _ in range(iterations):
        value, slope = phi(x)
        up = value > 0
        right = np.where(up, x, right)
        left = np.where(up, left, x)
        step = x - value / slope
        inside = np.isfinite(step) & (step >= left) & (step <= right)
        x = np.where(inside, step, 0.5 * (left + right))
    return np.where(at_hi, hi, np.where(at_lo, lo, np.clip(T_P + np.exp(x), lo, hi)))
