"""User files other than missions: curve files, source lists, quantities and figure specs.

Truth: the documented file formats of the README (one bad file per failure mode, a clear error
naming the file and the field); the values read back are checked against the published
relations they carry (a monochromatic binary's h0 = sqrt(2/5) A of Robson, Cornish & Liu 2019,
with A of Peters 1964; the log-log interpolation of a power law is exact).
"""

import numpy as np
import pytest
from astropy import constants as const

from gwclock.astro.references import user_curve
from gwclock.astro.sources import Inspiral, Monochromatic, load_sources
from gwclock.config.figure_spec import load_spec
from gwclock.config.mission import load_mission
from gwclock.constants import MPC
from gwclock.errors import InputError
from gwclock.outputs.figures import render_spec
from gwclock.quantities import parse_quantity

CURVE_HEAD = "# convention: optimal orientation\n"


@pytest.mark.parametrize("name, text, fragment", [
    ("c.txt", "frequency,asd\n1,1\n", "expected a .csv or .ecsv"),
    ("c.csv", CURVE_HEAD + "f,asd\n1,1e-23\n10,1e-24\n", "missing column 'frequency'"),
    ("c.csv", CURVE_HEAD + "frequency,noise\n1,1e-23\n10,1e-24\n", "column 'asd' or 'psd'"),
    ("c.csv", CURVE_HEAD + "frequency,asd\n10,1e-23\n1,1e-24\n", "strictly increasing"),
    ("c.csv", CURVE_HEAD + "frequency,asd\n1,1e-23\n", "strictly increasing"),
    ("c.csv", CURVE_HEAD + "frequency,asd\n1,-1e-23\n10,1e-24\n", "positive and finite"),
    ("c.csv", CURVE_HEAD + "frequency,psd\n1,0\n10,1e-48\n", "positive and finite"),
    ("c.csv", "# convention: upside down\nfrequency,asd\n1,1e-23\n10,1e-24\n", "declare the convention"),
    ("c.ecsv", "this is not an ECSV table\n", "cannot read the curve"),
    ("c.csv", CURVE_HEAD + "frequency,asd\n1,abc\n10,1e-24\n", "asd: expected numbers"),
    ("c.ecsv", "# %ECSV 1.0\n# ---\n# datatype:\n# - {name: frequency, unit: m, datatype: float64}\n"
     "# - {name: asd, datatype: float64}\n# schema: astropy-2.0\nfrequency asd\n1 1e-23\n10 1e-24\n",
     "frequency unit: got 'm'; expected a unit convertible to Hz"),
    ("c.ecsv", "# %ECSV 1.0\n# ---\n# datatype:\n# - {name: frequency, unit: Hz, datatype: float64}\n"
     "# - {name: asd, unit: Hz, datatype: float64}\n# schema: astropy-2.0\nfrequency asd\n1 1e-23\n10 1e-24\n",
     "asd unit: got 'Hz'"),
])
def test_bad_curve_files(tmp_path, name, text, fragment):
    p = tmp_path / name
    p.write_text(text)
    with pytest.raises(InputError, match=fragment) as err:
        user_curve(p)
    assert str(p) in str(err.value)


def test_a_byte_order_mark_is_not_part_of_the_first_line(tmp_path):
    # spreadsheet programs write UTF-8 CSV with a leading U+FEFF (Unicode Standard, sec. 23.8; common practice)
    p = tmp_path / "c.csv"
    p.write_bytes(b"\xef\xbb\xbf# convention: sky-averaged\nfrequency,asd\n1,1e-20\n10,1e-21\n")
    r = user_curve(p)
    assert r.band == pytest.approx((1.0, 10.0), rel=1e-12, abs=0)
    assert r.sky_averaged(1.0) == pytest.approx(1e-40, rel=1e-12, abs=0)


def test_missing_curve_file(tmp_path):
    with pytest.raises(InputError, match="not found"):
        user_curve(tmp_path / "absent.csv")


def test_curve_in_mhz_and_psd_interpolates_a_power_law_exactly(tmp_path):
    # an f^-2 PSD tabulated at two points: log-log interpolation is exact in between
    p = tmp_path / "c.ecsv"
    import astropy.units as u
    from astropy.table import QTable
    t = QTable({"frequency": [1.0, 100.0] * u.mHz, "psd": [1e-36, 1e-40] * u.Hz**-1})
    t.meta["convention"] = "sky-averaged"
    t.write(p)
    r = user_curve(p)
    assert r.sky_factor == 1.0 and r.band == pytest.approx((1e-3, 0.1), rel=1e-12, abs=0)
    assert r.sky_averaged(1e-2) == pytest.approx(1e-38, rel=1e-9, abs=0)


