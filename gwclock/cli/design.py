"""Commands about one mission's design: ``check``, ``curve``, ``window`` and ``species``."""

from __future__ import annotations

import numpy as np

from ..config.mission import load_mission
from ..engine import envelope, window
from ..errors import InputError
from ..outputs.latex import budget_latex, mission_latex
from ..outputs.plotting import plot_budget
from ..outputs.summary import describe_mission, mission_rows, summarise_budget
from ..outputs.tables import budget_table
from ..physics.species import SPECIES
from .common import (
    check_outputs,
    check_reach,
    frequency,
    grid,
    grid_args,
    latex_arg,
    latex_provenance,
    mission_arg,
    save_latex,
    save_plot,
    save_table,
    tuned,
)

__all__ = ["add_commands"]


def _write(budget, mission, digest, args):
    if args.table:
        save_table(budget_table(budget, mission.name, digest), args.table)
    if args.latex:
        design = budget.design
        at = budget_frequencies(args, budget.frequency)
        b = envelope(design, at) if budget.mode == "envelope" else window(design, at, tune=float(budget.tuning[0]))
        save_latex(budget_latex(b, mission.name, latex_provenance(mission, digest)), args.latex)
    if args.plot:
        kind = "tuned envelope" if budget.mode == "envelope" else "fixed-tuning window"
        title = f"{mission.name}: {kind} and noise budget"
        save_plot(args.plot, lambda ax: plot_budget(budget, ax=ax, title=title), None, size=(6.4, 4.2),
                  metadata={"Title": mission.name, "Subject": f"mission sha256 {digest}"})


def _load(args):
    return load_mission(args.mission)


def cmd_check(args):
    mission, digest = _load(args)
    check_outputs(args)
    print(describe_mission(mission, digest))
    if args.latex:
        save_latex(mission_latex(mission_rows(mission), mission.name, latex_provenance(mission, digest)), args.latex)
    return 0


def budget_frequencies(args, grid_f):
    """The frequencies of the LaTeX budget: ``--at`` (comma-separated), or every decade inside
    the grid (1, 10, 100 ... times a power of ten)."""
    if args.at:
        f = sorted({frequency(x.strip(), "--at") for x in args.at.split(",") if x.strip()})
    else:
        lo, hi = np.log10(grid_f[0]), np.log10(grid_f[-1])
        f = [10.0**k for k in range(int(np.ceil(lo - 1e-9)), int(np.floor(hi + 1e-9)) + 1)]
    if len(f) == 0:
        raise InputError("expected one or more frequencies", source="command line", field="--at", value=args.at)
    if len(f) > 200:
        raise InputError("at most 200 frequencies in a LaTeX table", source="command line", field="--at")
    return np.array(f, dtype=float)


def cmd_curve(args):
    mission, digest = _load(args)
    f = grid(args)
    check_outputs(args)
    design = mission.design()
    check_reach(design, f[0], "--fmin", args.fmin)
    budget = envelope(design, f) if design.tune is None else window(design, f)
    print(summarise_budget(budget, mission.name))
    _write(budget, mission, digest, args)
    return 0


def cmd_window(args):
    mission, digest = _load(args)
    f = grid(args)
    mission, _ = tuned(mission, args.tune)
    check_outputs(args)
    budget = window(mission.design(), f)
    print(summarise_budget(budget, mission.name))
    _write(budget, mission, digest, args)
    return 0


def cmd_species(args):
    for s in SPECIES.values():
        print(f"{s.key:7s} {s.digits} Hz  lifetime {s.lifetime:g} s  {s.transition}")
        print(f"        frequency: {s.frequency_source}")
        print(f"        lifetime:  {s.lifetime_source}")
        if not s.checked:
            print("        (not yet checked against the source text)")
    return 0


def _budget_latex_args(sp):
    latex_arg(sp, "the noise budget at chosen frequencies")
    sp.add_argument("--at", help="frequencies of the LaTeX budget, comma-separated (default: each decade in the range)")


def add_commands(sub):
    sp = sub.add_parser("check", help="validate a mission file and print it resolved, with units")
    mission_arg(sp)
    latex_arg(sp, "the mission parameter table")
    sp.set_defaults(func=cmd_check)
    sp = sub.add_parser("curve", help="tuned envelope of the strain sensitivity with its noise budget")
    mission_arg(sp)
    grid_args(sp)
    _budget_latex_args(sp)
    sp.set_defaults(func=cmd_curve)
    sp = sub.add_parser("window", help="response at one fixed tuning")
    mission_arg(sp)
    sp.add_argument("--tune", required=True, help="tuning frequency, e.g. '0.1 Hz'")
    grid_args(sp)
    _budget_latex_args(sp)
    sp.set_defaults(func=cmd_window)
    sp = sub.add_parser("species", help="list the clock species presets with their sources")
    sp.set_defaults(func=cmd_species)
