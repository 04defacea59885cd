"""Validated input files: the mission schema (units in every value) and figure specifications.
Every refusal is an :class:`~gwclock.errors.InputError` naming the file and the field."""

__all__: list[str] = []
