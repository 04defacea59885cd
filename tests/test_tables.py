"""Table I/O: gwclock's ECSV writer must read back through astropy exactly as astropy's own."""

import numpy as np
from astropy.table import QTable, Table

from gwclock.outputs.ecsv import supported, write_ecsv


def test_round_trip_matches_astropy(tmp_path):
    t = Table()
    t["frequency"] = np.array([1e-3, 0.1, 10.0])
    t["frequency"].unit = "Hz"
    t["frequency"].info.description = "GW frequency, with: punctuation"
    t["asd"] = np.array([1.5e-18, np.nan, 3.0e-19])
    t["asd"].unit = "Hz(-1/2)"
    t["n"] = np.array([0, 3, 40])
    t["ok"] = np.array([True, False, True])
    t["status"] = np.array(["ok", "clock.pulse_error: expected a number", 'say "hi" # not a comment'])
    t.meta.update(tool="gwclock", count=3, ratio=0.5, flag=True, tunings=[0.1, 1.0], note="a: b, c")
    assert supported(t)
    mine, theirs = tmp_path / "mine.ecsv", tmp_path / "theirs.ecsv"
    with open(mine, "w") as fh:
        write_ecsv(t, fh)
    t.write(theirs, format="ascii.ecsv")
    a, b = Table.read(mine), Table.read(theirs)
    assert a.colnames == b.colnames and a.meta == b.meta
    for c in a.colnames:
        assert a[c].unit == b[c].unit and a[c].info.description == b[c].info.description
        assert a[c].dtype.kind == b[c].dtype.kind
        if a[c].dtype.kind == "f":
            assert np.array_equal(a[c], b[c], equal_nan=True)
        else:
            assert list(a[c]) == list(b[c])
    assert QTable.read(mine)["asd"].unit == "Hz(-1/2)"
