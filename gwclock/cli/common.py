"""What every command shares: the parser class, the mission and grid options, parsing of values
given on the command line, and writing tables and figures.

Every refusal is an :class:`~gwclock.errors.InputError` naming the option, so that the user sees
one line and exit code 2.
"""

from __future__ import annotations

import argparse
import shlex
import sys

import numpy as np

from ..config.mission import mission_from_dict
from ..engine.budget import SPAN, frequency_grid
from ..errors import InputError
from ..files import COMMAND, FIGURE_FORMATS, TABLE_FORMATS, check_output_path
from ..outputs.ecsv import write_ecsv
from ..outputs.latex import LATEX_FORMATS, write_latex
from ..outputs.plotting import save_figure
from ..outputs.tables import write_table
from ..physics.noises import pulse_bandwidth
from ..quantities import checked_frequency, parse_quantity
from ..version import __version__

__all__ = ["Parser", "mission_arg", "grid_args", "output_args", "frequency", "grid", "tuned", "quantity",
           "number", "check_outputs", "warn", "check_reach", "latex_arg", "save_latex", "save_drawn",
           "save_table", "say", "STDOUT", "save_plot", "DEFAULT_FMIN", "DEFAULT_FMAX", "DEFAULT_POINTS"]

DEFAULT_FMIN, DEFAULT_FMAX, DEFAULT_POINTS = f"{SPAN[0]:g} Hz", f"{SPAN[1]:g} Hz", 400


class Parser(argparse.ArgumentParser):
    """An argument parser whose errors are one line and exit code 2."""

    def error(self, message):
        raise InputError(message, source="command line")


def mission_arg(sp):
    sp.add_argument("mission", nargs="?", default=None, help="mission file (TOML); the built-in default when omitted")


def grid_args(sp, span_help=None):
    """``--fmin``, ``--fmax``, ``--points``, ``--table`` and ``--plot``; with ``span_help`` the ends
    default to None (the command chooses them, e.g. a detector's valid band) and say so."""
    lo, hi = (None, None) if span_help else (DEFAULT_FMIN, DEFAULT_FMAX)
    sp.add_argument("--fmin", default=lo, help=f"lowest frequency (default {span_help or DEFAULT_FMIN})")
    sp.add_argument("--fmax", default=hi, help=f"highest frequency (default {span_help or DEFAULT_FMAX})")
    sp.add_argument("--points", type=int, default=DEFAULT_POINTS, help="grid points, log-spaced (default 400)")
    output_args(sp)


def output_args(sp, plot=True):
    """``--table`` (and ``--plot``): where to write the result."""
    sp.add_argument("--table", help="write the table here (.ecsv or .csv)")
    if plot:
        sp.add_argument("--plot", help="write the figure here (.png, .pdf or .svg)")


def frequency(text, option):
    """A frequency given as text ("5 mHz", or plain Hz), inside the range any input may take."""
    try:
        return checked_frequency(text)
    except ValueError as exc:
        raise InputError(str(exc), source="command line", field=option, value=text) from None


def warn(message):
    """A one-line warning on stderr: the run goes on (exit code unchanged)."""
    sys.stderr.write("gwclock: warning: " + " ".join(str(message).split()) + "\n")


#: How far above the pulse bandwidth a requested frequency may lie before the user is warned.
REACH_MARGIN = 100.0


def check_reach(design, f, what, text=None):
    """Warn when a frequency lies orders of magnitude above what the clock's pi pulses can sample
    (1/(2 t_pi)): there the curve is a Ramsey fallback far outside the mission's band, and a unit
    typed as "MHz" for "mHz" is the likely cause."""
    top = pulse_bandwidth(design)
    if f > REACH_MARGIN * top:
        hint = "; did you mean mHz?" if text is not None and "MHz" in str(text) else ""
        warn(f"{what} = {f:g} Hz is {f / top:.2g} times the highest frequency the pi pulses reach "
             f"(1/(2 t_pi) = {top:g} Hz){hint}")


