"""Tables written chunk by chunk into a temporary file, renamed into place when complete."""

from __future__ import annotations

import io

from astropy.table import Table

from ..files import TABLE_FORMATS, atomic_path, check_output_path, check_stop
from .ecsv import supported, write_ecsv
from .tables import csv_table

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
        t.meta = dict(self.meta)
        buf = io.StringIO()
        if self.fmt == "ascii.csv":  # plain CSV, as every table gwclock writes (units in the names)
            csv_table(t).write(buf, format="ascii.csv")
        elif supported(t):  # one header line per meta entry, never wrapped
            write_ecsv(t, buf)
        else:
            t.write(buf, format=self.fmt)
        return buf.getvalue()

    def append(self, table):
        check_stop()
        text = self._render(table)
        if self.rows:  # the header once: drop the comment lines and the column-name line
            lines = [ln for ln in text.splitlines(keepends=True) if not ln.startswith("#")]
            text = "".join(lines[1:])
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

