"""Command-line trade studies: ``sweep``, ``scan`` and ``require``."""

from __future__ import annotations

import sys
import time

import numpy as np

from .errors import InputError

__all__ = ["add_commands", "run_sweep"]

CHUNK_POINTS = 64


class Progress:
    """A one-line progress counter on stderr, only on a terminal and without --quiet."""

    def __init__(self, total, quiet):
        self.total = total
        self.on = not quiet and sys.stderr.isatty()
        self.done = 0
        self.t0 = time.monotonic()

    def update(self, n):
        self.done += n
        if self.on:
            rate = self.done / max(time.monotonic() - self.t0, 1e-9)
            sys.stderr.write(f"\r  {self.done}/{self.total} points ({rate:.0f}/s)")
            sys.stderr.flush()

    def close(self):
        if self.on:
            sys.stderr.write("\n")


def _chunk_rows(mission, axes, metric_texts, combos, perturb, samples, seed):
    """Evaluate one chunk of grid points; returns an astropy Table (runs in workers too)."""
    from astropy.table import Table

    from .sweep import evaluate_points, parse_metric, perturbed_metrics, point
    metrics = [parse_metric(t) for t in metric_texts]
    sub = [point(mission, axes, combo) for combo in combos]
    valid = [(c, m) for c, m, r in sub if m is not None]
    if perturb:
        values = {col: np.full(len(sub), np.nan) for m in metrics for col in m.columns}
        lows = {col: np.full(len(sub), np.nan) for col in values}
        highs = {col: np.full(len(sub), np.nan) for col in values}
        for j, (c, m, r) in enumerate(sub):
            if m is None:
                continue
            stats, _ = perturbed_metrics(m, metrics, perturb, samples, seed + _index(axes, c))
            for col, (med, p5, p95) in stats.items():
                values[col][j], lows[col][j], highs[col][j] = med, p5, p95
    else:
        res = evaluate_points([m.design() for _, m in valid], metrics)
        values = {col: np.full(len(sub), np.nan) for col in res}
        rows = [j for j, (c, m, r) in enumerate(sub) if m is not None]
        for col, v in res.items():
            values[col][rows] = v
    t = Table()
    for k, a in enumerate(axes):
        t[a.field] = np.array([a.values[c[k]] for c, _, _ in sub])
        if a.unit:
            t[a.field].unit = a.unit
    for m in metrics:
        for col, unit in zip(m.columns, m.units):
            t[col] = values[col]
            if unit:
                t[col].unit = unit
            if perturb:
                t[col + "_p05"], t[col + "_p95"] = lows[col], highs[col]
                if unit:
                    t[col + "_p05"].unit = t[col + "_p95"].unit = unit
    t["status"] = [r or "ok" for _, _, r in sub]
    return t


def _index(axes, combo):
    i = 0
    for a, c in zip(axes, combo):
        i = i * len(a.texts) + c
    return i


def run_sweep(mission, axes, metric_texts, *, workers=1, scheduler=None, perturb=(), samples=200, seed=12345,
              sink=None, quiet=True):
    """Run a sweep; feed finished chunks, in grid order, to ``sink(table)``. Returns row count."""
    import itertools
    combos = list(itertools.product(*[range(len(a.texts)) for a in axes]))
    chunks = [combos[i:i + CHUNK_POINTS] for i in range(0, len(combos), CHUNK_POINTS)]
    args = (mission, axes, list(metric_texts))
    progress = Progress(len(combos), quiet)
    rows = 0

    def emit(table):
        nonlocal rows
        sink(table)
        rows += len(table)
        progress.update(len(table))

    try:
        if scheduler:
            from distributed import Client
            with Client(scheduler, timeout="20s") as client:
                window = []
                pending = iter(chunks)
                limit = max(4, 2 * len(client.nthreads()))
                for ch in itertools.islice(pending, limit):
                    window.append(client.submit(_chunk_rows, *args, ch, tuple(perturb), samples, seed, pure=False))
                while window:
                    fut = window.pop(0)
                    emit(fut.result())
                    del fut
                    nxt = next(pending, None)
                    if nxt is not None:
                        window.append(client.submit(_chunk_rows, *args, nxt, tuple(perturb), samples, seed, pure=False))
        elif workers > 1:
            from concurrent.futures import ProcessPoolExecutor
            with ProcessPoolExecutor(workers) as pool:
                futures = [pool.submit(_chunk_rows, *args, ch, tuple(perturb), samples, seed) for ch in chunks]
                for fut in futures:
                    emit(fut.result())
        else:
            for ch in chunks:
                emit(_chunk_rows(*args, ch, tuple(perturb), samples, seed))
    finally:
        progress.close()
    return rows


