"""gwclock: strain sensitivity of space gravitational-wave detectors built from optical clocks.

Library entry points::

    from gwclock import load_mission, envelope, window
    mission, digest = load_mission("mission_configs/pathfinder.toml")
    budget = envelope(mission.design(), frequencies_in_hz)

Results are estimates for concept studies (see the README for the assumptions).
"""

from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__", "load_mission", "envelope", "window", "Mission", "Budget", "InputError"]


def __getattr__(name):  # lazy: keep `import gwclock` cheap
    if name in ("load_mission", "Mission"):
        from . import mission
        return getattr(mission, name)
    if name in ("envelope", "window", "Budget"):
        from . import engine
        return getattr(engine, name)
    if name == "InputError":
        from .errors import InputError
        return InputError
    raise AttributeError(f"module 'gwclock' has no attribute {name!r}")
