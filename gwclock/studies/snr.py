"""Signal-to-noise ratio of slowly evolving sources, one engine for broadband and tuned detectors.

For a source whose frequency f(t) evolves slowly, ``SNR^2 = integral h0(t)^2 / S_n(f(t); tuning(t)) dt``
with the rms amplitude h0 and the sky-averaged S_n (Robson, Cornish & Liu 2019). For a broadband detector
S_n does not depend on the tuning and, with dt = df / (df/dt), this is the familiar
``integral 4 |h~(f)|^2 / S_n(f) df``. For the clock detector three schedules are offered:

* ``fixed``: one tuning for the whole observation (by default the tuning that maximises the SNR);
* ``track``: the DD frequency retuned every ``cadence`` to the source's frequency at the middle of
  the interval, losing ``overhead`` per retuning; between retunings the source drifts through the
  fixed window;
* ``best``: the best of three plans: the observing time (possibly in several pieces) placed where
  the tracked SNR rate is highest over the inspiral up to merger, the best fixed tuning, and
  tracking over the last stretch (so ``best`` is never below ``fixed`` or ``track``).

A tuning always means the sequence the tuned envelope uses there (Ramsey where no DD sequence fits
or Ramsey does better), in every schedule, window, scan and background.

The per-cycle picture needs the source to be nearly monochromatic within one interrogation,
``(df/dt) T^2 <= 1`` (common practice, no source); time when that fails (chirped pulse timing would be
needed) is left out of the clock SNR and reported.

References
----------
Moore, Cole & Berry 2015, Class. Quantum Grav. 32, 015014 (SNR and characteristic strain).
Robson, Cornish & Liu 2019, Class. Quantum Grav. 36, 105011 (normalisation).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .. import engine
from ..astro.sources import Inspiral, Monochromatic
from ..engine.budget import SPAN
from ..errors import InputError, UnknownNameError

__all__ = ["SNRResult", "broadband_snr", "time_domain_snr", "reference_snr", "clock_snr", "TunedCurve", "SCHEDULES"]

SCHEDULES = ("fixed", "track", "best")
_SAMPLES = 3000


@dataclass(frozen=True)
class SNRResult:
    """One detector's SNR for one source."""

    detector: str
    source: str
    schedule: str
    snr: float
    f_start: float
    f_end: float
    observed: float
    note: str = ""


def broadband_snr(source: Inspiral, psd, fmin, fmax, averaged=True, points=_SAMPLES):
    """``sqrt(integral_fmin^fmax 4 |h~|^2 / S_n df)``, trapezoid in ln f on ``points`` points.

    ``averaged`` selects the sky-, polarisation- and inclination-averaged |h~|^2 (with a
    sky-averaged S_n); ``False`` the optimally oriented, face-on source (with a native P_n).
    """
    if fmax <= fmin:
        return 0.0
    f = np.geomspace(fmin, fmax, points)
    y = 4 * source.fourier_amplitude_squared(f, averaged) / psd(f) * f
    return float(np.sqrt(np.trapezoid(y, np.log(f))))


def time_domain_snr(source: Inspiral, psd_of, tau_start, tau_end, points=_SAMPLES):
    """``sqrt(integral h0(t)^2 / S_n dt)`` over time before merger from tau_start down to tau_end.

    ``psd_of(f, tau)`` returns S_n at the source frequency f, a time tau before merger.
    """
    if tau_start <= tau_end:
        return 0.0
    tau = np.geomspace(tau_end, tau_start, points)
    f = source.frequency_at(tau)
    y = source.rms_amplitude(f) ** 2 / psd_of(f, tau) * tau
    return float(np.sqrt(np.trapezoid(y, np.log(tau))))


def _span(source: Inspiral, band, observation):
    """Times before merger (start, end) and frequencies observed, inside the band."""
    fmin, fmax = band
    f_top = min(fmax, source.isco_frequency)
    tau_end = float(source.time_to_merger(f_top))
    tau_start = min(tau_end + observation, float(source.time_to_merger(fmin)))
    return tau_start, tau_end


def reference_snr(reference, source, observation=None, convention_options=None):
    """SNR of a source in a broadband reference detector (sky-averaged), over its band, observed for
    ``observation`` s (default: the detector's own observing time, ``reference.observation``), with
    SNR^2 summed over the detector's independent channels (``reference.network``)."""
    opts = convention_options or {}
    observation = float(observation or reference.observation)
    if isinstance(source, Monochromatic):
        lo, hi = reference.band
        if not lo <= source.frequency <= hi:
            return SNRResult(reference.network_label, source.name, "broadband", 0.0, source.frequency, source.frequency,
                             observation, "outside the detector band")
        s = reference.network(source.frequency, **opts)
        return SNRResult(reference.network_label, source.name, "broadband", float(source.h0 * np.sqrt(observation / s)),
                         source.frequency, source.frequency, observation)
    tau_start, tau_end = _span(source, reference.band, observation)
    if tau_start <= tau_end:
        return SNRResult(reference.network_label, source.name, "broadband", 0.0, np.nan, np.nan, 0.0, "not in band")
    f1, f2 = float(source.frequency_at(tau_start)), float(source.frequency_at(tau_end))
    snr = broadband_snr(source, lambda f: reference.network(f, **opts), f1, f2)
    return SNRResult(reference.network_label, source.name, "broadband", snr, f1, f2, tau_start - tau_end)


