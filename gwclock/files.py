"""Files the user gives and files gwclock writes.

Every input file is remembered (:func:`register_input`) so that no output can overwrite it;
every output path is checked before any work is done (:func:`check_output_path`) and written
through a temporary file renamed onto it on success (:class:`atomic_path`), so that a failure
or an interruption leaves no partial file and keeps the previous one.
"""

from __future__ import annotations

import glob
import os
import tempfile
import threading
import tomllib
from pathlib import Path

from .errors import InputError

__all__ = ["TABLE_FORMATS", "FIGURE_FORMATS", "register_input", "is_input", "check_output_path", "inside",
           "atomic_path", "read_toml", "STOP", "check_stop"]

#: Table suffixes and the astropy writer of each.
TABLE_FORMATS = {".ecsv": "ascii.ecsv", ".csv": "ascii.csv"}
#: Figure suffixes matplotlib writes.
FIGURE_FORMATS = (".png", ".pdf", ".svg")
#: Largest input file read (mission, figure spec, source list): bigger ones are refused.
MAX_INPUT_BYTES = 16 * 2**20

_INPUTS: set[Path] = set()

#: The command line of this run as the user could type it again (``["gwclock", "curve", ...]``),
#: set by the command line; outputs record it beside the mission they used. Empty in library use.
COMMAND: list[str] = []

#: Set when the user asked the run to stop (SIGTERM): a stop raised at an unlucky moment (inside a
#: finaliser, where Python only prints it) is raised again at the next safe point, and no output is
#: renamed into place after it.
STOP = threading.Event()


def check_stop() -> None:
    """Raise KeyboardInterrupt if a stop was requested."""
    if STOP.is_set():
        raise KeyboardInterrupt


def register_input(path) -> None:
    """Remember a file the user gave as input, so that no output can ever overwrite it."""
    try:
        _INPUTS.add(Path(path).resolve())
    except (OSError, RuntimeError):  # a symlink loop resolves to nothing: it cannot be an output either
        pass


def is_input(path) -> bool:
    """Whether ``path`` names one of this run's input files."""
    try:
        return Path(path).resolve() in _INPUTS
    except (OSError, RuntimeError):
        return False


def inside(base, relative, source, field) -> Path:
    """``base / relative``, refused (InputError) unless it resolves inside the folder ``base`` or the
    current working folder: a path written in a file (a figure spec) reaches only that file's own
    folder, the folder the user runs in, and below."""
    base = Path(base)
    p = base / relative
    target = p.resolve()
    for root in (base.resolve(), Path.cwd().resolve()):
        if target == root or root in target.parents:
            return p
    raise InputError("a path in this file must stay inside its folder or the working folder (give other paths "
                     "on the command line)", source=str(source), field=field, value=str(relative))


def check_output_path(path, kinds) -> Path:
    """Refuse an output path whose folder is missing, whose suffix is not one of ``kinds``, or
    that names one of the run's input files."""
    p = Path(path)
    if len(p.name.encode()) > 255:
        raise InputError("file name longer than 255 bytes", source="command line", field=p.name[:40] + "...")
    if is_input(p):
        raise InputError("is one of this run's input files; choose another output name",
                         source="command line", field=str(p))
    if p.suffix.lower() not in kinds:
        raise InputError(f"unsupported file type {p.suffix or '(none)'!r}; expected one of {', '.join(kinds)}",
                         source="command line", field=str(p))
    parent = p.parent if str(p.parent) else Path(".")
    if not parent.is_dir():
        raise InputError("the output folder does not exist", source="command line", field=str(p))
    if p.is_dir():
        raise InputError("is a folder; expected a file name", source="command line", field=str(p))
    if p.is_symlink():
        parent = p.resolve().parent
    try:  # find an unwritable folder now, not after the work
        fd, probe = tempfile.mkstemp(prefix=".gwclock-probe.", dir=parent)
        os.close(fd)
        os.unlink(probe)
    except OSError as exc:
        raise InputError(f"cannot write in the output folder ({exc.strerror})", source="command line",
                         field=str(p)) from None
    return p


