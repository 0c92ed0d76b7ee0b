"""Lattice geometry checks against analytic planform formulas."""

import numpy as np
import pytest

from helpers.aero_wings import elliptic, make_stations, trapezoid
from geomload.aero.lattice import build_lattice
from geomload.errors import AeroError
from helpers.validation import check

RAYMER = "Raymer, Aircraft Design, ch. 4, trapezoid planform"


def test_trapezoid_reference_values():
    # straight-tapered wing: S = (1 + l) cr b / 2, MAC = (2/3) cr (1 + l + l^2)/(1 + l),
    # y_mac = (b/6)(1 + 2 l)/(1 + l) (Raymer, Aircraft Design, ch. 4)
    A, lam, s, sweep = 6.0, 0.4, 5.0, 25.0
    st = trapezoid(A, lam, sweep, semispan=s)
    lat = build_lattice(st, n_span=8, n_chord=3)
    cr = st.chord[0]
    check(RAYMER, "reference area S, both sides (m^2)", (1 + lam) * cr * s, lat.s_ref, rel=1e-12)
    mac = 2 / 3 * cr * (1 + lam + lam**2) / (1 + lam)
    check(RAYMER, "mean aerodynamic chord (m)", mac, lat.c_ref, rel=1e-12)
    y_mac = (2 * s / 6) * (1 + 2 * lam) / (1 + lam)
    x_qc = cr / 4 + np.tan(np.radians(sweep)) * y_mac  # quarter-chord line at y_mac
    check(RAYMER, "x of the quarter chord at y_mac (m)", x_qc, lat.x_ref[0], rel=1e-12)
    check(RAYMER, "reference span b (m)", 2 * s, lat.b_ref)  # exact
    # internal consistency (no outside source): panel areas add up to one side's area
    assert lat.area.sum() == pytest.approx(lat.s_ref / 2, rel=1e-9)


def test_cosine_spacing_and_extension_to_root_and_tip():
    st = elliptic(8.0, semispan=4.0, n=30)
    lat = build_lattice(st, n_span=20, n_chord=2)
    ye = lat.corners[:, 0, 1]
    # half-cosine spacing y_k = s sin(pi k / (2 n)), root to tip (common practice, no source)
    assert ye[0] == 0.0 and ye[-1] == pytest.approx(4.0)
    np.testing.assert_allclose(ye, 4.0 * np.sin(0.5 * np.pi * np.arange(21) / 20), atol=1e-12)
    w = np.diff(ye)
    # that spacing: tip width / root width = 1 - cos(pi/40) over sin(pi/40) = 0.039 < 1/10
    assert w[-1] < w[0] / 10
    # the elliptic area pi c0 s / 2 is recovered (linear chord between 30 stations)
    check("ellipse area pi a b", "area of an elliptic planform, 30 stations (m^2)",
          np.pi * st.chord[0] * 4.0 / 2, lat.s_ref, rel=2e-3)
    # mirror image in y = 0 (geometric definition of the full span)
    full = build_lattice(st, n_span=20, n_chord=2, full_span=True)
    assert full.n_span == 40 and not full.mirrored
    np.testing.assert_allclose(full.corners[20:, :, 1], lat.corners[:, :, 1], atol=1e-12)
    np.testing.assert_allclose(full.corners[:21, :, 1], -lat.corners[::-1, :, 1], atol=1e-12)


def test_normals_follow_twist_and_dihedral():
    # flat wing, 3 deg nose-up twist and 6 deg dihedral everywhere: normal = R (0, 0, 1)
    y = np.array([0.0, 5.0])
    tw, dih = np.radians(3.0), np.radians(6.0)
    st = make_stations(y, 0.25, 1.0, 5.0, twist_deg=3.0, z_qc=np.tan(dih) * y)
    lat = build_lattice(st, n_span=4, n_chord=2)
    t_chord = np.array([np.cos(tw), 0, -np.sin(tw)])
    t_span = np.array([0, np.cos(dih), np.sin(dih)])
    n = np.cross(t_chord, t_span)
    n /= np.linalg.norm(n)
    np.testing.assert_allclose(lat.normal, np.tile(n, (8, 1)), atol=1e-12)
    # 1/4 - 3/4 rule: bound at panel quarter chord, collocation at three quarters
    x_b = lat.bound_a[:, 0].reshape(4, 2)[0]
    le_x = 0.25 - 0.25 * np.cos(tw)
    np.testing.assert_allclose(x_b, le_x + np.cos(tw) * np.array([0.125, 0.625]), atol=1e-12)


def test_camber_normals_match_mean_line_slope():
    # NACA 2412 mean line slope dz/dx = 2m/p^2 (p - x) ahead of p (NACA Report 824)
    st = trapezoid(10.0, 1.0, 0.0, camber="2412")
    lat = build_lattice(st, n_span=2, n_chord=10)
    xc = (lat.colloc[:10, 0] - st.x_le[0]) / st.chord[0]
    slope = np.where(xc < 0.4, 2 * 0.02 / 0.16 * (0.4 - xc), 2 * 0.02 / 0.36 * (0.4 - xc))
    np.testing.assert_allclose(-lat.normal[:10, 0] / lat.normal[:10, 2], slope, atol=2e-4)
    check("NACA Report 824 mean line (VALIDATION.md 5)", "NACA 2412 slope dz/dx, first panel (-)",
          slope[0], -lat.normal[0, 0] / lat.normal[0, 2], rel=1e-7, abs=2e-4)  # one row of the above


@pytest.mark.parametrize("kw", [dict(n_span=0), dict(n_span=-3), dict(n_chord=0),
                                dict(n_span=2.5), dict(spacing="random"),
                                dict(chord_spacing="x")])
def test_bad_counts_and_options(kw):
    with pytest.raises(AeroError) as e:
        build_lattice(trapezoid(), **kw)
    assert "\n" not in str(e.value)


def test_degenerate_stations():
    st = make_stations([0.0, 2.0, 4.0], 0.25, [1.0, 0.0, 0.5], 4.0)
    with pytest.raises(AeroError, match="chord"):
        build_lattice(st)
    st = make_stations([0.0, 4.0, 2.0], 0.25, 1.0, 4.0)
    with pytest.raises(AeroError, match="increasing"):
        build_lattice(st)
    st = make_stations([0.0, 4.0], 0.25, [1.0, np.nan], 4.0)
    with pytest.raises(AeroError):
        build_lattice(st)
