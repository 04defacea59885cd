"""Commands about missions' designs: ``check``, ``curve``, ``window``, ``compare`` and ``species``."""

from __future__ import annotations

import numpy as np
from astropy.table import Table

from ..config.mission import load_mission
from ..engine import envelope, window
from ..errors import InputError
from ..outputs.latex import Raw, budget_latex, latex_number, latex_provenance, latex_unit, mission_latex, table_latex
from ..outputs.plotting import plot_budget_panels, plot_comparison
from ..outputs.summary import describe_mission, mission_differences, mission_rows, summarise_budget
from ..outputs.tables import Column, budget_table, provenance
from ..physics.species import SPECIES
from .common import (
    check_outputs,
    check_reach,
    frequency,
    grid,
    grid_args,
    latex_arg,
    mission_arg,
    save_drawn,
    save_latex,
    save_table,
    say,
    tuned,
)

__all__ = ["add_commands"]


def _write(budget, mission, digest, args):
    if args.table:
        save_table(budget_table(budget, mission.name, digest, mission), args.table)
    if args.latex:
        design = budget.design
        at = budget_frequencies(args, budget.frequency)
        b = envelope(design, at) if budget.mode == "envelope" else window(design, at, tune=float(budget.tuning[0]))
        save_latex(budget_latex(b, mission.name, latex_provenance(mission.name, digest)), args.latex)
    if args.plot:
        kind = "tuned envelope" if budget.mode == "envelope" else "fixed-tuning window"
        title = f"{mission.name}: {kind} and noise budget"
        art = plot_budget_panels(budget, title=title)
        save_drawn(art["asd"].figure, args.plot, {"Title": mission.name, "Subject": f"mission sha256 {digest}"})


def _load(args):
    return load_mission(args.mission)


def cmd_check(args):
    mission, digest = _load(args)
    check_outputs(args)
    print(describe_mission(mission, digest))
    if args.latex:
        save_latex(mission_latex(mission_rows(mission), mission.name, latex_provenance(mission.name, digest)), args.latex)
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
    say(summarise_budget(budget, mission.name))
    _write(budget, mission, digest, args)
    return 0


def cmd_window(args):
    mission, digest = _load(args)
    f = grid(args)
    mission, _ = tuned(mission, args.tune)
    check_outputs(args)
    budget = window(mission.design(), f)
    say(summarise_budget(budget, mission.name))
    _write(budget, mission, digest, args)
    return 0


def cmd_compare(args):
    if len(args.missions) < 2:
        raise InputError("give two or more missions to compare (a file, or 'default')", source="command line",
                         field="MISSION")
    if len(args.missions) > 8:
        raise InputError("at most 8 missions in one comparison", source="command line", field="MISSION")
    loaded = [load_mission(None if m == "default" else m) for m in args.missions]
    missions = [m for m, _ in loaded]
    f = grid(args)
    check_outputs(args)
    diff = mission_differences(missions)
    budgets = [envelope(m.design(), f) if m.design().tune is None else window(m.design(), f) for m in missions]
    heads = ["field"] + [f"[{i + 1}] {m.name}" for i, m in enumerate(missions)]
    cells = [[key, *texts] for key, _, _, texts in diff]
    widths = [max(len(r[j]) for r in [heads, *cells]) for j in range(len(heads))]
    print(f"{len(missions)} missions; they differ in {len(diff)} field{'s' if len(diff) != 1 else ''}:")
    for r in [heads, *cells]:
        print("  " + "  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip())
    base = budgets[0].asd
    for i, (m, b) in enumerate(zip(missions, budgets), start=1):
        k = int(np.argmin(b.asd))
        line = f"  [{i}] {m.name}: best ASD {b.asd[k]:.3e} Hz^-1/2 at {f[k]:.4g} Hz"
        if i > 1:
            r = b.asd / base
            lo, hi = int(np.argmin(r)), int(np.argmax(r))
            line += f"; ASD / [1] from {r[lo]:.3g} (at {f[lo]:.3g} Hz) to {r[hi]:.3g} (at {f[hi]:.3g} Hz)"
        print(line)
    if args.table:
        t = Table()
        t["frequency"] = Column(f, unit="Hz")
        for i, b in enumerate(budgets, start=1):
            t[f"asd_{i}"] = Column(b.asd, unit="Hz(-1/2)")
        for i, b in enumerate(budgets[1:], start=2):
            t[f"ratio_{i}"] = Column(b.asd / base)
        t.meta.update(provenance(missions[0].name, loaded[0][1]))
        t.meta["missions"] = [f"[{i}] {m.name} (sha256 {d})" for i, (m, d) in enumerate(loaded, start=1)]
        t.meta["note"] = "asd_i: mission i's curve (the envelope, or its window when it fixes sequence.tune); ratio_i = asd_i / asd_1"
        save_table(t, args.table)
    if args.plot:
        art = plot_comparison([m.name for m in missions], f, [b.asd for b in budgets],
                              colours=[m.colour for m in missions])
        save_drawn(art["asd"].figure, args.plot, {
            "Title": "comparison of " + ", ".join(m.name for m in missions),
            "Subject": "; ".join(f"[{i}] sha256 {d}" for i, (_, d) in enumerate(loaded, start=1))})
    if args.latex:
        names = [m.name for m in missions]
        rows = [(key, *[Raw(latex_number(v, 6) + (f"~{latex_unit(unit)}" if unit is not None else "")) for v in values])
                for key, values, unit, _ in diff]
        columns = [("parameter", None, "l")] + [(f"[{i}] {n}", None, "l") for i, n in enumerate(names, start=1)]
        caption = "Parameters in which the missions differ (all others are equal): " + "; ".join(
            f"[{i}] {n}" for i, n in enumerate(names, start=1)) + "."
        prov = latex_provenance(missions[0].name, loaded[0][1])
        prov["missions"] = "; ".join(f"[{i}] {m.name} (sha256 {d})" for i, (m, d) in enumerate(loaded, start=1))
        save_latex(table_latex(rows or [("(none)", *[""] * len(names))], columns, caption, "tab:mission-differences", prov),
                   args.latex)
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
    sp.set_defaults(func=cmd_curve, table_stdout=True)
    sp = sub.add_parser("window", help="response at one fixed tuning")
    mission_arg(sp)
    sp.add_argument("--tune", required=True, help="tuning frequency, e.g. '0.1 Hz'")
    grid_args(sp)
    _budget_latex_args(sp)
    sp.set_defaults(func=cmd_window, table_stdout=True)
    sp = sub.add_parser("compare", help="two or more missions: the fields that differ, their curves and ratio")
    sp.add_argument("missions", nargs="+", metavar="MISSION", help="mission files ('default': the built-in one)")
    grid_args(sp)
    latex_arg(sp, "the table of differences")
    sp.set_defaults(func=cmd_compare)
    sp = sub.add_parser("species", help="list the clock species presets with their sources")
    sp.set_defaults(func=cmd_species)