@pytest.mark.parametrize("text, fragment", [
    ("[[source]]\nname = 'x'\nmass1 = 10\n", "mass2"),
    ("[[source]]\nmass1 = 10\nmass2 = 10\n", "exactly one of distance and redshift"),
    ("[[source]]\nmass1 = 10\nmass2 = 10\nredshift = 1\ndistance = '1 Gpc'\n", "exactly one"),
    ("[[source]]\nmass1 = 'ten'\nmass2 = 10\nredshift = 1\n", "plain number"),
    ("[[source]]\nmass1 = -3\nmass2 = 10\nredshift = 1\n", "> 0"),
    ("[[source]]\nmass1 = 10\nmass2 = 10\nredshift = 1\nspin = 0.5\n", "unknown key"),
    ("[[source]]\nmass1 = 10\nmass2 = 10\ndistance = '-1 Mpc'\n", "expected a distance from 1 pc"),
    ("[[source]]\nfrequency = '-3 mHz'\nh0 = 1e-22\n", "positive frequency"),
    ("[[source]]\nfrequency = '3 m'\nh0 = 1e-22\n", "frequency"),
    ("[[source]]\nfrequency = '3 mHz'\n", "mass1"),
    ("[[sources]]\nmass1 = 10\n", "unknown key"),
    ("title = 'no sources'\n", "unknown key"),
    ("source = 3\n", "[[source]]"),
    ("[[source]]\nmass1 = 1e300\nmass2 = 10\nredshift = 1\n", "mass1: got 1e.300; expected a mass from 0.001 to 1e.12"),
])
def test_bad_source_files(tmp_path, text, fragment):
    p = tmp_path / "s.toml"
    p.write_text(text)
    with pytest.raises(InputError, match=fragment.replace("[", r"\[").replace("]", r"\]")):
        load_sources(p)


@pytest.mark.parametrize("name, text, fragment", [
    ("s.csv", "name,mass1\n", "no source rows"),
    ("s.txt", "name\n", "expected a .toml or .csv"),
])
def test_bad_source_tables(tmp_path, name, text, fragment):
    p = tmp_path / name
    p.write_text(text)
    with pytest.raises(InputError, match=fragment):
        load_sources(p)


def test_missing_source_file(tmp_path):
    with pytest.raises(InputError, match="not found"):
        load_sources(tmp_path / "absent.csv")


def test_source_file_values(tmp_path):
    # a monochromatic binary from masses: h0 = sqrt(2/5) 4 (G Mc)^(5/3) (pi f)^(2/3) / (c^4 D)
    # (Peters 1964 amplitude; Robson, Cornish & Liu 2019 rms normalisation)
    p = tmp_path / "s.csv"
    p.write_text("# comment\nname,mass1,mass2,frequency,distance\nwd,0.6,0.6,3 mHz,1 kpc\nbh,30,30,,400 Mpc\n")
    wd, bh = load_sources(p)
    G, c, msun = const.G.value, const.c.value, const.M_sun.value
    mc = (0.6 * 0.6) ** 0.6 / 1.2**0.2 * msun
    A = 4 * (G * mc) ** (5 / 3) * (np.pi * 3e-3) ** (2 / 3) / (c**4 * MPC / 1e3)
    assert isinstance(wd, Monochromatic) and wd.h0 == pytest.approx(np.sqrt(0.4) * A, rel=1e-9, abs=0)
    assert isinstance(bh, Inspiral) and bh.distance == pytest.approx(400 * MPC, rel=1e-12, abs=0)
    with pytest.raises(ValueError, match="exactly one"):
        Inspiral.from_masses(1, 1)


@pytest.mark.parametrize("value, unit, fragment", [
    (True, "Hz", "expected"),
    (3.0, "Hz", "missing unit"),
    ("3", "m", "missing unit"),
    ("three metres", "m", "cannot read"),
    ([1, 2], "m", "expected"),
    ("1 s", "m", "length"),
    ("[1, 2] m", "m", "single value"),
])
def test_bad_quantities(value, unit, fragment):
    with pytest.raises(ValueError, match=fragment):
        parse_quantity(value, unit)


SPEC = """
form = "asd"
size = "two-column"
[axes]
fmin = "1e-4 Hz"
fmax = "10 Hz"
ymin = 1e-22
ymax = 1e-14
points = 200
[[mission]]
file = "default"
noises = true
band = 1e-17
[[reference]]
name = "aligo"
[[track]]
mass1 = 1e4
mass2 = 1e4
distance = "6.8 Gpc"
[[track]]
mass1 = 1e9
mass2 = 1e9
redshift = 1
"""


