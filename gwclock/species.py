"""Clock species presets: transition frequency and excited-state lifetime, with sources.

A new species is one entry in :data:`SPECIES`.
"""

from __future__ import annotations

from dataclasses import dataclass

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
    frequency : float
        Transition frequency in Hz.
    frequency_source : str
        Where the frequency comes from.
    lifetime : float
        Excited-state (3P0) lifetime in s; the default coherence time.
    lifetime_source : str
        Where the lifetime comes from.
    """

    key: str
    transition: str
    frequency: float
    frequency_source: str
    lifetime: float
    lifetime_source: str


SPECIES: dict[str, Species] = {
    "Sr87": Species(
        "Sr87", "87Sr 5s2 1S0 - 5s5p 3P0 (698.4 nm)", 429_228_004_229_873.7,
        "CIPM 2009 Recommendation 2 (secondary representation of the second)",
        118.0,
        "Muniz, Young, Cline & Thompson, Phys. Rev. Research 3, 023152 (2021): 118(3) s",
    ),
    "Yb171": Species(
        "Yb171", "171Yb 6s2 1S0 - 6s6p 3P0 (578.4 nm)", 518_295_836_590_864.0,
        "CIPM 2009 Recommendation 2 (secondary representation of the second)",
        23.0,
        "Porsev & Derevianko, Phys. Rev. A 69, 042506 (2004), theory: rate 43.5e-3 /s",
    ),
    "Hg199": Species(
        "Hg199", "199Hg 6s2 1S0 - 6s6p 3P0 (265.6 nm)", 1_128_575_290_808_154.32,
        "CIPM 2021 list of recommended values (digits from memory, secondary transcription)",
        1.3,
        "Porsev, Safronova & Safronova, arXiv:1703.01349 (2017), theory",
    ),
    "Al27+": Species(
        "Al27+", "27Al+ 3s2 1S0 - 3s3p 3P0 (267.4 nm)", 1_121_015_393_207_859.16,
        "CIPM 2021 list of recommended values (digits from memory, secondary transcription)",
        20.6,
        "Rosenband et al., Phys. Rev. Lett. 98, 220801 (2007) (from memory)",
    ),
}


def get_species(key: str) -> Species:
    """Return the preset ``key``; unknown keys fail with the list of valid ones."""
    try:
        return SPECIES[key]
    except KeyError:
        raise KeyError(f"unknown species {key!r}; expected one of {', '.join(SPECIES)}") from None
