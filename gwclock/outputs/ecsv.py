"""A small ECSV 1.0 writer for plain tables (float, int, bool and string columns).

It writes the same header that astropy's ECSV reader expects (YAML flow mappings with
JSON-quoted strings, which are valid YAML) without importing a YAML library, which keeps a
table-only command line run cheap. Files are read back with ``astropy.table.Table.read``.
"""

from __future__ import annotations

import json

import numpy as np

__all__ = ["write_ecsv", "supported"]

_TYPES = {"f": "float64", "i": "int64", "b": "bool", "U": "string"}


def supported(table) -> bool:
    """Whether every column and meta value is of a kind this writer handles."""
    for c in table.colnames:
        col = table[c]
        if col.ndim != 1 or col.dtype.kind not in _TYPES or getattr(col, "mask", None) is not None and np.any(col.mask):
            return False
        if col.dtype.kind == "f" and col.dtype != np.float64:
            return False
    return all(isinstance(v, (str, int, float, bool)) or (isinstance(v, list) and all(
        isinstance(x, (str, int, float, bool)) for x in v)) for v in table.meta.values())


def _scalar(v):
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (int, float)):
        return repr(float(v)) if isinstance(v, float) else str(v)
    return json.dumps(str(v), ensure_ascii=False)


def _value(v):
    if isinstance(v, list):
        return "[" + ", ".join(_scalar(x) for x in v) + "]"
    return _scalar(v)


def _cell(kind, x):
    if kind == "f":
        return repr(float(x))
    if kind == "b":
        return "True" if x else "False"
    if kind == "i":
        return str(int(x))
    s = str(x)
    if not s or any(ch in s for ch in ' "\t#,') or s != s.strip():
        return '"' + s.replace('"', '""') + '"'  # CSV-style quoting of the data lines
    return s


def write_ecsv(table, fh):
    """Write ``table`` (astropy Table) as ECSV 1.0 to the text file ``fh``."""
    lines = ["# %ECSV 1.0", "# ---", "# datatype:"]
    for c in table.colnames:
        col = table[c]
        parts = [f"name: {json.dumps(c)}"]
        if col.unit is not None and str(col.unit) not in ("", "dimensionless"):
            parts.append(f"unit: {json.dumps(col.unit.to_string())}")
        parts.append(f"datatype: {_TYPES[col.dtype.kind]}")
        if col.info.description:
            parts.append(f"description: {json.dumps(col.info.description, ensure_ascii=False)}")
        lines.append("# - {" + ", ".join(parts) + "}")
    if table.meta:
        lines.append("# meta: !!omap")
        for k, v in table.meta.items():
            lines.append(f"# - {{{json.dumps(str(k))}: {_value(v)}}}")
    lines.append("# schema: astropy-2.0")
    lines.append(" ".join(table.colnames))
    fh.write("\n".join(lines) + "\n")
    cols = [(table[c].dtype.kind, np.asarray(table[c])) for c in table.colnames]
    for i in range(len(table)):
        fh.write(" ".join(_cell(k, a[i]) for k, a in cols) + "\n")
