"""compute(case, cache=...) shares the wing and the factorised lattice models between calls:
a second compute of the same case with the same cache reads and factorises nothing, and gives
the same loads bit for bit (the same arithmetic on the same objects)."""

from __future__ import annotations
from helpers.paths import ROOT

from pathlib import Path

import numpy as np

from geomload.aero.models import MachModels
from geomload.config import read_case_file
from geomload.pipeline import compute

SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"


def test_second_compute_with_the_cache_reads_and_factorises_nothing():
    case = read_case_file(SAMPLE)
    cache = {}
    first = compute(case, cache=cache)
    kinds = sorted(k[0] for k in cache)
    assert kinds.count("wing") == 1 and kinds.count("lattice") == 1
    n_models = kinds.count("aero")
    assert n_models >= 1
    entries = dict(cache)
    second = compute(case, cache=cache)
    assert dict(cache).keys() == entries.keys()  # nothing new was built
    assert all(cache[k] is entries[k] for k in entries)  # nor rebuilt in place
    assert second.mesh is first.mesh and second.stations is first.stations
    assert second.lattice is first.lattice
    for a, b in zip(first.cases, second.cases):
        np.testing.assert_array_equal(a.loads.bending_Nm, b.loads.bending_Nm)
        np.testing.assert_array_equal(a.loads.shear_N, b.loads.shear_N)


def test_models_found_in_the_store_are_not_built_again():
    case = read_case_file(SAMPLE)
    cache = {}
    r = compute(case, cache=cache)
    models = MachModels(r.lattice, store=cache, key=next(k for k in cache if k[0] == "lattice"))
    m = models.get(r.cases[0].mach)
    assert models.built == 0
    assert any(m is v for v in cache.values())


def test_a_changed_lattice_is_a_new_entry(tmp_path):
    case = read_case_file(SAMPLE)
    cache = {}
    compute(case, cache=cache)
    import dataclasses

    denser = dataclasses.replace(case, lattice=dataclasses.replace(case.lattice, n_chord=6))
    compute(denser, cache=cache)
    kinds = [k[0] for k in cache]
    assert kinds.count("wing") == 1  # the same geometry, read once
    assert kinds.count("lattice") == 2


def test_error_bars_of_a_second_variant_share_the_coarser_lattices(tmp_path):
    """Variants of one wing (here another gross mass and spar position) estimating their error
    bars through one cache: the run's lattice and both coarser ones are built and factorised
    for the first only, and the estimates equal those of a run without any cache bit for bit."""
    from geomload.batch.variants import make_variants

    vs = make_variants([SAMPLE], ["aircraft.gross_mass_kg=21", "spar.chord_fraction=0.3"])
    other = tmp_path / "variant.toml"
    other.write_text(vs[0].toml_text)
    first_case, second_case = read_case_file(SAMPLE), read_case_file(other)
    assert second_case.spar.chord_fraction == 0.3
    cache = {}
    compute(first_case, cache=cache, error_bars=True)
    kinds = [k[0] for k in cache]
    assert kinds.count("wing") == 1 and kinds.count("lattice") == 3  # the run's and 2 coarser
    entries = dict(cache)
    shared = compute(second_case, cache=cache, error_bars=True)
    assert dict(cache).keys() == entries.keys()
    assert all(cache[k] is entries[k] for k in entries)
    alone = compute(second_case, error_bars=True)
    assert shared.error_bars.lattices == alone.error_bars.lattices
    assert len(shared.error_bars.cases) == len(alone.error_bars.cases) > 20
    pairs = list(zip(shared.error_bars.cases, alone.error_bars.cases))
    pairs.append((("envelope", shared.error_bars.envelope), ("envelope", alone.error_bars.envelope)))
    for (n1, b1), (n2, b2) in pairs:
        assert n1 == n2 and b1.not_monotone == b2.not_monotone
        # nan-aware, bit for bit: the estimates and the observed orders
        np.testing.assert_array_equal(list(b1.values().values()) + list(b1.order),
                                      list(b2.values().values()) + list(b2.order))
