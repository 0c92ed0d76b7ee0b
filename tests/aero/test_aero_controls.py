"""Control surfaces in the vortex lattice against thin-airfoil and lifting-line theory."""

import math

import numpy as np
import pytest

from helpers.aero_wings import make_stations, trapezoid
from helpers.lifting_line import LiftingLine, glauert_flap_effectiveness
from geomload.aero.controls import ControlSurface, chord_fractions, check_controls, \
    check_deflection
from geomload.aero.lattice import build_lattice
from geomload.aero.roll import ControlModel
from geomload.aero.solve import AeroModel
from geomload.errors import AeroError
from helpers.validation import check

GLAUERT = "thin-airfoil theory, plain flap (Glauert 1926; Abbott & von Doenhoff sec. 8.3)"
LL = "Prandtl lifting line, Fourier series (Anderson, Fundamentals of Aerodynamics, sec. 5.3)"


def rectangle(aspect, semispan=5.0):
    c = 2 * semispan / aspect
    return make_stations(np.array([0.0, semispan]), 0.0, c, semispan), c


def flap_tau(st, semispan, n_chord, n_span=16, hinge=0.75):
    fl = ControlSurface("flap", "flap", 0.0, semispan, hinge)
    cm = ControlModel(AeroModel(build_lattice(st, n_span=n_span, n_chord=n_chord,
                                              controls=[fl])), [fl])
    # zero-lift angle per degree of flap = d alpha_L0 / d delta (both in deg)
    return -cm.alpha_for_cl(0.0, {"flap": 1.0})


def test_full_span_flap_zero_lift_shift_glauert():
    # Glauert: d alpha_L0/d delta = -(pi - th + sin th)/pi, cos th = 1 - 2 x_h/c; x_h = 0.75 c
    # -> 0.609. The discrete-vortex flap converges as O(1/n_chord) (hinge singularity), from
    # below: measured 3.5 % low at 12, 2 % at 20 and 1 % at 32 chordwise panels (A = 40).
    st, _ = rectangle(40.0)
    tau = glauert_flap_effectiveness(0.75)
    check(GLAUERT, "-d alpha_L0/d delta, hinge 0.75 c (analytic value)", 0.6090, tau, rel=1e-3)
    t20, t32 = flap_tau(st, 5.0, 20), flap_tau(st, 5.0, 32)
    check(GLAUERT, "-d alpha_L0/d delta, full-span flap 25 % c, A = 40, 20 chordwise panels",
          tau, t20, rel=0.03)
    # first-order Richardson extrapolation n -> infinity (error ~ 1/n)
    ext = (32 * t32 - 20 * t20) / 12
    check(GLAUERT, "-d alpha_L0/d delta, extrapolated to infinite chordwise panels", tau, ext,
          rel=0.01)


def test_part_span_flap_lift_vs_lifting_line():
    # inboard flap 0..0.5 s of a rectangular wing, A = 20; lifting line with the Glauert
    # zero-lift shift over the flap span. Expected accuracy: flap effectiveness 2 % low at 20
    # chordwise panels, plus lifting-surface vs lifting-line differences of ~2 % at A = 20.
    s = 5.0
    st, c = rectangle(20.0, s)
    fl = ControlSurface("flap", "flap", 0.0, 0.5 * s, 0.75)
    cm = ControlModel(AeroModel(build_lattice(st, n_span=24, n_chord=20, controls=[fl])), [fl])
    dcl = cm.coefficients(0.0, {"flap": 1.0})[0] - cm.coefficients(0.0)[0]
    tau = glauert_flap_effectiveness(0.75)
    ll = LiftingLine(2 * s, lambda y: np.full_like(np.asarray(y, float), c), n=121)
    A = ll.solve(lambda y: np.where(np.abs(y) <= 0.5 * s, tau * math.radians(1.0), 0.0))
    check(LL, "flap CL increment per deg, flap 0..0.5 s, 25 % c, rectangle A = 20",
          ll.CL(A), dcl, rel=0.05)
    assert ll.CL(A) > 0 and dcl > 0


