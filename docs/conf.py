"""Sphinx configuration of the gwclock documentation (``make docs``)."""

import gwclock

project = "gwclock"
author = "the gwclock developers"
copyright = "2026, the gwclock developers"
version = release = gwclock.__version__

extensions = ["sphinx.ext.autodoc", "sphinx.ext.napoleon", "sphinx.ext.mathjax"]
napoleon_google_docstring = False
napoleon_numpy_docstring = True
napoleon_use_rtype = False
autodoc_member_order = "bysource"
autodoc_default_options = {"members": True, "show-inheritance": False}
autodoc_typehints = "none"
# pydantic schemas: document the fields, not pydantic's own machinery
autodoc_pydantic_model_show_json = False

exclude_patterns = ["_build"]
html_theme = "alabaster"
html_theme_options = {"description": "optical-clock GW detectors in space", "fixed_sidebar": True}
html_static_path = []


def _escape_bars(app, what, name, obj, options, lines):
    """Docstrings write moduli as plain text (``|G(f)|``); outside inline literals a bar would start
    an RST substitution, so escape it."""
    for i, line in enumerate(lines):
        parts = line.split("``")
        for j in range(0, len(parts), 2):  # even pieces lie outside ``literals``
            parts[j] = parts[j].replace("|", r"\|")
        lines[i] = "``".join(parts)


def setup(app):
    app.connect("autodoc-process-docstring", _escape_bars)
