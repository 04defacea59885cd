"""The package version (one place; the package root and every output read it here)."""

__version__ = "0.1.0"
