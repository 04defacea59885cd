"""Command line: ``gwclock check | curve | window | species``.

The CLI only parses, loads, calls the engine and writes; it holds no physics. Bad input gives
one line on stderr and exit code 2 (``--debug`` shows the traceback).
"""

from __future__ import annotations

import io
import os
import signal
import sys
import threading

from ..errors import InputError
from ..files import COMMAND, STOP
from ..version import __version__
from . import common, design, documents, science, study
from .common import Parser

__all__ = ["main"]

REFERENCES = [
    "Estabrook & Wahlquist 1975, Gen. Rel. Grav. 6, 439 (one-way Doppler response)",
    "Armstrong 2006, Living Rev. Relativity 9, 1 (two-way Doppler tracking)",
    "Robson, Cornish & Liu 2019, Class. Quantum Grav. 36, 105011 (sensitivity normalisation)",
    "Itano et al. 1993, Phys. Rev. A 47, 3554 (quantum projection noise)",
    "Leroux et al. 2017, Metrologia 54, 307 (Ramsey projection-noise stability, eq. 2)",
    "Cywinski, Lutchyn, Nave & Das Sarma 2008, Phys. Rev. B 77, 174509 (DD filter functions)",
    "Degen, Reinhard & Cappellaro 2017, Rev. Mod. Phys. 89, 035002 (DD sensing)",
    "Chou et al. 2011, Phys. Rev. X 1, 011002 (correlated two-clock read-out)",
    "Barnes et al. 1971, IEEE Trans. Instrum. Meas. 20, 105 (power-law frequency noise)",
    "Armano et al. 2016, Phys. Rev. Lett. 116, 231101 (drag-free acceleration noise)",
    "CIPM 2009 Recommendation 2 (Sr and Yb clock frequencies)",
    "Peters 1964, Phys. Rev. 136, B1224 (inspiral at quadrupole order)",
    "Moore, Cole & Berry 2015, Class. Quantum Grav. 32, 015014 (characteristic strain)",
    "Thrane & Romano 2013, Phys. Rev. D 88, 124032 (stochastic backgrounds, power-law integrated curves)",
    "Sathyaprakash & Schutz 2009, Living Rev. Relativ. 12, 2 (Advanced LIGO fit)",
    "Mishra, Arun, Iyer & Sathyaprakash 2010, Phys. Rev. D 82, 064010 (ET-B fit)",
    "Yagi & Seto 2011, Phys. Rev. D 83, 044011 (DECIGO)",
    "Planck Collaboration 2020, A&A 641, A6 (cosmology, via astropy Planck18)",
    "Muniz et al. 2021, Phys. Rev. Research 3, 023152 (Sr 3P0 lifetime)",
]

def build_parser():
    p = Parser(prog="gwclock", description="Strain sensitivity of optical-clock GW detectors in space "
                                            "(concept-study estimates).")
    p.add_argument("--version", action="version", version=f"gwclock {__version__}")
    p.add_argument("--cite", action="store_true", help="print the references of the models and exit")
    p.add_argument("--debug", action="store_true", help="show a traceback on errors")
    sub = p.add_subparsers(dest="command", parser_class=Parser)
    design.add_commands(sub)
    science.add_commands(sub)
    study.add_commands(sub)
    documents.add_commands(sub)
    return p


def _stop_politely_on_sigterm():
    """Turn SIGTERM into KeyboardInterrupt so that partial outputs are cleaned up."""
    if threading.current_thread() is threading.main_thread():
        def stop(signum, frame):
            STOP.set()  # remembered, in case this raise lands where Python cannot propagate it
            raise KeyboardInterrupt
        signal.signal(signal.SIGTERM, stop)


def main(argv=None) -> int:
    """Run the command line; returns the exit code."""
    argv = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in argv
    argv = [a for a in argv if a != "--debug"]  # taken anywhere, before or after the command
    COMMAND[:] = ["gwclock", *argv]
    common._TABLE_ON_STDOUT[0] = False
    STOP.clear()  # a new run
    _stop_politely_on_sigterm()
    try:
        args = build_parser().parse_args(argv)
        if args.cite:
            print("\n".join(REFERENCES))
            return 0
        if not getattr(args, "command", None):
            build_parser().print_help()
            return 2
        return args.func(args)
    except InputError as exc:
        if debug:
            raise
        print(f"gwclock: error: {exc}", file=sys.stderr)
        return 2
    except ValueError as exc:  # engine refusals (e.g. an unreachable tuning)
        if debug:
            raise
        print(f"gwclock: error: {' '.join(str(exc).split())}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("gwclock: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # the reader closed the pipe (``| head``): stop quietly
        try:  # point stdout at /dev/null so that flushing it at exit does not fail again
            os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        except (OSError, ValueError, AttributeError, io.UnsupportedOperation):
            pass
        return 0

