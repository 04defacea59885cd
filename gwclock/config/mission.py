"""Mission files: a validated, frozen description of one clock-link detector design.

A mission file is TOML. Quantities carry their units in the value ("3e10 m", "40 mW");
dimensionless numbers are plain numbers. Unknown keys, wrong dimensions, out-of-range values
and contradictions between fields are errors that name the file and the dotted field.
"""

from __future__ import annotations

import difflib
import hashlib
import html
import math
import tomllib
from importlib import resources
from pathlib import Path
from typing import Annotated, Any, Literal, get_args

import astropy.units as u
from pydantic import BaseModel, BeforeValidator, ConfigDict, Field, ValidationError, model_validator

from ..engine.curves import check_tuning
from ..errors import InputError
from ..files import read_toml
from ..physics.design import Design
from ..physics.sequences import KINDS
from ..physics.species import SPECIES
from ..quantities import parse_quantity

__all__ = ["Mission", "load_mission", "mission_from_dict", "validation_error", "DEFAULT_MISSION"]

DEFAULT_MISSION = "default"

_ACCELERATION_ASD = u.Unit("m / (s2 Hz(1/2))")


def _si(q: u.Quantity, unit) -> float:
    """The value in ``unit`` as a float (fields are stored in their own unit: then no conversion)."""
    return float(q.value) if q.unit == unit else float(q.to_value(unit))


def _quantity(unit: str, lo: float | None = None, hi: float | None = None, *, lo_open: bool = False,
              field: str | None = None):
    """A pydantic field type: text with a unit, converted to ``unit`` and range-checked."""

    def parse(value: Any) -> u.Quantity:
        q = parse_quantity(value, unit)
        x = float(q.value)
        if lo is not None and (x < lo or (lo_open and x == lo)):
            rel = ">" if lo_open else ">="
            raise ValueError(f"expected a value {rel} {lo:g} {unit}")
        if hi is not None and x > hi:
            raise ValueError(f"expected a value <= {hi:g} {unit}")
        return q

    return Annotated[u.Quantity, BeforeValidator(parse)]


def _tuning(value: Any):
    """``sequence.tune``: "auto", or a frequency with a unit above 0 and up to 1 MHz."""
    if isinstance(value, str) and value.strip() == "auto":
        return "auto"
    try:
        q = parse_quantity(value, "Hz")
    except ValueError as exc:
        raise ValueError(f"expected 'auto' or a frequency such as '0.1 Hz' ({exc})") from None
    if not 0 < float(q.value) <= 1e6:
        raise ValueError("expected 'auto' or a frequency above 0 Hz and up to 1e+06 Hz")
    return q


def _number(lo: float, hi: float, *, integer_like: bool = False):
    def parse(value: Any) -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise ValueError(f"expected a plain number between {lo:g} and {hi:g}")
        x = float(value)
        if not math.isfinite(x) or x < lo or x > hi:
            raise ValueError(f"expected a plain number between {lo:g} and {hi:g}")
        return x

    return Annotated[float, BeforeValidator(parse)]


class _Section(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, arbitrary_types_allowed=True, validate_default=True)


class Link(_Section):
    """[link]: the optical link between the two spacecraft."""

    baseline: _quantity("m", 1e6, 1e13) = Field(description="one-way distance between the spacecraft")
    transmit_power: _quantity("W", 1e-15, 1e4) = Field(description="laser power sent into the telescope")
    transmit_aperture: _quantity("m", 1e-3, 100) = Field("0.3 m", description="transmit telescope diameter")
    receive_aperture: _quantity("m", 1e-3, 100) = Field("0.3 m", description="receive telescope diameter")
    optical_efficiency: _number(1e-12, 1.0) = Field(0.3, description="end-to-end power efficiency (0-1]")
    phase_lock_bandwidth: _quantity("Hz", 1e-6, 1e9) = Field("10 kHz", description="bandwidth B of the receiving laser's first-order phase lock")
    timing_mismatch: _quantity("s", 0, 1.0) = Field("1 us", description="synchronisation error of the two clocks' interrogations")
    path: Literal["one-way", "two-way"] = Field("one-way", description="one-way link, or round trip through a transponder")