def _collect_and_write(args, mission, digest, axes, metric_texts, perturb):
    from astropy.table import vstack

    from .stream import TableStream
    from .tables import provenance
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
    from .mission import load_mission
    from .sweep import parse_metric, parse_perturb, parse_vary
    from .tables import check_outputs
    mission, digest = load_mission(args.mission)
    axes = [parse_vary(v, mission) for v in args.vary]
    if len({a.field for a in axes}) != len(axes):
        raise InputError("each field can be varied once", source="command line", field="--vary")
    metrics = [parse_metric(m) for m in args.metric]
    perturb = [parse_perturb(p, mission) for p in (args.perturb or [])]
    _workers(args)
    check_outputs(args)
    table = _collect_and_write(args, mission, digest, axes, [m.text for m in metrics], perturb)
    if table is not None and not args.table:
        table.pprint(max_lines=40, max_width=160)
    if args.plot and table is not None:
        _plot_sweep(args.plot, mission, axes, metrics[0], table)
    return 0


def _workers(args):
    if args.workers < 1 or args.workers > 256:
        raise InputError("expected between 1 and 256 workers", source="command line", field="--workers", value=args.workers)
    if args.scheduler and args.workers > 1:
        raise InputError("use either --workers or --scheduler", source="command line")
    if args.samples < 2:
        raise InputError("expected at least 2 samples", source="command line", field="--samples", value=args.samples)


def _plot_sweep(path, mission, axes, metric, table):
    from matplotlib.figure import Figure

    from . import __version__
    from .plotting import SERIES_STYLES, save_figure
    col = metric.columns[0]
    fig = Figure(figsize=(6.4, 4.6), layout="constrained")
    ax = fig.add_subplot()
    y = np.asarray(table[col], dtype=float)
    label = f"{col}" + (f" [{metric.units[0]}]" if metric.units[0] else "")
    if len(axes) == 1:
        a = axes[0]
        x = np.asarray(table[a.field], dtype=float)
        ax.plot(x, y, marker="o", ms=3, **SERIES_STYLES[0])
        if f"{col}_p05" in table.colnames:
            ax.fill_between(x, table[f"{col}_p05"], table[f"{col}_p95"], color="0.7", alpha=0.5, label="5-95 %")
            ax.legend(frameon=False)
        ax.set_xscale("log" if a.log else "linear")
        if np.all(y[np.isfinite(y)] > 0):
            ax.set_yscale("log")
        ax.set_xlabel(f"{a.field}" + (f" [{a.unit}]" if a.unit else ""))
        ax.set_ylabel(label)
        ax.grid(True, alpha=0.3)
    else:
        a, b = axes[0], axes[1]
        Z = y.reshape(len(a.values), len(b.values)).T
        logz = np.all(Z[np.isfinite(Z)] > 0)
        Zp = np.log10(Z) if logz else Z
        mesh = ax.pcolormesh(a.values, b.values, Zp, shading="nearest", cmap="cividis")
        cb = fig.colorbar(mesh, ax=ax)
        cb.set_label(("log10 " if logz else "") + label)
        if np.isfinite(Zp).sum() > 3 and len(a.values) > 1 and len(b.values) > 1:
            cs = ax.contour(a.values, b.values, Zp, colors="white", linewidths=0.8, linestyles="solid")
            ax.clabel(cs, fontsize="x-small", fmt="%.3g")
        ax.set_xscale("log" if a.log else "linear")
        ax.set_yscale("log" if b.log else "linear")
        ax.set_xlabel(f"{a.field}" + (f" [{a.unit}]" if a.unit else ""))
        ax.set_ylabel(f"{b.field}" + (f" [{b.unit}]" if b.unit else ""))
    ax.set_title(f"{mission.name}: {col}")
    save_figure(fig, path, metadata={"Title": f"{mission.name} sweep", "Creator": f"gwclock {__version__}"})
    print(f"wrote figure {path}")


