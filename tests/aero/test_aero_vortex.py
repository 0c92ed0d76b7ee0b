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
    # compact: the velocity's bound-vortex sums in the form used from COMPACT_VELOCITY_MIN,
    # and c2 as the quadratic form used from QUADRATIC_C2_MIN (both: the large lattices' path)
    monkeypatch.setattr(vortex, "COMPACT_VELOCITY_MIN", 0 if compact else 10 ** 9)
    monkeypatch.setattr(vortex, "QUADRATIC_C2_MIN", 0 if compact else 10 ** 9)
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


ANDERSON = ("Anderson, Fundamentals of Aerodynamics, ch. 5, Biot-Savart law: straight vortex "
            "filament V = G / (4 pi h) (cos t1 - cos t2), t the angles at its ends (from memory)")


def _filament(p, start, e, far_start=False, end=None):
    """Velocity (3,) at p of a unit straight vortex along unit direction e, from `start` to
    `end` (None: to infinity), or from infinity to `start` when far_start: the textbook form in
    the perpendicular distance h and the end angles (no cross-product identities)."""
    foot = start + np.dot(p - start, e) * e  # foot of the perpendicular on the line
    hv = p - foot
    h = np.linalg.norm(hv)
    direction = np.cross(e, hv / h)  # right-hand rule about the vortex
    if far_start:  # from infinity to `start`: angle 0 at the far end
        cos1, cos2 = 1.0, np.dot(p - start, e) / np.linalg.norm(p - start)
    else:
        cos1 = np.dot(p - start, e) / np.linalg.norm(p - start)
        cos2 = -1.0 if end is None else np.dot(p - end, e) / np.linalg.norm(p - end)
    return (cos1 - cos2) / (4 * math.pi * h) * direction


@pytest.mark.parametrize("quadratic", [False, True])
def test_horseshoe_set_against_the_filament_formula(quadratic, monkeypatch):
    # a horseshoe (+inf -> A, A -> B, B -> +inf along +x) summed from three textbook
    # filaments; quadratic: c2 from the quadratic form used from QUADRATIC_C2_MIN horseshoes
    monkeypatch.setattr(vortex, "QUADRATIC_C2_MIN", 0 if quadratic else 10 ** 9)
    rng = np.random.default_rng(7)
    nodes = np.array([[[0.0, -0.6, 0.02], [0.3, -0.6, 0.05]],
                      [[0.05, 0.1, 0.0], [0.36, 0.1, 0.04]],
                      [[0.12, 0.9, 0.09], [0.41, 0.95, 0.1]]])  # (ns + 1, nc, 3): 2 x 2 horseshoes
    hs = vortex.HorseshoeSet(nodes, 1e-9)
    assert (hs._c2_op is not None) == quadratic
    pts = np.array([[0.4, -0.2, 0.3], [-0.5, 0.5, -0.2], [1.5, 0.0, 0.1], [0.2, 1.4, 0.6]])
    g = rng.random((4, 2)) - 0.5
    ex = np.array([1.0, 0.0, 0.0])
    unit = np.zeros((len(pts), 3, 4))  # velocity at each point per unit horseshoe
    for s in range(2):
        for c in range(2):
            a, b = nodes[s, c], nodes[s + 1, c]
            e = (b - a) / np.linalg.norm(b - a)
            for i, p in enumerate(pts):
                unit[i, :, s * 2 + c] = (_filament(p, a, -ex, far_start=True)
                                         + _filament(p, a, e, end=b) + _filament(p, b, ex))
    ref = unit @ g
    check(ANDERSON, "horseshoe velocities, max difference / max |V|", 0.0,
          float(np.abs(hs.velocity(pts, g) - ref).max() / np.abs(ref).max()), abs=1e-12)
    nrm = rng.random((len(pts), 3)) - 0.5
    nrm /= np.linalg.norm(nrm, axis=1)[:, None]
    ref = np.einsum("icj,ic->ij", unit, nrm)
    check(ANDERSON, "normal wash per unit horseshoe, max difference / max", 0.0,
          float(np.abs(hs.normalwash(pts, nrm) - ref).max() / np.abs(ref).max()), abs=1e-12)
