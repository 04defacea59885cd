"""Tables of results: astropy tables with units and provenance, written atomically."""

from __future__ import annotations

import datetime as _dt
import shlex
from pathlib import Path

import numpy as np
from astropy.table import Column as _Column
from astropy.table import Table

from ..astro.references import OPTIMAL, SKY
from ..constants import MSUN
from ..files import COMMAND, TABLE_FORMATS, atomic_path, check_output_path
from ..physics.noises import NOISES
from ..version import __version__
from .ecsv import supported, write_ecsv
from .summary import mission_rows

__all__ = ["csv_table", "budget_table", "reference_table", "track_table", "snr_table", "provenance", "write_table", "Column",
           "ENVELOPE_NOTE", "CONVENTION"]

ENVELOPE_NOTE = ("tuned envelope: every frequency uses its own best tuning of the pulse sequence; "
                 "no single tuning reaches this curve at every frequency at once")
CONVENTION = ("sky- and polarisation-averaged equivalent strain, one-sided "
              "(normalisation of Robson, Cornish & Liu 2019, CQG 36, 105011): SNR^2 = h0^2 T / S_n")


def Column(data, unit=None):
    """An astropy table column with a unit."""
    return _Column(data, unit=unit)


def budget_table(budget, mission_name: str, digest: str, mission=None):
    """The noise budget as an :class:`astropy.table.Table` with units and provenance (with
    ``mission``, also every resolved parameter of it, as ``resolved_mission`` lines).

    Read it back with ``QTable.read(path)`` to get Quantity columns.
    """
    t = Table()
    t["frequency"] = Column(budget.frequency, unit="Hz")
    t["asd"] = Column(budget.asd, unit="Hz(-1/2)")
    for name in NOISES:
        t[f"asd_{name}"] = Column(budget.asd_of(name), unit="Hz(-1/2)")
    t["hn"] = Column(budget.characteristic_noise)
    t["tuning"] = Column(budget.tuning, unit="Hz")
    t["interrogation"] = Column(budget.interrogation, unit="s")
    t["pulses"] = Column(budget.pulses)
    t["contrast"] = Column(budget.contrast)
    t["correlated"] = Column(budget.correlated)
    descriptions = {
        "frequency": "GW frequency",
        "asd": "total equivalent strain amplitude spectral density",
        "hn": "noise characteristic strain sqrt(f S_n)",
        "tuning": "tuning frequency of the pulse sequence",
        "interrogation": "interrogation time of the chosen sequence",
        "pulses": "number of pi pulses (0: Ramsey)",
        "contrast": "fringe contrast after decoherence and pulse errors",
        "correlated": "correlated (randomised common phase) read-out in use",
    }
    for name, noise in NOISES.items():
        descriptions[f"asd_{name}"] = noise.description
    for key, text in descriptions.items():
        t[key].info.description = text
    t.meta.update(provenance(mission_name, digest))
    t.meta["curve"] = budget.mode
    if budget.mode == "envelope":
        t.meta["note"] = ENVELOPE_NOTE
    else:
        t.meta["note"] = f"fixed tuning at {float(budget.tuning[0]):.6g} Hz"
    t.meta["convention"] = CONVENTION
    if mission is not None:
        t.meta["resolved_mission"] = [f"{sec}.{key} = {value:.10g} {unit.to_string()}" if unit is not None
                                      else f"{sec}.{key} = {value}" for sec, key, value, unit, _ in mission_rows(mission)]
    return t


def reference_table(ref, f, psd, convention, options):
    """A reference detector's curve: frequency and ASD, with its source, convention and band."""
    t = Table()
    t["frequency"] = Column(f, unit="Hz")
    t["asd"] = Column(np.sqrt(psd), unit="Hz(-1/2)")
    t.meta.update(provenance(ref.label, "-"))
    t.meta.update(reference=ref.key, source=ref.source, convention=convention,
                  sky_factor=ref.sky_factor, valid_band=f"{ref.band[0]:g} Hz to {ref.band[1]:g} Hz",
                  channels=ref.channels, channels_note=f"{ref.channels_source}; the asd column is one channel's, "
                                                       "SNR^2 adds over the channels (network PSD = S_n / channels)")
    if options:
        t.meta["galactic_confusion_years"] = options["confusion_years"]
    return t