def cmd_scan(args):
    from astropy.table import Table

    from .cli import _frequency, _grid
    from .engine import window_psd
    from .mission import load_mission
    from .tables import Column, provenance, write_table
    mission, digest = load_mission(args.mission)
    f1, f2 = _frequency(args.from_, "--from"), _frequency(args.to, "--to")
    if f1 >= f2 or args.steps < 1:
        raise InputError("expected --from below --to and --steps >= 1", source="command line")
    f = _grid(args)
    from .tables import check_outputs
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
        write_table(t, args.table)
        print(f"wrote table {args.table}")
    if args.plot:
        from matplotlib.figure import Figure

        from . import __version__
        from .plotting import save_figure
        fig = Figure(figsize=(6.4, 4.4), layout="constrained")
        ax = fig.add_subplot()
        draw_scan(ax, f, tunings, S, env)
        ax.set_title(f"{mission.name}: tuning scan")
        save_figure(fig, args.plot, metadata={"Title": f"{mission.name} scan", "Creator": f"gwclock {__version__}"})
        print(f"wrote figure {args.plot}")
    return 0


def draw_scan(ax, f, tunings, S, env):
    """Windows of a tuning scan (thin, graded) and their envelope; returns the artists.

    ``ax`` may be None (a new figure is made)."""
    import matplotlib as mpl

    from .plotting import _new_axes
    _, ax = _new_axes(ax)
    cmap = mpl.colormaps["viridis"]
    lines = []
    for k in range(len(tunings)):
        (ln,) = ax.plot(f, np.sqrt(S[k]), color=cmap(k / max(len(tunings) - 1, 1)), lw=0.9, alpha=0.85)
        lines.append(ln)
    (e,) = ax.plot(f, np.sqrt(env), color="black", lw=2.0, label="envelope of the scan")
    ax.set_xscale("log")
    ax.set_yscale("log")
    good = np.sqrt(env)
    ax.set_ylim(good.min() / 3, good.min() * 1e4)
    ax.set_xlabel("frequency [Hz]")
    ax.set_ylabel(r"strain ASD [Hz$^{-1/2}$]")
    ax.grid(True, alpha=0.3)
    lines[0].set_label(f"fixed tunings {tunings[0]:.3g} Hz to {tunings[-1]:.3g} Hz")
    ax.legend(loc="best", fontsize="small", framealpha=0.85)
    return {"windows": lines, "envelope": e}


def cmd_require(args):
    import re

    from .mission import load_mission
    from .sweep import parse_metric, require
    mission, digest = load_mission(args.mission)
    m = re.fullmatch(r"\s*(.+?)\s*(<=|>=)\s*([0-9.eE+-]+)\s*", args.target or "")
    if not m:
        raise InputError("expected 'METRIC<=VALUE' or 'METRIC>=VALUE'", source="command line", field="--target",
                         value=args.target)
    metric = parse_metric(m.group(1))
    if len(metric.columns) != 1:
        raise InputError("require takes a metric with one value (one source for snr)", source="command line",
                         field="--target")
    op, target = m.group(2), float(m.group(3))
    from .sweep import _field_unit, _field_value
    unit = _field_unit(mission, args.vary)
    if args.bounds:
        try:
            from .quantities import parse_quantity
            lo, hi = (float(parse_quantity(p, unit).value) if unit else float(p) for p in args.bounds.split(":"))
        except ValueError:
            raise InputError("expected LO:HI (with units for quantity fields)", source="command line", field="--bounds",
                             value=args.bounds) from None
    else:
        v, _ = _field_value(mission, args.vary)
        lo, hi = v / 100, v * 100
    if not 0 < lo < hi:
        raise InputError("expected 0 < LO < HI", source="command line", field="--bounds", value=args.bounds)
    try:
        value, unit, message = require(mission, metric, op, target, args.vary, (lo, hi))
    except Exception as exc:
        from .sweep import _reason
        raise InputError(_reason(exc), source="command line", field="--bounds") from None
    print(message)
    return 0 if value is not None else 1


def add_commands(sub, mission_arg, grid_args):
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
    sp.add_argument("--samples", type=int, default=200, help="Monte-Carlo samples per point (default 200)")
    sp.add_argument("--seed", type=int, default=12345, help="random seed (default 12345)")
    sp.add_argument("--table")
    sp.add_argument("--plot")
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
