"""One shared harness over every registered noise, sequence kind, reference and species, plus the
public API: each entry gets its basic checks for free (finite, positive, shape-keeping, scalars
and arrays). Truth: a PSD is non-negative and finite; a filter modulus is non-negative."""

import importlib

import numpy as np
import pytest

import gwclock
from gwclock.astro.references import REFERENCES
from gwclock.physics.noises import psd, stationary_noises
from gwclock.physics.sequences import SEQUENCES
from gwclock.physics.species import SPECIES, get_species

from .conftest import quiet_design

DESIGN = quiet_design(acceleration_noise=3e-15, linewidth=0.1, flicker_floor=4e-17, timing_mismatch=1e-6,
                      receiver_linewidth=0.3, receiver_flicker_floor=1e-16,
                      clock_white=1e-16, clock_flicker=1e-18, clock_walk=1e-18,
                      gain_mismatch=1e-3, transmit_power=1.0, phase_lock_bandwidth=10.0, pi_pulse_duration=0.01,
                      coherence_time=100.0, dead_time=1.0, acceleration_corner=4e-4)


@pytest.mark.parametrize("name", sorted(stationary_noises()))
def test_noise_terms(name):
    terms = stationary_noises()[name](DESIGN)
    f = np.geomspace(1e-7, 1e4, 50)
    y = psd(terms, f)
    assert y.shape == f.shape and np.all(np.isfinite(y)) and np.all(y >= 0) and np.any(y > 0)
    assert np.ndim(psd(terms, 0.3)) == 0
    assert all(t.alpha in (-4, -2, -1, 0, 1, 2) for t in terms)


@pytest.mark.parametrize("kind", sorted(SEQUENCES))
def test_sequence_kinds(kind):
    d = DESIGN.replace(kind=kind, pulse_times=(0.2, 0.5, 0.8) if kind == "custom" else ())
    k = SEQUENCES[kind]
    f0 = np.array([0.02, 0.3, 3.0])
    n, T, ok = k.snap(d, f0, np.full(3, 40.0))
    assert n.shape == T.shape == ok.shape == f0.shape
    assert np.all(T[ok] <= d.max_interrogation) and np.all(T > 0)
    i = int(np.flatnonzero(ok)[0])
    g = k.modulus(d, np.geomspace(1e-4, 30, 200), n[i], T[i])
    assert g.shape == (200,) and np.all(np.isfinite(g)) and np.all(g >= 0)
    assert k.fundamental(d, f0[i], n[i], T[i]) > 0


@pytest.mark.parametrize("key", sorted(REFERENCES))
def test_references(key):
    r = REFERENCES[key]
    f = np.geomspace(*r.band, 40)
    for y in (r.native(f), r.sky_averaged(f)):
        assert y.shape == f.shape and np.all(np.isfinite(y)) and np.all(y > 0)
    assert np.ndim(r.sky_averaged(f[3])) == 0
    assert r.source and r.convention in ("sky-averaged", "optimal orientation") and r.sky_factor >= 1


@pytest.mark.parametrize("key", sorted(SPECIES))
def test_species(key):
    s = get_species(key)
    assert 1e14 < s.frequency < 2e15 and s.lifetime > 0 and s.frequency_source and s.lifetime_source


def test_unknown_registry_keys_list_the_valid_ones():
    with pytest.raises(KeyError, match="expected one of Sr87"):
        get_species("Cs133")


@pytest.mark.parametrize("module", ["gwclock", "gwclock.engine", "gwclock.config.mission", "gwclock.physics.response",
                                    "gwclock.physics.filters", "gwclock.physics.noises", "gwclock.astro.sources", "gwclock.astro.references",
                                    "gwclock.studies.snr", "gwclock.studies.background", "gwclock.studies.sweep", "gwclock.engine.batch"])
def test_public_api_names_exist(module):
    m = importlib.import_module(module)
    for name in m.__all__:
        assert getattr(m, name) is not None


def test_import_is_light():
    import subprocess
    import sys
    code = ("import sys, gwclock, gwclock.engine, gwclock.cli; "
            "print(any(m in sys.modules for m in ('matplotlib', 'astropy.cosmology', 'dask', 'distributed')))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
    assert gwclock.__version__
