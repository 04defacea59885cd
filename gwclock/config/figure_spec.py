"""Figure specifications: one TOML file describes a print-ready comparison figure.

A spec can overlay any number of missions (tuned envelopes or fixed windows), reference
detectors, inspiral tracks and monochromatic sources, in amplitude-spectral-density,
characteristic-strain or Omega_gw form, with annotations. This module validates the file; the
drawing is :func:`gwclock.outputs.figures.render_spec`.
"""

from __future__ import annotations

import hashlib
from typing import Annotated, Any, Literal

from pydantic import BaseModel, BeforeValidator, ConfigDict, Field, ValidationError, model_validator

from ..files import read_toml
from ..quantities import parse_quantity
from .mission import validation_error

__all__ = ["FigureSpec", "load_spec", "spec_from_dict", "SIZES", "FONTS"]

SIZES = {"one-column": (3.4, 3.9), "two-column": (7.0, 4.3)}
FONTS = {"one-column": {"font.size": 6.5, "axes.titlesize": 7, "legend.fontsize": 5},
         "two-column": {"font.size": 9, "axes.titlesize": 11, "legend.fontsize": 7}}


def _hz(value: Any) -> float:
    x = float(parse_quantity(value, "Hz", allow_plain=True).value)
    if x <= 0:
        raise ValueError("expected a positive frequency")
    return x


def _seconds(value: Any) -> float:
    x = float(parse_quantity(value, "s").value)
    if x <= 0:
        raise ValueError("expected a positive time")
    return x


def _metres(value: Any) -> float:
    x = float(parse_quantity(value, "m").value)
    if x <= 0:
        raise ValueError("expected a positive distance")
    return x


def _marks(value: Any):
    """Time marks: true (the default set), false, or times before merger written with their units
    ("1 week", "10 min"), kept as written for the labels."""
    if isinstance(value, bool):
        return value
    if not isinstance(value, list) or not all(isinstance(v, str) for v in value) or len(value) > 20:
        raise ValueError("expected true, false or a list of up to 20 times such as ['1 week', '10 min']")
    for v in value:
        _seconds(v)
    return [" ".join(v.split()) for v in value]


Hz = Annotated[float, BeforeValidator(_hz)]
Seconds = Annotated[float, BeforeValidator(_seconds)]
Metres = Annotated[float, BeforeValidator(_metres)]


class _Item(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class MissionItem(_Item):
    file: str = Field(description="mission file, relative to the spec (or 'default')")
    mode: Literal["envelope", "window"] = "envelope"
    tune: Hz | None = Field(None, description="tuning of a window")
    label: str | None = None
    noises: bool = Field(False, description="draw the noise budget too")
    band: float | None = Field(None, gt=0, description="annotate where the ASD is below this level")

    @model_validator(mode="after")
    def _window_needs_tune(self):
        if self.mode == "window" and self.tune is None:
            raise ValueError("a window needs 'tune'")
        return self


class ReferenceItem(_Item):
    name: str
    confusion: float | None = Field(None, description="LISA galactic confusion, years")
    label: str | None = None


class TrackItem(_Item):
    mass1: float = Field(ge=1e-3, le=1e12, description="source-frame mass, solar masses")
    mass2: float = Field(ge=1e-3, le=1e12, description="source-frame mass, solar masses")
    distance: Metres | None = None
    redshift: float | None = Field(None, ge=0)
    label: str | None = None
    marks: Annotated[bool | list[str], BeforeValidator(_marks)] = Field(
        True, description="time marks before merger: true (1 yr, 1 month, 1 day, 1 hour), false, or a list such as ['1 week', '10 min']")

    @model_validator(mode="after")
    def _one_distance(self):
        if (self.distance is None) == (self.redshift is None):
            raise ValueError("give exactly one of distance and redshift")
        return self


class PointItem(_Item):
    frequency: Hz
    h0: float = Field(gt=0)
    label: str | None = None


class Axes(_Item):
    fmin: Hz = 1e-5
    fmax: Hz = 1e3
    ymin: float | None = Field(None, gt=0)
    ymax: float | None = Field(None, gt=0)
    points: int = Field(600, ge=10, le=100_000)

    @model_validator(mode="after")
    def _ordered(self):
        if self.fmin >= self.fmax:
            raise ValueError("fmin must be below fmax")
        if self.ymin is not None and self.ymax is not None and self.ymin >= self.ymax:
            raise ValueError("ymin must be below ymax")
        return self


class FigureSpec(_Item):
    """A whole figure: its form (ASD, characteristic strain or Omega_gw), size, axes and the items drawn."""

    title: str = ""
    form: Literal["asd", "hc", "omega"] = "asd"
    size: Literal["one-column", "two-column"] = "two-column"
    dpi: int = Field(300, ge=50, le=1200)
    out: str | None = None
    observation: Seconds = Field(3.15576e7, description="observing time for monochromatic sources")
    axes: Axes = Axes()
    mission: list[MissionItem] = []
    reference: list[ReferenceItem] = []
    track: list[TrackItem] = []
    point: list[PointItem] = []

    @model_validator(mode="after")
    def _something(self):
        if not (self.mission or self.reference or self.track or self.point):
            raise ValueError("the figure is empty: add [[mission]], [[reference]], [[track]] or [[point]] tables")
        return self


def spec_from_dict(data, source="figure spec"):
    """Validate a figure spec given as a dict (the TOML's structure); returns a FigureSpec."""
    try:
        return FigureSpec.model_validate(data)
    except ValidationError as exc:
        raise validation_error(exc, source, FigureSpec) from None


def load_spec(path):
    """Read and validate a figure spec; returns (spec, sha256 of the file)."""
    data, raw = read_toml(path, "figure spec")
    try:
        spec = FigureSpec.model_validate(data)
    except ValidationError as exc:
        raise validation_error(exc, str(path), FigureSpec) from None
    return spec, hashlib.sha256(raw).hexdigest()[:16]
