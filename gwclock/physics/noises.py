"""Stationary noise terms of the clock link, as sums of power laws in fractional frequency.

Every stationary noise is written as ``S_y(f) = sum_i h_i f^alpha_i`` (one-sided, 1/Hz) with an
upper cutoff per term, so that its passage through any pulse sequence's filter function has a
closed form (:mod:`gwclock.physics.filters`). A new noise is one function here and one entry in
:data:`NOISES`. The per-cycle projection noise is not stationary; it is handled in
:mod:`gwclock.physics.projection`.

References
----------
Photon shot noise of a heterodyne link and the far-field link budget: standard optics, e.g.
Klein & Degnan 1974, Appl. Opt. 13, 2134 (truncated-Gaussian efficiency, from memory).
Laser linewidth and Allan variance of power-law noise: Barnes et al. 1971, IEEE Trans. Instrum.
Meas. 20, 105.
Drag-free acceleration noise: Armano et al. 2016, Phys. Rev. Lett. 116, 231101.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..constants import c, h

__all__ = ["PowerLaw", "Noise", "psd", "received_power", "shot_terms", "laser_terms", "laser_residual_terms",
           "receiver_laser_terms", "receiver_terms", "clock_terms", "WALK_TAU",
           "acceleration_terms", "pulse_bandwidth", "NOISES", "stationary_noises"]


@dataclass(frozen=True)
class PowerLaw:
    """One term ``level * f**alpha`` of a fractional-frequency PSD, nonzero for low <= f < cutoff
    (half-open, so that terms meeting at an edge partition the frequency axis)."""

    level: float
    alpha: int
    cutoff: float = np.inf
    low: float = 0.0

    def __call__(self, f):
        f = np.asarray(f, dtype=float)
        inside = (f < self.cutoff) & (f >= self.low)
        return np.where(inside, self.level * np.where(inside, f, 1.0) ** self.alpha, 0.0)


def psd(terms, f):
    """Evaluate a list of :class:`PowerLaw` terms at frequencies ``f`` (Hz); returns 1/Hz."""
    f = np.asarray(f, dtype=float)
    total = np.zeros(f.shape)
    for term in terms:
        total = total + term(f)
    return total


def received_power(design):
    """Received optical power of the far-field link, in W.

    ``P_r = eta P_t pi^2 D_t^2 D_r^2 / (16 lambda^2 L^2)`` for a uniformly illuminated transmit
    aperture (top hat), with eta the whole end-to-end efficiency.
    """
    lam = c / design.nu0
    return (design.optical_efficiency * design.transmit_power * np.pi**2
            * design.transmit_aperture**2 * design.receive_aperture**2 / (16 * lam**2 * design.baseline**2))


def _legs(design):
    return 2.0 if design.path == "two-way" else 1.0


def pulse_bandwidth(design):
    """Highest frequency (Hz) at which the pi pulses still sample the light phase: 1/(2 t_pi)."""
    return 1.0 / (2.0 * design.pi_pulse_duration)


def shot_terms(design):
    """Photon shot noise copied onto the receiving laser by its phase lock.

    Heterodyne phase noise ``S_phi = h nu / P_r`` (rad^2/Hz). Inside the phase-lock bandwidth B
    the receiving laser copies it: ``S_y = (f/nu0)^2 S_phi``, white phase (alpha = 2). Above B the
    loop passes ``(B/f)^2`` of it, a white-frequency plateau ``(B/nu0)^2 S_phi``. Both stop at the
    pulse bandwidth 1/(2 t_pi). A two-way link has two received beams (twice the PSD).
    Parameters may be arrays (one value per evaluation point).
    """
    s_phi = _legs(design) * h * design.nu0 / received_power(design)
    top = pulse_bandwidth(design)
    B = design.phase_lock_bandwidth
    return [PowerLaw(s_phi / design.nu0**2, 2, np.minimum(B, top)),
            PowerLaw(s_phi * B**2 / design.nu0**2, 0, top, B)]  # empty when B >= top


def laser_terms(design):
    """The shared laser's own noise: white FM from the linewidth and a flicker-FM floor.

    ``S_y = Delta_nu / (pi nu0^2)`` for a Lorentzian of FWHM Delta_nu, and
    ``h_-1 = sigma_fl^2 / (2 ln 2)`` for a flicker floor sigma_fl of the Allan deviation.
    """
    return [PowerLaw(design.linewidth / (np.pi * design.nu0**2), 0),
            PowerLaw(design.flicker_floor**2 / (2 * np.log(2)), -1)]


def receiver_laser_terms(design):
    """The receiving laser's own free-running noise (white FM and flicker FM, as
    :func:`laser_terms` with the receiver's linewidth and flicker floor)."""
    return [PowerLaw(design.receiver_linewidth / (np.pi * design.nu0**2), 0),
            PowerLaw(design.receiver_flicker_floor**2 / (2 * np.log(2)), -1)]


