"""The one error type a user sees: bad input, reported on one line."""

from __future__ import annotations

__all__ = ["InputError"]


class InputError(Exception):
    """Bad user input: a file, a field, a value and what was expected.

    The command line prints ``str(error)`` on one line and exits with code 2.

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


def _visible(text: str) -> str:
    """Escape what a terminal would not show as itself (newlines, NUL, bidirectional controls)."""
    if text.isprintable():
        return text
    return "".join(c if c.isprintable() else c.encode("unicode_escape").decode("ascii") for c in text)
