"""Clock species presets: transition frequency and excited-state lifetime, with sources.

A new species is one entry in :data:`SPECIES`.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..errors import UnknownNameError

__all__ = ["Species", "SPECIES", "get_species"]


@dataclass(frozen=True)
class Species:
    """One optical clock transition.

    Attributes
    ----------
    key : str
        Preset name used in mission files.
    transition : str
        The line.
    digits : str
        Transition frequency in Hz exactly as published (digits grouped by spaces).
    frequency_source : str
        Where the frequency comes from.
    lifetime : float
        Excited-state (3P0) lifetime in s; the default coherence time.
    lifetime_source : str
        Where the lifetime comes from.
    checked : bool
        Whether both numbers were checked against the source text (otherwise they are as
        recalled and labelled so by ``gwclock species``).
    """

    key: str
    transition: str
    digits: str
    frequency_source: str
    lifetime: float
    lifetime_source: str
    checked: bool = True

    @property
    def frequency(self) -> float:
        """Transition frequency in Hz (float of :attr:`digits`)."""
        return float(self.digits.replace(" ", ""))


SPECIES: dict[str, Species] = {
    "Sr87": Species(
        "Sr87", "87Sr 5s2 1S0 - 5s5p 3P0 (698.4 nm)", "429 228 004 229 873.7",
        "CIPM 2009 Recommendation 2 (secondary representation of the second), relative uncertainty 1e-15",
        118.0,
        "Muniz, Young, Cline & Thompson, Phys. Rev. Research 3, 023152 (2021), arXiv:2007.07855: 118(3) s "
        "(Lu et al. 2024, arXiv:2401.11173, find 151.4(48) s: the preset is the shorter value)",
    ),
    "Yb171": Species(
        "Yb171", "171Yb 6s2 1S0 - 6s6p 3P0 (578.4 nm)", "518 295 836 590 864",
        "CIPM 2009 Recommendation 2, relative uncertainty 1.6e-13",
        23.0,
        "Porsev & Derevianko, Phys. Rev. A 69, 042506 (2004), theory: rate 43.5e-3 /s",
        checked=False,
    ),
    "Hg199": Species(
        "Hg199", "199Hg 6s2 1S0 - 6s6p 3P0 (265.6 nm)", "1 128 575 290 808 154.32",
        "CIPM 2021 list of recommended values (Margolis et al. 2024, arXiv:2401.14537)",
        1.3,
        "Porsev, Safronova & Safronova, arXiv:1703.01349 (2017), theory",
        checked=False,
    ),
    "Al27+": Species(
        "Al27+", "27Al+ 3s2 1S0 - 3s3p 3P0 (267.4 nm)", "1 121 015 393 207 859.16",
        "CIPM 2021 list of recommended values (Margolis et al. 2024, arXiv:2401.14537)",
        20.6,
        "Rosenband et al., Phys. Rev. Lett. 98, 220801 (2007)",
        checked=False,
    ),
}


def get_species(key: str) -> Species:
    """Return the preset ``key``; unknown keys fail with the list of valid ones."""
    try:
        return SPECIES[key]
    except KeyError:
        raise UnknownNameError(f"unknown species {key!r}; expected one of {', '.join(SPECIES)}") from None