def _tracking_error(terms, design, extra_inside=0.0, extra_outside=0.0):
    """``|1 - H|^2 S`` of a first-order phase lock ``H = 1 / (1 + i f/B)`` as power laws: the exact
    ``(f/B)^2 / (1 + (f/B)^2)`` is bounded by its asymptotes, ``(f/B)^2`` below B and 1 above
    (at most 2x high, at f = B). ``extra_inside`` is added to ``1/B^2`` (a coefficient of f^2),
    ``extra_outside`` to 1. Everything stops at the pulse bandwidth 1/(2 t_pi)."""
    top = pulse_bandwidth(design)
    B = design.phase_lock_bandwidth
    out = []
    for term in terms:
        out.append(PowerLaw((B**-2.0 + extra_inside) * term.level, term.alpha + 2, np.minimum(B, top)))
        out.append(PowerLaw((1.0 + extra_outside) * term.level, term.alpha, top, B))  # empty when B >= top
    return out


def laser_residual_terms(design):
    """The shared (master) laser's noise left in the comparison of the two clocks.

    Clock B sees the receiving laser, phase-locked to the received light with a first-order loop
    ``H = 1 / (1 + i f/B)``; the comparison keeps the loop's tracking error ``|1 - H|^2 S_y``
    ((f/B)^2 inside the loop, all of it above B). What the loop does follow is common to both
    clocks up to a timing mismatch dt, ``4 sin^2(pi f dt) |H|^2 S_y ~ (2 pi f dt)^2 |H|^2 S_y``
    (f dt << 1), and a gain mismatch eps, ``eps^2 |H|^2 S_y``. Power-law bounds: below B the f^2
    terms add, ``(1/B^2 + (2 pi dt)^2) f^2 S_y`` plus ``eps^2 S_y``; above B, where
    ``|H|^2 <= (B/f)^2``, ``(1 + (2 pi B dt)^2 + eps^2) S_y``. White FM becomes white PM inside the
    loop and leaks through the pi pulses like shot noise. All terms stop at the pulse bandwidth
    1/(2 t_pi), above which the pulses no longer sample the light phase.
    """
    B = design.phase_lock_bandwidth
    k_time = (2 * np.pi * design.timing_mismatch) ** 2
    k_gain = design.gain_mismatch**2
    master = laser_terms(design)
    out = _tracking_error(master, design, k_time, k_time * B**2 + k_gain)
    top = pulse_bandwidth(design)
    out += [PowerLaw(k_gain * term.level, term.alpha, np.minimum(B, top)) for term in master]
    return out


def receiver_terms(design):
    """The receiving laser's own noise left in the comparison: the phase lock suppresses it by
    ``|1 - H|^2`` (the same first-order loop and power-law bounds as
    :func:`laser_residual_terms`); only the receiving clock sees it."""
    return _tracking_error(receiver_laser_terms(design), design)


def acceleration_terms(design):
    """Drag-free test-mass acceleration noise of both spacecraft, as Doppler noise.

    One-way: ``S_y = (S_a,A + S_a,B) / ((2 pi f)^2 c^2)`` for independent test masses with one-sided
    ``S_a = a^2 [1 + (f_c / f)^2]`` (a = per-test-mass ASD, f_c = optional low-frequency corner).
    Two-way (round trip A -> B -> A): ``y2 = [v_A(t - 2L/c) + v_A(t) - 2 v_B(t - L/c)] / c``
    (Armstrong 2006, Living Rev. Relativ. 9, 1, the three-pulse structure), so
    ``S_y = 4 [S_a,B + cos^2(2 pi f L/c) S_a,A] / ((2 pi f)^2 c^2)``: 8 S_a below c/(8L), where
    cos^2 >= 1/2 (exact as f -> 0), and its mean over the ripple, 6 S_a, above (the ripple of
    +-1/3 about it, period c/(2L), is averaged; equal S_a on both spacecraft).
    """
    unit = design.acceleration_noise**2 / ((2 * np.pi) ** 2 * c**2)
    corner2 = design.acceleration_corner**2
    if design.path != "two-way":
        level = 2 * unit
        return [PowerLaw(level, -2), PowerLaw(level * corner2, -4)]
    split = c / (8 * np.asarray(design.baseline, dtype=float))
    near, far = 8 * unit, 6 * unit
    return [PowerLaw(near, -2, split), PowerLaw(far, -2, np.inf, split),
            PowerLaw(near * corner2, -4, split), PowerLaw(far * corner2, -4, np.inf, split)]


