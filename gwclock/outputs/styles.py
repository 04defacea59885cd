"""The style registry: every object gwclock draws has its own look, the same in every figure.

* a **mission** is drawn in its file's ``colour`` when it names one, otherwise in a colour of the
  mission palette chosen from its name (stable from run to run); two missions of one figure never
  share a colour;
* a **noise** has the colour and dashes of its registry entry (:mod:`gwclock.physics.noises`);
* a **reference detector** has a style bound to its key;
* **sources** are thin lines in greys and browns.

The three families use disjoint hues (missions: black and Paul Tol's dark "muted" colours; noises:
Okabe & Ito's; references: light and earthy hues with their own dash patterns), so that a noise
never looks like a reference detector or a mission, and lines stay apart in greyscale by their
dashes and widths.
"""

from __future__ import annotations

import hashlib

__all__ = ["MISSION_PALETTE", "REFERENCE_LOOKS", "SOURCE_LOOKS", "StyleBook", "reference_style"]

#: Colours for missions without their own (solid, thick lines).
MISSION_PALETTE = ["#000000", "#332288", "#882255", "#117733", "#44AA99", "#AA4499", "#661100", "#6699CC"]

#: Each reference detector's look, by key; a user curve takes the "other" look.
REFERENCE_LOOKS = {
    "lisa": dict(color="#999933", linestyle=(0, (6, 2)), lw=1.4),
    "decigo": dict(color="#777777", linestyle=(0, (2, 1.5)), lw=1.4),
    "et": dict(color="#DDAA33", linestyle=(0, (6, 2, 1, 2)), lw=1.4),
    "et-powerlaw": dict(color="#DDAA33", linestyle=(0, (1, 1)), lw=1.2),
    "aligo": dict(color="#88CCEE", linestyle=(0, (1, 1)), lw=1.6),
    "other": dict(color="#BBBBBB", linestyle=(0, (8, 2, 1, 2, 1, 2)), lw=1.4),
}

SOURCE_LOOKS = [
    dict(color="#444444", linestyle="-", lw=0.9),
    dict(color="#8C6D31", linestyle="-", lw=0.9),
    dict(color="#444444", linestyle=(0, (3, 1)), lw=0.9),
]


def reference_style(key) -> dict:
    """The look of a reference detector (by its registry key; user curves share one)."""
    return dict(REFERENCE_LOOKS.get(key, REFERENCE_LOOKS["other"]))


def _palette_index(name: str) -> int:
    return int(hashlib.sha256(name.encode()).hexdigest(), 16) % len(MISSION_PALETTE)


class StyleBook:
    """The styles of one figure: missions get their own colour or a free palette colour."""

    def __init__(self):
        self.taken: dict[str, str] = {}
        self.sources = 0

    def mission(self, name: str, colour: str | None = None) -> dict:
        """Solid, thick line in the mission's colour (the same name gets the same style again)."""
        if name in self.taken:
            return dict(color=self.taken[name], linestyle="-", lw=2.0)
        if colour is None or colour in self.taken.values():
            start = _palette_index(name)
            for k in range(len(MISSION_PALETTE)):
                c = MISSION_PALETTE[(start + k) % len(MISSION_PALETTE)]
                if c not in self.taken.values():
                    colour = c
                    break
            else:
                colour = MISSION_PALETTE[start]
        self.taken[name] = colour
        return dict(color=colour, linestyle="-", lw=2.0)

    def source(self) -> dict:
        st = dict(SOURCE_LOOKS[self.sources % len(SOURCE_LOOKS)])
        self.sources += 1
        return st
