"""The rolling condition at the instant of the sudden aileron deflection (roll rate still zero)
beside the steady roll, on the lattice.

Signs (geomload.aero.roll): rolling moment positive right (starboard) wing down; a positive
aileron deflection is port trailing edge down, starboard up.
"""

import math

import numpy as np
import pytest

from helpers.aero_wings import make_stations
from helpers.lifting_line import LiftingLine
from geomload.aero.controls import ControlSurface
from geomload.aero.lattice import build_lattice
from geomload.aero.roll import ControlModel
from geomload.aero.solve import AeroModel
from geomload.errors import CaseError
from geomload.loads.rules_unsymmetric import RollingCase, lattice_rolling_cases, lattice_state
from helpers.validation import check

LL = "Prandtl lifting line, Fourier series (Anderson, Fundamentals of Aerodynamics, sec. 5.3)"
SUPERPOSITION = "linear lattice superposition (common practice, no source)"
S = 5.0
Q = 800.0  # Pa


def _case(delta, state, name="r"):
    return RollingCase(name, "lattice", "23.349(a)(2)", "V_A", 36.0, 2.5, "ail", delta,
                       roll_state=state)


def _rectangle(aspect, n_chord, n_span=30, flap=False):
    c = 2 * S / aspect
    st = make_stations(np.array([0.0, S]), 0.0, c, S)
    surf = (ControlSurface("f", "flap", 0.0, S, 0.75) if flap else
            ControlSurface("ail", "aileron", 0.6 * S, 0.95 * S, 0.75, mode="antisymmetric"))
    lat = build_lattice(st, n_span=n_span, n_chord=n_chord, full_span=not flap,
                        controls=[surf])
    return ControlModel(AeroModel(lat), [surf]), c


def test_initial_rolling_moment_against_lifting_line():
    """Rectangular wing, A = 60, aileron 0.6-0.95 s, 25 % chord, 15 deg, at a lifting state
    (CL 0.6): the rolling moment of the initial case (no roll rate) against Prandtl's lifting
    line with the aileron's zero-lift shift over its span.

    The section effectiveness (d alpha_L0 / d delta) is the lattice's own with the same
    chordwise panels (a full-span flap's zero-lift angle, checked against Glauert's thin-airfoil
    value in test_aero_controls: 2-4 % low at 16 panels), so this compares the spanwise part;
    lifting line is the high-aspect-ratio limit of the lifting surface (measured 3.1 % apart at
    A = 60 and 3.6 % at A = 40 at zero lift), and the lattice's deflection term falls with
    cos(alpha) at the lifting state (0.5 % at 6 deg) where the linear lifting line has none.
    5 % allowed."""
    cm, c = _rectangle(60.0, 16, n_span=40)
    flap, _ = _rectangle(60.0, 16, n_span=12, flap=True)
    tau = -flap.alpha_for_cl(0.0, {"f": 1.0})
    st = lattice_state(cm, _case(15.0, "initial"), Q, 0.6 * Q * cm.lattice.s_ref)
    assert st.pb_2V == 0.0 and st.CL == pytest.approx(0.6)
    ll = LiftingLine(2 * S, lambda y: np.full_like(np.asarray(y, float), c), n=121)
    d = math.radians(15.0)
    on = lambda y: (np.abs(y) >= 0.6 * S) & (np.abs(y) <= 0.95 * S)  # noqa: E731
    # the angle of attack is symmetric and adds no rolling moment; port TE down: +tau delta
    A = ll.solve(lambda y: np.where(on(y), tau * d * np.where(np.asarray(y) < 0, 1.0, -1.0),
                                    0.0))
    expected = ll.Cl_roll(A)
    check(LL, "initial roll: Cl of the two sides' strip lift, rectangle A = 60, aileron 15 deg",
          expected, st.solution.Cl_airload, rel=0.05)
    check(LL, "initial roll: Cl of the panel forces, rectangle A = 60, aileron 15 deg",
          expected, st.solution.Cl_roll, rel=0.05)
    assert expected > 0


