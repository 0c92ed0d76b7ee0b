"""Beam statics of loads.beam against closed-form cantilever results.

Sources: ../shared/VALIDATION.md item 8 (uniform load wL, wL^2/2; elliptic load total
pi l0 s / 4, root moment l0 s^2 / 3); statics of a cantilever (any strength-of-materials text:
V(y) = integral of the load outboard, M(y) = its first moment); Schrenk, NACA TM 948 (1940).
"""

import math

import dataclasses

import numpy as np
import pytest

from geomload.errors import InputError
from geomload.loads.beam import (PointLoad, equilibrium_residual, integrate_loads, schrenk,
                                 spar_frame, spar_line, ultimate)
from helpers.validation import check

UNIFORM = "beam statics, uniform load (VALIDATION.md 8)"
STATICS = "cantilever statics"


def _flat(y):
    return np.zeros_like(y), np.zeros_like(y)


def test_uniform_load_root_shear_and_moment_on_a_coarse_grid():
    # VALIDATION 8: uniform w on a cantilever of length L: V = wL, M = wL^2/2 (exact, 3 nodes)
    L, w = 2.5, 120.0
    y = np.array([0.0, 0.7, L])
    r = integrate_loads(y, *_flat(y), np.full(3, w))
    check(UNIFORM, "root shear wL, w = 120 N/m, L = 2.5 m (N)", w * L, r.shear_N[0], rel=1e-13)
    check(UNIFORM, "root bending wL^2/2 (N m)", w * L**2 / 2, r.bending_Nm[0], rel=1e-13)
    check(UNIFORM, "root torsion, load on the spar (N m)", 0.0, r.torsion_Nm[0], abs=1e-12)
    # mid-station: V(y) = w (L - y), M(y) = w (L - y)^2 / 2
    check(UNIFORM, "shear w (L - y) at y = 0.7 m (N)", w * (L - 0.7), r.shear_N[1], rel=1e-13)
    check(UNIFORM, "bending w (L - y)^2 / 2 at y = 0.7 m (N m)", w * (L - 0.7) ** 2 / 2,
          r.bending_Nm[1], rel=1e-13)


