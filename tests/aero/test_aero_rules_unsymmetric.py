"""Unsymmetric and flaps-down case descriptions (14 CFR part 23, pre-2017, from memory)."""

import math

import numpy as np
import pytest

from helpers.aero_wings import make_stations
from geomload.aero.controls import ControlSurface
from geomload.aero.lattice import build_lattice
from geomload.aero.roll import ControlModel
from geomload.aero.solve import AeroModel
from geomload.errors import CaseError
from geomload.loads.beam import integrate_loads
from geomload.loads.rules_unsymmetric import aileron_deflections, aileron_torsion_increment, \
    flap_cases, flap_speed_minimum, lattice_rolling_cases, lattice_state, \
    simplified_rolling_cases, \
    simplified_side_airloads
from helpers.validation import check

R349 = "14 CFR 23.349(a) pre-2017 (from memory)"
S = 5.0


@pytest.fixture(scope="module")
def wing():
    st = make_stations(np.array([0.0, S]), 0.0, [1.6, 0.9], S, twist_deg=[0.0, -2.0],
                       camber="2412")
    ail = ControlSurface("ail", "aileron", 3.2, 4.8, 0.75, mode="antisymmetric")
    flap = ControlSurface("flap", "flap", 0.3, 3.2, 0.75, delta_max_deg=30.0)
    lat = build_lattice(st, n_span=20, n_chord=12, full_span=True, controls=[ail, flap])
    return ControlModel(AeroModel(lat), [ail, flap])


@pytest.mark.parametrize("category, other", [("normal", 0.75), ("utility", 0.75),
                                             ("commuter", 0.75), ("acrobatic", 0.60)])
def test_simplified_rolling_root_bending_ratio(wing, category, other):
    sol = wing.solve(wing.alpha_for_cl(0.9))
    q = 3000.0
    lw = q * sol.starboard.lift_per_q
    y = sol.starboard.y_m
    kw = dict(v_f_neg=50.0, n_neg=-3.0) if category == "acrobatic" else {}
    cases = simplified_rolling_cases(category, 55.0, 3.8 if category != "acrobatic" else 6.0,
                                     **kw)
    assert {c.name for c in cases} >= {"roll_simplified_A_starboard", "roll_simplified_A_port"}
    for case in cases:
        ls, lp = simplified_side_airloads(lw, case)
        zeros = np.zeros_like(y)
        bs = integrate_loads(y, zeros, zeros, ls).bending_Nm[0]
        bp = integrate_loads(y, zeros, zeros, lp).bending_Nm[0]
        low, high = sorted((bs, bp))
        check(R349, f"airload root bending, less / more loaded side, {category}", other,
              low / high, rel=1e-3)


def test_aileron_deflections_give_the_rule_roll_rates(wing):
    # 23.455(a)(2) (pre-2017, from memory): the V_C deflection rolls as fast as full deflection
    # at V_A; V_D a third of that. p = (pb/2V) 2 V / b from the lattice's steady roll.
    va, vc, vd, dmax = 50.0, 70.0, 95.0, 18.0
    defl = aileron_deflections(dmax, va, vc, vd)
    p = {k: wing.steady_roll("ail", d, alpha_deg=2.0).pb_2V * 2 * v / (2 * S)
         for k, (v, d) in defl.items()}
    check("14 CFR 23.455(a)(2)(ii) (from memory)", "roll rate at V_C / at V_A", 1.0,
          p["V_C"] / p["V_A"], rel=0.005)
    check("14 CFR 23.455(a)(2)(iii) (from memory)", "roll rate at V_D / at V_A", 1.0 / 3.0,
          p["V_D"] / p["V_A"], rel=0.005)
    cases = lattice_rolling_cases("ail", dmax, va, vc, vd, n_pos=3.8)
    assert len(cases) == 6
    for c in cases:
        check(R349 + " (a)(2)", f"load factor of {c.name}", 3.8 * 2 / 3, c.load_factor,
              rel=1e-12)


def test_aileron_torsion_increment_vs_lattice_and_thin_airfoil(wing):
    # section moment coefficient change over the aileron span per degree of down aileron
    # (starboard aileron TE down = negative antisymmetric deflection)
    a = wing.alpha_for_cl(0.5)
    base, up = wing.solve(a), wing.solve(a, {"ail": -5.0})
    s = base.starboard
    inside = (s.y_m > 3.4) & (s.y_m < 4.6)
    dcm = np.mean((up.starboard.moment_per_q - s.moment_per_q)[inside]
                  / s.chord_m[inside] ** 2) / 5.0
    # thin-airfoil theory (Glauert; Abbott & von Doenhoff sec. 8.3): dcm_c/4/d delta =
    # -sin(th)(1 - cos(th))/2 per rad, cos th = 1 - 2 x_h / c; hinge at 0.75 c
    th = math.acos(1 - 1.5)
    glauert = -0.5 * math.sin(th) * (1 - math.cos(th)) * math.pi / 180
    check("thin-airfoil theory, plain flap (Glauert)",
          "dcm_c/4 per deg of down aileron over the aileron span", glauert, dcm, rel=0.15)
    # 23.349's simplified increment -0.01 per deg (from memory) as a cross-check (the rule is a
    # round value for typical ailerons; 25 % allowed)
    dm = aileron_torsion_increment(s.y_m, s.chord_m, 1.0, 3.2, 4.8, 1.0)
    rule = np.mean(dm[inside] / s.chord_m[inside] ** 2)
    check(R349 + " (a)(2) torsion increment", "rule delta cm per deg vs lattice", rule, dcm,
          rel=0.25)


