"""Noise budget of given sequences: one evaluation of the master formula.

For a tuning frequency f0 the clock pair returns one number per cycle; the equivalent
fractional-frequency PSD is::

    S_y,eq(f0) = 2 Tc sigma_phi^2 / ((2 pi nu0)^2 |G(f0)|^2)
               + sum_m S_y,stat(|f0 + m/Tc|) |G(f0 + m/Tc)|^2 / |G(f0)|^2

(Dick 1987, Proc. 19th PTTI, 133, for the aliasing sum; Itano et al. 1993, Phys. Rev. A 47,
3554, for the projection noise; from memory.) The strain PSD is ``S_n = S_y,eq / R_y(f0)``."""

from __future__ import annotations

import numpy as np

from ..physics import filters, noises, projection, response
from ..physics.design import Design
from .budget import hertz

__all__ = ["evaluate", "evaluate_free", "linear_noise", "pulse_log_contrast", "projection_term", "total_psd", "pick", "signal_response"]


def linear_noise(design, kind, f0):
    """For a kind whose noise integrals are linear in T (CPMG timing): per stationary noise the
    (slope, edge) of ``sum_terms integral S |G|^2 df = slope * T + edge`` at each f0, and the same
    for the shared laser's common mode (key ``"common"``), computed once per tuning."""
    out = {}
    groups = dict(noises.stationary_noises(), common=noises.laser_terms)
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
    :func:`linear_noise` (same f0) to skip recomputing them. Returns a dict with the equivalent
    fractional-frequency PSD of every noise (``noises.NOISES`` keys, 1/Hz), ``log_contrast``,
    ``correlated`` and ``cycle``.
    """
    f0, n, T = (np.asarray(v, dtype=float) for v in (f0, n, T))
    with filters.coefficient_cache():  # the noises share power-law terms: their harmonic sums once
        return _evaluate(design, kind, f0, n, T, linear)


def _evaluate(design, kind, f0, n, T, linear):
    shape = np.broadcast(f0, n, T).shape
    n, T = np.broadcast_to(n, shape), np.broadcast_to(T, shape)
    Tc = T + design.dead_time
    log_c = -T / design.coherence_time + pulse_log_contrast(design, kind, n)
    G0sq = kind.fundamental(design, f0, n, T) ** 2
    if design.comparison == "auto":
        if linear is None:
            cm = kind.common_mode(design, noises.laser_terms(design), f0, n, T)
        else:
            cm = kind.common_mode(design, (), f0, n, T, linear=linear["common"])
        correlated = cm > projection.CORRELATED_THRESHOLD
    else:
        correlated = np.full(shape, design.comparison == "correlated")
    var = projection.phase_variance(design.atom_number, log_c, design.squeezing, correlated,
                                    offset=design.phase_offset)
    inv_G0sq = 1.0 / G0sq
    out = {"projection": projection_term(design, Tc, var, G0sq)}
    for name, terms_of in noises.stationary_noises().items():
        if linear is not None:
            out[name] = kind.aliased(design, (), f0, n, T, Tc, linear=linear[name]) * inv_G0sq
            continue
        terms = terms_of(design)
        out[name] = kind.aliased(design, terms, f0, n, T, Tc) * inv_G0sq if terms else np.zeros(shape)
    out = {k: np.broadcast_to(v, shape) for k, v in out.items()}
    out.update(log_contrast=np.broadcast_to(log_c, shape), correlated=np.broadcast_to(correlated, shape),
               cycle=Tc, pulses=n, interrogation=T)
    return out

def evaluate_free(design: Design, kind, f, n, T):
    """Noise budget of sequences (n pulses, interrogation T) at signal frequency f, the
    interrogation free (not locked to the tuning). A kind whose noise integrals are built on its
    own tuning (``kind.tuning(n, T)``, CPMG timing) is evaluated there and every noise is moved to
    f by ``|G(f_s)|^2 / |G(f)|^2``: the noise a cycle carries does not depend on the signal, only
    the response does. Other kinds (Ramsey, custom timings) take any T at f directly."""
    tuning = getattr(kind, "tuning", None)
    if tuning is None:
        return evaluate(design, kind, f, n, T)
    fs = tuning(n, T)
    parts = evaluate(design, kind, fs, n, T)
    with np.errstate(divide="ignore"):
        gain = (kind.fundamental(design, fs, n, T) / kind.modulus(design, f, n, T)) ** 2
    for name in noises.NOISES:
        parts[name] = parts[name] * gain
    return parts


def pulse_log_contrast(design, kind, n):
    """ln of the contrast left by n pi pulses with per-pulse loss eps (``kind.pulse_error``).

    ``"incoherent"``: independent errors, ``n ln(1 - eps)``. ``"coherent"`` (the conservative
    default): a systematic flip-angle error beta_1 = arccos(1 - eps) per pulse (so that one pulse
    loses eps) adds up for a spin perpendicular to the pulse axis, contrast ``cos(n beta_1)``, none
    past n beta_1 = pi/2 (exact composition of rotations about one axis; the accumulation of
    flip-angle errors in Carr-Purcell-type trains is discussed by Souza, Alvarez & Suter 2012,
    Phil. Trans. R. Soc. A 370, 4748)."""
    eps = kind.pulse_error(design)
    n = np.asarray(n, dtype=float)
    if design.pulse_errors == "incoherent":
        return n * np.log1p(-eps)
    angle = n * np.arccos(1.0 - eps)
    return np.where(angle < np.pi / 2, np.log(np.maximum(np.cos(np.minimum(angle, np.pi / 2)), 1e-300)), np.log(1e-300))


def projection_term(design, Tc, var, G0sq):
    """Projection part of S_y,eq: ``2 Tc sigma^2 / ((2 pi nu0)^2 |G(f0)|^2)`` (one value per cycle Tc)."""
    return 2 * Tc * var / ((2 * np.pi * design.nu0) ** 2 * G0sq)

def total_psd(parts):
    """Sum of the noise PSDs of a budget dict (the keys of :data:`~gwclock.physics.noises.NOISES`)."""
    return sum(parts[k] for k in noises.NOISES)

def pick(parts, index):
    """Select along the leading (candidate) axis."""
    return {k: np.take_along_axis(np.asarray(v), index[None], axis=0)[0] for k, v in parts.items()}

def signal_response(design: Design, frequency):
    """Sky-averaged signal response of the mission: link response times the phase-lock transfer
    (frequency in Hz, or a Quantity)."""
    frequency = hertz(frequency)
    return (response.link_response(frequency, design.baseline, design.path)
            * response.phase_lock_transfer(frequency, design.phase_lock_bandwidth))
