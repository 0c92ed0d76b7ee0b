"""Aileron and roll-rate derivatives against an independent lifting-line solution.

Sign conventions under test (see geomload.aero.roll): body-axis rolling moment positive right
(starboard) wing down; positive aileron deflection = port trailing edge down, starboard up;
so Cl_delta_a > 0, Cl_p < 0 and the steady roll rate p b / 2V > 0 for a positive deflection.
"""

import math

import numpy as np
import pytest

from helpers.aero_wings import elliptic, make_stations
from helpers.lifting_line import LiftingLine
from geomload.aero.controls import ControlSurface
from geomload.aero.lattice import build_lattice
from geomload.aero.roll import ControlModel, side_strip_loads
from geomload.aero.solve import AeroModel
from geomload.errors import AeroError
from helpers.validation import check

LL = "Prandtl lifting line, Fourier series (Anderson, Fundamentals of Aerodynamics, sec. 5.3)"
S = 5.0
Y0, Y1, HINGE = 0.6 * S, 0.95 * S, 0.75
N_SPAN, N_CHORD = 30, 16


def _chord_fn(shape, aspect):
    if shape == "rectangle":
        c = 2 * S / aspect
        return make_stations(np.array([0.0, S]), 0.0, c, S), \
            lambda y: np.full_like(np.asarray(y, float), c)
    c0 = 8.0 * S / (math.pi * aspect)
    return elliptic(aspect, S, n=120), \
        lambda y: c0 * np.sqrt(np.clip(1 - (np.asarray(y, float) / S) ** 2, 0, None))


def _lattice_tau():
    """The lattice's own 2-D flap effectiveness with the same chordwise panels: full-span flap
    of a rectangular wing of aspect ratio 40 (the section value, see test_aero_controls)."""
    st = _chord_fn("rectangle", 40.0)[0]
    fl = ControlSurface("f", "flap", 0.0, S, HINGE)
    cm = ControlModel(AeroModel(build_lattice(st, n_span=12, n_chord=N_CHORD, controls=[fl])),
                      [fl])
    return -cm.alpha_for_cl(0.0, {"f": 1.0})


@pytest.mark.parametrize("shape, aspect", [("rectangle", 40.0), ("elliptic", 30.0)])
def test_roll_derivatives_vs_lifting_line(shape, aspect):
    # Lifting line is the high-aspect-ratio limit of the lifting surface; the rolling mode has
    # half the effective aspect ratio, so lifting surface and line differ by ~3 % at A = 30-40
    # (5-10 % at A = 8-10). The aileron section effectiveness is taken from the lattice's own
    # full-span flap (checked against Glauert in test_aero_controls), so this compares the
    # spanwise part; 5 % allowed.
    st, chord = _chord_fn(shape, aspect)
    ail = ControlSurface("ail", "aileron", Y0, Y1, HINGE, mode="antisymmetric")
    lat = build_lattice(st, n_span=N_SPAN, n_chord=N_CHORD, full_span=True, controls=[ail])
    cm = ControlModel(AeroModel(lat), [ail])
    cld, clp = cm.roll_derivatives("ail")
    tau = _lattice_tau()
    ll = LiftingLine(2 * S, chord, n=121)
    inside = lambda y: (np.abs(y) >= Y0) & (np.abs(y) <= Y1)  # noqa: E731
    # positive deflection: port TE down (alpha_L0 falls by tau delta), starboard TE up
    a_d = ll.solve(lambda y: np.where(inside(y), tau * np.where(y < 0, 1.0, -1.0), 0.0))
    a_p = ll.solve(lambda y: 2.0 * np.asarray(y) / (2 * S))  # up-wash p y / V per unit pb/2V
    check(LL, f"Cl_delta_a (1/rad), {shape} A = {aspect:g}, aileron 0.6-0.95 s, 25 % c",
          ll.Cl_roll(a_d), cld, rel=0.05)
    check(LL, f"Cl_p (per unit pb/2V), {shape} A = {aspect:g}", ll.Cl_roll(a_p), clp, rel=0.05)
    assert cld > 0 and clp < 0


