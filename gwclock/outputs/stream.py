"""Tables written chunk by chunk into a temporary file, renamed into place when complete."""

from __future__ import annotations

import io

from astropy.table import Table

from ..files import TABLE_FORMATS, atomic_path, check_output_path, check_stop

__all__ = ["TableStream"]


class TableStream:
    """Append astropy tables with the same columns to one ECSV or CSV file.

    The file appears only when :meth:`close` succeeds; an error or an interruption leaves no
    partial file and keeps any previous one.
    """

    def __init__(self, path, meta):
        self.path = check_output_path(path, TABLE_FORMATS)
        self.fmt = TABLE_FORMATS[self.path.suffix.lower()]
        self.meta = meta
        self._atomic = atomic_path(self.path)
        self.tmp = self._atomic.__enter__()
        self._fh = open(self.tmp, "w")
        self.rows = 0

    def _render(self, table):
        t = Table(table, copy=False)
        t.meta = dict(self.meta) if self.fmt == "ascii.ecsv" else {"comments": [f"{k}: {v}" for k, v in self.meta.items()]
                                                                     + [f"column {c}: unit {t[c].unit or '1'}" for c in t.colnames]}
        buf = io.StringIO()
        kwargs = {"comment": "# "} if self.fmt == "ascii.csv" else {}
        t.write(buf, format=self.fmt, **kwargs)
        return buf.getvalue()

    def append(self, table):
        check_stop()
        text = self._render(table)
        if self.rows:
            lines = [ln for ln in text.splitlines(keepends=True) if not ln.startswith("#")]
            text = "".join(lines[1:])  # drop the column-name line
        self._fh.write(text)
        self._fh.flush()  # each finished chunk is on disk (in the temporary file) as it comes
        self.rows += len(table)

    def close(self):
        self._fh.close()
        self._atomic.__exit__(None, None, None)
        return self.path

    def abort(self):
        self._fh.close()
        self._atomic.__exit__(RuntimeError, None, None)