class Clock(_Section):
    """[clock]: the optical lattice clock on each spacecraft (both identical)."""

    species: str = Field(description="clock species preset")
    atom_number: _number(1, 1e12) = Field(description="atoms interrogated per clock per cycle")
    coherence_time: _quantity("s", 1e-3, 1e5) | None = Field(None, description="atomic coherence time (default: species lifetime)")
    dead_time: _quantity("s", 0, 1e5) = Field("1 s", description="preparation and read-out time per cycle")
    squeezing_db: _number(0, 20) = Field(0.0, description="metrological squeezing gain in dB")
    pi_pulse_duration: _quantity("s", 1e-9, 1e3) = Field("10 ms", description="duration of one pi pulse")
    pulse_error: _number(0, 0.5) = Field(1e-4, description="fractional contrast loss per pi pulse")
    pulse_errors: Literal["coherent", "incoherent"] = Field(
        "coherent", description="how pulse errors add up: coherent (worst phase, conservative) or incoherent")
    instability_white: _number(0, 1e-10) = Field(
        0.0, description="each clock's own white-FM instability, Allan deviation at 1 s (0: none)")
    instability_flicker: _number(0, 1e-10) = Field(
        0.0, description="each clock's own flicker-FM floor of the Allan deviation (0: none)")
    instability_walk: _number(0, 1e-10) = Field(
        0.0, description="each clock's slow random-walk drift, Allan deviation at 1 day (0: none)")

    @model_validator(mode="after")
    def _species_known(self):
        if self.species not in SPECIES:
            close = difflib.get_close_matches(self.species, SPECIES, n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise ValueError(f"unknown species {self.species!r}{hint}; expected one of {', '.join(SPECIES)}")
        return self


class Laser(_Section):
    """[laser]: the shared ultra-stable (master) laser, and the receiving laser phase-locked to it."""

    linewidth: _quantity("Hz", 0, 1e6) = Field("0.01 Hz", description="Lorentzian FWHM of the white frequency noise")
    flicker_floor: _number(0, 1e-6) = Field(4e-17, description="flicker floor of the fractional Allan deviation")
    gain_mismatch: _number(0, 1) = Field(0.0, description="fractional mismatch of the clocks' response to common laser noise")
    receiver_linewidth: _quantity("Hz", 0, 1e6) | None = Field(
        None, description="receiving laser's own white-FM linewidth (default: same as linewidth)")
    receiver_flicker_floor: _number(0, 1e-6) | None = Field(
        None, description="receiving laser's own flicker floor (default: same as flicker_floor)")


class Spacecraft(_Section):
    """[spacecraft]: drag-free test masses."""

    acceleration_noise: _quantity("m / (s2 Hz(1/2))", 0, 1e-6) = Field(
        "3e-15 m / (s2 Hz(1/2))", description="acceleration noise ASD per test mass")
    acceleration_corner: _quantity("Hz", 0, 1.0) = Field(
        "0 Hz", description="corner below which the acceleration noise rises as 1/f (0: flat)")


class Sequence(_Section):
    """[sequence]: the atomic pulse sequence and the read-out."""

    kind: Literal[KINDS] = Field("cpmg", description="sequence family")
    max_interrogation: _quantity("s", 1e-3, 1e6) | None = Field(None, description="longest interrogation allowed (default: 3 coherence times)")
    tune: Annotated[Literal["auto"] | u.Quantity, BeforeValidator(_tuning)] = Field("auto", description="fixed tuning frequency, or auto")
    comparison: Literal["linear", "correlated", "auto"] = Field("auto", description="two-clock read-out")
    phase_offset: _quantity("rad", 0, 1.5, lo_open=True) = Field(
        "0.1 rad", description="differential phase offset of the correlated read-out (needed to recover the sign)")
    pulse_times: tuple[float, ...] | None = Field(None, description="custom only: pi-pulse centres as fractions of the interrogation")

    @model_validator(mode="after")
    def _custom_times(self):
        if self.kind == "custom":
            if not self.pulse_times:
                raise ValueError("kind 'custom' needs pulse_times, a list of fractions of the interrogation in (0, 1)")
            t = self.pulse_times
            if any(not (0 < x < 1) for x in t) or any(b <= a for a, b in zip(t, t[1:])):
                raise ValueError("pulse_times must increase strictly and lie inside (0, 1)")
        elif self.pulse_times is not None:
            raise ValueError("pulse_times is only used with kind = 'custom'")
        return self


class Observation(_Section):
    """[observation]: the science run."""

    duration: _quantity("s", 1.0, 1e10) = Field("1 yr", description="total observing time")


class Mission(_Section):
    """A whole mission file, validated."""

    name: str = Field(min_length=1, description="mission name, shown in titles")
    description: str = Field("", description="free text")
    colour: str | None = Field(None, pattern=r"^#[0-9A-Fa-f]{6}$",
                               description="the colour the mission is drawn in, in every figure ('#RRGGBB')")
    link: Link
    clock: Clock
    laser: Laser = Laser()
    spacecraft: Spacecraft = Spacecraft()
    sequence: Sequence = Sequence()
    observation: Observation = Observation()

    @model_validator(mode="after")
    def _consistent(self):
        tau = self.coherence_time.to_value(u.s)
        tmax = self.max_interrogation.to_value(u.s)
        tpi = self.clock.pi_pulse_duration.to_value(u.s)
        if tmax > 10 * tau:
            raise ValueError(
                f"sequence.max_interrogation ({tmax:g} s) is longer than 10 coherence times ({tau:g} s): "
                "the contrast would be below exp(-10)")
        if tmax <= 2 * tpi:
            raise ValueError("sequence.max_interrogation must be longer than two pi pulses (clock.pi_pulse_duration)")
        if self.sequence.tune != "auto":
            check_tuning(self.design(), self.sequence.tune.to_value(u.Hz))  # an OutOfReachError is a ValueError
        return self

    # resolved values -------------------------------------------------------------------------
    @property
    def coherence_time(self) -> u.Quantity:
        """The coherence time in force (the species lifetime when not given)."""
        if self.clock.coherence_time is not None:
            return self.clock.coherence_time
        return SPECIES[self.clock.species].lifetime * u.s

    @property
    def max_interrogation(self) -> u.Quantity:
        """The longest interrogation in force (three coherence times when not given)."""
        if self.sequence.max_interrogation is not None:
            return self.sequence.max_interrogation
        return 3 * self.coherence_time

    def design(self) -> Design:
        """The SI-float parameter set that the engine evaluates."""
        sp = SPECIES[self.clock.species]
        si = _si
        tune = None if self.sequence.tune == "auto" else si(self.sequence.tune, u.Hz)
        return Design(
            name=self.name,
            nu0=sp.frequency,
            atom_number=self.clock.atom_number,
            coherence_time=si(self.coherence_time, u.s),
            dead_time=si(self.clock.dead_time, u.s),
            squeezing=10 ** (-self.clock.squeezing_db / 10),
            pi_pulse_duration=si(self.clock.pi_pulse_duration, u.s),
            pulse_error=self.clock.pulse_error,
            pulse_errors=self.clock.pulse_errors,
            clock_white=self.clock.instability_white,
            clock_flicker=self.clock.instability_flicker,
            clock_walk=self.clock.instability_walk,
            baseline=si(self.link.baseline, u.m),
            transmit_power=si(self.link.transmit_power, u.W),
            transmit_aperture=si(self.link.transmit_aperture, u.m),
            receive_aperture=si(self.link.receive_aperture, u.m),
            optical_efficiency=self.link.optical_efficiency,
            phase_lock_bandwidth=si(self.link.phase_lock_bandwidth, u.Hz),
            timing_mismatch=si(self.link.timing_mismatch, u.s),
            path=self.link.path,
            linewidth=si(self.laser.linewidth, u.Hz),
            flicker_floor=self.laser.flicker_floor,
            gain_mismatch=self.laser.gain_mismatch,
            receiver_linewidth=si(self.laser.receiver_linewidth if self.laser.receiver_linewidth is not None
                                  else self.laser.linewidth, u.Hz),
            receiver_flicker_floor=(self.laser.receiver_flicker_floor if self.laser.receiver_flicker_floor is not None
                                    else self.laser.flicker_floor),
            acceleration_noise=si(self.spacecraft.acceleration_noise, _ACCELERATION_ASD),
            acceleration_corner=si(self.spacecraft.acceleration_corner, u.Hz),
            kind=self.sequence.kind,
            max_interrogation=si(self.max_interrogation, u.s),
            tune=tune,
            comparison=self.sequence.comparison,
            phase_offset=si(self.sequence.phase_offset, u.rad),
            pulse_times=tuple(self.sequence.pulse_times or ()),
            duration=si(self.observation.duration, u.s),
        )

    def _repr_html_(self):
        """The mission as an HTML table for notebooks (section, field, value with its unit)."""
        rows = [f"<tr><th colspan=2 style='text-align:left'>{html.escape(self.name)}</th></tr>"]
        for section, value in self.model_dump(mode="python").items():
            if isinstance(value, dict):
                for key, v in value.items():
                    rows.append(f"<tr><td>{section}.{key}</td><td>{html.escape(str(v))}</td></tr>")
        return "<table>" + "".join(rows) + "</table>"

    def clone(self, **changes: Any) -> Mission:
        """A new mission with dotted-field changes (``{"clock.atom_number": 1e6}``), re-validated;
        an invalid change raises :class:`~gwclock.errors.InputError` naming the field."""
        data = self.model_dump(mode="python")
        for dotted, value in changes.items():
            node = data
            *parents, leaf = dotted.split(".")
            for p in parents:
                if not isinstance(node.get(p), dict):
                    raise InputError("no such mission field; expected SECTION.FIELD", field=dotted)
                node = node[p]
            if leaf not in node:
                raise InputError("no such mission field", field=dotted)
            node[leaf] = value
        try:
            return Mission.model_validate(data)
        except ValidationError as exc:  # the library's one error type, not pydantic's
            raise validation_error(exc, None) from None


# loading -------------------------------------------------------------------------------------

def _dotted(loc) -> str:
    out = ""
    for p in loc:
        if isinstance(p, int):
            out += f"[{p}]"
        elif not (isinstance(p, str) and p.startswith("function-")):
            out += ("." if out else "") + str(p)
    return out


def _fields_at(loc, root=None) -> list[str]:
    model = root or Mission
    for part in loc[:-1]:
        if isinstance(part, int):
            continue
        field = model.model_fields.get(str(part))
        if field is None:
            return []
        candidates = [field.annotation, *get_args(field.annotation)]
        models = [a for a in candidates if isinstance(a, type) and issubclass(a, BaseModel)]
        if not models:
            return []
        model = models[0]
    return list(model.model_fields)


def validation_error(exc: ValidationError, source: str | None, root=None) -> InputError:
    """One-line error for any gwclock schema (missions by default, figure specs with ``root``)."""
    errors = exc.errors(include_url=False)
    # a misspelt key also shows as a missing field: report the misspelling first
    errors.sort(key=lambda e: e["type"] != "extra_forbidden")
    err = errors[0]
    loc = tuple(err["loc"])
    # drop pydantic's union branch tags such as 'literal['auto']' or 'function-before[...]'
    loc = tuple(p for p in loc if not (isinstance(p, str) and ("[" in p or p.startswith("function-"))))
    field = _dotted(loc) or None
    kind = err["type"]
    value = err.get("input")
    if kind == "extra_forbidden":
        close = difflib.get_close_matches(str(loc[-1]), _fields_at(loc, root), n=1)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        return InputError(f"unknown key{hint}", source=source, field=field)
    if kind == "missing":
        return InputError("required field is missing", source=source, field=field)
    msg = err["msg"]
    if msg.startswith("Value error, "):
        msg = msg[len("Value error, "):]
    if msg.startswith("Input should be "):
        msg = "expected " + msg[len("Input should be "):]
    if isinstance(value, dict):
        value = None
    return InputError(msg, source=source, field=field, value=value)


def mission_from_dict(data: dict, source: str = "<mission>") -> Mission:
    """Validate a parsed mission document; errors become :class:`InputError`."""
    try:
        return Mission.model_validate(data)
    except ValidationError as exc:
        raise validation_error(exc, source) from None


def load_mission(path: str | Path | None = None) -> tuple[Mission, str]:
    """Load and validate a mission file, or the built-in default when ``path`` is None.

    Returns
    -------
    (Mission, str)
        The mission and the SHA-256 content hash (first 16 hex digits) of the file.
    """
    if path is None or str(path) == DEFAULT_MISSION:
        ref = resources.files("gwclock") / "data" / "default.toml"
        raw = ref.read_bytes()
        data, source = tomllib.loads(raw.decode()), "built-in default mission"
    else:
        data, raw = read_toml(path, "mission file")
        source = str(path)
    mission = mission_from_dict(data, source)
    return mission, hashlib.sha256(raw).hexdigest()[:16]