def test_flap_cases_gust_formula_in_rule_units():
    # 23.341(c) (pre-2017, from memory) in its own units: n = 1 + Kg U V a / (498 W/S),
    # U ft/s, V kt, W/S lbf/ft^2; mu = 2 (W/S) / (rho c a g) in slug, ft
    ws, c, a, vs, vsf = 620.0, 1.35, 5.1, 31.0, 26.0
    cases, warns = flap_cases("flap", 30.0, vs, vsf, ws, 1.225, c, a)
    vf = max(1.4 * vs, 1.8 * vsf)
    check("14 CFR 23.345(b) (from memory)", "V_F minimum (m/s)", vf, flap_speed_minimum(vs, vsf),
          rel=1e-12)
    assert "23.345(b) minimum" in warns[0]
    ws_psf = ws / 47.880259
    mu = 2 * ws_psf / (0.0023769 * (c / 0.3048) * a * 32.174)
    kg = 0.88 * mu / (5.3 + mu)
    n_up = 1 + kg * 25.0 * (vf / 0.514444) * a / (498.0 * ws_psf)
    by = {cs.name: cs for cs in cases}
    check("14 CFR 23.341(c) gust formula, rule units (from memory)", "flaps gust n up",
          n_up, by["flaps_gust_up"].load_factor, rel=2e-3)
    check("14 CFR 23.345(a)(1) (from memory)", "flaps maneuver n", 2.0,
          by["flaps_maneuver"].load_factor, rel=1e-12)
    assert by["flaps_gust_down"].load_factor < 1.0
    with pytest.raises(CaseError, match="^flaps.v_f: .* below the 23.345"):
        flap_cases("flap", 30.0, vs, vsf, ws, 1.225, c, a, v_f=0.9 * vf)


def test_flapped_wing_loads_inboard(wing):
    # flaps down at the same CL move load inboard (common practice, no source)
    clean = wing.solve(wing.alpha_for_cl(1.0))
    fl = wing.solve(wing.alpha_for_cl(1.0, {"flap": 20.0}), {"flap": 20.0})
    root = lambda s: float(np.sum(s.lift_per_q * s.width_m * s.y_m))  # noqa: E731
    assert root(fl.starboard) < root(clean.starboard)
    check("flapped wing CL (definition)", "CL with flap at the trimmed alpha", 1.0, fl.CL,
          rel=1e-9)


def test_bad_category():
    with pytest.raises(CaseError, match="^category: expected one of"):
        simplified_rolling_cases("glider", 50.0, 3.8)


def test_lattice_state_of_rolling_and_flap_cases(wing):
    q, W, n_pos = 2500.0, 9000.0, 3.8
    cases = lattice_rolling_cases("ail", 15.0, 50.0, 70.0, 95.0, n_pos,
                                  states=("steady", "initial"))
    right = next(c for c in cases if c.name == "roll_V_A_right")
    init = next(c for c in cases if c.name == "roll_V_A_right_initial")
    lift = right.load_factor * W
    st = lattice_state(wing, right, q, lift)
    # the state carries the required lift (definition) and rolls right at steady state
    check("definition: wing lift = CL q S", "CL of the steady-roll state", lift / (q *
          wing.lattice.s_ref), st.solution.CL, rel=1e-9)
    assert st.pb_2V > 0 and abs(st.solution.Cl_roll) < 1e-9
    s0 = lattice_state(wing, init, q, lift)
    assert s0.pb_2V == 0 and s0.solution.Cl_roll > 0
    # the initial state (no damping yet) loads the port (down-aileron) wing more than steady
    rb = lambda s: float(np.sum(s.lift_per_q * s.width_m * s.y_m))  # noqa: E731
    assert rb(s0.solution.port) > rb(st.solution.port)
    fcase = flap_cases("flap", 20.0, 30.0, 25.0, 600.0, 1.225, 1.3, 5.0)[0][0]
    fs = lattice_state(wing, fcase, q, 2.0 * W)
    check("definition: wing lift = CL q S", "CL of the flaps-down state",
          2.0 * W / (q * wing.lattice.s_ref), fs.solution.CL, rel=1e-9)
