"""Benchmark: ``python -m gwclock.bench`` prints one line per figure as ``name: value unit (target: ...)``.

Every figure is measured in one run on this machine and compared with a reference evaluation;
the script exits non-zero if a result disagrees with its reference.
"""

from __future__ import annotations

import subprocess
import sys
import tempfile
import time
import tracemalloc

import numpy as np
from astropy.table import vstack
from scipy import integrate

from .config.mission import load_mission
from .engine import envelope, formula, search, signal_response
from .engine.batch import batch_budget
from .engine.formula import evaluate, evaluate_free, total_psd
from .engine.search import RAMSEY
from .physics.response import link_response
from .physics.sequences import SEQUENCES
from .studies.executor import run_sweep
from .studies.sweep import parse_vary


def _best_time(fn, repeat=3):
    best = np.inf
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    return best


def _count_evaluations(fn):
    """Sequences (points x candidates) the engine evaluates while ``fn`` runs."""
    seen = [0]
    original = formula.evaluate

    def counting(design, kind, f0, n, T, linear=None):
        seen[0] += np.broadcast(f0, n, T).size
        return original(design, kind, f0, n, T, linear)

    formula.evaluate, search.evaluate = counting, counting
    try:
        fn()
    finally:
        formula.evaluate, search.evaluate = original, original
    return seen[0]


def _winners_only(design, f, env):
    """S_y,eq of each point's winning sequence alone (Ramsey where it won, the DD kind elsewhere)."""
    out = np.empty(f.size)
    ramsey = env.pulses == 0
    for mask, kind in ((ramsey, RAMSEY), (~ramsey, SEQUENCES[design.kind])):
        i = np.flatnonzero(mask)
        if i.size:
            fn = evaluate if kind is RAMSEY else evaluate_free
            out[i] = total_psd(fn(design, kind, f[i], env.pulses[i], env.interrogation[i]))
    return out