def test_spec_with_a_budget_a_band_and_limits(tmp_path):
    # the band annotation sits where the default mission's ASD is below 1e-17 (read off the
    # envelope on the spec's own grid); aLIGO (valid above 10 Hz) has no point in 1e-4..10 Hz
    # except its edge; a 1e9 + 1e9 Msun binary merges below 1e-4 Hz and is left out
    from gwclock.config.mission import load_mission
    from gwclock.engine import envelope
    p = tmp_path / "spec.toml"
    p.write_text(SPEC)
    spec, _ = load_spec(p)
    fig, artists, _ = render_spec(spec, base_dir=tmp_path)
    ax = fig.axes[0]
    assert ax.get_ylim() == pytest.approx((1e-22, 1e-14), rel=1e-12, abs=0)
    f = np.geomspace(1e-4, 10, 200)
    below = f[envelope(load_mission(None)[0].design(), f).asd <= 1e-17]
    lines = [a for a in artists["annotations"] if hasattr(a, "get_xdata")]
    assert sorted(float(a.get_xdata()[0]) for a in lines) == pytest.approx([below[0], below[-1]], rel=1e-12, abs=0)
    labels = [t.get_text() for t in artists["legend"].get_texts()]
    # one entry per noise drawn (projection, shot, acceleration), the two equal lasers sharing one
    assert sum(lab.startswith("  ") for lab in labels) == 4
    assert "  laser residual ≈ receiving laser" in labels
    assert not any("1e+09" in lab for lab in labels)


@pytest.mark.parametrize("change, fragment", [
    (("fmin = \"1e-4 Hz\"", "fmin = \"-1 Hz\""), "positive frequency"),
    (("ymax = 1e-14", "ymax = 1e-23"), "ymin must be below ymax"),
    (("fmax = \"10 Hz\"", "fmax = \"1e-5 Hz\""), "fmin must be below fmax"),
    (("distance = \"6.8 Gpc\"", "distance = \"-6.8 Gpc\""), "positive distance"),
    (("distance = \"6.8 Gpc\"", "redshift = 1\ndistance = \"6.8 Gpc\""), "exactly one"),
    (("noises = true", "mode = \"window\""), "needs 'tune'"),
])
def test_bad_spec_values(tmp_path, change, fragment):
    p = tmp_path / "spec.toml"
    p.write_text(SPEC.replace(*change, 1))
    with pytest.raises(InputError, match=fragment):
        load_spec(p)


class TestFiles:
    """Input and output paths (common practice, no source)."""

    def test_a_symlink_loop_is_neither_an_input_nor_a_crash(self, tmp_path):
        from gwclock.files import is_input, register_input
        (tmp_path / "a").symlink_to(tmp_path / "b")
        (tmp_path / "b").symlink_to(tmp_path / "a")
        register_input(tmp_path / "a")  # must not raise
        assert isinstance(is_input(tmp_path / "a"), bool)

    def test_outputs_get_the_permissions_of_any_new_file(self, tmp_path):
        # a table the user asked for is readable as any file they create (POSIX umask; common practice)
        import os

        from gwclock.files import atomic_path
        old = os.umask(0o022)
        try:
            with atomic_path(tmp_path / "t.ecsv") as tmp:
                tmp.write_text("x")
        finally:
            os.umask(old)
        assert (tmp_path / "t.ecsv").stat().st_mode & 0o777 == 0o644

    def test_an_output_path_that_is_a_folder_is_refused(self, tmp_path):
        from gwclock.files import check_output_path
        (tmp_path / "out.ecsv").mkdir()
        with pytest.raises(InputError, match="is a folder"):
            check_output_path(tmp_path / "out.ecsv", (".ecsv",))

    def test_an_unreadable_path_names_the_file(self, tmp_path):
        from gwclock.files import read_toml
        (tmp_path / "plain").write_text("x")
        with pytest.raises(InputError, match="cannot read the mission file") as err:
            read_toml(tmp_path / "plain" / "m.toml", "mission file")
        assert str(tmp_path / "plain" / "m.toml") in str(err.value)