def test_lifting_line_elliptic_roll_damping_closed_form():
    # lifting line, elliptic wing: Cl_p = -a0 A / (8 (A + 4))... with a0 = 2 pi this is
    # -pi A / (4 (A + 4)) (Etkin & Reid, Dynamics of Flight, strip/lifting-line roll damping,
    # from memory): checks the reference solver itself
    for A in (6.0, 10.0):
        _, chord = _chord_fn("elliptic", A)
        ll = LiftingLine(2 * S, chord, n=121)
        clp = ll.Cl_roll(ll.solve(lambda y: 2.0 * np.asarray(y) / (2 * S)))
        check("lifting line, elliptic wing closed form (from memory)",
              f"Cl_p, elliptic A = {A:g}", -math.pi * A / (4 * (A + 4)), clp, rel=0.005)


@pytest.fixture(scope="module")
def tapered():
    st = make_stations(np.array([0.0, S]), 0.0, [1.6, 0.8], S, twist_deg=[0.0, -2.0],
                       camber="2412")
    ail = ControlSurface("ail", "aileron", 3.2, 4.7, 0.72, mode="antisymmetric",
                         delta_min_deg=-25, delta_max_deg=25)
    flap = ControlSurface("flap", "flap", 0.4, 3.2, 0.7, delta_max_deg=40)
    lat = build_lattice(st, n_span=20, n_chord=10, full_span=True, controls=[ail, flap])
    return ControlModel(AeroModel(lat), [ail, flap])


def test_airload_rolling_moment_equals_aileron_plus_damping(tapered):
    # linear superposition (common practice, no source): the rolling moment of the two sides'
    # strip lift equals Cl_delta delta + Cl_p p at a state off the steady roll, within 1 %
    sr = tapered.steady_roll("ail", 15.0, alpha_deg=4.0)
    assert sr.pb_2V > 0
    check("linear superposition (common practice, no source)",
          "steady roll: aileron + damping moments (-)", 0.0, sr.Cl_aileron + sr.Cl_damping,
          abs=1e-9)
    p = 0.4 * sr.pb_2V
    sol = tapered.solve(4.0, {"ail": 15.0}, p)
    expected = sr.Cl_delta_per_rad * math.radians(15.0) + sr.Cl_p * p
    check("linear superposition (common practice, no source)",
          "Cl of the two sides' airloads vs Cl_delta delta + Cl_p p (-)", expected,
          sol.Cl_airload, rel=0.01)
    # per-side loads: starboard (aileron up) carries less lift than port
    stb, port = side_strip_loads(tapered, 4.0, {"ail": 15.0}, p)
    lift = lambda s: float(np.sum(s.lift_per_q * s.width_m))  # noqa: E731
    assert lift(stb) < lift(port) and np.all(np.diff(stb.y_m) > 0)
    # aileron and roll are antisymmetric: wing CL unchanged to first order (the quadratic
    # near-field force term leaves ~0.1 %)
    base = tapered.solve(4.0).CL
    check("antisymmetry (common practice, no source)", "CL change from aileron and roll (-)",
          base, sol.CL, rel=0.005)


def test_rolling_moment_signs(tapered):
    # body axes (Etkin & Reid): right wing down positive; port TE down lifts the port wing
    cld, clp = tapered.roll_derivatives("ail")
    assert cld > 0 and clp < 0
    with pytest.raises(AeroError, match="^deflection: no control surface named 'rudder'"):
        tapered.solve(0.0, {"rudder": 3.0})
    with pytest.raises(AeroError, match="^deflection.ail: 30 deg is outside"):
        tapered.solve(0.0, {"ail": 30.0})


def test_quadratic_forms_equal_the_panel_force_sums(tapered):
    # algebraic identity (the forces are quadratic in the basis weights): the trim's and the
    # steady roll's coefficients from the K x K forms equal the sums over the panel forces
    a, defl, p = 5.0, {"ail": 12.0, "flap": 20.0}, 0.07
    sol = tapered.solve(a, defl, p)
    d = {k: math.radians(v) for k, v in defl.items()}
    assert tapered._CL(math.radians(a), d, p) == pytest.approx(sol.CL, rel=1e-12)
    assert tapered._cl_roll(math.radians(a), d, p) == pytest.approx(sol.Cl_roll, rel=1e-12)
    F = tapered._forces(math.radians(a), d, p)[1]
    assert tapered._cl_roll(math.radians(a), d, p) == pytest.approx(tapered._rolling(F),
                                                                    rel=1e-12)
    CL, Cm = tapered.coefficients(a, defl)
    ref = tapered.solve(a, defl)
    assert (CL, Cm) == pytest.approx((ref.CL, ref.Cm), rel=1e-12)