def test_linear_load_is_exact_on_any_grid():
    # triangular load w0 (1 - y/L): V(y) = w0 (L - y)^2 / (2L), M(y) = w0 (L - y)^3 / (6L)
    rng = np.random.default_rng(3)
    L, w0 = 3.0, 250.0
    y = np.sort(np.concatenate([[0.0, L], rng.uniform(0, L, 5)]))
    r = integrate_loads(y, *_flat(y), w0 * (1 - y / L))
    np.testing.assert_allclose(r.shear_N, w0 * (L - y) ** 2 / (2 * L), rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(r.bending_Nm, w0 * (L - y) ** 3 / (6 * L), rtol=1e-12, atol=1e-9)
    # the root rows of the two array checks above, for the validation table
    check(STATICS, "root shear w0 L / 2, triangular load (N)", w0 * L / 2, r.shear_N[0], rel=1e-12,
          abs=1e-9)
    check(STATICS, "root bending w0 L^2 / 6, triangular load (N m)", w0 * L**2 / 6, r.bending_Nm[0],
          rel=1e-12, abs=1e-9)


def test_elliptic_load_total_and_root_moment_on_a_fine_grid():
    # VALIDATION 8: l0 sqrt(1 - (y/s)^2): total pi l0 s / 4, root moment l0 s^2 / 3
    s, l0 = 4.0, 300.0
    y = s * np.sin(np.linspace(0, np.pi / 2, 401))  # clustered at the tip, where sqrt is singular
    r = integrate_loads(y, *_flat(y), l0 * np.sqrt(np.clip(1 - (y / s) ** 2, 0, None)))
    src = "beam statics, elliptic load (VALIDATION.md 8)"
    check(src, "root shear pi l0 s / 4, l0 = 300 N/m, s = 4 m (N)", np.pi * l0 * s / 4, r.shear_N[0],
          rel=2e-5)
    check(src, "root bending l0 s^2 / 3 (N m)", l0 * s**2 / 3, r.bending_Nm[0], rel=2e-5)
    # centroid 4 s / (3 pi)
    check(src, "load centroid 4 s / (3 pi) (m)", 4 * s / (3 * np.pi), r.bending_Nm[0] / r.shear_N[0],
          rel=2e-5)


def test_point_load_makes_a_shear_jump_and_a_moment_kink():
    # a point force P at y_p: V = P inboard of y_p, 0 outboard; M(y) = P (y_p - y) inboard
    yp, P, eps = 1.2, -500.0, 1e-6
    y = np.array([0.0, 0.6, yp - eps, yp + eps, 2.0])
    r = integrate_loads(y, *_flat(y), np.zeros(5), point_loads=[PointLoad("pod", np.array([0.0, yp, 0.0]),
                                                                            np.array([0.0, 0.0, P]))])
    np.testing.assert_allclose(r.shear_N, [P, P, P, 0.0, 0.0], atol=1e-12)
    np.testing.assert_allclose(r.bending_Nm, [P * yp, P * (yp - 0.6), P * eps, 0.0, 0.0], atol=1e-9)
    # the root rows of the two array checks above (default rtol 1e-7), for the validation table
    check(STATICS, "root shear of a point force P = -500 N (N)", P, r.shear_N[0], rel=1e-7, abs=1e-12)
    check(STATICS, "root bending P y_p of a point force at 1.2 m (N m)", P * yp, r.bending_Nm[0],
          rel=1e-7, abs=1e-9)
    # a load exactly on a station counts as outboard of it (value just inboard of the load)
    y2 = np.array([0.0, yp, 2.0])
    r2 = integrate_loads(y2, *_flat(y2), np.zeros(3), point_loads=[PointLoad("pod", np.array([0.0, yp, 0.0]),
                                                                               np.array([0.0, 0.0, P]))])
    check(STATICS, "shear just inboard of a point force on a station (N)", P, r2.shear_N[1])  # exact


def test_swept_spar_resolution():
    # Straight spar swept by L: P(y) = (y tan L, y, 0); local frame s = (sin, cos, 0),
    # b = (cos, -sin, 0), n = z. (a) uniform w per unit y acting ON the spar: moment about
    # the root = int (y tanL, y, 0) x (0, 0, w) dy = (w l^2/2, -w l^2 tanL / 2, 0), so
    # bending = M.b = w l^2 / (2 cos L) (= w cosL per unit spar length over l / cosL) and
    # torsion = M.s = 0. (b) the same load on the unswept line x = 0: moment = (w l^2/2, 0, 0),
    # bending = (w l^2 / 2) cos L, torsion = (w l^2 / 2) sin L (nose-up: load ahead of spar).
    lam, l, w = math.radians(30.0), 2.0, 80.0
    y = np.linspace(0, l, 7)
    sx = y * math.tan(lam)
    on = integrate_loads(y, sx, np.zeros_like(y), np.full(7, w))
    src = "cantilever statics, 30 deg swept spar"
    check(src, "root bending w l^2 / (2 cos L), load on the spar (N m)",
          w * l**2 / (2 * math.cos(lam)), on.bending_Nm[0], rel=1e-12)
    check(src, "root torsion, load on the spar (N m)", 0.0, on.torsion_Nm[0], abs=1e-9)
    check(src, "root shear w l (N)", w * l, on.shear_N[0], rel=1e-12)
    off = integrate_loads(y, sx, np.zeros_like(y), np.full(7, w), load_x=np.zeros(7))
    check(src, "root bending (w l^2 / 2) cos L, load on x = 0 (N m)", w * l**2 / 2 * math.cos(lam),
          off.bending_Nm[0], rel=1e-12)
    check(src, "root torsion (w l^2 / 2) sin L, load on x = 0 (N m)", w * l**2 / 2 * math.sin(lam),
          off.torsion_Nm[0], rel=1e-12)
    s, b, n = spar_frame(y, sx, np.zeros_like(y))
    np.testing.assert_allclose(s[3], [math.sin(lam), math.cos(lam), 0], atol=1e-12)
    np.testing.assert_allclose(b[3], [math.cos(lam), -math.sin(lam), 0], atol=1e-12)


def test_dihedral_spar_resolution():
    # Spar P(y) = (0, y, y tanG); n = (0, -sinG, cosG). Vertical w per unit y on the spar:
    # root force (0, 0, wl) -> shear = wl cosG; moment = int (0, y, y tanG) x (0, 0, w) dy
    # = (w l^2 / 2, 0, 0) -> bending = w l^2 / 2 (b = x), torsion 0.
    g, l, w = math.radians(8.0), 1.5, 60.0
    y = np.linspace(0, l, 4)
    r = integrate_loads(y, np.zeros(4), y * math.tan(g), np.full(4, w))
    src = "cantilever statics, 8 deg dihedral spar"
    check(src, "root shear w l cos G (N)", w * l * math.cos(g), r.shear_N[0], rel=1e-12)
    check(src, "root bending w l^2 / 2 (N m)", w * l**2 / 2, r.bending_Nm[0], rel=1e-12)
    check(src, "root torsion (N m)", 0.0, r.torsion_Nm[0], abs=1e-9)


def test_force_normal_to_a_dihedral_surface():
    # Force normal to a dihedral surface: per unit y it is w (0, -tanG, 1), i.e. w / cosG along
    # n = (0, -sinG, cosG). Root shear = w l / cosG; the moment about the root spar point is
    # int (0, y, y tanG) x (0, -w tanG, w) dy = (w l^2/2 (1 + tan^2 G), 0, 0), so bending =
    # w l^2 / (2 cos^2 G) (cantilever statics, derived here).
    g, l, w = math.radians(8.0), 1.5, 60.0
    y = np.linspace(0, l, 5)
    z = y * math.tan(g)
    r = integrate_loads(y, np.zeros(5), z, np.full(5, w), side_N_per_m=np.full(5, -w * math.tan(g)))
    src = "cantilever statics, force normal to an 8 deg dihedral surface"
    check(src, "root shear w l / cos G (N)", w * l / math.cos(g), r.shear_N[0], rel=1e-12)
    check(src, "root bending w l^2 / (2 cos^2 G) (N m)", w * l**2 / (2 * math.cos(g) ** 2),
          r.bending_Nm[0], rel=1e-12)
    # internal consistency (no outside source): the residual check agrees with the integration
    res = equilibrium_residual(r)
    assert res["shear_residual_rel"] < 1e-12 and res["bending_residual_rel"] < 1e-12


def test_torsion_from_lift_offset_and_section_moment():
    # lift w acting e aft of the spar: torque per span -w e (nose-down); plus a nose-up
    # section moment m per span: root torsion = (m - w e) l (statics, flat unswept wing)
    l, w, e, m = 2.0, 100.0, 0.05, 3.0
    y = np.linspace(0, l, 5)
    r = integrate_loads(y, np.zeros(5), np.zeros(5), np.full(5, w), load_x=np.full(5, e),
                        pitch_Nm_per_m=np.full(5, m))
    check(STATICS, "root torsion (m - w e) l, lift aft of the spar (N m)", (m - w * e) * l,
          r.torsion_Nm[0], rel=1e-12)
    np.testing.assert_allclose(r.pitch_Nm_per_m, m - w * e, rtol=1e-12)


def test_inplane_shear_and_bending_from_drag():
    # uniform aft drag d: in-plane shear d l (positive aft), bending d l^2 / 2 (positive tip-aft)
    l, d = 2.0, 7.0
    y = np.linspace(0, l, 3)
    r = integrate_loads(y, np.zeros(3), np.zeros(3), np.zeros(3), drag_N_per_m=np.full(3, d))
    check(STATICS, "root in-plane shear d l, uniform drag (N)", d * l, r.inplane_shear_N[0], rel=1e-12)
    check(STATICS, "root in-plane bending d l^2 / 2, uniform drag (N m)", d * l**2 / 2,
          r.inplane_bending_Nm[0], rel=1e-12)


def test_inertia_relief_cancels_equal_lift():
    # statics: lift and an equal inertia load on the same line cancel, so V = M = 0 everywhere
    # (superposition of equal and opposite loads; VALIDATION.md 8)
    y = np.linspace(0, 2, 6)
    lift = 100 * (1 - y / 2)
    r = integrate_loads(y, np.zeros(6), np.zeros(6), lift, inertia_N_per_m=lift)
    np.testing.assert_allclose(r.shear_N, 0, atol=1e-10)
    np.testing.assert_allclose(r.bending_Nm, 0, atol=1e-10)


def test_equilibrium_residual_with_random_loads():
    # Root shear = integral of (lift - inertia) + point loads; root bending = first moment
    # (statics; two independent computations must agree to 1e-9 relative)
    rng = np.random.default_rng(11)
    y = np.sort(np.concatenate([[0.0, 3.0], rng.uniform(0, 3, 12)]))
    n = y.size
    pls = [PointLoad(f"p{k}", np.array([rng.uniform(-.2, .2), rng.uniform(0, 3), rng.uniform(-.1, .1)]),
                     np.array([0.0, 0.0, -rng.uniform(10, 50)])) for k in range(3)]
    r = integrate_loads(y, 0.1 * y, 0.05 * y, rng.uniform(50, 200, n), drag_N_per_m=rng.uniform(1, 5, n),
                        inertia_N_per_m=rng.uniform(5, 20, n), load_x=rng.uniform(-.1, .1, n),
                        point_loads=pls)
    res = equilibrium_residual(r)
    assert res["shear_residual_rel"] < 1e-9
    assert res["bending_residual_rel"] < 1e-9
    # the residual does detect a wrong root value
    bad = r.force_N.copy()
    bad[0, 2] *= 1.001
    assert equilibrium_residual(dataclasses.replace(r, force_N=bad)).shear_residual_rel > 1e-4


def test_ultimate_is_factor_times_limit():
    # 14 CFR 23.303: factor of safety 1.5 unless otherwise specified
    y = np.linspace(0, 1, 3)
    r = integrate_loads(y, np.zeros(3), np.zeros(3), np.full(3, 10.0))
    u = ultimate(r)
    check("14 CFR 23.303, from memory", "factor of safety (-)", 1.5, r.ultimate_factor)  # exact
    check("14 CFR 23.303 with beam statics", "ultimate root bending 1.5 w l^2 / 2 (N m)", 1.5 * 5.0,
          u["bending_Nm"][0], rel=1e-6)


def test_schrenk_rectangular_and_elliptic():
    # NACA TM 948: mean of the chord-shaped and the elliptic load of the same total.
    s, L = 2.0, 400.0
    y = s * np.sin(np.linspace(0, np.pi / 2, 2001))
    rect = schrenk(y, np.full(y.size, 0.3), s, L)
    # rectangular: root = (L/s + 4L/(pi s)) / 2, tip = L / (2 s)
    src = "Schrenk, NACA TM 948 (VALIDATION.md 9)"
    check(src, "root load, rectangular wing, L = 400 N, s = 2 m (N/m)",
          0.5 * (L / s + 4 * L / (np.pi * s)), rect[0], rel=1e-12)
    check(src, "tip load, rectangular wing (N/m)", 0.5 * L / s, rect[-1], rel=1e-9)
    check(src, "integral of the load over the semi-span (N)", L,
          np.sum(0.5 * (rect[1:] + rect[:-1]) * np.diff(y)), rel=1e-5)
    # elliptic planform: both parts are the same ellipse, so Schrenk returns it unchanged
    ell = schrenk(y, 0.4 * np.sqrt(1 - (y / s) ** 2), s, L)
    np.testing.assert_allclose(ell, 4 * L / (np.pi * s) * np.sqrt(1 - (y / s) ** 2), rtol=2e-5, atol=1e-6)
    check(src, "root load 4 L / (pi s), elliptic wing (N/m)", 4 * L / (np.pi * s), ell[0], rel=2e-5,
          abs=1e-6)  # the root row of the array check above


def test_spar_line_fraction_and_polyline():
    # geometry, derived here: the chord-fraction spar is x_le + f c (f = 0.25 of chords 1.0,
    # 0.8, 0.6); the polyline through (y, x, z) = (0.5, 0.1, 0) and (1.5, 0.3, 0.1) has slopes
    # dx/dy = 0.2 and dz/dy = 0.1, so at y = 0, 1, 2: x = 0, 0.2, 0.4 and z = -0.05, 0.05, 0.15
    y = np.array([0.0, 1.0, 2.0])
    x, z = spar_line(y, np.zeros(3), np.array([1.0, 0.8, 0.6]), np.zeros(3), np.zeros(3), 0.25)
    np.testing.assert_allclose(x, [0.25, 0.2, 0.15])
    x, z = spar_line(y, None, None, None, None, line=((0.5, 0.1, 0.0), (1.5, 0.3, 0.1)))
    np.testing.assert_allclose(x, [0.0, 0.2, 0.4], atol=1e-12)  # extrapolated along the end segments
    np.testing.assert_allclose(z, [-0.05, 0.05, 0.15], atol=1e-12)


def test_bad_station_order_is_an_input_error():
    with pytest.raises(InputError, match="increasing"):
        integrate_loads(np.array([0.0, 1.0, 0.5]), np.zeros(3), np.zeros(3), np.ones(3))
    with pytest.raises(InputError, match="lift_N_per_m"):
        integrate_loads(np.array([0.0, 1.0]), np.zeros(2), np.zeros(2), np.ones(3))
