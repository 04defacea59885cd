"""Trade studies: parameter sweeps, uncertainty bands and requirement solving.

A study varies dotted mission fields over a grid; every grid point is rebuilt through the same
validation as a mission file (an invalid point is reported in its row and the sweep goes on),
and figures of merit (metrics) are evaluated for all valid points in one vectorised pass per
chunk.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass

import astropy.units as u
import numpy as np
from pydantic import ValidationError

from ..astro.sources import MASS_RANGE, load_sources
from ..config.mission import validation_error
from ..engine.batch import batch_budget
from ..engine.budget import SPAN, band_below
from ..errors import InputError
from ..quantities import checked_frequency, parse_quantity
from .horizon import horizon
from .snr import SCHEDULES, TunedCurve, clock_snr

__all__ = ["Axis", "parse_vary", "parse_metric", "Metric", "point", "evaluate_points", "require",
           "parse_perturb", "perturbed_metrics"]


@dataclass(frozen=True)
class Axis:
    """One varied field: dotted name, the values (text with units, for validation) and numbers."""

    field: str
    texts: tuple
    values: np.ndarray
    unit: str
    log: bool


def field_unit(mission, field, source="study specification"):
    """Unit of a numeric mission field as written in its values ("" for plain numbers)."""
    node = mission
    for part in field.split("."):
        # fields of the file's sections only (a derived property such as mission.coherence_time is not one)
        if part not in getattr(type(node), "model_fields", {}):
            names = sorted(f"{s}.{k}" for s, sec in type(mission).model_fields.items()
                           for k in getattr(sec.annotation, "model_fields", {}))
            close = difflib.get_close_matches(field, names, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else "; expected SECTION.FIELD as in the mission file"
            raise InputError(f"no such mission field{hint}", source=source, field=field)
        node = getattr(node, part)
    if isinstance(node, u.Quantity):
        return node.unit.to_string()
    if node is None and field == "clock.coherence_time":
        return "s"
    if node is None and field == "sequence.max_interrogation":
        return "s"
    if field == "sequence.tune":  # "auto" or a frequency; an axis of tunings gives each its window
        return "Hz"
    if isinstance(node, bool) or not isinstance(node, (int, float)):
        raise InputError("only numeric fields can be varied", source=source, field=field)
    return ""


def parse_vary(text, mission, source="study specification", option="vary") -> Axis:
    """``FIELD=START:STOP:COUNT[:log]`` with units on START and STOP for quantity fields."""
    m = re.fullmatch(r"\s*([\w.]+)\s*=\s*(.+)", text or "")
    if not m:
        raise InputError("expected FIELD=START:STOP:COUNT[:log]", source=source, field=option, value=text)
    field, rest = m.group(1), m.group(2)
    parts = [p.strip() for p in rest.split(":")]
    if len(parts) not in (3, 4) or (len(parts) == 4 and parts[3] not in ("log", "lin")):
        raise InputError("expected FIELD=START:STOP:COUNT[:log]", source=source, field=option, value=text)
    unit = field_unit(mission, field, source)
    try:
        count = int(parts[2])
    except ValueError:
        raise InputError("COUNT must be a whole number", source=source, field=option, value=text) from None
    if not 1 <= count <= 1_000_000:
        raise InputError("COUNT must be between 1 and 1e6", source=source, field=option, value=text)
    try:
        if unit:
            lo, hi = (float(parse_quantity(p, unit).value) for p in parts[:2])
        else:
            lo, hi = float(parts[0]), float(parts[1])
    except ValueError as exc:
        raise InputError(str(exc), source=source, field=f"{option} {field}", value=rest) from None
    if not (np.isfinite(lo) and np.isfinite(hi)):
        raise InputError("expected finite ends", source=source, field=f"{option} {field}", value=rest)
    log = len(parts) == 4 and parts[3] == "log"
    if log and (lo <= 0 or hi <= 0):
        raise InputError("a log axis needs positive ends", source=source, field=f"{option} {field}", value=rest)
    values = np.geomspace(lo, hi, count) if log else np.linspace(lo, hi, count)
    texts = tuple(f"{float(v)!r} {unit}" if unit else float(v) for v in values)
    return Axis(field, texts, values, unit, log)


@dataclass(frozen=True)
class Metric:
    """A figure of merit: ``kind`` with its argument; ``columns`` it fills."""

    text: str
    kind: str
    arg: object
    columns: tuple
    units: tuple


def parse_metric(text, source="study specification", option="metric") -> Metric:
    """``asd@FREQ``, ``band@LEVEL``, ``snr:FILE[:SCHEDULE]``, ``horizon:MASS``, ``power_needed@FREQ``."""
    t = (text or "").strip()
    try:
        if t.startswith("asd@"):
            f = checked_frequency(t[4:])
            return Metric(t, "asd", f, (f"asd@{f:g}Hz",), ("Hz(-1/2)",))
        if t.startswith("power_needed@"):
            f = checked_frequency(t[13:])
            return Metric(t, "power", f, (f"power_needed@{f:g}Hz",), ("W",))
        if t.startswith("band@"):
            level = float(t[5:])
            if not level > 0:
                raise ValueError("level must be positive")
            return Metric(t, "band", level, (f"band_low@{level:g}", f"band_high@{level:g}"), ("Hz", "Hz"))
        if t.startswith("horizon:"):
            mass = float(t[8:])  # total source-frame mass of an equal-mass binary
            if not 2 * MASS_RANGE[0] <= mass <= 2 * MASS_RANGE[1]:
                raise ValueError(f"expected a total mass from {2 * MASS_RANGE[0]:g} to {2 * MASS_RANGE[1]:g} solar masses")
            return Metric(t, "horizon", mass, (f"horizon_z@{mass:g}Msun",), ("",))
        if t.startswith("snr:"):
            rest = t[4:]
            schedule = "track"
            for s in SCHEDULES:
                if rest.endswith(":" + s):
                    rest, schedule = rest[: -len(s) - 1], s
            sources = load_sources(rest)
            cols = tuple(f"snr[{schedule}]:{src.name}" for src in sources)
            return Metric(t, "snr", (sources, schedule), cols, ("",) * len(cols))
    except ValueError as exc:
        raise InputError(str(exc), source=source, field=option, value=text) from None
    raise InputError("expected asd@FREQ, band@LEVEL, snr:SOURCE_FILE[:SCHEDULE], horizon:MASS or power_needed@FREQ",
                     source=source, field=option, value=text)


def point(mission, axes, combo):
    """One grid point (indices into each axis): (combo, Mission or None, reason it is invalid)."""
    changes = {a.field: a.texts[i] for a, i in zip(axes, combo)}
    try:
        return combo, mission.clone(**changes), ""
    except InputError as exc:  # an invalid combination: reported in the row
        return combo, None, failure_reason(exc)


def failure_reason(exc):
    """The one-line message of a validation failure, without a file name."""

    if isinstance(exc, ValidationError):
        return str(validation_error(exc, None))
    return " ".join(str(exc).split())


BAND_GRID = np.geomspace(*SPAN, 240)


def evaluate_points(designs, metrics):
    """Metric values for a list of designs: dict column -> array (len(designs))."""
    V = len(designs)
    out = {}
    if V == 0:
        for m in metrics:
            for c in m.columns:
                out[c] = np.zeros(0)
        return out
    curve = batch_budget(designs, BAND_GRID) if any(m.kind == "band" for m in metrics) else None
    if any(m.kind in ("snr", "horizon") for m in metrics):
        # schedules tune the clock themselves: they need the envelope, with a fixed tuning (if any) passed on
        untuned = [d.replace(tune=None) for d in designs]
        tracks = batch_budget(untuned, BAND_GRID)
    for m in metrics:
        if m.kind == "asd":
            out[m.columns[0]] = np.sqrt(batch_budget(designs, [m.arg])["total"][:, 0])
        elif m.kind == "band":
            out[m.columns[0]], out[m.columns[1]] = band_below(BAND_GRID, np.sqrt(curve["total"]), m.arg)
        elif m.kind == "power":
            out[m.columns[0]] = _power_needed(designs, m.arg)
        elif m.kind in ("snr", "horizon"):
            values = _per_curve(designs, untuned, tracks, m)
            for c, v in zip(m.columns, values):
                out[c] = v
    return out


def _tuned_curves(designs, curve):
    curves = []
    for i, d in enumerate(designs):
        curves.append(TunedCurve.from_envelope(d, BAND_GRID, curve["total"][i], curve["interrogation"][i]))
    return curves


def _per_curve(designs, untuned, curve, m):
    curves = _tuned_curves(untuned, curve)
    if m.kind == "snr":
        sources, schedule = m.arg
        tunes = [d.tune if schedule == "fixed" else None for d in designs]
        return [np.array([clock_snr(c, s, schedule, tune=t).snr for c, t in zip(curves, tunes)]) for s in sources]
    return [np.array([horizon(lambda s, c=c: clock_snr(c, s, "track").snr, m.arg, 8.0)[0] for c in curves])]


def _power_needed(designs, f0):
    """Transmit power at which shot noise equals projection noise at f0 (sequence re-optimised),
    by bracketed root finding on log P; NaN when no power in 1e-9..1e6 W achieves it."""
    from scipy.optimize import brentq  # slow to import; only this metric needs it
    out = np.full(len(designs), np.nan)
    for i, d in enumerate(designs):
        def gap(logp, d=d):
            b = batch_budget([d.replace(transmit_power=float(np.exp(logp)))], [f0], noise_terms=True)
            return np.log(b["shot"][0, 0]) - np.log(b["projection"][0, 0])
        lo, hi = np.log(1e-9), np.log(1e6)
        g_lo, g_hi = gap(lo), gap(hi)
        if g_lo > 0 > g_hi:
            out[i] = float(np.exp(brentq(gap, lo, hi, xtol=1e-8)))
    return out


def parse_perturb(text, mission, source="study specification", option="perturb"):
    """``FIELD=REL_SIGMA``: relative 1-sigma (Gaussian, truncated to stay positive)."""
    m = re.fullmatch(r"\s*([\w.]+)\s*=\s*([0-9.eE+-]+)\s*", text or "")
    if not m:
        raise InputError("expected FIELD=REL_SIGMA", source=source, field=option, value=text)
    field = m.group(1)
    try:
        sigma = float(m.group(2))
    except ValueError:
        raise InputError("REL_SIGMA must be a plain number", source=source, field=f"{option} {field}",
                         value=m.group(2)) from None
    field_unit(mission, field, source)
    if field == "sequence.tune" and mission.sequence.tune == "auto":
        raise InputError("perturbing the tuning needs a fixed sequence.tune in the mission", source=source,
                         field=f"{option} {field}", value="auto")
    if not 0 < sigma < 1:
        raise InputError("REL_SIGMA must lie in (0, 1)", source=source, field=option, value=text)
    return field, sigma


def field_value(mission, field):
    node = mission
    for part in field.split("."):
        node = getattr(node, part)
    if node is None and field == "clock.coherence_time":
        node = mission.coherence_time
    if node is None and field == "sequence.max_interrogation":
        node = mission.max_interrogation
    return (float(node.value), node.unit.to_string()) if isinstance(node, u.Quantity) else (float(node), "")


def perturbed_metrics(mission, metrics, perturb, samples, seed):
    """Monte-Carlo over uncertain inputs: per metric column, (median, 5 %, 95 %)."""
    rng = np.random.default_rng(seed)
    designs = []
    for _ in range(samples):
        changes = {}
        for field, sigma in perturb:
            v, unit = field_value(mission, field)
            x = v * max(1 + sigma * rng.standard_normal(), 1e-3)
            changes[field] = f"{x!r} {unit}" if unit else x
        try:
            designs.append(mission.clone(**changes).design())
        except Exception:
            continue  # a draw outside the valid range is dropped
    vals = evaluate_points(designs, metrics)
    out = {}
    for c, v in vals.items():
        v = v[np.isfinite(v)]
        out[c] = (np.median(v), np.percentile(v, 5), np.percentile(v, 95)) if v.size else (np.nan,) * 3
    return out, len(designs)


def require(mission, metric: Metric, op: str, target: float, field: str, bounds):
    """Smallest (or largest, when the metric improves as the field falls) value of ``field`` that
    meets ``metric op target``, by bracketed root finding (scipy.optimize.brentq) in log space.

    Returns (value, unit, message).
    """
    from scipy.optimize import brentq  # slow to import; only requirements need it
    unit = field_unit(mission, field)
    lo, hi = bounds

    def value(x):
        m = mission.clone(**{field: f"{float(x)!r} {unit}" if unit else float(x)})
        return float(evaluate_points([m.design()], [metric])[metric.columns[0]][0])

    def meets(v):
        return v <= target if op == "<=" else v >= target

    v_lo, v_hi = value(lo), value(hi)
    ok_lo, ok_hi = meets(v_lo), meets(v_hi)
    if not ok_lo and not ok_hi:
        return None, unit, (f"the target {metric.columns[0]} {op} {target:g} cannot be reached for {field} in "
                            f"[{lo:g}, {hi:g}] {unit} (values {v_lo:.4g} and {v_hi:.4g})")
    if ok_lo and ok_hi:
        return lo, unit, f"the target is met across the whole range; smallest value {lo:g} {unit}"
    g = lambda lx: np.log(value(float(np.exp(lx)))) - np.log(target)  # noqa: E731
    root = float(np.exp(brentq(g, np.log(lo), np.log(hi), xtol=1e-10, rtol=1e-9)))
    which = "smallest" if ok_hi else "largest"
    return root, unit, f"{which} {field} meeting {metric.columns[0]} {op} {target:g}: {root:.6g} {unit}"
