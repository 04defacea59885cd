"""Parsing physical quantities written with units ("3e10 m", "40 mW").

Config files and the command line carry units in their values; this module turns such text into
:class:`astropy.units.Quantity` and checks the physical dimension.
"""

from __future__ import annotations

import functools
import math
import warnings

import astropy.units as u

__all__ = ["parse_quantity", "parse_frequency", "checked_frequency", "FREQUENCY_RANGE"]

#: Frequencies a user may give anywhere (Hz): far beyond what any clock link can reach at both ends,
#: but inside the floating-point range of every power law the noise model takes of them.
FREQUENCY_RANGE = (1e-9, 1e6)


def parse_quantity(value: object, unit: u.UnitBase | str, *, allow_plain: bool = False) -> u.Quantity:
    """Parse ``value`` into a Quantity convertible to ``unit``.

    Parameters
    ----------
    value : str, Quantity or number
        Text in astropy's unit syntax (``"3e-15 m / (s2 Hz(1/2))"``), a Quantity, or a plain
        number when ``allow_plain`` is true (then it is taken to be in ``unit``).
    unit : Unit or str
        The unit the value must be convertible to.
    allow_plain : bool
        Accept plain numbers as values in ``unit``.

    Returns
    -------
    Quantity
        In ``unit``.

    Raises
    ------
    ValueError
        With a one-line message saying what was expected.

    Examples
    --------
    >>> parse_quantity("40 mW", "W")
    <Quantity 0.04 W>
    """
    unit = _unit(unit) if isinstance(unit, str) else u.Unit(unit)
    if isinstance(value, bool):
        raise ValueError(f"expected {_expected(unit)}")
    if isinstance(value, u.Quantity):
        q = value
    elif isinstance(value, (int, float)):
        if not allow_plain:
            raise ValueError(f"missing unit: expected {_expected(unit)}")
        q = float(value) * unit
    elif isinstance(value, str):
        try:
            number, written = _read(value.strip())
        except (TypeError, ValueError):
            raise ValueError(f"cannot read it as a quantity: expected {_expected(unit)}") from None
        if number is None:
            raise ValueError(f"expected a single value, {_expected(unit)}")
        if written == u.dimensionless_unscaled and unit != u.dimensionless_unscaled:
            if not allow_plain:
                raise ValueError(f"missing unit: expected {_expected(unit)}")
            written = unit
        q = u.Quantity(number, written)
    else:
        raise ValueError(f"expected {_expected(unit)}")
    if not q.isscalar:
        raise ValueError(f"expected a single value, {_expected(unit)}")
    if q.unit is not unit:
        try:
            q = q.to(unit)
        except u.UnitConversionError:
            raise ValueError(f"wrong dimension ({q.unit.physical_type}): expected {_expected(unit)}") from None
    if not math.isfinite(float(q.value)):
        raise ValueError(f"not finite: expected {_expected(unit)}")
    return q


def _expected(unit) -> str:
    return f"a number with a unit of {unit.physical_type} such as '1 {unit.to_string()}'"


@functools.lru_cache(maxsize=256)
def _unit(text: str) -> u.UnitBase:
    """A unit named in the code (parsed once: astropy's parser is slow, and sweeps ask often)."""
    return u.Unit(text)


@functools.lru_cache(maxsize=4096)
def _read(text: str):
    """(number, unit) of a quantity written as text (number None for several values); cached, as a
    sweep re-reads the same texts."""
    with warnings.catch_warnings():
        # "m / s2 / Hz(1/2)" is read correctly (left to right); astropy's style warning about
        # several slashes is not the user's concern
        warnings.simplefilter("ignore", u.UnitsWarning)
        q = u.Quantity(text)
    return (float(q.value) if q.isscalar else None), q.unit


def parse_frequency(value: object) -> float:
    """Parse a frequency given as a quantity ("10 mHz") or a plain number in Hz; returns Hz."""
    return float(parse_quantity(value, u.Hz, allow_plain=True).value)


def checked_frequency(value: object) -> float:
    """:func:`parse_frequency`, refused outside :data:`FREQUENCY_RANGE` (ValueError)."""
    f = parse_frequency(value)
    lo, hi = FREQUENCY_RANGE
    if not lo <= f <= hi:
        raise ValueError(f"expected a frequency from {lo:g} Hz to {hi:g} Hz")
    return f