@pytest.fixture(scope="module")
def tapered():
    st = make_stations(np.array([0.0, S]), 0.0, [1.6, 0.8], S, twist_deg=[0.0, -2.0],
                       camber="2412")
    ail = ControlSurface("ail", "aileron", 3.2, 4.7, 0.72, mode="antisymmetric",
                         delta_min_deg=-25, delta_max_deg=25)
    lat = build_lattice(st, n_span=20, n_chord=10, full_span=True, controls=[ail])
    return ControlModel(AeroModel(lat), [ail])


def _body_axis_cl(st, model):
    """Rolling moment coefficient of the two sides' strip airloads on the body axes: the force
    normal to the x axis, lift cos a + drag sin a (the drag holds the roll rate's kinematic
    tilt of the lift), times y, port minus starboard, over S b (right wing down +)."""
    a = math.radians(st.alpha_deg)

    def m(s):
        fz = s.lift_per_q * math.cos(a) + s.drag_per_q * math.sin(a)
        return float(np.sum(fz * s.y_m * s.width_m))

    lat = model.lattice
    return (m(st.solution.port) - m(st.solution.starboard)) / (lat.s_ref * lat.b_ref)


@pytest.mark.parametrize("delta", [18.0, -12.0])
def test_initial_moment_is_the_aileron_moment_and_steady_moment_vanishes(tapered, delta):
    """Initial: Cl of the side airloads = Cl_delta delta (1 %); steady: aileron + damping = 0,
    so the side airloads' moment is near zero (1 % of the aileron moment) (Etkin & Reid,
    Dynamics of Flight, steady roll: Cl_delta delta + Cl_p pb/2V = 0)."""
    lift = 0.7 * Q * tapered.lattice.s_ref
    ini = lattice_state(tapered, _case(delta, "initial"), Q, lift)
    std = lattice_state(tapered, _case(delta, "steady"), Q, lift)
    cld, _ = tapered.roll_derivatives("ail", ini.alpha_deg, delta, 0.0)
    aileron = cld * math.radians(delta)
    check(SUPERPOSITION, f"initial roll, {delta:g} deg: Cl of the side airloads vs "
          "Cl_delta delta", aileron, _body_axis_cl(ini, tapered), rel=0.01)
    check(SUPERPOSITION, f"steady roll, {delta:g} deg: Cl of the side airloads (-)", 0.0,
          _body_axis_cl(std, tapered), abs=0.01 * abs(aileron))
    assert np.sign(std.pb_2V) == np.sign(delta) and ini.pb_2V == 0.0
    # the sudden deflection loads the down-aileron side more than the steady roll does
    # (no damping moment yet): its semispan lift's first moment is larger
    down = "port" if delta > 0 else "starboard"

    def moment(sol):
        s = getattr(sol, down)
        return float(np.sum(s.lift_per_q * s.y_m * s.width_m))

    assert moment(ini.solution) > 1.05 * moment(std.solution)


def test_lattice_rolling_cases_name_each_state():
    cases = lattice_rolling_cases("ail", 18.0, 30.0, 36.0, 50.0, 3.8,
                                  states=("steady", "initial"))
    assert len(cases) == 12
    names = {c.name: c.roll_state for c in cases}
    assert names["roll_V_A_right"] == "steady" and names["roll_V_A_right_initial"] == "initial"
    assert names["roll_V_D_left_initial"] == "initial"
    ini = [c for c in cases if c.roll_state == "initial"]
    std = [c for c in cases if c.roll_state == "steady"]
    # the same deflections, speeds and load factors in both states (23.455 / 23.349(a)(2))
    assert sorted((c.v_eas_m_s, c.aileron_deg, c.load_factor) for c in ini) == \
        sorted((c.v_eas_m_s, c.aileron_deg, c.load_factor) for c in std)
    with pytest.raises(CaseError, match="^rolling.states"):
        lattice_rolling_cases("ail", 18.0, 30.0, 36.0, 50.0, 3.8, states=("spinning",))