#: Averaging time (s) at which ``clock.instability_walk`` is quoted: one day.
WALK_TAU = 86400.0


def clock_terms(design):
    """Each clock's own frequency instability (independent of the laser and of the other clock),
    for both clocks: white FM ``h_0 = 2 sigma_w^2 * 1 s``, flicker FM ``h_-1 = sigma_f^2 / (2 ln 2)``
    and random-walk FM ``h_-2 = 3 sigma_d^2 / (2 pi^2 tau_d)`` from Allan deviations sigma_w at 1 s,
    a floor sigma_f and sigma_d at tau_d = 1 day (the power-law Allan variances of Barnes et al.
    1971). The atoms integrate it with the same sensitivity function g(t) as the laser's noise, so
    a DD sequence suppresses a slow drift that Ramsey interrogation is fully exposed to."""
    return [PowerLaw(2 * 2 * design.clock_white**2, 0),
            PowerLaw(2 * design.clock_flicker**2 / (2 * np.log(2)), -1),
            PowerLaw(2 * 3 * design.clock_walk**2 / (2 * np.pi**2 * WALK_TAU), -2)]


@dataclass(frozen=True)
class Noise:
    """One noise of the budget, with everything the rest of gwclock needs to know about it.

    Attributes
    ----------
    key : str
        Name in budgets and table columns (``asd_<key>``).
    label : str
        Legend text.
    description : str
        Table column description.
    colour : str
        Line colour (Okabe & Ito 2008 colour-blind-safe hues).
    dashes : tuple
        Matplotlib dash pattern ``(offset, (on, off, ...))``, distinct in greyscale print.
    citation : str
        Where the model comes from.
    terms : callable or None
        ``terms(design) -> list of PowerLaw`` (fractional frequency) for a stationary noise; None
        for the per-cycle projection noise, which the engine computes itself.
    """

    key: str
    label: str
    description: str
    colour: str
    dashes: tuple
    citation: str
    terms: Callable | None = None

    @property
    def stationary(self) -> bool:
        return self.terms is not None


#: Every noise of the budget, in table-column order. A new noise is a function returning its
#: PowerLaw terms and one entry here (plus its test).
NOISES: dict[str, Noise] = {n.key: n for n in (
    Noise("projection", "atom projection", "atom projection noise, equivalent strain ASD", "#0072B2", (0, (6, 2)),
          "Itano et al. 1993, Phys. Rev. A 47, 3554"),
    Noise("shot", "photon shot (link)", "photon shot noise of the link, equivalent strain ASD", "#D55E00", (0, (2, 1.5)),
          "heterodyne shot noise h nu / P_r (standard optics)", shot_terms),
    Noise("laser", "laser residual", "shared laser's noise left by the phase lock and the common-mode cancellation, "
          "equivalent strain ASD", "#009E73", (0, (6, 2, 1, 2)),
          "Barnes et al. 1971, IEEE Trans. Instrum. Meas. 20, 105; first-order loop tracking error", laser_residual_terms),
    Noise("receiver", "receiving laser", "receiving laser's own noise left by its phase lock, equivalent strain ASD",
          "#E69F00", (0, (3, 1, 1, 1, 1, 1)), "first-order loop tracking error |1 - H|^2 (standard control theory)",
          receiver_terms),
    Noise("clock", "clock instability", "each clock's own frequency instability (both clocks), equivalent strain ASD",
          "#56B4E9", (0, (4, 1, 1, 1)), "Barnes et al. 1971, IEEE Trans. Instrum. Meas. 20, 105", clock_terms),
    Noise("acceleration", "test-mass acceleration", "drag-free test-mass acceleration noise, equivalent strain ASD",
          "#CC79A7", (0, (1, 1)), "Armano et al. 2016, Phys. Rev. Lett. 116, 231101", acceleration_terms),
)}



def stationary_noises() -> dict[str, Callable]:
    """The stationary noises of :data:`NOISES` (name -> terms function), read afresh each call."""
    return {k: n.terms for k, n in NOISES.items() if n.stationary}
