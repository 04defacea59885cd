"""Plain-text summaries printed by the command line and put into reports."""

from __future__ import annotations

import astropy.units as u
import numpy as np

__all__ = ["describe_mission", "summarise_budget", "mission_rows", "mission_differences", "SECTIONS"]


SECTIONS = ("link", "clock", "laser", "spacecraft", "sequence", "observation")


def mission_rows(mission):
    """The resolved mission as rows ``(section, field, value, unit, note)``: quantities split into
    their number and unit (None for plain values), defaults that follow another field resolved
    and noted."""
    rows = []
    for section in SECTIONS:
        model = getattr(mission, section)
        for key in type(model).model_fields:
            value = getattr(model, key)
            note = ""
            if key == "coherence_time" and value is None:
                value, note = mission.coherence_time, "species lifetime"
            elif key == "max_interrogation" and value is None:
                value, note = mission.max_interrogation, "3 coherence times"
            elif key in ("receiver_linewidth", "receiver_flicker_floor") and value is None:
                master = key.removeprefix("receiver_")
                value, note = getattr(model, master), f"same as {master}"
            unit = None
            if isinstance(value, u.Quantity):
                value, unit = float(value.value), value.unit
            elif isinstance(value, (list, tuple)):
                value = ", ".join(f"{v:g}" for v in value) if value else "none"
            elif value is None:
                value = "none"
            rows.append((section, key, value, unit, note))
    return rows


def describe_mission(mission, digest):
    """The resolved mission, with units, as text."""
    lines = [f"mission: {mission.name}  (sha256 {digest})"]
    if mission.description:
        lines.append(f"  {mission.description}")
    last = None
    for section, key, value, unit, note in mission_rows(mission):
        if section != last:
            lines.append(f"[{section}]")
            last = section
        if unit is not None:
            value = f"{value:.6g} {unit.to_string()}"
        lines.append(f"  {key} = {value}" + (f"  ({note})" if note else ""))
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


def _shown(value, unit):
    return f"{value:.6g} {unit.to_string()}" if unit is not None else (f"{value:.6g}" if isinstance(value, float)
                                                                       else str(value))


def mission_differences(missions):
    """The fields in which missions differ: a list of ``(section.field, [value per mission],
    unit or None, [value per mission as text])`` in the order of the mission file's sections.
    Values are compared as resolved (defaults filled in), each in its field's own unit."""
    tables = [mission_rows(m) for m in missions]
    out = []
    for i, (section, key, _, unit, _) in enumerate(tables[0]):
        values = [t[i][2] for t in tables]
        units = [t[i][3] for t in tables]
        if all(v == values[0] for v in values[1:]) and all(x == units[0] for x in units[1:]):
            continue
        out.append((f"{section}.{key}", values, unit, [_shown(v, x) for v, x in zip(values, units)]))
    return out
