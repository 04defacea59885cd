"""Shared helpers: a simple design for physics checks, and the shipped missions."""

from __future__ import annotations

from pathlib import Path

import pytest

from gwclock.config.mission import load_mission

ROOT = Path(__file__).resolve().parents[1]
MISSIONS = sorted((ROOT / "mission_configs").glob("*.toml"))
DATA = ROOT / "tests" / "data"


def truth(name):
    """A reference table of tests/data (ECSV, provenance in its header: source and status)."""
    from astropy.table import QTable
    return QTable.read(DATA / name, format="ascii.ecsv")


def rows(name, *columns):
    """The rows of a reference table as plain tuples of ``columns`` (values in the file's units)."""
    t = truth(name)
    return [tuple(getattr(r[c], "value", r[c]) for c in columns) for r in t]
NU_SR = 429_228_004_229_873.7  # Hz, 87Sr, CIPM 2009 Recommendation 2


def quiet_design(**changes):
    """The default design with every noise but projection switched off (unless changed)."""
    mission, _ = load_mission(None)
    base = dict(
        transmit_power=1e18, linewidth=0.0, flicker_floor=0.0, gain_mismatch=0.0,
        receiver_linewidth=0.0, receiver_flicker_floor=0.0, clock_white=0.0, clock_flicker=0.0, clock_walk=0.0,
        acceleration_noise=0.0, timing_mismatch=0.0, comparison="linear", dead_time=0.0,
        pulse_error=0.0, pulse_errors="incoherent", pi_pulse_duration=1e-6, phase_lock_bandwidth=1e9,
        coherence_time=1e15, squeezing=1.0,
    )
    base.update(changes)
    return mission.design().replace(**base)


@pytest.fixture
def design():
    return quiet_design()


# property tests draw the same examples on every run (reproducible CI)
from hypothesis import settings as _settings  # noqa: E402

_settings.register_profile("gwclock", derandomize=True, deadline=None)
_settings.load_profile("gwclock")
