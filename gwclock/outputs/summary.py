"""Plain-text summaries printed by the command line and put into reports."""

from __future__ import annotations

import astropy.units as u
import numpy as np

__all__ = ["describe_mission", "summarise_budget"]


def describe_mission(mission, digest):
    """The resolved mission, with units, as text."""
    lines = [f"mission: {mission.name}  (sha256 {digest})"]
    if mission.description:
        lines.append(f"  {mission.description}")
    for section in ("link", "clock", "laser", "spacecraft", "sequence", "observation"):
        lines.append(f"[{section}]")
        model = getattr(mission, section)
        for key in type(model).model_fields:
            value = getattr(model, key)
            if key == "coherence_time" and value is None:
                value = mission.coherence_time
                note = "  (species lifetime)"
            elif key == "max_interrogation" and value is None:
                value = mission.max_interrogation
                note = "  (3 coherence times)"
            elif key in ("receiver_linewidth", "receiver_flicker_floor") and value is None:
                master = key.removeprefix("receiver_")
                value = getattr(model, master)
                note = f"  (same as {master})"
            else:
                note = ""
            if isinstance(value, u.Quantity):
                value = f"{value.value:.6g} {value.unit.to_string()}"
            lines.append(f"  {key} = {value}{note}")
    return "\n".join(lines)


def summarise_budget(budget, name):
    """A few lines of text: the best point, the band within x10 of it, the dominant noise."""
    f, asd = budget.frequency, budget.asd
    i = int(np.argmin(asd))
    lines = [f"{name}: {budget.mode}, {f.size} frequencies from {f[0]:.3g} Hz to {f[-1]:.3g} Hz"]
    lines.append(f"  best strain ASD {asd[i]:.3e} Hz^-1/2 at {f[i]:.4g} Hz")
    lo, hi = budget.band_below(10.0 * asd[i])
    lines.append(f"  within x10 of the best from {lo:.3g} Hz to {hi:.3g} Hz")
    dominant = max(budget.psd, key=lambda k: budget.psd[k][i])
    lines.append(f"  dominant noise at the best point: {dominant}")
    if budget.mode == "envelope":
        lines.append("  (an envelope: each frequency uses its own tuning)")
    return "\n".join(lines)