def track_table(source, tau, f, hc):
    """An inspiral's track: time to merger, frequency and characteristic strain, with its parameters."""
    t = Table()
    t["time_to_merger"] = Column(tau, unit="s")
    t["frequency"] = Column(f, unit="Hz")
    t["hc"] = Column(hc)
    t.meta.update(provenance(source.name, "-"))
    t.meta.update(chirp_mass_detector_frame_msun=source.chirp_mass / MSUN, redshift=source.redshift,
                  luminosity_distance_m=source.distance, isco_frequency_hz=source.isco_frequency,
                  convention="h_c = 2 f |h~| averaged over sky, polarisation and inclination (RCL normalisation)")
    return t


def snr_table(rows, mission_name: str, digest: str):
    """SNR results (:class:`~gwclock.studies.snr.SNRResult`), one row each."""
    t = Table()
    t["detector"] = [r.detector for r in rows]
    t["source"] = [r.source for r in rows]
    t["schedule"] = [r.schedule for r in rows]
    t["snr"] = Column([r.snr for r in rows])
    t["f_start"] = Column([r.f_start for r in rows], unit="Hz")
    t["f_end"] = Column([r.f_end for r in rows], unit="Hz")
    t["observed"] = Column([r.observed for r in rows], unit="s")
    t["note"] = [r.note for r in rows]
    t.meta.update(provenance(mission_name, digest))
    t.meta["convention"] = "sky-, polarisation- and inclination-averaged SNR; references converted to sky average"
    return t


def provenance(mission_name: str, digest: str) -> dict:
    """Header metadata shared by every table gwclock writes (with the command line that made it,
    when it came from the command line)."""
    meta = {
        "tool": "gwclock",
        "version": __version__,
        "mission": mission_name,
        "mission_sha256": digest,
        "created": _dt.datetime.now(_dt.UTC).replace(microsecond=0).isoformat(),
    }
    if COMMAND:
        meta["command"] = shlex.join(COMMAND)
    return meta


def csv_table(table) -> Table:
    """The plain-CSV form of a table: one header row whose names carry their units in brackets
    (``frequency [Hz]``), no comment lines, so that any CSV reader opens it without options. A
    curve that declares its convention (a reference export) carries it, and its sky factor, as
    constant columns, so that gwclock reads it back as a user curve; the rest of the metadata
    (provenance) is ECSV's to carry."""
    out = Table(table, copy=True)
    out.meta = {}
    for c in list(out.colnames):
        unit = out[c].unit
        if out[c].dtype.kind == "f":
            out[c].info.format = ".10g"
        if unit is not None and unit.to_string():
            out[c].unit = None
            out.rename_column(c, f"{c} [{unit.to_string()}]")
    if table.meta.get("convention") in (SKY, OPTIMAL) and \
            ({"asd", "psd"} & set(table.colnames)):
        out["convention"] = [table.meta["convention"]] * len(out)
        if "sky_factor" in table.meta:
            out["sky_factor"] = [float(table.meta["sky_factor"])] * len(out)
    return out


def write_table(table, path) -> Path:
    """Write ``table`` atomically, as ECSV (units and provenance in its header) or, by suffix, as
    plain CSV (:func:`csv_table`)."""
    p = check_output_path(path, TABLE_FORMATS)
    fmt = TABLE_FORMATS[p.suffix.lower()]
    out = table
    if fmt == "ascii.csv":
        out = csv_table(table)
    else:
        out = table.copy(copy_data=False)
        for c in out.colnames:
            if out[c].dtype.kind == "f":
                out[c].info.format = ".10g"
    with atomic_path(p) as tmp:
        if fmt == "ascii.ecsv" and supported(out):
            with open(tmp, "w") as fh:
                write_ecsv(out, fh)
        else:
            out.write(tmp, format=fmt, overwrite=True)
    return p
