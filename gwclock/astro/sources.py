"""Astrophysical sources at leading (quadrupole) order: inspiralling and monochromatic binaries.

Conventions (Robson, Cornish & Liu 2019; Peters 1964): the rms amplitude ``h0`` is defined by
``h0^2 = <a_+^2 + a_x^2>/2`` averaged over inclination, so that a monochromatic source gives
``<SNR^2> = h0^2 T / S_n`` against a sky-averaged S_n in the normalisation of Robson, Cornish &
Liu (2019). For a circular binary ``h0 = sqrt(2/5) A`` with
``A = 4 (G Mz)^(5/3) (pi f)^(2/3) / (c^4 D_L)``.

References
----------
Peters, P. C. 1964, Phys. Rev. 136, B1224.
Maggiore, M. 2007, Gravitational Waves Vol. 1 (OUP), ch. 4.
Moore, C. J., Cole, R. H. & Berry, C. P. L. 2015, Class. Quantum Grav. 32, 015014.
Planck Collaboration 2020, A&A 641, A6 (Planck 2018 cosmology, via astropy's Planck18).
"""

from __future__ import annotations

import csv
import difflib
from dataclasses import dataclass
from pathlib import Path

import astropy.units as u
import numpy as np

from ..constants import DAY, MSUN, PC, YEAR, G
from ..constants import c as C
from ..errors import InputError, OutOfReachError
from ..files import read_toml, register_input
from ..quantities import parse_quantity

__all__ = [
    "chirp_mass", "check_source_mass", "MASS_RANGE", "Inspiral", "Monochromatic", "redshift_at_distance", "distance_at_redshift",
    "MARKS", "load_sources", "Z_LIMIT", "check_source_distance",
]


#: Redshifts a source may be given at (sources file and command line).
Z_LIMIT = 1000.0

#: Standard marks on a track: time before merger in s.
MARKS = {"1 yr": YEAR, "1 month": YEAR / 12, "1 day": DAY, "1 hour": DAY / 24}


def check_source_distance(d):
    """A luminosity distance (m) a source may be given at: from 1 pc to the distance of z =
    Z_LIMIT; otherwise ValueError with the one-line reason."""
    if not PC <= d <= distance_at_redshift(Z_LIMIT):
        raise InputError(f"expected a distance from 1 pc to the distance of z = {Z_LIMIT:g}")
    return d


#: Source-frame component masses a source may have, in solar masses: from a planet's to ten times the
#: largest black holes known (common practice, no source); outside it the formulas over- or underflow.
MASS_RANGE = (1e-3, 1e12)


def check_source_mass(m):
    """A component mass in solar masses inside MASS_RANGE; otherwise ValueError with the reason."""
    if not MASS_RANGE[0] <= m <= MASS_RANGE[1]:
        raise InputError(f"expected a mass from {MASS_RANGE[0]:g} to {MASS_RANGE[1]:g} solar masses")
    return m


def chirp_mass(m1, m2):
    """Chirp mass (m1 m2)^(3/5) / (m1 + m2)^(1/5), in the units of the inputs."""
    m1 = np.asarray(m1, dtype=float)
    m2 = np.asarray(m2, dtype=float)
    return (m1 * m2) ** 0.6 / (m1 + m2) ** 0.2


def distance_at_redshift(z):
    """Luminosity distance in m for redshift z (flat LCDM, astropy Planck18)."""
    from astropy.cosmology import Planck18
    return Planck18.luminosity_distance(np.asarray(z, dtype=float)).to_value("m")


def redshift_at_distance(distance_m):
    """Redshift at a luminosity distance in m (astropy Planck18, by root finding); below z = 1e-6
    the Hubble law z = H0 D / c (its error is of order z)."""
    from astropy.cosmology import Planck18, z_at_value
    d = np.atleast_1d(np.asarray(distance_m, dtype=float))
    near = distance_at_redshift(1e-6)
    hubble = Planck18.H0.to_value("1/s") / C
    z = np.array([0.0 if x <= 0 else x * hubble if x < near else
                  float(z_at_value(Planck18.luminosity_distance, x * u.m, zmin=1e-7, zmax=1e4)) for x in d])
    return z if np.ndim(distance_m) else float(z[0])


