"""Biot-Savart kernels against closed-form vortex-line velocities."""

import math

import numpy as np
import pytest

from helpers.aero_wings import trapezoid
from geomload.aero import vortex
from geomload.aero.lattice import build_lattice
from helpers.validation import check

KATZ = "Katz & Plotkin, Low-Speed Aerodynamics, ch. 2"


def test_long_bound_segment_is_a_2d_vortex():
    # infinite straight vortex: |V| = G / (2 pi d), direction by the right-hand rule
    # (Katz & Plotkin, Low-Speed Aerodynamics, ch. 2). Legs sent far away by a huge span.
    L, d = 1e4, 0.3
    a, b = np.array([[0.0, -L, 0.0]]), np.array([[0.0, L, 0.0]])
    u, v, w = vortex.horseshoe_velocity_block(np.array([[-d, 0.0, 0.0]]), a, b, 1e-9)
    # the two trailing legs (from y = +-L) add about 2/(4 pi L), 3e-5 of the total
    check(KATZ, "upwash of a 2-D vortex, G = 1, d = 0.3 m (m/s)", 1 / (2 * math.pi * d), w[0, 0],
          rel=1e-4)  # upwash ahead
    tiny = math.nextafter(1e-9, 0)  # strictly below 1e-9
    check(KATZ, "u of a 2-D vortex in its normal plane (m/s)", 0.0, u[0, 0], abs=tiny)
    check(KATZ, "v of a 2-D vortex in its normal plane (m/s)", 0.0, v[0, 0], abs=tiny)


def test_semi_infinite_leg_is_half_a_line_at_its_start():
    # at the plane through the start of a semi-infinite line: |V| = G / (4 pi r)
    L = 1e6  # bound segment far away so only the leg at A = origin acts nearby
    a = np.array([[0.0, 0.0, 0.0]])
    b = np.array([[0.0, L, 0.0]])
    p = np.array([[0.0, -0.5, 0.0]])
    u, v, w = vortex.horseshoe_velocity_block(p, a, b, 1e-9)
    # leg from +inf to A (sense -x) seen from y < 0: w = +1/(4 pi 0.5) minus tiny bound term
    check(KATZ, "w at the start plane of a semi-infinite vortex, r = 0.5 m (m/s)",
          1 / (4 * math.pi * 0.5), w[0, 0], rel=1e-5)


@pytest.mark.parametrize("compact", [False, True])
@pytest.mark.parametrize("mirror, beta", [(False, 1.0), (True, 0.6)])
def test_fast_kernels_match_direct_formula(mirror, beta, compact, monkeypatch):
    # internal consistency (no outside source): the fast kernels against the direct
    # Biot-Savart block, which the closed-form tests above check against Katz & Plotkin;
    # compact: the velocity's bound-vortex sums in the form used from COMPACT_VELOCITY_MIN
    monkeypatch.setattr(vortex, "COMPACT_VELOCITY_MIN", 0 if compact else 10 ** 9)
    st = trapezoid(5.0, 0.5, 35.0, camber="2412", dihedral_deg=7.0, twist_tip_deg=-4.0)
    lat = build_lattice(st, n_span=5, n_chord=3)
    ns, nc = lat.n_span, lat.n_chord
    s = np.array([1 / beta, 1.0, 1.0])
    nodes = np.concatenate([lat.bound_a.reshape(ns, nc, 3),
                            lat.bound_b.reshape(ns, nc, 3)[-1:]]) * s
    hs = vortex.HorseshoeSet(nodes, 1e-6, x_scale=beta, mirror=mirror, budget=40)
    a, b = lat.bound_a * s, lat.bound_b * s

    def direct(p):
        u, v, w = vortex.horseshoe_velocity_block(p, a, b, 1e-6)
        if mirror:
            ui, vi, wi = vortex.horseshoe_velocity_block(p * [1, -1, 1], a, b, 1e-6)
            u, v, w = u + ui, v - vi, w + wi
        return u / beta, v, w

    u, v, w = direct(lat.colloc * s)
    n = lat.normal
    ref = u * n[:, :1] + v * n[:, 1:2] + w * n[:, 2:3]
    np.testing.assert_allclose(hs.normalwash(lat.colloc * s, n), ref, atol=1e-9)
    g = np.random.default_rng(1).random((ns * nc, 2))
    p = np.array([[0.3, 0.7, 0.1], [2.0, -1.0, 0.5]])
    u, v, w = direct(p)
    ref = np.stack([u @ g, v @ g, w @ g], axis=1)
    np.testing.assert_allclose(hs.velocity(p, g), ref, atol=1e-9)


def test_trefftz_wash_of_a_vortex_pair():
    # two opposite 2-D vortices (a horseshoe's trailing pair) at y = +-1: wash at the centre is
    # 2 * G / (2 pi * 1) downward for positive lift circulation
    W = vortex.trefftz_wash_matrix(np.array([-1.0, 1.0]), np.zeros(2), np.array([0.0]),
                                   np.zeros(1), np.zeros(1), np.ones(1))
    check(KATZ, "Trefftz-plane wash midway between a vortex pair, G = 1 (m/s)", -1 / math.pi,
          (W @ np.array([-1.0, 1.0]))[0], rel=1e-12)