def main() -> int:
    failures = []
    mission, _ = load_mission(None)
    design = mission.design()

    # (a) the envelope: points per second, its cost over evaluating only the winning sequence of
    # each point, and the sequences it evaluates per point
    f = np.geomspace(1e-5, 100, 20_000)
    t_env = _best_time(lambda: envelope(design, f), repeat=3)
    count = _count_evaluations(lambda: envelope(design, f))
    env = envelope(design, f)
    t_win = _best_time(lambda: _winners_only(design, f, env), repeat=3)
    again = _winners_only(design, f, env)
    print(f"envelope_points: {f.size / t_env:.3g} points/s ({t_env / f.size * 1e6:.0f} us/point) (target: as high as possible)")
    print(f"envelope_cost: {t_env / t_win:.1f} x evaluating only each point's winning sequence (target: <= 3 x)")
    print(f"envelope_candidates: {count / f.size:.0f} sequences evaluated per point (target: as few as exactness allows)")
    worst = float(np.max(np.abs(again / (env.total * signal_response(design, f)) - 1)))
    if worst > 1e-12:
        failures.append(f"the winning sequences re-evaluated differ from the envelope by {worst:.1e}")

    # (a2) real sweeps, per metric kind: grid points per second (one process)
    for metric, target in (("asd@0.1 Hz", "2.5e4"), ("band@1e-17", "2.5e3")):
        axes1 = [parse_vary("clock.atom_number=1e4:1e7:16:log", mission), parse_vary("link.baseline=1e9 m:1e11 m:16:log", mission)]
        t_sw = _best_time(lambda metric=metric, axes1=axes1: run_sweep(mission, axes1, [metric], sink=lambda t: None), repeat=1)
        print(f"sweep_points[{metric.split('@')[0]}@]: {256 / t_sw:.3g} grid points/s per core (target: >= {target})")

    # (b) throughput of a 1e6-point sweep (1000 variants x 1000 frequencies) and its peak memory
    variants = [design.replace(atom_number=float(n)) for n in np.geomspace(1e4, 1e7, 1000)]
    grid = np.geomspace(1e-4, 10, 1000)
    tracemalloc.start()
    t = time.perf_counter()
    out = batch_budget(variants, grid)
    dt = time.perf_counter() - t
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    print(f"sweep_throughput: {1e6 / dt:.3g} points/s ({dt:.1f} s for 1e6 points) (target: as high as possible)")
    print(f"sweep_peak_memory: {peak / 2**20:.0f} MiB (target: bounded by chunking, << 24 GiB)")
    for i in (0, 499, 999):
        direct = envelope(variants[i], grid).total
        if not np.allclose(out["total"][i], direct, rtol=1e-12):
            failures.append(f"sweep row {i} differs from direct evaluation")

    # (c) closed-form sky average vs scipy.integrate.quad at every frequency
    L = design.baseline
    fq = np.geomspace(1e-5, 100, 2000)

    def quad_response():
        out = np.empty(fq.size)
        for k, x in enumerate(fq):
            a = np.pi * x * L / 299792458.0
            # R1 = (1/4) int_0^2 (2 - v)^2 sin^2(a v) dv with v = 1 - mu, sin^2 = (1 - cos 2av)/2;
            # the oscillating part by quad's Fourier weight (QAWO)
            smooth = integrate.quad(lambda v: (2 - v) ** 2 / 2, 0, 2)[0]
            wavy = integrate.quad(lambda v: (2 - v) ** 2 / 2, 0, 2, weight="cos", wvar=2 * a)[0]
            out[k] = 2 * 0.25 * (smooth - wavy)
        return out

    t_quad = _best_time(quad_response, repeat=1)
    t_closed = _best_time(lambda: link_response(fq, L), repeat=20)
    ref = quad_response()
    worst = float(np.max(np.abs(link_response(fq, L) / ref - 1)))
    print(f"sky_average_speedup: {t_quad / t_closed:.3g} x over quad per frequency, agreement {worst:.1e} "
          f"(target: >= 100 x, agreement <= 1e-6)")
    if worst > 1e-6:
        failures.append(f"closed-form sky average disagrees with quad by {worst:.2e}")
    # (d) CLI wall time relative to importing the libraries it must use
    def wall(cmd):
        return _best_time(lambda: subprocess.run(cmd, check=True, capture_output=True), repeat=5)

    with tempfile.TemporaryDirectory() as tmp:
        t_cli = wall([sys.executable, "-m", "gwclock", "curve", "--table", f"{tmp}/t.ecsv"])
    t_imp = wall([sys.executable, "-c", "import numpy, scipy.special, astropy.units, astropy.table, pydantic"])
    print(f"cli_curve_wall: {t_cli / t_imp:.2f} x the bare imports ({t_cli:.2f} s vs {t_imp:.2f} s) (target: <= 1.25 x)")

    # (e) two local workers vs one on a large sweep
    axes = [parse_vary("clock.atom_number=1e4:1e7:64:log", mission), parse_vary("link.baseline=1e9 m:1e11 m:48:log", mission)]
    tables = {}

    def sweep(workers):
        rows = []
        run_sweep(mission, axes, ["band@1e-17", "asd@0.1 Hz"], workers=workers, sink=rows.append)
        tables[workers] = rows

    t1 = _best_time(lambda: sweep(1), repeat=1)
    t2 = _best_time(lambda: sweep(2), repeat=1)
    print(f"workers_speedup: {t1 / t2:.2f} x with --workers 2 over 1 ({t1:.1f} s vs {t2:.1f} s) (target: >= 1.6 x on 2 cores)")
    a, b = vstack(tables[1]), vstack(tables[2])
    if not all(np.array_equal(a[c], b[c], equal_nan=a[c].dtype.kind == "f") for c in a.colnames):
        failures.append("the two-worker sweep differs from the one-worker sweep")

    for msg in failures:
        print(f"FAILED: {msg}")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