class TunedCurve:
    """The clock mission's tuned envelope on a fine grid, interpolated log-log."""

    def __init__(self, design, fmin=SPAN[0], fmax=SPAN[1], points=1200):
        b = engine.envelope(design, np.geomspace(fmin, fmax, points))
        self._set(design, b.frequency, b.total, b.interrogation)

    @classmethod
    def from_envelope(cls, design, frequency, total, interrogation):
        """A curve from an envelope already computed (strain PSD ``total`` and the interrogation
        times on the increasing grid ``frequency``, Hz)."""
        curve = cls.__new__(cls)
        curve._set(design, np.asarray(frequency, dtype=float), np.asarray(total, dtype=float),
                   np.asarray(interrogation, dtype=float))
        return curve

    def _set(self, design, f, total, interrogation):
        self.design = design
        self.band = (float(f[0]), float(f[-1]))
        self.f = f
        self.lf = np.log(f)
        self.ls = np.log(total)
        self.interrogation = interrogation

    def psd(self, f):
        return np.exp(np.interp(np.log(f), self.lf, self.ls))

    def interrogation_at(self, f):
        return np.interp(np.log(f), self.lf, self.interrogation)


def _chirp_ok(source, f, T):
    return source.frequency_derivative(f) * T**2 <= 1.0


def clock_snr(curve: TunedCurve, source, schedule="track", observation=None, tune=None, cadence=600.0,
              overhead=0.0, name=None):
    """SNR of a source in the clock mission under a schedule (see the module docstring).

    Parameters
    ----------
    curve : TunedCurve
    source : Inspiral or Monochromatic
    schedule : {"fixed", "track", "best"}
    observation : float
        Total observing time in s (default: the mission's duration).
    tune : float, optional
        Fixed tuning in Hz (``fixed`` only; default the best one).
    cadence, overhead : float
        Retuning interval and the time lost at each retuning, in s (``track`` only).
    """
    design = curve.design
    T_obs = float(observation or design.duration)
    label = name or design.name
    if schedule not in SCHEDULES:
        raise UnknownNameError(f"unknown schedule {schedule!r}; expected one of {', '.join(SCHEDULES)}")
    if isinstance(source, Monochromatic):
        f0 = float(tune or source.frequency)
        s, _ = engine.window_psd(design, [f0], [source.frequency])
        return SNRResult(label, source.name, schedule, float(source.h0 * np.sqrt(T_obs / s[0, 0])),
                         source.frequency, source.frequency, T_obs, f"tuned to {f0:.6g} Hz")
    if schedule == "best":
        # the best of the three plans: time placed where the tracked rate is highest, the best fixed
        # tuning over the last stretch, and tracking over the last stretch
        plans = [_best_schedule(curve, source, T_obs, label),
                 clock_snr(curve, source, "fixed", T_obs, None, cadence, overhead, name),
                 clock_snr(curve, source, "track", T_obs, None, cadence, overhead, name)]
        top = max(plans, key=lambda r: r.snr)
        return SNRResult(label, source.name, "best", top.snr, top.f_start, top.f_end, top.observed,
                         top.note if top is plans[0] else f"{top.schedule} plan is the best: {top.note}")
    tau_start, tau_end = _span(source, curve.band, T_obs)
    if tau_start <= tau_end:
        return SNRResult(label, source.name, schedule, 0.0, np.nan, np.nan, 0.0, "not in band")
    f1, f2 = float(source.frequency_at(tau_start)), float(source.frequency_at(tau_end))
    if schedule == "fixed":
        return _fixed_schedule(curve, source, tau_start, tau_end, f1, f2, tune, label)
    return _track_schedule(curve, source, tau_start, tau_end, f1, f2, cadence, overhead, label)


