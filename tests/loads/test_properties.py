"""Property tests (hypothesis) of invariances that hold for any input, not just chosen ones.

- Stations are a property of the wing, not of where it sits in the CAD frame: a rigid motion
  leaves them unchanged and a uniform scaling k scales lengths by k and leaves angles and
  ratios unchanged (Euclidean invariance; issue 2).
- Beam statics is linear in the loads (superposition, any strength-of-materials text, e.g.
  Timoshenko & Gere, Mechanics of Materials, "principle of superposition") and in equilibrium
  (the root resultant equals the sum of the applied loads: Newton's first law for the body).
- Vortex lattice (Katz & Plotkin, Low-Speed Aerodynamics, 2nd ed., ch. 12): the circulation
  solves A gamma = -V_inf . n with V_inf = (cos a, 0, sin a), so gamma(a) = cos a gamma(0) +
  sin a gamma(90 deg); and in symmetric flight the solution of a symmetric wing is symmetric,
  so a half wing with mirror images equals a full-span lattice (method of images).
Example counts are kept small so the module runs in seconds.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from geomload.aero.lattice import build_lattice
from geomload.aero.solve import AeroModel
from geomload.geometry.frame import detect_frame
from geomload.geometry.sections import cut_stations
from geomload.loads.beam import PointLoad, equilibrium_residual, integrate_loads
from geomload.records import WingMesh
from helpers.wingfactory import naca_wing_mesh, random_rotation

FAST = settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow],
                derandomize=True)
N_ST = 9


@pytest.fixture(scope="module")
def base_wing():
    mesh, d = naca_wing_mesh(n_chord=40, n_span=18)
    frame = detect_frame(mesh)
    return mesh, cut_stations(mesh, frame, n=N_ST, spacing="cosine")


def _stations(tris):
    mesh = WingMesh(triangles=tris, source="<moved wing>", units="m")
    return cut_stations(mesh, detect_frame(mesh), n=N_ST, spacing="cosine")


@FAST
@given(seed=st.integers(0, 10_000), scale=st.floats(0.25, 20.0),
       shift=st.tuples(*[st.floats(-50.0, 50.0)] * 3))
def test_rigid_motion_and_scaling_give_the_same_stations(base_wing, seed, scale, shift):
    mesh, ref = base_wing
    R = random_rotation(seed)
    moved = scale * (mesh.triangles @ R.T) + np.asarray(shift)
    st_ = _stations(moved)
    assert st_.n == ref.n
    c = ref.chord.max()
    # lengths scale with k; angles and ratios do not (tolerances: a fraction of a percent of
    # chord, a hundredth of a degree; float64 cuts of the same facets)
    assert np.allclose(st_.y / scale, ref.y, rtol=0, atol=1e-5 * c)
    assert np.allclose(st_.chord / scale, ref.chord, rtol=0, atol=1e-5 * c)
    assert np.allclose(st_.x_le / scale, ref.x_le, rtol=0, atol=1e-5 * c)
    assert np.allclose(st_.z_le / scale, ref.z_le, rtol=0, atol=1e-5 * c)
    assert np.allclose(st_.twist_deg, ref.twist_deg, rtol=0, atol=1e-2)
    assert np.allclose(st_.thickness_ratio, ref.thickness_ratio, rtol=0, atol=1e-5)
    assert np.allclose(st_.camber_ratio, ref.camber_ratio, rtol=0, atol=1e-5)
    assert st_.semispan / scale == pytest.approx(ref.semispan, rel=1e-6)


# ------------------------------------------------------------------------------- beam
def _loads(rng, n):
    y = np.concatenate([[0.0], np.sort(rng.uniform(0.02, 2.0, n - 1))])
    y = np.unique(y)
    k = y.size
    spar_x = 0.1 + 0.05 * y + 0.01 * rng.normal(size=k)   # swept, wavy spar
    spar_z = 0.05 * y + 0.005 * rng.normal(size=k)        # dihedral
    kw = dict(drag_N_per_m=rng.normal(size=k), pitch_Nm_per_m=rng.normal(size=k),
              load_x=spar_x + 0.02 * rng.normal(size=k), load_z=spar_z + 0.01 * rng.normal(size=k),
              inertia_N_per_m=rng.uniform(0, 30, k), inertia_x=spar_x + 0.03, inertia_z=spar_z)
    lift = rng.uniform(-50, 300, k)
    pts = tuple(PointLoad(f"p{i}", np.array([rng.uniform(0, .3), rng.uniform(0, y[-1]), 0.0]),
                          rng.normal(size=3) * 20) for i in range(int(rng.integers(0, 3))))
    return y, spar_x, spar_z, lift, kw, pts


FIELDS = ("shear_N", "bending_Nm", "torsion_Nm", "inplane_shear_N", "inplane_bending_Nm")


@FAST
@given(seed=st.integers(0, 10_000), n=st.integers(3, 40), a=st.floats(-3, 3), b=st.floats(-3, 3))
def test_beam_integration_is_linear(seed, n, a, b):
    rng = np.random.default_rng(seed)
    y, sx, sz, l1, kw1, p1 = _loads(rng, n)
    k = y.size
    l2 = rng.uniform(-100, 100, k)
    kw2 = {key: (rng.normal(size=k) if key in ("drag_N_per_m", "pitch_Nm_per_m", "inertia_N_per_m")
                 else v) for key, v in kw1.items()}
    combo = {key: (a * kw1[key] + b * kw2[key] if key in ("drag_N_per_m", "pitch_Nm_per_m",
                                                         "inertia_N_per_m") else v)
             for key, v in kw1.items()}
    r1 = integrate_loads(y, sx, sz, l1, **kw1)
    r2 = integrate_loads(y, sx, sz, l2, **kw2)
    r = integrate_loads(y, sx, sz, a * l1 + b * l2, **combo)
    for f in FIELDS:
        expect = a * getattr(r1, f) + b * getattr(r2, f)
        scale = max(1.0, np.abs(getattr(r1, f)).max(), np.abs(getattr(r2, f)).max())
        assert np.allclose(getattr(r, f), expect, rtol=0, atol=1e-9 * scale * (abs(a) + abs(b) + 1)), f


@FAST
@given(seed=st.integers(0, 10_000), n=st.integers(3, 40))
def test_beam_integration_is_in_equilibrium(seed, n):
    rng = np.random.default_rng(seed)
    y, sx, sz, lift, kw, pts = _loads(rng, n)
    r = integrate_loads(y, sx, sz, lift, point_loads=pts, **kw)
    res = equilibrium_residual(r)
    assert res["shear_residual_rel"] < 1e-9 and res["bending_residual_rel"] < 1e-9
    # the root resultant is the sum of all applied forces, each computed independently here
    trap = lambda f: float(np.sum(0.5 * (f[1:] + f[:-1]) * np.diff(y)))  # noqa: E731
    fx = trap(kw["drag_N_per_m"]) + sum(p.force[0] for p in pts)
    fz = trap(lift) - trap(kw["inertia_N_per_m"]) + sum(p.force[2] for p in pts)
    fy = sum(p.force[1] for p in pts)
    f0 = r.force_N[0]
    assert f0 == pytest.approx([fx, fy, fz], rel=1e-9, abs=1e-9)
    # and the resolved values are its components in the local spar frame
    assert r.shear_N[0] == pytest.approx(f0 @ r.axis_n[0], rel=1e-12, abs=1e-9)
    assert r.inplane_shear_N[0] == pytest.approx(f0 @ r.axis_b[0], rel=1e-12, abs=1e-9)
    # no load outboard of the tip
    assert abs(r.shear_N[-1]) < 1e-9 * max(1.0, abs(fz)) or any(p.position[1] >= y[-1] for p in pts)


# ---------------------------------------------------------------------------- lattice
@pytest.fixture(scope="module")
def models(base_wing):
    _, stations = base_wing
    half = build_lattice(stations, n_span=10, n_chord=4, spacing="uniform")
    full = build_lattice(stations, n_span=10, n_chord=4, spacing="uniform", full_span=True)
    return AeroModel(half, 0.0), AeroModel(full, 0.0), AeroModel(half, 0.3)


@FAST
@given(alpha=st.floats(-20.0, 20.0), which=st.sampled_from([0, 2]))
def test_lattice_solution_is_linear_in_the_free_stream(models, alpha, which):
    m = models[which]
    g0, g90, g = m.solve(0.0).gamma, m.solve(90.0).gamma, m.solve(alpha).gamma
    a = math.radians(alpha)
    assert np.allclose(g, math.cos(a) * g0 + math.sin(a) * g90, rtol=0,
                       atol=1e-10 * np.abs(g90).max())
    # so at small angles the lift is linear in alpha (the cos^2 of the near-field force aside)
    s1, s2 = m.solve(0.5), m.solve(1.0)
    s0 = m.solve(0.0)
    assert (s2.CL - s0.CL) == pytest.approx(2 * (s1.CL - s0.CL), rel=1e-3)


@FAST
@given(alpha=st.floats(-12.0, 12.0))
def test_half_wing_with_images_equals_the_full_span_lattice(models, alpha):
    half, full, _ = models
    h, f = half.solve(alpha), full.solve(alpha)
    assert f.CL == pytest.approx(h.CL, rel=1e-6, abs=1e-9)
    assert f.CDi == pytest.approx(h.CDi, rel=1e-6, abs=1e-12)
    ns, nc = half.lattice.n_span, half.lattice.n_chord
    gf = f.gamma.reshape(2 * ns, nc)
    gh = h.gamma.reshape(ns, nc)
    scale = np.abs(gh).max() + 1e-300
    assert np.allclose(gf[ns:], gh, rtol=0, atol=1e-7 * scale)          # starboard = half wing
    assert np.allclose(gf[:ns][::-1], gf[ns:], rtol=0, atol=1e-7 * scale)  # port mirrors starboard
    cl_f = np.asarray(f.cl)
    order = np.argsort(f.y)
    assert np.allclose(cl_f[order], cl_f[order][::-1], rtol=0, atol=1e-7 * (np.abs(cl_f).max() + 1e-300))
