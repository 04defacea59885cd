"""What gwclock writes: tables with units and provenance, figures, text summaries and reports.
Every file is written atomically (see :mod:`gwclock.files`)."""

__all__: list[str] = []