def _remove_leftovers(folder: Path, head: str, tail: str) -> None:
    """Delete the temporary files a killed run (SIGKILL, power loss) left for the same output: ours,
    named ``{head}{pid}.{random}{tail}``, whose process no longer exists. A running writer's file,
    another user's, or one without a process id is left alone."""
    for p in folder.glob(glob.escape(head) + "*" + glob.escape(tail)):
        pid = p.name[len(head):].split(".", 1)[0]
        if not pid.isdigit() or int(pid) == os.getpid():
            continue
        try:
            if p.stat().st_uid != os.getuid():
                continue
            os.kill(int(pid), 0)
        except ProcessLookupError:  # its run is gone: the file is a leftover
            p.unlink(missing_ok=True)
        except (OSError, OverflowError):  # alive under another user, or unreadable: not ours to judge
            continue


class atomic_path:
    """Context manager yielding a temporary path beside ``target``; renamed onto it on success.

    A failure or an interruption leaves ``target`` as it was (absent, or the previous file).
    """

    def __init__(self, target):
        target = Path(target)
        # a symlink is written through: the file it points to is replaced, the link stays
        self.target = target.resolve() if target.is_symlink() else target

    def __enter__(self) -> Path:
        # a short temporary name (the target's own may already be near the 255-byte limit) that
        # carries this process's id, so that a later run can tell a killed run's leftover
        folder = self.target.parent if str(self.target.parent) else Path(".")
        head, tail = f".{self.target.stem[:40]}.", f".part{self.target.suffix}"
        _remove_leftovers(folder, head, tail)
        fd, name = tempfile.mkstemp(prefix=f"{head}{os.getpid()}.", suffix=tail, dir=folder)
        os.close(fd)
        # mkstemp makes the file private (0600); an output gets the permissions of any new file
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(name, 0o666 & ~umask)
        self.tmp = Path(name)
        return self.tmp

    def __exit__(self, exc_type, exc, tb):
        if exc_type is None and not STOP.is_set():
            os.replace(self.tmp, self.target)
        elif exc_type is None:
            self.tmp.unlink(missing_ok=True)
            raise KeyboardInterrupt
        else:
            self.tmp.unlink(missing_ok=True)
        return False


def read_input(path: str | Path, what: str = "file", kind: str = "TOML") -> bytes:
    """The bytes of an input file (remembered as an input), read with a bound: /dev/zero or a huge
    file is refused, not swallowed. Every failure is an :class:`~gwclock.errors.InputError` naming
    the file."""
    p = Path(path)
    register_input(p)
    try:
        with open(p, "rb") as fh:
            raw = fh.read(MAX_INPUT_BYTES + 1)
    except FileNotFoundError:
        raise InputError(f"{what} not found", source=str(p)) from None
    except IsADirectoryError:
        raise InputError(f"expected a {what}, found a folder", source=str(p)) from None
    except OSError as exc:
        raise InputError(f"cannot read the {what} ({exc.strerror})", source=str(p)) from None
    if len(raw) > MAX_INPUT_BYTES:
        raise InputError(f"larger than {MAX_INPUT_BYTES // 2**20} MiB; expected a small {kind} file", source=str(p))
    return raw


def read_text(path: str | Path, what: str = "file", kind: str = "text") -> str:
    """An input file as UTF-8 text (a leading byte-order mark dropped), read as :func:`read_input` does."""
    try:
        return read_input(path, what, kind).decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError(f"not UTF-8 text; expected a {kind} file", source=str(path)) from None


def read_toml(path: str | Path, what: str = "file") -> tuple[dict, bytes]:
    """Read and parse a TOML input file (remembered as an input); every failure is an
    :class:`~gwclock.errors.InputError` naming the file."""
    p = Path(path)
    raw = read_input(p, what)
    try:
        text = raw.decode("utf-8")
        return tomllib.loads(text), raw
    except UnicodeDecodeError:
        raise InputError("not UTF-8 text; expected a TOML file", source=str(p)) from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"TOML syntax error: {exc}", source=str(p)) from None
    except RecursionError:
        raise InputError("nested too deeply; expected a TOML file of tables and values", source=str(p)) from None