@dataclass(frozen=True)
class Inspiral:
    """A circular compact binary at leading order, in the detector frame.

    Attributes
    ----------
    name : str
    chirp_mass : float
        Detector-frame chirp mass (1 + z) M_c, in kg.
    total_mass : float
        Detector-frame total mass in kg (sets the last stable orbit).
    distance : float
        Luminosity distance in m.
    redshift : float
    """

    name: str
    chirp_mass: float
    total_mass: float
    distance: float
    redshift: float = 0.0

    @classmethod
    def from_masses(cls, m1, m2, *, distance=None, redshift=None, name="binary"):
        """Build from source-frame masses (solar masses) and a distance (m) or a redshift.

        Detector-frame masses are (1 + z) times the source-frame ones; amplitudes use D_L.
        """
        if (distance is None) == (redshift is None):
            raise InputError("give exactly one of distance and redshift")
        check_source_mass(m1), check_source_mass(m2)
        if redshift is None:
            redshift = redshift_at_distance(distance)
        else:
            distance = distance_at_redshift(redshift)
        zf = 1.0 + redshift
        return cls(name, float(chirp_mass(m1, m2)) * MSUN * zf, (m1 + m2) * MSUN * zf, float(distance),
                   float(redshift))

    @property
    def _tm(self):
        return G * self.chirp_mass / C**3  # chirp mass in seconds

    @property
    def isco_frequency(self):
        """GW frequency at the innermost stable circular orbit: c^3 / (6^(3/2) pi G M), in Hz."""
        return C**3 / (6**1.5 * np.pi * G * self.total_mass)

    def time_to_merger(self, f):
        """tau(f) = (5/256) (G Mc/c^3)^(-5/3) (pi f)^(-8/3), in s."""
        return 5.0 / 256.0 * self._tm ** (-5 / 3) * (np.pi * np.asarray(f, dtype=float)) ** (-8 / 3)

    def frequency_at(self, tau):
        """GW frequency (Hz) a time tau (s) before merger (inverse of :meth:`time_to_merger`)."""
        tau = np.asarray(tau, dtype=float)
        return (256.0 / 5.0 * tau) ** (-3 / 8) * self._tm ** (-5 / 8) / np.pi

    def frequency_derivative(self, f):
        """df/dt = (96/5) pi^(8/3) (G Mc/c^3)^(5/3) f^(11/3), in Hz/s."""
        return 96.0 / 5.0 * np.pi ** (8 / 3) * self._tm ** (5 / 3) * np.asarray(f, dtype=float) ** (11 / 3)

    def amplitude(self, f):
        """Face-on amplitude A = 4 (G Mc)^(5/3) (pi f)^(2/3) / (c^4 D_L)."""
        return 4 * (G * self.chirp_mass) ** (5 / 3) * (np.pi * np.asarray(f, dtype=float)) ** (2 / 3) / (C**4 * self.distance)

    def rms_amplitude(self, f):
        """h0 = sqrt(2/5) A, averaged over inclination (RCL normalisation)."""
        return np.sqrt(0.4) * self.amplitude(f)

    def fourier_amplitude_squared(self, f, averaged=True):
        """|h~(f)|^2 by stationary phase: (1/12) (sky-averaged) or (5/24) (optimal) x
        pi^(-4/3) (G Mc)^(5/3) f^(-7/3) / (c^3 D_L^2)."""
        k = 1 / 12 if averaged else 5 / 24
        f = np.asarray(f, dtype=float)
        return k * np.pi ** (-4 / 3) * (G * self.chirp_mass) ** (5 / 3) * f ** (-7 / 3) / (C**3 * self.distance**2)

    def characteristic_strain(self, f):
        """h_c = 2 f |h~| = h0 f / sqrt(df/dt) (Moore, Cole & Berry 2015)."""
        return 2 * np.asarray(f, dtype=float) * np.sqrt(self.fourier_amplitude_squared(f))

    def track(self, fmin, fmax, points=200):
        """(time_to_merger, frequency, h_c) from fmin to min(fmax, f_ISCO)."""
        top = min(fmax, self.isco_frequency)
        if fmin >= top:
            raise OutOfReachError(f"the source does not radiate between {fmin:g} Hz and {fmax:g} Hz "
                                  f"(last stable orbit at {self.isco_frequency:.4g} Hz)")
        f = np.geomspace(fmin, top, points)
        return self.time_to_merger(f), f, self.characteristic_strain(f)


@dataclass(frozen=True)
class Monochromatic:
    """A source of fixed frequency (e.g. a galactic binary) with rms amplitude h0."""

    name: str
    frequency: float
    h0: float

    @classmethod
    def from_binary(cls, m1, m2, frequency, distance, name="galactic binary"):
        """A slowly evolving binary of source masses m1, m2 (solar masses) at distance (m)."""
        b = Inspiral(name, float(chirp_mass(m1, m2)) * MSUN, (m1 + m2) * MSUN, distance)
        return cls(name, frequency, float(b.rms_amplitude(frequency)))

    def characteristic_strain(self, observation):
        """h_c = h0 sqrt(f T_obs), so that SNR = h_c / h_n with h_n = sqrt(f S_n)."""
        return self.h0 * np.sqrt(self.frequency * observation)


