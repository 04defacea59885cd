"""Command-line trade studies: ``sweep``, ``scan`` and ``require``."""

from __future__ import annotations

import re

import numpy as np
from astropy.table import Table, vstack

from ..config.mission import load_mission
from ..engine import window_psd
from ..errors import InputError
from ..outputs.plotting import MAX_FACETS, draw_scan, draw_sweep
from ..outputs.stream import TableStream
from ..outputs.tables import Column, provenance
from ..quantities import parse_quantity
from ..studies.executor import run_sweep
from ..studies.sweep import failure_reason, field_unit, field_value, parse_metric, parse_perturb, parse_vary, require
from .common import check_outputs, check_reach, frequency, grid, grid_args, mission_arg, output_args, save_plot, save_table

__all__ = ["add_commands"]

CLI = "command line"

def _collect_and_write(args, mission, digest, axes, metric_texts, perturb):
    meta = provenance(mission.name, digest)
    meta.update(varied=", ".join(f"{a.field} ({'log' if a.log else 'linear'}, {len(a.texts)} values)" for a in axes),
                metrics=", ".join(metric_texts))
    if perturb:
        meta.update(perturbed=", ".join(f"{f} x (1 +- {s:g})" for f, s in perturb), samples=args.samples,
                    seed=args.seed, note="metric columns are medians; _p05/_p95 the 5-95 % band")
    stream = TableStream(args.table, meta) if args.table else None
    keep = [] if (args.plot or not args.table) else None
    try:
        def sink(table):
            if stream:
                stream.append(table)
            if keep is not None:
                keep.append(table)
        n = run_sweep(mission, axes, metric_texts, workers=args.workers, scheduler=args.scheduler, perturb=perturb,
                      samples=args.samples, seed=args.seed, sink=sink, quiet=args.quiet)
    except BaseException:
        if stream:
            stream.abort()
        raise
    if stream:
        stream.close()
        print(f"wrote table {args.table} ({n} rows)")
    return vstack(keep) if keep else None


def cmd_sweep(args):
    mission, digest = load_mission(args.mission)
    axes = [parse_vary(v, mission, CLI, "--vary") for v in args.vary]
    if len({a.field for a in axes}) != len(axes):
        raise InputError("each field can be varied once", source="command line", field="--vary")
    metrics = [parse_metric(m, CLI, "--metric") for m in args.metric]
    for m in metrics:
        if m.kind in ("asd", "power"):
            check_reach(mission.design(), m.arg, m.text.split("@")[0] + " frequency", m.text)
    perturb = [parse_perturb(p, mission, CLI, "--perturb") for p in (args.perturb or [])]
    _workers(args)
    check_outputs(args)
    drawn = _plot_choice(args, axes, metrics)  # refused now, before the work, not after the table
    table = _collect_and_write(args, mission, digest, axes, [m.text for m in metrics], perturb)
    if table is not None and not args.table:
        table.pprint(max_lines=40, max_width=160)
    if args.plot and table is not None:
        metric, column = drawn
        shown = column or (f"band@{metric.arg:g}" if metric.kind == "band" and len(axes) == 1 else metric.columns[0])
        title = f"{mission.name}: {shown}"
        facets = len(axes) == 3  # panels replace the one axes: the title goes over all of them
        save_plot(args.plot, lambda ax: draw_sweep(ax, axes, metric, table, title if facets else None, column,
                                                   args.target),
                  None if facets else title, size=(9.0, 4.2) if facets else (6.4, 4.6),
                  metadata={"Title": f"{mission.name} sweep"})
    return 0


def _plot_choice(args, axes, metrics):
    """(metric, column or None) that ``--plot`` draws: ``--plot-metric`` names a column of the table
    (or a metric as given); by default the first metric. Refuses what cannot be drawn."""
    if not args.plot:
        return None
    if len(axes) > 3:
        raise InputError("--plot draws one, two or three varied fields (a third as panels); give at most three "
                         "--vary, or leave out --plot", source="command line", field="--plot")
    if len(axes) == 3 and len(axes[2].values) > MAX_FACETS:
        raise InputError(f"a third varied field is drawn as one panel per value: at most {MAX_FACETS} values",
                         source="command line", field="--vary", value=axes[2].field)
    if not args.plot_metric:
        return metrics[0], None
    for m in metrics:
        if args.plot_metric == m.text:
            return m, None
        if args.plot_metric in m.columns:
            return m, args.plot_metric
    names = [c for m in metrics for c in m.columns]
    raise InputError(f"not a column of this sweep; expected one of {', '.join(names)}", source="command line",
                     field="--plot-metric", value=args.plot_metric)


def _workers(args):
    if args.workers < 1 or args.workers > 256:
        raise InputError("expected between 1 and 256 workers", source="command line", field="--workers", value=args.workers)
    if args.scheduler and args.workers > 1:
        raise InputError("use either --workers or --scheduler", source="command line")
    if not 2 <= args.samples <= 100_000:
        raise InputError("expected between 2 and 1e5 samples", source="command line", field="--samples",
                         value=args.samples)
    if not 0 <= args.seed < 2**63:
        raise InputError("expected a whole number from 0 to 2^63 - 1", source="command line", field="--seed",
                         value=args.seed)


