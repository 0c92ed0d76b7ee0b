"""Schrenk's method with the basic (twist) loading (NACA TM 948) against the vortex lattice."""

import numpy as np
import pytest

from helpers.aero_wings import trapezoid
from geomload.aero.lattice import build_lattice
from geomload.aero.solve import AeroModel
from geomload.errors import InputError
from geomload.loads.beam import schrenk
from geomload.loads.schrenk_twist import basic_loading_per_q, schrenk_with_twist
from helpers.validation import check

SCHRENK = "Schrenk, NACA TM 948 (1940): additional + basic (twist) loading"
S, WASHOUT = 5.0, -4.0


def _grid(lat, y_strips):
    """Root, strip centres and tip, with the trapezoid's chord (linear in y)."""
    yg = np.r_[0.0, y_strips, S]
    cr = lat.s_ref / (2 * S * 1.5)
    return yg, cr * (1.0 - 0.5 * yg / S)


def _trapz(y, f):
    return float(np.sum(0.5 * (f[1:] + f[:-1]) * np.diff(y)))


@pytest.fixture(scope="module")
def twisted():
    st = trapezoid(8.0, 0.5, semispan=S, twist_tip_deg=WASHOUT)  # linear twist root to tip
    return AeroModel(build_lattice(st, n_span=40, n_chord=8))


@pytest.mark.parametrize("CL", [0.3, 0.6, 1.0])
def test_root_load_with_twist_vs_lattice(twisted, CL):
    lat = twisted.lattice
    sol = twisted.solve(twisted.alpha_for_cl(CL))
    half = CL * lat.s_ref / 2  # per unit q
    # Schrenk on the root-to-tip stations plus the strip centres (trapezoid integrals)
    yg, cg = _grid(lat, sol.y)
    with_twist = schrenk_with_twist(yg, cg, S, half, 1.0, WASHOUT * yg / S)
    plain = schrenk(yg, cg, S, half)
    k = 1  # the innermost strip centre (y = 0.1 m)
    # Schrenk's method is an approximation: measured within 2.5 % of the lattice at the root
    # of this washed-out wing for CL 0.3-1.0 (without the basic loading 4-16 % low); 3 % allowed
    check(SCHRENK, f"root lift per span / q, 4 deg washout, A = 8, taper 0.5, CL = {CL:g}",
          sol.lift_per_q[0], with_twist[k], rel=0.03)
    assert abs(with_twist[k] - sol.lift_per_q[0]) < abs(plain[k] - sol.lift_per_q[0])
    # root bending: measured 6 % high at CL = 0.3, 3 % at 0.6, 1 % at 1.0 (plain Schrenk
    # 13 %, 8 %, 5 % high); 7 % allowed
    rb_lat = float(np.sum(sol.lift_per_q * sol.y * lat.strip_width))
    check(SCHRENK, f"root bending / q, 4 deg washout, A = 8, taper 0.5, CL = {CL:g}",
          rb_lat, _trapz(yg, with_twist * yg), rel=0.07)
    # same total lift as Schrenk without twist (the basic loading carries none)
    check("definition of the basic loading (zero net lift)", f"semispan lift per q, CL = {CL:g}",
          _trapz(yg, plain), _trapz(yg, with_twist), rel=1e-9)


def test_basic_loading_alone_at_zero_lift(twisted):
    lat = twisted.lattice
    sol = twisted.solve(twisted.alpha_for_cl(0.0))
    yg, cg = _grid(lat, sol.y)
    basic = basic_loading_per_q(yg, cg, WASHOUT * yg / S)
    # washout: inboard up, outboard down (lattice and Schrenk); the magnitudes differ (Schrenk's
    # half-strip basic loading has no induced smoothing: root value 60 % above the lattice's,
    # root bending 40 % below) - it is a rough approximation, here only the signs are checked
    assert basic[0] > 0 > basic[-1] and sol.lift_per_q[0] > 0 > sol.lift_per_q[-1]
    assert _trapz(yg, basic * yg) < 0 and float(np.sum(sol.lift_per_q * sol.y)) < 0


def test_schrenk_twist_bad_input():
    with pytest.raises(InputError, match="^schrenk_twist: y, chord and twist_deg"):
        basic_loading_per_q([0.0, 1.0], [1.0, 1.0], [0.0])
