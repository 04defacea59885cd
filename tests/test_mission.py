"""Mission files: parsing with units, defaults, validation and one-line errors.

Truth: the mission-file rules of the README (every field documented, required or defaulted,
unknown keys refused) and astropy's unit parsing.
"""

import textwrap

import astropy.units as u
import pytest

from gwclock.config.mission import Mission, load_mission, mission_from_dict
from gwclock.errors import InputError

from .conftest import MISSIONS

GOOD = """
name = "test"
[link]
baseline = "3e10 m"
transmit_power = "40 mW"
[clock]
species = "Sr87"
atom_number = 1e5
"""


def write(tmp_path, text, name="m.toml"):
    p = tmp_path / name
    p.write_text(textwrap.dedent(text))
    return p


def test_minimal_mission_gets_documented_defaults(tmp_path):
    m, digest = load_mission(write(tmp_path, GOOD))
    assert m.link.transmit_power.to_value(u.W) == pytest.approx(0.04, rel=1e-12, abs=0)
    assert m.coherence_time.to_value(u.s) == pytest.approx(118.0, rel=1e-12, abs=0)  # the Sr lifetime preset
    assert m.max_interrogation.to_value(u.s) == pytest.approx(3 * 118.0, rel=1e-12, abs=0)
    assert m.sequence.kind == "cpmg" and m.sequence.tune == "auto"
    assert m.observation.duration.to_value(u.yr) == pytest.approx(1.0, rel=1e-12, abs=0)
    assert len(digest) == 16


def test_units_are_converted(tmp_path):
    text = GOOD.replace('"3e10 m"', '"3e7 km"').replace("atom_number = 1e5", 'atom_number = 1e5\ndead_time = "500 ms"')
    m, _ = load_mission(write(tmp_path, text))
    d = m.design()
    assert d.baseline == pytest.approx(3e10, rel=1e-12, abs=0)
    assert d.dead_time == pytest.approx(0.5, rel=1e-12, abs=0)


@pytest.mark.parametrize("path", MISSIONS, ids=lambda p: p.stem)
def test_shipped_missions_validate(path):
    m, _ = load_mission(path)
    assert isinstance(m, Mission) and m.name


def test_shipped_missions_cover_the_brief():
    names = {p.stem for p in MISSIONS}
    assert {"pathfinder", "flagship", "far_ytterbium"} <= names
    species = {load_mission(p)[0].clock.species for p in MISSIONS}
    assert len(species) >= 2


def test_default_mission_is_package_data():
    m, _ = load_mission(None)
    assert m.name == "Lodestar reference"


def test_clone_revalidates():
    m, _ = load_mission(None)
    m2 = m.clone(**{"clock.atom_number": 1e6})
    assert m2.clock.atom_number == 1e6
    with pytest.raises(InputError, match="clock.atom_number"):
        m.clone(**{"clock.atom_number": -1})