def test_chord_grid_puts_an_edge_on_the_hinge():
    # geometry by construction: the hinge fraction is an exact panel edge
    xi = chord_fractions(10, [0.75, 0.7])
    assert xi.size == 11 and xi[0] == 0 and xi[-1] == 1 and np.all(np.diff(xi) > 0)
    assert np.min(np.abs(xi - 0.75)) < 1e-12 and np.min(np.abs(xi - 0.7)) < 1e-12
    st = trapezoid(8.0, 0.5)
    ail = ControlSurface("ail", "aileron", 3.0, 4.6, 0.72, mode="antisymmetric")
    lat = build_lattice(st, n_span=20, n_chord=8, full_span=True, controls=[ail])
    ye = lat.corners[:, 0, 1]
    for y in (3.0, 4.6, -3.0, -4.6):
        assert np.min(np.abs(ye - y)) < 1e-12


def test_no_controls_leaves_the_lattice_unchanged():
    st = trapezoid(8.0, 0.5, twist_tip_deg=-3.0)
    a = build_lattice(st, n_span=12, n_chord=6)
    b = build_lattice(st, n_span=12, n_chord=6, controls=())
    for f in ("corners", "colloc", "normal", "area", "strip_y"):
        assert np.array_equal(getattr(a, f), getattr(b, f))


def _surf(**kw):
    base = dict(name="ail", kind="aileron", y_from_m=3.0, y_to_m=4.5, hinge_fraction=0.75,
                mode="antisymmetric")
    base.update(kw)
    return ControlSurface(**base)


@pytest.mark.parametrize("surfaces, key", [
    ([_surf(y_to_m=5.5)], "controls.ail.y_from_m"),
    ([_surf(y_from_m=-0.5)], "controls.ail.y_from_m"),
    ([_surf(), _surf(name="flap", kind="flap", y_from_m=0.5, y_to_m=3.2, mode="symmetric")],
     "controls.flap.y_from_m"),
    ([_surf(hinge_fraction=0.0)], "controls.ail.hinge_fraction"),
    ([_surf(hinge_fraction=1.0)], "controls.ail.hinge_fraction"),
    ([_surf(kind="spoiler")], "controls.ail.kind"),
])
def test_bad_control_surfaces_name_the_key(surfaces, key):
    with pytest.raises(AeroError) as e:
        check_controls(surfaces, 5.0)
    msg = str(e.value)
    assert msg.startswith(key) and "\n" not in msg


def test_large_deflection_warns_and_limits_are_enforced():
    c = _surf(delta_min_deg=-35.0, delta_max_deg=35.0)
    w = check_controls([c], 5.0)
    assert len(w) == 1 and "linear" in w[0] and w[0].startswith("controls.ail.delta_max_deg")
    assert check_deflection(c, 20.0) == []
    assert "linear" in check_deflection(c, 32.0)[0]
    with pytest.raises(AeroError, match="^deflection.ail: 40 deg is outside"):
        check_deflection(c, 40.0)
    # an antisymmetric surface needs both sides in the lattice
    with pytest.raises(AeroError, match="^controls.ail.mode"):
        check_controls([_surf()], 5.0, full_span=False)


def test_hinge_table_constant_equals_constant_hinge():
    # a table holding the same fraction everywhere is the same surface (definition)
    st = trapezoid(8.0, 0.5)
    a = ControlSurface("f", "flap", 0.5, 3.0, 0.7)
    b = ControlSurface("f", "flap", 0.5, 3.0, 0.7, hinge_table=((0.0, 0.7), (5.0, 0.7)))
    lat = build_lattice(st, n_span=12, n_chord=10, controls=[a])
    ca, cb = ControlModel(AeroModel(lat), [a]), None
    cb = ControlModel(ca.model, [b])
    assert ca.coefficients(2.0, {"f": 10.0}) == cb.coefficients(2.0, {"f": 10.0})
    with pytest.raises(AeroError, match="^controls.f.hinge_fraction"):
        check_controls([ControlSurface("f", "flap", 0.5, 3.0, 0.7,
                                       hinge_table=((0.0, 0.7), (5.0, 1.0)))], 5.0)
