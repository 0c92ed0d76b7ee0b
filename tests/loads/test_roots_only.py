"""The root-only path of the error estimate's coarser lattices (geomload.loads.roots): the
root row of the tip-to-root integration taken alone.

- Against the full integration (geomload.loads.beam.integrate) and the full case path: the
  same operations in the same order, so the root values are equal to the bit (a reformulation
  checked against the computation it replaces: common practice, no source).
- Against cantilever statics in closed form (analytic): a uniform running load w on a straight
  spar of length L gives the root shear w L and bending w L^2 / 2; a load line e aft of the
  spar and a section moment p per metre give the torsion (p - e w) L.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from geomload.aero.convergence import _side_roots
from geomload.config.parse import read_case_file
from geomload.loads.beam import integrate
from geomload.loads.records import AppliedLoads, PointLoad
from geomload.loads import roots as roots_module
from geomload.loads.roots import root_resultants, root_resultants_many
from geomload.pipeline import ROOTS, compute
from helpers.paths import SAMPLES
from helpers.validation import check


def _random_loads(seed, n=23):
    rng = np.random.default_rng(seed)
    y = np.concatenate([[0.0], np.sort(rng.uniform(0.05, 2.4, n - 2)), [2.5]])
    sx, sz = 0.12 + 0.04 * y, 0.03 * y + 0.01 * y**2
    pts = [("pod", np.array([0.1, 0.0, -0.05]), np.array([0.0, 0.0, -31.0])),  # at the root
           ("servo", np.array([0.2, y[7], 0.06]), np.array([1.5, 0.2, -4.0])),  # on a station
           ("tank end", np.array([0.15, 1.33, 0.02]), np.array([-0.4, 0.0, -12.0])),
           ("inboard", np.array([0.0, -0.01, 0.0]), np.array([0.0, 0.0, 50.0]))]  # not carried
    loads = dict(lift=rng.uniform(-80, 300, n), drag=rng.uniform(-3, 9, n),
                 side=rng.uniform(-4, 4, n), pitch=rng.uniform(-20, 5, n),
                 load_x=sx + rng.uniform(-0.05, 0.05, n), load_z=sz + 0.01,
                 inertia=rng.uniform(5, 40, n), inertia_x=sx + 0.02, inertia_z=sz - 0.01)
    return y, sx, sz, loads, pts


@pytest.mark.parametrize("seed, alpha, tilt", [(1, 7.3, 0.0), (2, -4.1, -4.1), (3, 0.0, 0.0),
                                               (4, 13.9, 13.9)])
def test_root_resultants_equal_the_integration_root_row(seed, alpha, tilt):
    y, sx, sz, ld, pts = _random_loads(seed)
    applied = AppliedLoads(
        lift_N_per_m=ld["lift"], drag_N_per_m=ld["drag"], side_N_per_m=ld["side"],
        pitch_Nm_per_m=ld["pitch"], load_x_m=ld["load_x"], load_z_m=ld["load_z"],
        inertia_N_per_m=ld["inertia"], inertia_x_m=ld["inertia_x"],
        inertia_z_m=ld["inertia_z"], point_loads=tuple(PointLoad(*p) for p in pts),
        alpha_deg=alpha, inertia_alpha_deg=tilt)
    full = integrate(y, sx, sz, applied)
    got = root_resultants(y, sx, sz, ld["lift"], ld["drag"], ld["side"], ld["pitch"],
                          ld["load_x"], ld["load_z"], ld["inertia"], ld["inertia_x"],
                          ld["inertia_z"], pts, alpha, tilt)
    # the same arithmetic: equal to the bit (common practice, no source)
    assert got == (full.shear_N[0], full.bending_Nm[0], full.torsion_Nm[0])


def test_many_cases_at_once_equal_one_case_at_a_time():
    """root_resultants_many over cases with different loads, angles and point loads (one case
    without any) equals root_resultants case by case, to the bit (common practice, no
    source)."""
    cases = [_random_loads(seed) for seed in (11, 12, 13, 14)]
    y, sx, sz = cases[0][:3]
    angles = [(5.0, 0.0), (-3.2, -3.2), (0.0, 0.0), (11.5, 11.5)]
    points = [c[4] for c in cases]
    points[2] = []
    one = [root_resultants(y, sx, sz, c[3]["lift"], c[3]["drag"], c[3]["side"], c[3]["pitch"],
                           cases[0][3]["load_x"], cases[0][3]["load_z"], c[3]["inertia"],
                           c[3]["inertia_x"], c[3]["inertia_z"], pts, a, t)
           for c, pts, (a, t) in zip(cases, points, angles)]

    def stack(key):
        return np.stack([c[3][key] for c in cases])

    many = root_resultants_many(y, sx, sz, stack("lift"), stack("drag"), stack("side"),
                                stack("pitch"), cases[0][3]["load_x"], cases[0][3]["load_z"],
                                stack("inertia"), stack("inertia_x"), stack("inertia_z"),
                                points, [a for a, _t in angles], [t for _a, t in angles])
    assert [tuple(r) for r in many.tolist()] == one


def test_root_resultants_of_a_uniform_load_are_cantilever_statics():
    L, w, e, p = 2.0, 150.0, 0.04, -6.0
    y = np.linspace(0.0, L, 17)
    zero, one = np.zeros_like(y), np.ones_like(y)
    v, mb, t = root_resultants(y, zero, zero, w * one, zero, zero, p * one, e * one, zero,
                               zero, zero, zero, (), 0.0, 0.0)
    src = "cantilever statics, closed form (analytic)"
    check(src, "root shear of a uniform load w L (N)", w * L, v, rel=1e-12)
    check(src, "root bending of a uniform load w L^2/2 (N m)", w * L * L / 2, mb, rel=1e-12)
    check(src, "root torsion (p - e w) L, load line e aft of the spar (N m)", (p - e * w) * L, t,
          rel=1e-12)


def test_coarse_run_roots_equal_the_full_coarse_run(monkeypatch):
    """The sample (tail trim at two c.g., point masses, a fuel tank, rolling and flaps cases) on
    a small lattice: every side's root loads of compute(detail=ROOTS) equal those of
    compute(detail=False) to the bit, the cases integrated in batches of 7 (common practice,
    no source)."""
    monkeypatch.setattr(roots_module, "BATCH_CASES", 7)
    case = read_case_file(SAMPLES / "pellin_case.toml")
    case = dataclasses.replace(case, lattice=dataclasses.replace(case.lattice, n_span=10,
                                                                 n_chord=2))
    cache = {}
    full = _side_roots(compute(case, cache=cache, detail=False))
    roots = _side_roots(compute(case, cache=cache, detail=ROOTS))
    assert len(full) > 20 and any(side == "port" for _n, side in full)
    assert roots == full