def grid(args):
    """The log-spaced frequency grid of ``--fmin``, ``--fmax`` and ``--points``."""
    fmin = frequency(args.fmin, "--fmin")
    fmax = frequency(args.fmax, "--fmax")
    if fmin >= fmax:
        raise InputError(f"--fmin ({fmin:g} Hz) must be below --fmax ({fmax:g} Hz)", source="command line")
    if not 2 <= args.points <= 10_000_000:
        raise InputError("expected between 2 and 1e7 points", source="command line", field="--points",
                         value=args.points)
    return frequency_grid(fmin, fmax, args.points)


def tuned(mission, text, option="--tune"):
    """The mission with ``sequence.tune`` set to a tuning given as text, validated as a mission file's
    would be (the band the sequence kind can reach); returns (mission, tuning in Hz). Every command
    that takes a tuning goes through here, so that one tuning means one thing everywhere."""
    value = frequency(text, option)
    data = mission.model_dump(mode="python")
    data["sequence"]["tune"] = f"{value!r} Hz"
    return mission_from_dict(data, f"command line {option}"), value


def quantity(text, unit, option, positive=True):
    """A value with units given as text, as a float in ``unit`` (plain numbers allowed for Hz, solMass)."""
    try:
        if str(text).strip() in ("0", "-0", "0.0"):
            v = 0.0  # zero needs no unit: say what is wrong with it instead
        else:
            v = float(parse_quantity(text, unit, allow_plain=unit in ("Hz", "solMass")).value)
    except ValueError as exc:
        raise InputError(str(exc), source="command line", field=option, value=text) from None
    if positive and v <= 0:
        raise InputError("expected a positive value", source="command line", field=option, value=text)
    return v


def number(text, option, lo=0.0):
    """A plain finite number not below ``lo``."""
    try:
        v = float(text)
    except (TypeError, ValueError):
        raise InputError("expected a plain number", source="command line", field=option, value=text) from None
    if not np.isfinite(v) or v < lo:
        raise InputError(f"expected a number >= {lo:g}", source="command line", field=option, value=text)
    return v


def check_outputs(args) -> None:
    """Check a command's ``--table``, ``--plot`` and ``--latex`` paths before any work is done."""
    _TABLE_ON_STDOUT[0] = getattr(args, "table", None) == STDOUT
    if _TABLE_ON_STDOUT[0] and not getattr(args, "table_stdout", False):
        raise InputError("standard output ('-') takes the table of curve and window only; give a file name",
                         source="command line", field="--table", value=STDOUT)
    if getattr(args, "table", None) and args.table != STDOUT:
        check_output_path(args.table, TABLE_FORMATS)
    if getattr(args, "plot", None):
        check_output_path(args.plot, FIGURE_FORMATS)
    if getattr(args, "latex", None):
        check_output_path(args.latex, LATEX_FORMATS)


def latex_arg(sp, what):
    """``--latex FILE``: the same result as a LaTeX table (booktabs and siunitx)."""
    sp.add_argument("--latex", help=f"write {what} as a LaTeX table here (.tex; booktabs + siunitx)")


def save_latex(text, path):
    write_latex(text, path)
    print(f"wrote LaTeX table {path}", file=_lines())


#: ``--table -`` writes the table (ECSV) to standard output; the command's own lines go to stderr.
STDOUT = "-"


_TABLE_ON_STDOUT = [False]


def _lines():
    return sys.stderr if _TABLE_ON_STDOUT[0] else sys.stdout


def say(text):
    """A line for the user: on stdout, or on stderr when stdout carries the table (``--table -``)."""
    print(text, file=_lines())


def save_table(table, path):
    if path == STDOUT:
        write_ecsv(table, sys.stdout)
        sys.stdout.flush()
        return
    write_table(table, path)
    print(f"wrote table {path}", file=_lines())


def save_plot(path, draw, title, size=(6.4, 4.4), metadata=None):
    """A new figure, ``draw(ax)`` on it, the title, saved atomically to ``path``."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=size, layout="constrained")
    ax = fig.add_subplot()
    draw(ax)
    if title:
        ax.set_title(title)
    save_drawn(fig, path, {"Title": title, **(metadata or {})})


def save_drawn(fig, path, metadata):
    """Save a finished figure atomically, its metadata naming the command line that made it."""
    save_figure(fig, path, metadata={"Creator": shlex.join(COMMAND) or f"gwclock {__version__}", **metadata})
    say(f"wrote figure {path}")
