"""The errors gwclock raises on purpose, one small hierarchy.

::

    GwclockError                      everything below; catch it to catch gwclock's refusals
    └── InputError (also ValueError)  bad input: a file, a field, a value and what was expected
        ├── OutOfReachError           a frequency or tuning the mission's sequences cannot reach,
        │                             or a source or curve that has nothing in the asked band
        └── UnknownNameError          an unknown species, link path, reference, schedule, ...
                                      (also KeyError, as a lookup that failed)

The command line prints ``str(error)`` on one line and exits with code 2. An exception of any
other type is a bug in gwclock (``--debug`` shows its traceback).
"""

from __future__ import annotations

__all__ = ["GwclockError", "InputError", "OutOfReachError", "UnknownNameError"]


class GwclockError(Exception):
    """Base class of every error gwclock raises on purpose."""


class InputError(GwclockError, ValueError):
    """Bad user input: a file, a field, a value and what was expected.

    Parameters
    ----------
    message : str
        What was expected, phrased for the user.
    source : str, optional
        The file (or ``"command line"``) the input came from.
    field : str, optional
        The dotted field path or option name.
    value : object, optional
        The offending value, shown with ``repr``.
    """

    def __init__(self, message: str, *, source: str | None = None,
                 field: str | None = None, value: object = None) -> None:
        self.message = message
        self.source = source
        self.field = field
        self.value = value
        super().__init__(self._render())

    def __str__(self) -> str:  # the rendered line (not KeyError's quoted repr, for the subclass below)
        return self.args[0]

    def _render(self) -> str:
        parts = []
        if self.source:
            parts.append(str(self.source))
        if self.field:
            parts.append(self.field)
        head = _visible(": ".join(parts))
        text = self.message
        if self.value is not None:
            text = f"got {self.value!r}; {text}"
        text = _visible(" ".join(text.split()))  # always one line
        return f"{head}: {text}" if head else text


class OutOfReachError(InputError):
    """A frequency, tuning or band the mission (or a source, or a curve) does not reach."""


class UnknownNameError(InputError, KeyError):
    """A name that is not in its registry (species, link path, reference, schedule, measure, ...)."""


def _visible(text: str) -> str:
    """Escape what a terminal would not show as itself (newlines, NUL, bidirectional controls)."""
    if text.isprintable():
        return text
    return "".join(c if c.isprintable() else c.encode("unicode_escape").decode("ascii") for c in text)
