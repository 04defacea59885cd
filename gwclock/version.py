"""The package version (one place; the package root and every output read it here)."""

__all__ = ["__version__"]

__version__ = "0.1.0"
