"""Broadband reference detectors from published analytic models, and user-supplied curves.

Each reference carries its source and the averaging convention it was published in. gwclock
compares everything in the sky-averaged convention of Robson, Cornish & Liu (2019): a curve
published for an optimally oriented detector (a non-sky-averaged strain PSD P_n) is divided by
the detector's sky-averaged response R, i.e. multiplied by 5/2 for a 90-degree interferometer
and by 10/3 for 60-degree arms (sky average of the antenna pattern, derivation). The factor is an explicit,
cited parameter of each curve.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import astropy.units as u
import numpy as np
from astropy.table import Table

from ..constants import YEAR
from ..errors import InputError, OutOfReachError, UnknownNameError
from ..files import read_text

__all__ = ["Reference", "REFERENCES", "get_reference", "lisa_psd", "lisa_confusion", "CONFUSION_PARAMETERS",
           "user_curve"]

SKY = "sky-averaged"
OPTIMAL = "optimal orientation"

# Robson, Cornish & Liu 2019, Table 1 (coefficients as recalled, not checked against the paper): T_obs in yr ->
# (alpha, beta, kappa, gamma, f_k [Hz]); amplitude A = 9e-45.
CONFUSION_PARAMETERS = {
    0.5: (0.133, 243.0, 482.0, 917.0, 0.00258),
    1.0: (0.171, 292.0, 1020.0, 1680.0, 0.00215),
    2.0: (0.165, 299.0, 611.0, 1340.0, 0.00173),
    4.0: (0.138, -221.0, 521.0, 1680.0, 0.00113),
}


def lisa_confusion(f, years):
    """Galactic-confusion foreground of Robson, Cornish & Liu 2019 (eq. 14), 1/Hz."""
    try:
        al, be, ka, ga, fk = CONFUSION_PARAMETERS[float(years)]
    except KeyError:
        raise InputError(f"the galactic confusion is tabulated for {', '.join(map(str, CONFUSION_PARAMETERS))} yr") from None
    f = np.asarray(f, dtype=float)
    with np.errstate(over="ignore", under="ignore"):
        expo = np.minimum(-f**al + be * f * np.sin(ka * f), 700.0)
        return 9e-45 * f ** (-7 / 3) * np.exp(expo) * (1 + np.tanh(ga * (fk - f)))


def lisa_psd(f, confusion_years=None):
    """LISA sky-averaged sensitivity S_n of Robson, Cornish & Liu 2019 (eqs. 10-13), 1/Hz.

    ``S_n = 10/(3 L^2) (P_OMS + 4 P_acc / (2 pi f)^4) (1 + 0.6 (f/f*)^2) [+ S_c]`` with
    L = 2.5e9 m and f* = 19.09 mHz.
    """
    f = np.asarray(f, dtype=float)
    L, fstar = 2.5e9, 19.09e-3
    p_oms = (1.5e-11) ** 2 * (1 + (2e-3 / f) ** 4)
    p_acc = (3e-15) ** 2 * (1 + (0.4e-3 / f) ** 2) * (1 + (f / 8e-3) ** 4)
    s = 10 / (3 * L**2) * (p_oms + 4 * p_acc / (2 * np.pi * f) ** 4) * (1 + 0.6 * (f / fstar) ** 2)
    if confusion_years:
        s = s + lisa_confusion(f, confusion_years)
    return s


def aligo_psd(f):
    """Advanced LIGO design analytic fit (Sathyaprakash & Schutz 2009, LRR 12, 2; coefficients as recalled):
    S0 = 1e-49 /Hz, f0 = 215 Hz, x = f/f0."""
    x = np.asarray(f, dtype=float) / 215.0
    return 1e-49 * (x ** (-4.14) - 5 * x ** (-2) + 111 * (1 - x**2 + x**4 / 2) / (1 + x**2 / 2))


def et_psd(f):
    """Einstein Telescope ET-B rational fit (Mishra, Arun, Iyer & Sathyaprakash 2010, PRD 82,
    064010, eq. 2.2; coefficients from memory): x = f / 200 Hz, S0 = 1.449e-52 /Hz,
    ``S = S0 [x^-4.05 + 185.62 x^-0.69 + 232.56 (1 + b1 x + ... + b6 x^6) / (1 + c1 x + ... + c4 x^4)]``."""
    x = np.asarray(f, dtype=float) / 200.0
    num = np.polynomial.polynomial.polyval(x, (1.0, 31.18, -64.72, 52.24, -42.16, 10.17, 11.53))
    den = np.polynomial.polynomial.polyval(x, (1.0, 13.58, -36.46, 18.56, 27.43))
    return 1.449e-52 * (x ** (-4.05) + 185.62 * x ** (-0.69) + 232.56 * num / den)


def et_power_law_psd(f):
    """ET-B as a sum of four power laws (Keppel & Ajith 2010, PRD 82, 122001; formula and
    coefficients from memory): x = f / 100 Hz, S0 = 1e-50 /Hz. Its ASD is 0.78 of the rational fit's
    at 100 Hz and 9.5 times it at 1 Hz, where the two fits part."""
    x = np.asarray(f, dtype=float) / 100.0
    return 1e-50 * (2.39e-27 * x ** (-15.64) + 0.349 * x ** (-2.145) + 1.76 * x ** (-0.12) + 0.409 * x**1.10) ** 2


def decigo_psd(f):
    """DECIGO (Yagi & Seto 2011, PRD 83, 044011, eq. 5; formula as recalled), f_p = 7.36 Hz."""
    f = np.asarray(f, dtype=float)
    fp = 7.36
    return (7.05e-48 * (1 + (f / fp) ** 2) + 4.8e-51 * f ** (-4) / (1 + (f / fp) ** 2) + 5.33e-52 * f ** (-4))


@dataclass(frozen=True)
class Reference:
    """A broadband detector curve.

    Attributes
    ----------
    key, label : str
    psd : callable
        Native PSD in 1/Hz as published, ``psd(f, **options)``.
    convention : str
        ``"sky-averaged"`` or ``"optimal orientation"``.
    sky_factor : float
        Multiplies the native PSD to give the sky-averaged S_n (1 when already sky-averaged).
    band : (float, float)
        Frequencies (Hz) where the published model is meant to hold.
    source : str
        The citation of the formula.
    note : str
    checked : bool
        Whether the coefficients were checked against the paper's text (``gwclock references``
        says so when not).
    options : tuple of str
        Keyword options ``psd`` accepts (``confusion_years`` for LISA's galactic foreground).
    compared : bool
        Whether the curve is in the default comparison set of figures, horizons and reports.
    observation : float
        The detector's own observing time in s, used for its SNRs, horizons and background curves
        (not the clock mission's).
    observation_source : str
        Where that time comes from.
    channels : int
        Independent data channels of equal noise the detector's SNR adds over: SNR^2 is the sum
        over channels, so the network PSD is ``sky_averaged / channels``.
    channels_source : str
        What the channels are and where that comes from.
    pattern : str
        Long-wavelength antenna pattern for optimal-orientation horizons and ranges
        (:func:`gwclock.studies.horizon.orientation_factors`).
    """

    key: str
    label: str
    psd: Callable
    convention: str
    sky_factor: float
    band: tuple
    source: str
    note: str = ""
    checked: bool = True
    options: tuple = ()
    compared: bool = True
    observation: float = YEAR
    observation_source: str = "one year of data (common practice, no source)"
    channels: int = 1
    channels_source: str = "one interferometer"
    pattern: str = "interferometer"

    def options_for(self, confusion_years=None) -> dict:
        """The keyword options to pass for a requested galactic confusion (only where accepted)."""
        if confusion_years and "confusion_years" in self.options:
            return {"confusion_years": confusion_years}
        return {}

    def native(self, f, **options):
        """PSD in its published convention (1/Hz)."""
        return self.psd(np.asarray(f, dtype=float), **options)

    def sky_averaged(self, f, **options):
        """Sky-averaged S_n (1/Hz), the convention of every gwclock comparison."""
        return self.sky_factor * self.native(f, **options)

    def network(self, f, **options):
        """Sky-averaged PSD of all the detector's channels together (1/Hz): SNR^2 = sum over the
        channels, so ``S_n / channels``. SNRs, horizons, backgrounds and overlays use this."""
        return self.sky_averaged(f, **options) / self.channels

    @property
    def network_label(self) -> str:
        """The label with the channel count, for captions and legends."""
        return f"{self.label}, {self.channels} channel{'s' if self.channels != 1 else ''}"


REFERENCES = {
    "lisa": Reference(
        "lisa", "LISA", lisa_psd, SKY, 1.0, (1e-5, 1.0),
        "Robson, Cornish & Liu 2019, Class. Quantum Grav. 36, 105011, eqs. 10-14 and Table 1 (L = 2.5 Gm, f* = 19.09 mHz)",
        "galactic confusion for 0.5, 1, 2 or 4 yr on request", checked=False,
        options=("confusion_years",), observation=4 * YEAR,
        observation_source="four years, the nominal science operations of Amaro-Seoane et al. 2017, "
                           "arXiv:1702.00786 (from memory)",
        channels=2, channels_source="the two noise-independent channels A and E of the constellation; S_n is "
                                    "one channel's (Robson, Cornish & Liu 2019, sec. 2)"),
    "aligo": Reference(
        "aligo", "Advanced LIGO (design fit)", aligo_psd, OPTIMAL, 5 / 2, (10.0, 1e4),
        "Sathyaprakash & Schutz 2009, Living Rev. Relativ. 12, 2 (analytic fit of the design curve)",
        "90-degree arms: sky average x 5/2; fit valid above about 10 Hz", checked=False),
    "et": Reference(
        "et", "Einstein Telescope (ET-B fit)", et_psd, OPTIMAL, 5 / 2, (1.0, 1e4),
        "ET-B rational fit, Mishra, Arun, Iyer & Sathyaprakash 2010, Phys. Rev. D 82, 064010, eq. 2.2",
        "one 90-degree interferometer (the ET-B design): sky average x 5/2", checked=False,
        channels_source="one L-shaped interferometer, the ET-B design the fit describes (not the triangle)"),
    "et-powerlaw": Reference(
        "et-powerlaw", "Einstein Telescope (ET-B, four power laws)", et_power_law_psd, OPTIMAL, 5 / 2, (1.0, 1e4),
        "ET-B fit with four power laws, Keppel & Ajith 2010, Phys. Rev. D 82, 122001",
        "an alternative ET-B fit, 9.5 times the rational fit's ASD at 1 Hz; one 90-degree interferometer",
        checked=False, compared=False,
        channels_source="one L-shaped interferometer, the ET-B design the fit describes"),
    "decigo": Reference(
        "decigo", "DECIGO", decigo_psd, OPTIMAL, 10 / 3, (1e-3, 100.0),
        "Yagi & Seto 2011, Phys. Rev. D 83, 044011, eq. 5 (erratum PRD 95, 109901)",
        "taken as the non-sky-averaged noise of one 60-degree interferometer: x 10/3 = (5/2) / sin^2(60 deg) "
        "(an assumption, not checked against the paper)", checked=False,
        channels_source="one interferometer of one cluster (the constellation's further channels not counted)"),
}

#: The default comparison set (figures, horizons, backgrounds, reports), in registry order.
DEFAULT_COMPARISON = tuple(k for k, r in REFERENCES.items() if r.compared)

#: Curves with no accepted analytic form: load their published table as a user curve.
TABULATED_ONLY = {
    "Cosmic Explorer": "Evans et al. 2021, arXiv:2109.09882 (published ASD table; load it as a user curve)",
}


def get_reference(key: str) -> Reference:
    """The reference ``key``; unknown keys fail with the list of valid ones."""
    try:
        return REFERENCES[key.lower()]
    except KeyError:
        raise UnknownNameError(f"unknown reference {key!r}; expected one of {', '.join(REFERENCES)} "
                       "(or a user curve file)") from None


def _column(table, name, unit, path):
    """A column's values in ``unit`` (a column without a unit is taken to be in it already)."""
    col = table[name]
    try:
        values = np.asarray(col, dtype=float)
    except (TypeError, ValueError):
        raise InputError("expected numbers", source=str(path), field=name) from None
    if col.unit is None or str(col.unit) in ("", unit):
        return values
    try:
        return (values * col.unit).to_value(unit)
    except u.UnitConversionError:
        raise InputError(f"expected a unit convertible to {unit}", source=str(path), field=f"{name} unit",
                         value=str(col.unit)) from None


def user_curve(path, convention=None, sky_factor=None, label=None) -> Reference:
    """A user curve from CSV or ECSV: a ``frequency`` column (Hz) and ``asd`` (Hz^-1/2) or
    ``psd`` (1/Hz); the convention comes from the argument or the file's ``convention`` meta
    (``sky-averaged`` or ``optimal orientation``, then with ``sky_factor``, default 5/2).
    Interpolated log-log; outside its frequency range the curve is undefined (refused)."""



    p = Path(path)
    if p.suffix.lower() not in (".csv", ".ecsv"):
        raise InputError("expected a .csv or .ecsv curve file", source=str(p))
    lines = read_text(p, "curve file", p.suffix.lower()[1:].upper()).splitlines()
    try:
        if p.suffix.lower() == ".ecsv":
            t = Table.read(lines, format="ascii.ecsv")
        else:
            t = Table.read(lines, format="ascii.csv", comment="#")
    except Exception as exc:  # astropy raises many kinds for malformed tables
        raise InputError(f"cannot read the curve ({' '.join(str(exc).split())[:160]})", source=str(p)) from None
    for line in t.meta.pop("comments", []) or []:  # CSV: "# key: value" comment lines
        key, sep, value = str(line).partition(":")
        if sep:
            t.meta.setdefault(key.strip(), value.strip())
    for c in list(t.colnames):  # plain CSV: "frequency [Hz]", the unit in the name
        m = re.fullmatch(r"\s*(\w+)\s*\[(.+)\]\s*", c)
        if m and m.group(1) not in t.colnames:
            t.rename_column(c, m.group(1))
            try:
                t[m.group(1)].unit = u.Unit(m.group(2))
            except ValueError:
                raise InputError("expected a unit in the brackets of the column name", source=str(p),
                                 field=c) from None
    for key in ("convention", "sky_factor"):  # plain CSV: declared in a constant column
        if key in t.colnames:
            values = {str(v) for v in t[key]}
            if len(values) != 1:
                raise InputError("expected one value in every row", source=str(p), field=key)
            t.meta.setdefault(key, values.pop())
    if "frequency" not in t.colnames:
        raise InputError("missing column 'frequency'", source=str(p), field="frequency")
    if "asd" in t.colnames:
        asd = _column(t, "asd", "Hz(-1/2)", p)
        y = np.where(asd > 0, asd, np.nan) ** 2  # a negative ASD is an error, not its square
    elif "psd" in t.colnames:
        y = _column(t, "psd", "1/Hz", p)
    else:
        raise InputError("expected a column 'asd' or 'psd'", source=str(p), field="asd")
    f = _column(t, "frequency", "Hz", p)
    if f.size < 2 or np.any(~np.isfinite(f)) or np.any(f <= 0) or np.any(np.diff(f) <= 0):
        raise InputError("frequencies must be positive, finite and strictly increasing", source=str(p), field="frequency")
    if np.any(~np.isfinite(y)) or np.any(y <= 0):
        raise InputError("values must be positive and finite", source=str(p), field="asd/psd")
    conv = convention or t.meta.get("convention")
    if conv not in (SKY, OPTIMAL, "sky", "optimal"):
        raise InputError("declare the convention: 'sky-averaged' or 'optimal orientation' (table meta 'convention', or the convention argument)",
                         source=str(p), field="convention", value=conv)
    conv = SKY if conv.startswith("sky") else OPTIMAL
    factor = 1.0
    if conv == OPTIMAL:
        given = sky_factor if sky_factor is not None else t.meta.get("sky_factor", 5 / 2)
        try:
            factor = float(given)
        except (TypeError, ValueError):
            factor = np.nan
        if not (np.isfinite(factor) and factor > 0):
            raise InputError("expected a positive number (the sky average divides the response by it)",
                             source=str(p), field="sky_factor", value=given)
    lf, ly = np.log(f), np.log(y)

    def psd(x):
        x = np.asarray(x, dtype=float)
        if np.any(x < f[0] * (1 - 1e-12)) or np.any(x > f[-1] * (1 + 1e-12)):
            raise OutOfReachError(f"{p.name} covers {f[0]:g} Hz to {f[-1]:g} Hz only")
        return np.exp(np.interp(np.log(x), lf, ly))

    return Reference(p.stem, label or str(t.meta.get("label", p.stem)), psd, conv, factor, (float(f[0]), float(f[-1])),
                     str(t.meta.get("source", f"user curve {p.name}")))