def load_sources(path):
    """Read a list of sources from TOML (``[[source]]`` tables) or CSV (one row each).

    Fields: ``name``; an inspiral has ``mass1``, ``mass2`` (solar masses) and ``distance``
    (with a unit) or ``redshift``; a monochromatic source has ``frequency`` (with a unit) and
    either ``h0`` or ``mass1``, ``mass2`` and ``distance``.
    """


    p = Path(path)
    register_input(p)
    if p.suffix.lower() == ".toml":
        data, _ = read_toml(p, "source file")
        rows = data.get("source")
        extra = set(data) - {"source"}
        if extra:
            raise InputError(f"unknown key {sorted(extra)[0]!r}; expected [[source]] tables", source=str(p))
        if not isinstance(rows, list) or not rows:
            raise InputError("expected one or more [[source]] tables", source=str(p), field="source")
    elif p.suffix.lower() == ".csv":
        try:
            with open(p, newline="", encoding="utf-8-sig") as fh:  # a leading BOM is not part of a key
                table = [r for r in csv.reader(line for line in fh if not line.startswith("#")) if r]
        except FileNotFoundError:
            raise InputError("source file not found", source=str(p)) from None
        except (OSError, UnicodeDecodeError) as exc:
            raise InputError(f"cannot read the source file ({exc})", source=str(p)) from None
        header = [k.strip() for k in table[0]] if table else []
        dup = sorted({k for k in header if header.count(k) > 1})
        if dup:
            raise InputError("column given twice", source=str(p), field=dup[0])
        rows = []
        for i, r in enumerate(table[1:]):
            if len(r) > len(header):
                raise InputError(f"{len(r)} values for {len(header)} columns", source=str(p), field=f"source[{i}]")
            rows.append({k: v.strip() for k, v in zip(header, r) if v.strip()})
        if not rows:
            raise InputError("no source rows", source=str(p))
    else:
        raise InputError("expected a .toml or .csv source file", source=str(p))

    allowed = {"name", "mass1", "mass2", "distance", "redshift", "frequency", "h0"}
    out = []
    for i, row in enumerate(rows):
        where = f"source[{i}]"
        if not isinstance(row, dict):
            raise InputError("expected a table", source=str(p), field=where)
        bad = set(row) - allowed
        if bad:
            key = sorted(bad)[0]
            close = difflib.get_close_matches(key, sorted(allowed), n=1)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            raise InputError(f"unknown key{hint}", source=str(p), field=f"{where}.{key}")

        def num(key, lo=0.0, row=row, where=where):
            try:
                if isinstance(row[key], bool):  # TOML true is not the number 1
                    raise TypeError
                x = float(row[key])
            except KeyError:
                raise InputError("required field is missing", source=str(p), field=f"{where}.{key}") from None
            except (TypeError, ValueError):
                raise InputError("expected a plain number", source=str(p), field=f"{where}.{key}", value=row[key]) from None
            if not np.isfinite(x) or x <= lo:
                raise InputError(f"expected a number > {lo:g}", source=str(p), field=f"{where}.{key}", value=row[key])
            if key.startswith("mass"):
                try:
                    check_source_mass(x)
                except ValueError as exc:
                    raise InputError(str(exc), source=str(p), field=f"{where}.{key}", value=row[key]) from None
            return x

        def qty(key, unit, row=row, where=where):
            try:
                return float(parse_quantity(row[key], unit).value)
            except KeyError:
                raise InputError("required field is missing", source=str(p), field=f"{where}.{key}") from None
            except ValueError as exc:
                raise InputError(str(exc), source=str(p), field=f"{where}.{key}", value=row[key]) from None

        name = str(row.get("name", f"source {i + 1}"))
        if "frequency" in row:
            f = qty("frequency", "Hz")
            if f <= 0:
                raise InputError("expected a positive frequency", source=str(p), field=f"{where}.frequency")
            if "h0" in row:
                out.append(Monochromatic(name, f, num("h0")))
            else:
                out.append(Monochromatic.from_binary(num("mass1"), num("mass2"), f, qty("distance", "m"), name))
        else:
            m1, m2 = num("mass1"), num("mass2")
            if ("distance" in row) == ("redshift" in row):
                raise InputError("give exactly one of distance and redshift", source=str(p), field=where)
            if "distance" in row:
                try:
                    d = check_source_distance(qty("distance", "m"))
                except ValueError as exc:
                    raise InputError(str(exc), source=str(p), field=f"{where}.distance", value=row["distance"]) from None
                out.append(Inspiral.from_masses(m1, m2, distance=d, name=name))
            else:
                z = num("redshift")
                if z > Z_LIMIT:
                    raise InputError(f"expected a redshift up to {Z_LIMIT:g}", source=str(p), field=f"{where}.redshift",
                                     value=row["redshift"])
                out.append(Inspiral.from_masses(m1, m2, redshift=z, name=name))
    return out
