"""compute(case, cache=...) shares the wing and the factorised lattice models between calls:
a second compute of the same case with the same cache reads and factorises nothing, and gives
the same loads bit for bit (the same arithmetic on the same objects)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from geomload.aero.models import MachModels
from geomload.config import read_case_file
from geomload.pipeline import compute

SAMPLE = Path(__file__).resolve().parent.parent / "sample_geometry" / "pellin_case.toml"


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
