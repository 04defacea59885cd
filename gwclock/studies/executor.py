"""Running a sweep: grid points in chunks, on one process, local worker processes, or a
dask.distributed cluster, with finished chunks handed on in grid order.

The result does not depend on how the work is spread: every chunk is a pure function of the
mission, the axes, the metrics and the grid points it holds (Monte-Carlo seeds come from the
point's index in the grid).
"""

from __future__ import annotations

import ctypes
import itertools
import os
import signal
import sys
import time
from concurrent.futures import ProcessPoolExecutor

import numpy as np
from astropy.table import Table

from ..errors import InputError
from .sweep import Axis, evaluate_points, parse_metric, perturbed_metrics, point

__all__ = ["run_sweep", "chunk_rows", "grid_size", "Progress", "CHUNK_POINTS", "MAX_POINTS"]

#: Grid points evaluated together (one task for a worker).
CHUNK_POINTS = 64
#: Most grid points one sweep may have (a larger grid is refused before anything is allocated).
MAX_POINTS = 10_000_000


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


def _worker_start():
    """Set up a worker process: the parent alone answers Ctrl-C and SIGTERM (a worker stops when the
    parent stops it, without a traceback of its own), and on Linux a worker dies with its parent,
    so that a SIGKILL of the parent leaves no orphans."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    if sys.platform.startswith("linux"):
        try:
            ctypes.CDLL(None, use_errno=True).prctl(1, int(signal.SIGKILL))  # PR_SET_PDEATHSIG = 1
        except (OSError, AttributeError):
            pass
        if os.getppid() == 1:  # the parent died before the request took effect
            os._exit(1)


def _stop_pool(pool, timeout=5.0):
    """Stop a process pool at once: queued chunks cancelled, running workers terminated."""
    processes = list((getattr(pool, "_processes", None) or {}).values())
    pool.shutdown(wait=False, cancel_futures=True)
    for proc in processes:
        proc.terminate()
    deadline = time.monotonic() + timeout
    for proc in processes:
        proc.join(max(deadline - time.monotonic(), 0.0))
        if proc.is_alive():
            proc.kill()


def chunk_rows(mission, axes, metric_texts, combos, perturb, samples, seed, indices=None):
    """Evaluate one chunk of grid points; returns an astropy Table (runs in workers too).

    ``combos`` index into ``axes``; ``indices`` are the points' places in the whole grid (they seed
    the Monte-Carlo draws), computed from ``axes`` when not given."""
    metrics = [parse_metric(t) for t in metric_texts]
    if indices is None:
        indices = [_index(axes, c) for c in combos]
    sub = [point(mission, axes, combo) for combo in combos]
    valid = [(c, m) for c, m, r in sub if m is not None]
    if perturb:
        values = {col: np.full(len(sub), np.nan) for m in metrics for col in m.columns}
        lows = {col: np.full(len(sub), np.nan) for col in values}
        highs = {col: np.full(len(sub), np.nan) for col in values}
        for j, (_, m, _) in enumerate(sub):
            if m is None:
                continue
            stats, _ = perturbed_metrics(m, metrics, perturb, samples, seed + indices[j])
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


def _task(axes, combos):
    """What one chunk needs of the axes: each axis cut to the values its points use (a worker is
    sent its slice, not a million-value axis), the points' combos into those slices, and their
    places in the whole grid."""
    indices = [_index(axes, c) for c in combos]
    cut, local = [], [[] for _ in combos]
    for k, a in enumerate(axes):
        used = sorted({c[k] for c in combos})
        where = {v: i for i, v in enumerate(used)}
        cut.append(Axis(a.field, tuple(a.texts[i] for i in used), np.asarray(a.values)[used], a.unit, a.log))
        for j, c in enumerate(combos):
            local[j].append(where[c[k]])
    return cut, [tuple(c) for c in local], indices


def grid_size(axes) -> int:
    """Number of grid points of the axes (their product)."""
    return int(np.prod([len(a.texts) for a in axes], dtype=float))


def run_sweep(mission, axes, metric_texts, *, workers=1, scheduler=None, perturb=(), samples=200, seed=12345,
              sink=None, quiet=True):
    """Run a sweep; feed finished chunks, in grid order, to ``sink(table)``. Returns row count."""
    total = grid_size(axes)
    if total > MAX_POINTS:
        raise InputError(f"the grid has {total:.3g} points; at most {MAX_POINTS:.0e} are swept in one run")
    product = itertools.product(*[range(len(a.texts)) for a in axes])
    # chunks are made as they are needed: the grid is never held whole
    chunks = iter(lambda: list(itertools.islice(product, CHUNK_POINTS)), [])
    metric_texts = list(metric_texts)

    def task(ch):  # the arguments of chunk_rows for one chunk: the same on every path
        cut, local, indices = _task(axes, ch)
        return (mission, cut, metric_texts, local, tuple(perturb), samples, seed, indices)
    progress = Progress(total, quiet)
    rows = 0

    def emit(table):
        nonlocal rows
        sink(table)
        rows += len(table)
        progress.update(len(table))

    try:
        if scheduler:
            from distributed import Client
            try:
                client = Client(scheduler, timeout="20s")
            except (OSError, ValueError, TypeError) as exc:  # unreachable, or not an address
                raise InputError(f"cannot use this Dask scheduler ({' '.join(str(exc).split())[:120]})",
                                 source="command line", field="--scheduler", value=scheduler) from None
            with client:
                window = []
                pending = iter(chunks)
                limit = max(4, 2 * len(client.nthreads()))
                for ch in itertools.islice(pending, limit):
                    window.append(client.submit(chunk_rows, *task(ch), pure=False))
                while window:
                    fut = window.pop(0)
                    emit(fut.result())
                    del fut
                    nxt = next(pending, None)
                    if nxt is not None:
                        window.append(client.submit(chunk_rows, *task(nxt), pure=False))
        elif workers > 1:
            pool = ProcessPoolExecutor(workers, initializer=_worker_start)
            try:
                # a bounded window of chunks in flight, in grid order
                window = [pool.submit(chunk_rows, *task(ch)) for ch in itertools.islice(chunks, 2 * workers)]
                while window:
                    emit(window.pop(0).result())
                    nxt = next(chunks, None)
                    if nxt is not None:
                        window.append(pool.submit(chunk_rows, *task(nxt)))
            except BaseException:
                _stop_pool(pool)  # an interruption or a failure: the workers stop now, not after their chunks
                raise
            pool.shutdown()
        else:
            for ch in chunks:
                emit(chunk_rows(*task(ch)))
    finally:
        progress.close()
    return rows