def cmd_scan(args):
    mission, digest = load_mission(args.mission)
    f1, f2 = frequency(args.from_, "--from"), frequency(args.to, "--to")
    if f1 >= f2 or args.steps < 1:
        raise InputError("expected --from below --to and --steps >= 1", source="command line")
    f = grid(args)
    check_outputs(args)
    design = mission.design()
    tunings = np.geomspace(f1, f2, args.steps)
    try:
        S, best = window_psd(design, tunings, f)
    except ValueError as exc:
        raise InputError(str(exc), source="command line", field="--from/--to") from None
    env = S.min(axis=0)
    t = Table()
    t["frequency"] = Column(f, unit="Hz")
    for k, fk in enumerate(tunings):
        t[f"asd_tune_{fk:.4g}Hz"] = Column(np.sqrt(S[k]), unit="Hz(-1/2)")
    t["asd_scan_envelope"] = Column(np.sqrt(env), unit="Hz(-1/2)")
    t.meta.update(provenance(mission.name, digest))
    t.meta.update(tunings_hz=[float(x) for x in tunings], pulses=[int(x) for x in best["pulses"]],
                  interrogation_s=[float(x) for x in best["interrogation"]],
                  note="one fixed-tuning window per column; asd_scan_envelope is their lower envelope")
    for fk, n, T in zip(tunings, best["pulses"], best["interrogation"]):
        print(f"  tuning {fk:9.4g} Hz: {int(n):6d} pi pulses, interrogation {T:8.3g} s")
    if args.table:
        save_table(t, args.table)
    if args.plot:
        save_plot(args.plot, lambda ax: draw_scan(ax, f, tunings, S, env), f"{mission.name}: tuning scan",
                  metadata={"Title": f"{mission.name} scan"})
    return 0


def cmd_require(args):
    mission, digest = load_mission(args.mission)
    m = re.fullmatch(r"\s*(.+?)\s*(<=|>=)\s*([0-9.eE+-]+)\s*", args.target or "")
    if not m:
        raise InputError("expected 'METRIC<=VALUE' or 'METRIC>=VALUE'", source="command line", field="--target",
                         value=args.target)
    metric = parse_metric(m.group(1), CLI, "--target")
    if metric.kind in ("asd", "power"):
        check_reach(mission.design(), metric.arg, metric.text.split("@")[0] + " frequency", metric.text)
    if len(metric.columns) != 1:
        raise InputError("require takes a metric with one value (one source for snr)", source="command line",
                         field="--target")
    op, target = m.group(2), float(m.group(3))
    unit = field_unit(mission, args.vary, CLI)
    if args.bounds:
        try:
            lo, hi = (float(parse_quantity(p, unit).value) if unit else float(p) for p in args.bounds.split(":"))
        except ValueError:
            raise InputError("expected LO:HI (with units for quantity fields)", source="command line", field="--bounds",
                             value=args.bounds) from None
    else:
        v, _ = field_value(mission, args.vary)
        lo, hi = v / 100, v * 100
    if not 0 < lo < hi:
        raise InputError("expected 0 < LO < HI", source="command line", field="--bounds", value=args.bounds)
    try:
        value, unit, message = require(mission, metric, op, target, args.vary, (lo, hi))
    except Exception as exc:
        raise InputError(failure_reason(exc), source="command line", field="--bounds") from None
    print(message)
    return 0 if value is not None else 1


def add_commands(sub):
    def exec_args(sp):
        sp.add_argument("--workers", type=int, default=1, help="local worker processes (default 1)")
        sp.add_argument("--scheduler", help="address of a running dask.distributed scheduler, e.g. tcp://host:8786")
        sp.add_argument("--quiet", action="store_true", help="no progress display")

    sp = sub.add_parser("sweep", help="vary mission fields and evaluate figures of merit")
    mission_arg(sp)
    sp.add_argument("--vary", action="append", required=True, help="FIELD=START:STOP:COUNT[:log] (repeatable)")
    sp.add_argument("--metric", action="append", required=True,
                    help="asd@FREQ, band@LEVEL, snr:SOURCE_FILE[:SCHEDULE], horizon:MASS, power_needed@FREQ")
    sp.add_argument("--perturb", action="append", help="FIELD=REL_SIGMA: Monte-Carlo band (repeatable)")
    sp.add_argument("--plot-metric", help="the column --plot draws (default: the first metric; band@ as a band)")
    sp.add_argument("--target", type=float, help="draw this level of the plotted column (a line, or a contour on maps)")
    sp.add_argument("--samples", type=int, default=200, help="Monte-Carlo samples per point (default 200)")
    sp.add_argument("--seed", type=int, default=12345, help="random seed (default 12345)")
    output_args(sp)
    exec_args(sp)
    sp.set_defaults(func=cmd_sweep)

    sp = sub.add_parser("scan", help="family of fixed-tuning windows across tuning frequencies")
    mission_arg(sp)
    sp.add_argument("--from", dest="from_", required=True, help="lowest tuning")
    sp.add_argument("--to", required=True, help="highest tuning")
    sp.add_argument("--steps", type=int, default=8)
    grid_args(sp)
    sp.set_defaults(func=cmd_scan)

    sp = sub.add_parser("require", help="the value of one field needed to meet a target")
    mission_arg(sp)
    sp.add_argument("--target", required=True, help="'METRIC<=VALUE' or 'METRIC>=VALUE'")
    sp.add_argument("--vary", required=True, help="dotted mission field")
    sp.add_argument("--bounds", help="LO:HI search range (default: a factor 100 either side)")
    sp.set_defaults(func=cmd_require)
