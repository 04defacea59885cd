"""The engine's view of a mission: every parameter in SI units, as plain floats (or arrays)."""

from __future__ import annotations

from dataclasses import dataclass, fields, replace
from typing import Any

import numpy as np

__all__ = ["Design"]


@dataclass(frozen=True)
class Design:
    """Engine parameters in SI units (floats); built by :meth:`Mission.design`.

    Frequencies in Hz, times in s, lengths in m, powers in W, acceleration ASD in m s^-2 Hz^-1/2.
    ``squeezing`` is the Wineland parameter xi^2 (1 without squeezing).
    """

    name: str
    nu0: float
    atom_number: float
    coherence_time: float
    dead_time: float
    squeezing: float
    pi_pulse_duration: float
    pulse_error: float
    pulse_errors: str
    clock_white: float
    clock_flicker: float
    clock_walk: float
    baseline: float
    transmit_power: float
    transmit_aperture: float
    receive_aperture: float
    optical_efficiency: float
    phase_lock_bandwidth: float
    timing_mismatch: float
    path: str
    linewidth: float
    flicker_floor: float
    gain_mismatch: float
    receiver_linewidth: float
    receiver_flicker_floor: float
    acceleration_noise: float
    acceleration_corner: float
    kind: str
    max_interrogation: float
    tune: float | None
    comparison: str
    phase_offset: float
    pulse_times: tuple[float, ...]
    duration: float

    def take(self, index, size: int) -> Design:
        """The design at ``index`` of evaluation points: array fields of length ``size`` are indexed."""
        changes = {}
        for f in fields(self):
            v = getattr(self, f.name)
            if isinstance(v, np.ndarray) and v.ndim == 1 and v.size == size:
                changes[f.name] = v[index]
        return replace(self, **changes) if changes else self

    def replace(self, **changes: Any) -> Design:
        """A copy with some fields changed (no validation: library use only)."""
        return replace(self, **changes)
