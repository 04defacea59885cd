"""Built-in data files: the default mission."""

__all__: list[str] = []
