"""Astrophysics and the comparison detectors: GW sources (inspirals, monochromatic binaries) and
the reference sensitivity curves of other detectors."""

__all__: list[str] = []