class TestGrids:
    @pytest.mark.parametrize("args, message", [((0.0, 1.0, 10), "positive"), ((1.0, np.inf, 10), "positive"),
                                               ((2.0, 1.0, 10), "below"), ((1.0, 2.0, 1), "at least 2")])
    def test_bad_grids_are_refused(self, args, message):
        from gwclock.engine import frequency_grid
        with pytest.raises(ValueError, match=message):
            frequency_grid(*args)

    @pytest.mark.parametrize("f, message", [([], "non-empty"), ([[1.0, 2.0]], "one-dimensional"), ([1.0, -2.0], "positive"),
                                            ([1.0, np.nan], "positive"), ([2.0, 1.0], "increase")])
    def test_bad_frequency_arrays_are_refused(self, f, message):
        from gwclock.engine import envelope
        with pytest.raises(ValueError, match=message):
            envelope(load_mission(None)[0].design(), f)


def test_several_slashes_read_left_to_right_without_a_warning():
    # "m / s2 / Hz(1/2)" is m s^-2 Hz^-1/2 (astropy unit grammar); warnings are errors in this suite
    q = parse_quantity("3e-15 m / s2 / Hz(1/2)", "m / (s2 Hz(1/2))")
    assert q.value == pytest.approx(3e-15, rel=1e-12, abs=0)


def test_an_output_symlink_is_written_through(tmp_path):
    # as open() would (common practice, no source): the file the link points to is replaced, the link stays
    from gwclock.files import atomic_path
    (tmp_path / "real").mkdir()
    target = tmp_path / "real" / "t.ecsv"
    target.write_text("old")
    link = tmp_path / "link.ecsv"
    link.symlink_to(target)
    with atomic_path(link) as tmp:
        tmp.write_text("new")
    assert link.is_symlink() and target.read_text() == "new"


class TestErrorHierarchy:
    """Library refusals are gwclock's own documented types (gwclock/errors.py), each still the
    built-in kind a script would catch (ValueError for bad values, KeyError for failed lookups)."""

    def test_bad_frequencies_are_input_errors(self):
        from gwclock.engine import envelope
        from gwclock.errors import GwclockError
        d = load_mission(None)[0].design()
        with pytest.raises(InputError) as err:
            envelope(d, np.array([1.0, -1.0]))
        assert isinstance(err.value, (GwclockError, ValueError))

    def test_an_unreachable_tuning_or_band_is_out_of_reach(self):
        from gwclock.engine.curves import check_tuning
        from gwclock.errors import OutOfReachError
        d = load_mission(None)[0].design()
        with pytest.raises(OutOfReachError, match="1e\\+06 Hz is outside the band the sequence can reach"):
            check_tuning(d, 1e6)
        with pytest.raises(OutOfReachError, match="does not radiate"):  # a 60 Msun binary ends near 70 Hz
            Inspiral.from_masses(30, 30, redshift=0.1).track(1e3, 1e4)

    @pytest.mark.parametrize("lookup", ["reference", "species", "schedule"])
    def test_unknown_names(self, lookup):
        from gwclock.astro.references import get_reference
        from gwclock.errors import UnknownNameError
        from gwclock.physics.species import get_species
        from gwclock.studies.snr import TunedCurve, clock_snr
        with pytest.raises(UnknownNameError) as err:
            if lookup == "reference":
                get_reference("virgo")
            elif lookup == "species":
                get_species("Cs")
            else:
                d = load_mission(None)[0].design()
                clock_snr(TunedCurve(d, 1e-3, 1.0, 50), Monochromatic("m", 0.01, 1e-21), "sometimes")
        assert isinstance(err.value, KeyError) and isinstance(err.value, InputError)
        assert str(err.value).startswith("unknown ") and not str(err.value).startswith("'")


def test_a_plain_csv_curve_with_units_in_brackets_and_a_convention_column(tmp_path):
    # 1e-20 mHz^-1/2 = 1e-20 / sqrt(1e-3) Hz^-1/2 (unit conversion, astropy units)
    p = tmp_path / "c.csv"
    p.write_text("frequency [mHz],asd [mHz(-1/2)],convention\n1000,1e-20,sky-averaged\n10000,1e-21,sky-averaged\n")
    r = user_curve(p)
    assert r.band == pytest.approx((1.0, 10.0), rel=1e-12, abs=0) and r.convention == "sky-averaged"
    assert r.sky_averaged(1.0) == pytest.approx((1e-20 / np.sqrt(1e-3)) ** 2, rel=1e-12, abs=0)
    p.write_text("frequency [Hz],asd,convention\n1,1e-20,sky-averaged\n10,1e-21,optimal orientation\n")
    with pytest.raises(InputError, match="convention: expected one value in every row"):
        user_curve(p)