BAD = [
    # (replacement applied to GOOD, expected message fragment)
    (('"3e10 m"', '"5 kg"'), "link.baseline: got '5 kg'; wrong dimension"),
    (('"3e10 m"', "3e10"), "link.baseline: got 30000000000.0; missing unit"),
    (('"3e10 m"', '"3e20 m"'), "link.baseline: got '3e20 m'; expected a value <= 1e+13 m"),
    (('"3e10 m"', '"nan m"'), "not finite"),
    (('"40 mW"', '"-1 W"'), "link.transmit_power: got '-1 W'; expected a value >= 1e-15 W"),
    (('"40 mW"', '"fast"'), "cannot read it as a quantity"),
    (("transmit_power", "transmit_powr"), "link.transmit_powr: unknown key; did you mean 'transmit_power'?"),
    (("atom_number = 1e5", "atom_number = 0"), "clock.atom_number: got 0; expected a plain number between 1 and 1e+12"),
    (("atom_number = 1e5", 'atom_number = "1e5"'), "clock.atom_number"),
    (("atom_number = 1e5", ""), "clock.atom_number: required field is missing"),
    (('species = "Sr87"', 'species = "Sr88"'), "unknown species 'Sr88' (did you mean 'Sr87'?)"),
    (("atom_number = 1e5", "atom_number = 1e5\npulse_error = 0.7"), "clock.pulse_error: got 0.7"),
    (("atom_number = 1e5", "atom_number = 1e5\npulse_error = true"), "clock.pulse_error"),
    (("atom_number = 1e5", 'atom_number = 1e5\ncoherence_time = "1e6 s"'), "clock.coherence_time"),
    (("atom_number = 1e5", 'atom_number = 1e5\ncoherence_time = "10 s"\n[sequence]\nmax_interrogation = "500 s"'),
     "longer than 10 coherence times"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[sequence]\nkind = "cpgm"'), "sequence.kind: got 'cpgm'; expected"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[sequence]\ntune = "200 Hz"'), "outside the band the sequence can reach"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[sequence]\ntune = "1 m"'), "sequence.tune: got '1 m'; expected 'auto' or a frequency"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[sequence]\ntune = "-1 Hz"'), "expected 'auto' or a frequency above 0 Hz"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[sequence]\ntune = 0.1'), "missing unit"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[sequence]\nkind = "custom"'), "needs pulse_times"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[sequence]\nkind = "custom"\npulse_times = [0.5, 0.2]'),
     "must increase strictly"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[sequence]\npulse_times = [0.5]'), "only used with kind = 'custom'"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[laser]\nflicker_floor = -1'), "laser.flicker_floor"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[laser]\nlinewidth = "1 m"'), "laser.linewidth"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[spacecraft]\nacceleration_noise = "3e-15 m / s2"'),
     "spacecraft.acceleration_noise"),
    (("atom_number = 1e5", 'atom_number = 1e5\n[observation]\nduration = "1 yr"\nstart = 3'), "observation.start: unknown key"),
    (('name = "test"', 'name = ""'), "name"),
    (('name = "test"', 'name = "test"\ncolour = "blue"'), "colour: got 'blue'"),
    (("[link]", "[lnk]"), "lnk: unknown key; did you mean 'link'?"),
    (("atom_number = 1e5", "atom_number = 1e5\nlink = 3"), "clock.link: unknown key"),
]


@pytest.mark.parametrize("change, fragment", BAD, ids=[b[1][:40] for b in BAD])
def test_bad_missions_get_one_clear_line(tmp_path, change, fragment):
    text = GOOD.replace(*change)
    p = write(tmp_path, text)
    with pytest.raises(InputError) as info:
        load_mission(p)
    msg = str(info.value)
    assert fragment in msg
    assert msg.startswith(str(p))
    assert "\n" not in msg


def test_toml_syntax_error_names_the_line(tmp_path):
    p = write(tmp_path, 'name = "x"\n[link\nbaseline = "1 m"\n')
    with pytest.raises(InputError, match=r"TOML syntax error.*line 2"):
        load_mission(p)


def test_missing_and_unreadable_files(tmp_path):
    with pytest.raises(InputError, match="mission file not found"):
        load_mission(tmp_path / "nope.toml")
    with pytest.raises(InputError, match="found a folder"):
        load_mission(tmp_path)
    p = tmp_path / "bin.toml"
    p.write_bytes(b"\xff\xfe\x00")
    with pytest.raises(InputError, match="not UTF-8"):
        load_mission(p)


def test_dict_source_name():
    with pytest.raises(InputError, match="^mine: link: required field is missing"):
        mission_from_dict({"name": "x", "clock": {"species": "Sr87", "atom_number": 1}}, "mine")


def test_clone_refuses_unknown_fields_in_one_line():
    # the library's one error type, naming the field (common practice, no source)
    m = load_mission(None)[0]
    with pytest.raises(InputError, match="clock.atom_numbr: no such mission field"):
        m.clone(**{"clock.atom_numbr": 5})
    with pytest.raises(InputError, match="coherence_time: no such mission field"):
        m.clone(coherence_time="5 s")
    assert "clock.atom_number" in m._repr_html_()
