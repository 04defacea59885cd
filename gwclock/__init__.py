"""gwclock: strain sensitivity of space gravitational-wave detectors built from optical clocks.

Library entry points::

    import numpy as np
    import gwclock

    mission, digest = gwclock.load_mission("mission_configs/pathfinder.toml")
    budget = gwclock.envelope(mission.design(), np.geomspace(1e-4, 10, 200))
    budget.asd          # strain ASD in Hz^-1/2, sky-averaged

Results are estimates for concept studies (see the README for the assumptions). The package is
layered; each layer imports only the layers before it:

``errors``, ``constants``, ``quantities``, ``files`` (the base) < ``physics`` < ``engine`` <
``astro`` < ``config`` < ``studies`` < ``outputs`` < ``cli``.
"""

from __future__ import annotations

import importlib

from .version import __version__

#: Public name -> the module that defines it (imported on first use: ``import gwclock`` stays cheap).
_EXPORTS = {
    "load_mission": "gwclock.config.mission",
    "mission_from_dict": "gwclock.config.mission",
    "Mission": "gwclock.config.mission",
    "Design": "gwclock.physics.design",
    "envelope": "gwclock.engine.curves",
    "window": "gwclock.engine.curves",
    "window_psd": "gwclock.engine.curves",
    "batch_budget": "gwclock.engine.batch",
    "frequency_grid": "gwclock.engine.budget",
    "Budget": "gwclock.engine.budget",
    "Inspiral": "gwclock.astro.sources",
    "Monochromatic": "gwclock.astro.sources",
    "get_reference": "gwclock.astro.references",
    "TunedCurve": "gwclock.studies.snr",
    "clock_snr": "gwclock.studies.snr",
    "reference_snr": "gwclock.studies.snr",
    "horizon": "gwclock.studies.horizon",
    "GwclockError": "gwclock.errors",
    "InputError": "gwclock.errors",
    "OutOfReachError": "gwclock.errors",
    "UnknownNameError": "gwclock.errors",
}

__all__ = ["__version__", *_EXPORTS]


def __getattr__(name):
    try:
        module = _EXPORTS[name]
    except KeyError:
        raise AttributeError(f"module 'gwclock' has no attribute {name!r}") from None
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))
