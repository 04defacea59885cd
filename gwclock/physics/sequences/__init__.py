"""Pulse-sequence kinds: how each is tuned, its filter function and its noise integrals.

Every kind implements :class:`SequenceKind`; the engine uses nothing else. A new kind is one
module in this package and one entry in :data:`SEQUENCES` (the mission schema's ``kind``
choices come from it).

References
----------
Cywinski et al. 2008, Phys. Rev. B 77, 174509 (filter functions of CPMG-type sequences).
Dick, G. J. 1987, Proc. 19th PTTI, 133; Santarelli et al. 1998, IEEE Trans. UFFC 45, 887
(aliasing of stationary noise into a cycled clock; from memory).
"""

from __future__ import annotations

from typing import Literal, Protocol, runtime_checkable

from .custom import Custom
from .integrals import optimal_interrogation
from .periodic import Periodic
from .ramsey import RAMSEY_FLICKER_CONSTANT, Ramsey, closed_form_red

__all__ = ["SequenceKind", "SEQUENCES", "KINDS", "Periodic", "Ramsey", "Custom", "optimal_interrogation",
           "closed_form_red", "RAMSEY_FLICKER_CONSTANT"]


@runtime_checkable
class SequenceKind(Protocol):
    """What the engine asks of a pulse-sequence kind.

    Arguments named ``design`` are a :class:`~gwclock.physics.design.Design`; ``f0`` is the tuning
    frequency and ``f`` a GW frequency (Hz); ``n`` the number of pi pulses and ``T`` the
    interrogation time (s); ``Tc`` the cycle time (s); ``terms`` a list of
    :class:`~gwclock.physics.noises.PowerLaw`. Every argument may be an array; results broadcast.

    Attributes
    ----------
    name : str
        The registry key.
    dd : bool
        Whether the kind has pi pulses (a dynamical-decoupling detector); Ramsey has none and is
        the fallback where no DD sequence fits.
    search : {"pulses", "single", "interrogation"}
        How the engine searches at one tuning: over pulse counts (T = n / (2 f0)), a single
        sequence per tuning, or over a continuous interrogation time.
    linear_in_interrogation : bool
        Whether the noise integrals are ``slope * T + edge`` at fixed f0 (then the kind offers
        ``noise_coefficients(design, term, f0) -> (slope, edge)`` and ``aliased``/``common_mode``
        accept ``linear=(slope, edge)``).
    """

    name: str
    dd: bool
    search: Literal["pulses", "single", "interrogation"]
    linear_in_interrogation: bool

    def pulse_error(self, design):
        """Contrast loss per pi pulse (the fraction 1 - C_pulse)."""

    def snap(self, design, f0, T_wish):
        """The allowed ``(n, T, valid)`` nearest to the wished interrogation at tuning f0."""

    def fundamental(self, design, f0, n, T):
        """|G(f0)| in s: the filter function's modulus at the tuning frequency."""

    def modulus(self, design, f, n, T):
        """|G(f)| in s at GW frequencies f."""

    def aliased(self, design, terms, f0, n, T, Tc):
        """``sum_m S_y(|f0 + m/Tc|) |G(f0 + m/Tc)|^2`` (s^2/Hz): the stationary noise aliased into
        one cycled measurement, before division by |G(f0)|^2."""

    def common_mode(self, design, terms, f0, n, T):
        """Laser phase variance (rad^2) through the filter: decides the correlated read-out."""

    # Optional: ``lobe_areas(design, f0, n, T, k)``, the area (s) of the lobe of |G|^2 at each odd
    # harmonic k f0, which the clock-scan background needs (kinds without it are refused there).


#: The sequence kinds, by the name a mission file uses.
SEQUENCES: dict[str, SequenceKind] = {
    "ramsey": Ramsey(),
    "echo": Periodic("echo", fixed=1),
    "cpmg": Periodic("cpmg"),
    "xy8": Periodic("xy8", step=8, error_order=2),
    "custom": Custom(),
}

#: The kind names, in registry order (the mission schema's choices).
KINDS = tuple(SEQUENCES)
