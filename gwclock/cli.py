"""Command line: ``gwclock check | curve | window | species``.

The CLI only parses, loads, calls the engine and writes; it holds no physics. Bad input gives
one line on stderr and exit code 2 (``--debug`` shows the traceback).
"""

from __future__ import annotations

import argparse
import sys

from . import __version__
from .errors import InputError

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

DEFAULT_FMIN, DEFAULT_FMAX, DEFAULT_POINTS = "1e-5 Hz", "100 Hz", 400


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # one line, exit 2
        raise InputError(message, source="command line")


def _frequency(text, option):
    from .quantities import parse_frequency
    try:
        value = parse_frequency(text)
    except ValueError as exc:
        raise InputError(str(exc), source="command line", field=option, value=text) from None
    if value <= 0:
        raise InputError("expected a positive frequency", source="command line", field=option, value=text)
    return value


def _grid(args):
    from .engine import frequency_grid
    fmin = _frequency(args.fmin, "--fmin")
    fmax = _frequency(args.fmax, "--fmax")
    if fmin >= fmax:
        raise InputError(f"--fmin ({fmin:g} Hz) must be below --fmax ({fmax:g} Hz)", source="command line")
    if not 2 <= args.points <= 10_000_000:
        raise InputError("expected between 2 and 1e7 points", source="command line", field="--points",
                         value=args.points)
    return frequency_grid(fmin, fmax, args.points)


def _outputs(args):
    from .tables import check_outputs
    check_outputs(args)


def _summary(budget, name):
    import numpy as np
    f, asd = budget.frequency, budget.asd
    i = int(np.argmin(asd))
    lines = [f"{name}: {budget.mode}, {f.size} frequencies from {f[0]:.3g} Hz to {f[-1]:.3g} Hz"]
    lines.append(f"  best strain ASD {asd[i]:.3e} Hz^-1/2 at {f[i]:.4g} Hz")
    for factor in (10.0,):
        below = asd <= factor * asd[i]
        if below.any():
            lo, hi = f[below][0], f[below][-1]
            lines.append(f"  within x{factor:g} of the best from {lo:.3g} Hz to {hi:.3g} Hz")
    dominant = max(budget.psd, key=lambda k: budget.psd[k][i])
    lines.append(f"  dominant noise at the best point: {dominant}")
    if budget.mode == "envelope":
        lines.append("  (an envelope: each frequency uses its own tuning)")
    return "\n".join(lines)


def _write(budget, mission, digest, args):
    from .tables import budget_table, write_table
    if args.table:
        write_table(budget_table(budget, mission.name, digest), args.table)
        print(f"wrote table {args.table}")
    if args.plot:
        from .plotting import plot_budget, save_figure
        from matplotlib.figure import Figure
        fig = Figure(figsize=(6.4, 4.2), layout="constrained")
        ax = fig.add_subplot()
        kind = "tuned envelope" if budget.mode == "envelope" else "fixed-tuning window"
        plot_budget(budget, ax=ax, title=f"{mission.name}: {kind} and noise budget")
        save_figure(fig, args.plot, metadata={"Title": mission.name, "Creator": f"gwclock {__version__}",
                                              "Subject": f"mission sha256 {digest}"})
        print(f"wrote figure {args.plot}")


def _load(args):
    from .mission import load_mission
    return load_mission(args.mission)


def cmd_check(args):
    mission, digest = _load(args)
    print(describe(mission, digest))
    return 0


def describe(mission, digest):
    """The resolved mission, with units, as text."""
    import astropy.units as u
    lines = [f"mission: {mission.name}  (sha256 {digest})"]
    if mission.description:
        lines.append(f"  {mission.description}")
    for section in ("link", "clock", "laser", "spacecraft", "sequence", "observation"):
        lines.append(f"[{section}]")
        model = getattr(mission, section)
        for key in type(model).model_fields:
            value = getattr(model, key)
            if key == "coherence_time" and value is None:
                value = mission.coherence_time
                note = "  (species lifetime)"
            elif key == "max_interrogation" and value is None:
                value = mission.max_interrogation
                note = "  (3 coherence times)"
            else:
                note = ""
            if isinstance(value, u.Quantity):
                value = f"{value.value:.6g} {value.unit.to_string()}"
            lines.append(f"  {key} = {value}{note}")
    return "\n".join(lines)


