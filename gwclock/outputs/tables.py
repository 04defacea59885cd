"""Tables of results: astropy tables with units and provenance, written atomically."""

from __future__ import annotations

import datetime as _dt
from pathlib import Path

from astropy.table import Column as _Column
from astropy.table import Table

from ..files import TABLE_FORMATS, atomic_path, check_output_path
from ..physics.noises import NOISES
from ..version import __version__
from .ecsv import supported, write_ecsv

__all__ = ["budget_table", "provenance", "write_table", "Column", "ENVELOPE_NOTE", "CONVENTION"]

ENVELOPE_NOTE = ("tuned envelope: every frequency uses its own best tuning of the pulse sequence; "
                 "no single tuning reaches this curve at every frequency at once")
CONVENTION = ("sky- and polarisation-averaged equivalent strain, one-sided "
              "(normalisation of Robson, Cornish & Liu 2019, CQG 36, 105011): SNR^2 = h0^2 T / S_n")


def Column(data, unit=None):
    """An astropy table column with a unit."""
    return _Column(data, unit=unit)


def budget_table(budget, mission_name: str, digest: str):
    """The noise budget as an :class:`astropy.table.Table` with units and provenance.

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
    return t


def provenance(mission_name: str, digest: str) -> dict:
    """Header metadata shared by every table gwclock writes."""
    return {
        "tool": "gwclock",
        "version": __version__,
        "mission": mission_name,
        "mission_sha256": digest,
        "created": _dt.datetime.now(_dt.UTC).replace(microsecond=0).isoformat(),
    }


def write_table(table, path) -> Path:
    """Write ``table`` atomically, as ECSV or (by suffix) CSV with units in comment lines."""
    p = check_output_path(path, TABLE_FORMATS)
    fmt = TABLE_FORMATS[p.suffix.lower()]
    out = table
    if fmt == "ascii.csv":
        out = Table(table, copy=True)
        comments = [f"{k}: {v}" for k, v in table.meta.items()]
        comments += [f"column {c}: unit {out[c].unit or '1'}" for c in out.colnames]
        for c in out.colnames:
            if out[c].dtype.kind == "f":
                out[c].info.format = ".10g"
        out.meta = {"comments": comments}
    else:
        out = table.copy(copy_data=False)
        for c in out.colnames:
            if out[c].dtype.kind == "f":
                out[c].info.format = ".10g"
    kwargs = {"comment": "# "} if fmt == "ascii.csv" else {}
    with atomic_path(p) as tmp:
        if fmt == "ascii.ecsv" and supported(out):
            with open(tmp, "w") as fh:
                write_ecsv(out, fh)
        else:
            out.write(tmp, format=fmt, overwrite=True, **kwargs)
    return p
