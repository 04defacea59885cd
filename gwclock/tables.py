"""Tables of results: astropy tables with units and provenance, written atomically."""

from __future__ import annotations

import datetime as _dt
import os
import tempfile
from pathlib import Path


from . import __version__
from .errors import InputError

__all__ = ["budget_table", "write_table", "atomic_path", "check_output_path", "TABLE_FORMATS"]

TABLE_FORMATS = {".ecsv": "ascii.ecsv", ".csv": "ascii.csv"}

ENVELOPE_NOTE = ("tuned envelope: every frequency uses its own best tuning of the pulse sequence; "
                 "no single tuning reaches this curve at every frequency at once")
CONVENTION = ("sky- and polarisation-averaged equivalent strain, one-sided "
              "(normalisation of Robson, Cornish & Liu 2019, CQG 36, 105011): SNR^2 = h0^2 T / S_n")


def Column(data, unit=None):
    from astropy.table import Column as _Column
    return _Column(data, unit=unit)


def budget_table(budget, mission_name: str, digest: str):
    """The noise budget as an :class:`astropy.table.Table` with units and provenance.

    Read it back with ``QTable.read(path)`` to get Quantity columns.
    """
    from astropy.table import Table

    from .noises import NOISES

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
    for name in NOISES:
        descriptions[f"asd_{name}"] = f"{name} noise, equivalent strain ASD"
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
        "created": _dt.datetime.now(_dt.timezone.utc).replace(microsecond=0).isoformat(),
    }


_INPUTS: set = set()


def register_input(path) -> None:
    """Remember a file the user gave as input, so that no output can ever overwrite it."""
    try:
        _INPUTS.add(Path(path).resolve())
    except OSError:
        pass


def check_output_path(path, kinds) -> Path:
    """Refuse an output path whose folder is missing, whose suffix is not one of ``kinds``, or
    that names one of the run's input files."""
    p = Path(path)
    try:
        if p.resolve() in _INPUTS:
            raise InputError("is one of this run's input files; choose another output name",
                             source="command line", field=str(p))
    except OSError:
        pass
    if p.suffix.lower() not in kinds:
        raise InputError(f"unsupported file type {p.suffix or '(none)'!r}; expected one of {', '.join(kinds)}",
                         source="command line", field=str(p))
    parent = p.parent if str(p.parent) else Path(".")
    if not parent.is_dir():
        raise InputError("the output folder does not exist", source="command line", field=str(p))
    if p.is_dir():
        raise InputError("is a folder; expected a file name", source="command line", field=str(p))
    return p


def check_outputs(args) -> None:
    """Check a command's ``--table`` and ``--plot`` paths before any work is done."""
    if getattr(args, "table", None):
        check_output_path(args.table, TABLE_FORMATS)
    if getattr(args, "plot", None):
        check_output_path(args.plot, (".png", ".pdf", ".svg"))


class atomic_path:
    """Context manager yielding a temporary path beside ``target``; renamed onto it on success.

    A failure or an interruption leaves ``target`` as it was (absent, or the previous file).
    """

    def __init__(self, target):
        self.target = Path(target)

    def __enter__(self) -> Path:
        fd, name = tempfile.mkstemp(prefix=f".{self.target.name}.", suffix=f".part{self.target.suffix}",
                                    dir=self.target.parent if str(self.target.parent) else ".")
        os.close(fd)
        self.tmp = Path(name)
        return self.tmp

    def __exit__(self, exc_type, exc, tb):
        if exc_type is None:
            os.replace(self.tmp, self.target)
        else:
            self.tmp.unlink(missing_ok=True)
        return False


def write_table(table, path) -> Path:
    """Write ``table`` atomically, as ECSV or (by suffix) CSV with units in comment lines."""
    p = check_output_path(path, TABLE_FORMATS)
    fmt = TABLE_FORMATS[p.suffix.lower()]
    out = table
    if fmt == "ascii.csv":
        from astropy.table import Table
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
    from .ecsv import supported, write_ecsv
    with atomic_path(p) as tmp:
        if fmt == "ascii.ecsv" and supported(out):
            with open(tmp, "w") as fh:
                write_ecsv(out, fh)
        else:
            out.write(tmp, format=fmt, overwrite=True, **kwargs)
    return p