def cmd_curve(args):
    from .engine import envelope, window
    mission, digest = _load(args)
    f = _grid(args)
    _outputs(args)
    design = mission.design()
    budget = envelope(design, f) if design.tune is None else window(design, f)
    print(_summary(budget, mission.name))
    _write(budget, mission, digest, args)
    return 0


def cmd_window(args):
    from .engine import window
    mission, digest = _load(args)
    f = _grid(args)
    tune = _frequency(args.tune, "--tune")
    try:
        mission = mission.clone(**{"sequence.tune": f"{tune!r} Hz"})
    except Exception:
        from .mission import mission_from_dict
        data = mission.model_dump(mode="python")
        data["sequence"]["tune"] = f"{tune!r} Hz"
        mission = mission_from_dict(data, "command line --tune")
    _outputs(args)
    budget = window(mission.design(), f)
    print(_summary(budget, mission.name))
    _write(budget, mission, digest, args)
    return 0


def cmd_species(args):
    from .species import SPECIES
    for s in SPECIES.values():
        print(f"{s.key:7s} {s.digits} Hz  lifetime {s.lifetime:g} s  {s.transition}")
        print(f"        frequency: {s.frequency_source}")
        print(f"        lifetime:  {s.lifetime_source}")
        if not s.checked:
            print("        (not yet checked against the source text)")
    return 0


def build_parser():
    p = _Parser(prog="gwclock", description="Strain sensitivity of optical-clock GW detectors in space "
                                            "(concept-study estimates).")
    p.add_argument("--version", action="version", version=f"gwclock {__version__}")
    p.add_argument("--cite", action="store_true", help="print the references of the models and exit")
    p.add_argument("--debug", action="store_true", help="show a traceback on errors")
    sub = p.add_subparsers(dest="command", parser_class=_Parser)

    def mission_arg(sp):
        sp.add_argument("mission", nargs="?", default=None,
                        help="mission file (TOML); the built-in default when omitted")

    def grid_args(sp):
        sp.add_argument("--fmin", default=DEFAULT_FMIN, help=f"lowest frequency (default {DEFAULT_FMIN})")
        sp.add_argument("--fmax", default=DEFAULT_FMAX, help=f"highest frequency (default {DEFAULT_FMAX})")
        sp.add_argument("--points", type=int, default=DEFAULT_POINTS, help="grid points, log-spaced (default 400)")
        sp.add_argument("--table", help="write the table here (.ecsv or .csv)")
        sp.add_argument("--plot", help="write the figure here (.png, .pdf or .svg)")

    sp = sub.add_parser("check", help="validate a mission file and print it resolved, with units")
    mission_arg(sp)
    sp.set_defaults(func=cmd_check)
    sp = sub.add_parser("curve", help="tuned envelope of the strain sensitivity with its noise budget")
    mission_arg(sp)
    grid_args(sp)
    sp.set_defaults(func=cmd_curve)
    sp = sub.add_parser("window", help="response at one fixed tuning")
    mission_arg(sp)
    sp.add_argument("--tune", required=True, help="tuning frequency, e.g. '0.1 Hz'")
    grid_args(sp)
    sp.set_defaults(func=cmd_window)
    sp = sub.add_parser("species", help="list the clock species presets with their sources")
    sp.set_defaults(func=cmd_species)
    from . import cli_science, cli_study
    cli_science.add_commands(sub, mission_arg, grid_args)
    cli_science.add_output_commands(sub, mission_arg)
    cli_study.add_commands(sub, mission_arg, grid_args)
    return p


def _stop_politely_on_sigterm():
    """Turn SIGTERM into KeyboardInterrupt so that partial outputs are cleaned up."""
    import signal
    import threading
    if threading.current_thread() is threading.main_thread():
        def stop(signum, frame):
            raise KeyboardInterrupt
        signal.signal(signal.SIGTERM, stop)


def main(argv=None) -> int:
    """Run the command line; returns the exit code."""
    argv = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in argv
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


if __name__ == "__main__":
    sys.exit(main())