def _fixed_schedule(curve, source, tau_start, tau_end, f1, f2, tune, label):
    tau = np.geomspace(tau_end, tau_start, 800)
    f = source.frequency_at(tau)
    tunings = np.array([tune]) if tune else np.geomspace(max(f1, curve.band[0]), min(f2, curve.band[1]), 48)
    s, best = engine.window_psd(curve.design, tunings, f[None, :])
    ok = _chirp_ok(source, f[None, :], np.asarray(best["interrogation"])[:, None])
    y = np.where(ok, source.rms_amplitude(f) ** 2 / s, 0.0) * tau
    snr2 = np.trapezoid(y, np.log(tau), axis=1)
    k = int(np.argmax(snr2))
    return SNRResult(label, source.name, "fixed", float(np.sqrt(snr2[k])), f1, f2, tau_start - tau_end,
                     f"fixed tuning {tunings[k]:.4g} Hz")


def _track_schedule(curve, source, tau_start, tau_end, f1, f2, cadence, overhead, label):
    if cadence <= 0 or overhead < 0 or overhead >= cadence:
        raise InputError("need cadence > 0 and 0 <= overhead < cadence")
    live = 1.0 - overhead / cadence
    # slow part: the window hardly moves within one interval -> the envelope at f(t)
    tau = np.geomspace(tau_end, tau_start, _SAMPLES)
    f = source.frequency_at(tau)
    T = curve.interrogation_at(f)
    drift = source.frequency_derivative(f) * cadence * T  # window widths crossed per interval
    slow = drift < 0.05
    ok = _chirp_ok(source, f, T)
    rate = np.where(ok & slow, source.rms_amplitude(f) ** 2 / curve.psd(f), 0.0)
    snr2 = live * np.trapezoid(rate * tau, np.log(tau))
    # fast part: explicit windows of the retuned intervals near merger
    fast = ~slow
    note = ""
    if np.any(fast):
        tau_fast_top = float(tau[fast].max())
        edges = np.arange(tau_end, tau_fast_top + cadence, cadence)
        edges = edges[edges <= tau_start]
        if edges.size >= 2:
            if edges.size > 20001:
                raise InputError("the retuning cadence is too fine for the source's last phase: more than 20000 "
                                 "retunings; choose a longer cadence")
            lo, hi = edges[:-1], edges[1:]
            mid = 0.5 * (lo + hi)
            fk = source.frequency_at(mid)
            P = 24
            x = (np.arange(P) + 0.5) / P
            tk = hi[:, None] - (hi - lo)[:, None] * x[None, :]          # samples inside each interval
            fs = source.frequency_at(tk)
            s, best = engine.window_psd(curve.design, np.clip(fk, *curve.band), fs)
            okk = _chirp_ok(source, fs, np.asarray(best["interrogation"])[:, None])
            r = np.where(okk, source.rms_amplitude(fs) ** 2 / s, 0.0)
            # replace the slow-part estimate over [tau_end, edges[-1]] by the explicit sum
            covered = (tau <= edges[-1])
            snr2 -= live * np.trapezoid(np.where(covered, rate, 0.0) * tau, np.log(tau))
            snr2 += live * np.sum(r.mean(axis=1) * (hi - lo))
            note = f"{lo.size} retunings simulated explicitly"
    lost = np.trapezoid(np.where(~ok, source.rms_amplitude(f) ** 2 / curve.psd(f), 0.0) * tau, np.log(tau))
    if lost > 0:
        note = (note + "; " if note else "") + "last phase excluded (df/dt T^2 > 1: chirped timing needed)"
    return SNRResult(label, source.name, "track", float(np.sqrt(max(snr2, 0.0))), f1, f2, tau_start - tau_end,
                     note or f"retuned every {cadence:g} s")


def _best_schedule(curve, source, T_obs, label):
    f_top = min(curve.band[1], source.isco_frequency)
    tau_end = float(source.time_to_merger(f_top))
    tau_start = float(source.time_to_merger(max(curve.band[0], source.frequency_at(1e3 * 3.15576e7))))
    if tau_start <= tau_end:
        return SNRResult(label, source.name, "best", 0.0, np.nan, np.nan, 0.0, "not in band")
    edges = np.geomspace(tau_end, tau_start, 4 * _SAMPLES + 1)
    mid = np.sqrt(edges[:-1] * edges[1:])
    dt = np.diff(edges)
    f = source.frequency_at(mid)
    T = curve.interrogation_at(f)
    rate = np.where(_chirp_ok(source, f, T), source.rms_amplitude(f) ** 2 / curve.psd(f), 0.0)
    order = np.argsort(rate)[::-1]
    cum = np.cumsum(dt[order])
    take = cum <= T_obs
    snr2 = np.sum(rate[order][take] * dt[order][take])
    k = int(np.count_nonzero(take))
    if k < order.size:  # a part of the next piece
        snr2 += rate[order[k]] * (T_obs - (cum[k - 1] if k else 0.0))
        take[k] = True
    chosen = f[order][take]
    return SNRResult(label, source.name, "best", float(np.sqrt(snr2)), float(chosen.min()), float(chosen.max()),
                     min(T_obs, float(dt.sum())), "time placed where the tracked SNR rate is highest")
