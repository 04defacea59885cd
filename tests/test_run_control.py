"""Run control in-process: stopping a pool of workers, the workers' own set-up, a killed run's
leftovers, the progress line and bounded input reads.

Truth: POSIX process semantics (a reaped child's pid names no process; signal dispositions; common
practice, no source) and the Linux prctl(2) manual page (PR_SET_PDEATHSIG = 1, from memory).
"""

import os
import signal
import subprocess
import sys

import numpy as np
import pytest

from gwclock import files
from gwclock.config.mission import load_mission
from gwclock.errors import InputError
from gwclock.studies import executor
from gwclock.studies.sweep import parse_vary


def _dead_pid():
    child = subprocess.Popen([sys.executable, "-c", "pass"])
    child.wait()
    return child.pid


def test_a_killed_runs_leftover_is_removed_and_nothing_else(tmp_path):
    dead = _dead_pid()
    names = {"dead": f".t.{dead}.abc.part.ecsv", "mine": f".t.{os.getpid()}.def.part.ecsv",
             "alive": f".t.{os.getppid()}.ghi.part.ecsv", "nopid": ".t.xyz.part.ecsv", "other": ".u.1.a.part.ecsv"}
    for n in names.values():
        (tmp_path / n).write_text("partial")
    files._remove_leftovers(tmp_path, ".t.", ".part.ecsv")
    left = {p.name for p in tmp_path.iterdir()}
    assert names["dead"] not in left
    assert left == {names[k] for k in ("mine", "alive", "nopid", "other")}


def test_the_worker_set_up_ignores_ctrl_c_and_asks_to_die_with_its_parent(monkeypatch):
    calls = {"signal": {}, "prctl": None, "exit": None}
    monkeypatch.setattr(executor.signal, "signal", lambda sig, how: calls["signal"].__setitem__(sig, how))

    class Libc:
        def prctl(self, option, sig):
            calls["prctl"] = (option, sig)

    monkeypatch.setattr(executor.ctypes, "CDLL", lambda *a, **k: Libc())
    monkeypatch.setattr(executor.sys, "platform", "linux")
    monkeypatch.setattr(executor.os, "getppid", lambda: 1)  # the parent died before the request took effect

    def leave(code):
        calls["exit"] = code
        raise SystemExit(code)

    monkeypatch.setattr(executor.os, "_exit", leave)
    with pytest.raises(SystemExit):
        executor._worker_start()
    assert calls["signal"] == {signal.SIGINT: signal.SIG_IGN, signal.SIGTERM: signal.SIG_DFL}
    assert calls["prctl"] == (1, int(signal.SIGKILL)) and calls["exit"] == 1


def test_a_failing_consumer_stops_the_workers_at_once(monkeypatch):
    m, _ = load_mission(None)
    axes = [parse_vary("clock.atom_number=1e4:1e6:400:log", m)]
    seen = {}
    real = executor._stop_pool

    def watched(pool, timeout=5.0):
        procs = list(pool._processes.values())
        real(pool, timeout)
        seen["alive"] = [p.is_alive() for p in procs]

    monkeypatch.setattr(executor, "_stop_pool", watched)

    def sink(table):
        raise RuntimeError("the disk is full")

    with pytest.raises(RuntimeError, match="disk is full"):
        executor.run_sweep(m, axes, ["asd@0.1 Hz"], workers=2, sink=sink)
    assert seen["alive"] and not any(seen["alive"])


def test_invalid_points_of_a_monte_carlo_sweep_keep_their_rows():
    m, _ = load_mission(None)
    axes = [parse_vary("clock.atom_number=-1e5:1e5:2", m)]  # the first point is refused by validation
    rows = []
    executor.run_sweep(m, axes, ["asd@0.1 Hz"], perturb=[("link.transmit_power", 0.2)], samples=3, sink=rows.append)
    t = rows[0]
    assert t["status"][0] != "ok" and np.isnan(t["asd@0.1Hz"][0]) and t["status"][1] == "ok"


def test_the_progress_line_shows_on_a_terminal_only(monkeypatch, capsys):
    class Terminal:
        def __init__(self):
            self.text = ""

        def isatty(self):
            return True

        def write(self, s):
            self.text += s

        def flush(self):
            pass

    term = Terminal()
    monkeypatch.setattr(executor.sys, "stderr", term)
    p = executor.Progress(10, quiet=False)
    p.update(4)
    p.close()
    assert "4/10 points" in term.text and term.text.endswith("\n")
    quiet = executor.Progress(10, quiet=True)
    quiet.update(4)
    quiet.close()
    assert term.text.count("points") == 1


def test_a_stop_request_is_raised_at_the_next_safe_point():
    files.STOP.set()
    try:
        with pytest.raises(KeyboardInterrupt):
            files.check_stop()
    finally:
        files.STOP.clear()
    files.check_stop()  # no request: nothing happens


def test_bounded_reads_refuse_folders_and_non_text(tmp_path):
    with pytest.raises(InputError, match="found a folder"):
        files.read_input(tmp_path, "curve file")
    p = tmp_path / "c.csv"
    p.write_bytes(b"frequency,asd\n\xff\xfe\n")
    with pytest.raises(InputError, match="not UTF-8 text; expected a CSV file"):
        files.read_text(p, "curve file", "CSV")


def test_an_output_named_by_a_symlink_is_checked_in_the_folder_it_points_to(tmp_path):
    real = tmp_path / "real"
    real.mkdir()
    link = tmp_path / "t.ecsv"
    link.symlink_to(real / "t.ecsv")
    assert files.check_output_path(link, files.TABLE_FORMATS) == link
