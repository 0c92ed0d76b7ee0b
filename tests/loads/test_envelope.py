"""Flight envelope against 14 CFR Part 23 as it stood before the 2017 rewrite.

Sources (../shared/VALIDATION.md item 10; rule text values from memory): 23.337 limit
maneuvering load factors, 23.335 minimum design speeds, 23.333 gust velocities and envelope
shape, 23.341 gust load factor, 23.303 factor of safety. The second atmosphere reference is the
registry package `ambiance` (U.S. Standard Atmosphere 1976).
"""

import math

import numpy as np
import pytest
from ambiance import Atmosphere
from hypothesis import given, settings
from hypothesis import strategies as st

from geomload.config.schema import FlightEnvelopeSpec as EnvelopeSpec
from geomload.errors import CaseError
from geomload.loads.envelope import QUANTITIES, TIE_RTOL, envelope_of
from geomload.loads.rules_part23 import (design_speeds, gust_alleviation, gust_load_factor,
                                         limit_load_factors, minimum_design_speeds,
                                         rule_gust_velocities, stall_speed)
from geomload.loads.vn import critical_points, points_to_load_cases, vn_diagram
from geomload.records import SpanLoads
from geomload.units import FOOT, KNOT, PSF, POUND as LB
from helpers.validation import check

G = 9.80665


def atmosphere(h):
    a = Atmosphere(h)
    return float(a.density[0]), float(a.speed_of_sound[0])


# ------------------------------------------------------------------------- 23.337 load factors
@pytest.mark.parametrize("w_lb, expected", [
    (12500.0, 2.1 + 24000 / 22500),  # 3.1667, below the cap
    (5000.0, 2.1 + 24000 / 15000),   # 3.70
    (4000.0, 3.8),                   # formula 3.814 -> need not exceed 3.8
    (2000.0, 3.8),                   # formula 4.1 -> 3.8
])
def test_normal_category_positive_factor(w_lb, expected):
    # 23.337(a)(1): n = 2.1 + 24000/(W + 10000), W in lb, need not exceed 3.8
    n_pos, n_neg = limit_load_factors("normal", w_lb * LB)
    check("14 CFR 23.337(a)(1), from memory", f"normal category n_pos, W = {w_lb:g} lb (-)", expected,
          n_pos, rel=1e-12)
    check("14 CFR 23.337(b)(1), from memory", f"normal category n_neg, W = {w_lb:g} lb (-)",
          -0.4 * expected, n_neg, rel=1e-12)


def test_utility_acrobatic_and_custom_factors():
    # 23.337(a)(2),(3) and (b): utility 4.4 / -1.76; acrobatic 6.0 / -3.0 (0.5 x positive)
    for cat, ref in (("utility", (4.4, -1.76)), ("acrobatic", (6.0, -3.0))):
        got = limit_load_factors(cat, 1000.0)
        assert len(got) == 2
        for name, e, m in zip(("n_pos", "n_neg"), ref, got):
            check("14 CFR 23.337(a),(b), from memory", f"{cat} category {name} (-)", e, m, rel=1e-6)
    assert limit_load_factors("custom", 30.0, 5.0, -2.5) == (5.0, -2.5)
    with pytest.raises(CaseError, match="envelope.category"):
        limit_load_factors("transport", 1000.0)
    with pytest.raises(CaseError, match="envelope.n_neg"):
        limit_load_factors("custom", 30.0, 5.0, None)


# ------------------------------------------------------------------------ 23.335 design speeds
@pytest.mark.parametrize("category, vc_kt, vd_kt", [
    ("normal", 33 * 4.0, 1.40 * 33 * 4.0),      # W/S = 16 psf: 132 kt, 184.8 kt
    ("utility", 33 * 4.0, 1.50 * 33 * 4.0),     # 132 kt, 198 kt
    ("acrobatic", 36 * 4.0, 1.55 * 36 * 4.0),   # 144 kt, 223.2 kt
])
def test_minimum_design_speeds_from_wing_loading(category, vc_kt, vd_kt):
    vc, vd = minimum_design_speeds(category, 16.0 * PSF)
    src = "14 CFR 23.335(a),(b), from memory"
    check(src, f"{category} minimum V_C at W/S = 16 psf (kt)", vc_kt, vc / KNOT, rel=1e-12)
    check(src, f"{category} minimum V_D at W/S = 16 psf (kt)", vd_kt, vd / KNOT, rel=1e-12)


def test_minimum_speed_factor_reduces_above_20_psf():
    # 23.335(a)(2),(b)(3): factors fall linearly from 33 / 1.40 at 20 psf to 28.6 / 1.35 at
    # 100 psf (from memory). At 60 psf: 30.8 sqrt(60) kt and 1.375 x that.
    vc, vd = minimum_design_speeds("normal", 60.0 * PSF)
    src = "14 CFR 23.335(a)(2),(b)(3), from memory"
    check(src, "normal minimum V_C at W/S = 60 psf (kt)", 30.8 * math.sqrt(60.0), vc / KNOT, rel=1e-12)
    check(src, "normal minimum V_D / V_C at W/S = 60 psf (-)", 1.375, vd / vc, rel=1e-12)
    assert minimum_design_speeds("custom", 100.0) == (None, None)


def test_derived_design_speeds_and_maneuver_speed():
    # 23.335(c): V_A = V_S sqrt(n), need not exceed V_C; V_S from W = 1/2 rho0 V^2 S CLmax
    spec = EnvelopeSpec("utility", 1.5, 0.9)
    m, s = 1000.0, 15.0
    sp = design_speeds(spec, m, s)
    vs = math.sqrt(2 * m * G / (1.225 * s * 1.5))  # rho0 tabulated as 1.2250: agree to 1e-7
    check("W = 1/2 rho0 V^2 S CLmax", "stall speed, 1000 kg, 15 m^2, CLmax 1.5 (m/s EAS)", vs,
          stall_speed(m, s, 1.5), rel=1e-7)
    check("14 CFR 23.335(c), from memory", "V_A = V_S sqrt(n), utility, capped at V_C (m/s EAS)",
          min(vs * math.sqrt(4.4), sp.v_cruise), sp.v_maneuver, rel=1e-7)
    assert sp.v_dive >= 1.25 * sp.v_cruise  # 14 CFR 23.335(b)(1): V_D >= 1.25 V_C, from memory


# --------------------------------------------------------------------------- 23.341 gusts
def test_gust_formula_against_a_hand_worked_imperial_example():
    # Hand-worked (23.341, imperial): W = 2500 lb, S = 175 ft^2 -> W/S = 14.2857 lb/ft^2;
    # mean geometric chord c = 5.0 ft; a = 5.0 /rad; sea level rho = 0.0023769 slug/ft^3;
    # g = 32.174 ft/s^2.
    #   mu = 2 (W/S) / (rho c a g) = 28.5714 / (0.0023769 * 5 * 5 * 32.174) = 14.944
    #   Kg = 0.88 mu / (5.3 + mu) = 13.151 / 20.244 = 0.6496
    #   at V_C = 140 kt, U_de = 50 ft/s: dn = Kg U V a / (498 W/S)
    #        = 0.6496 * 50 * 140 * 5 / (498 * 14.2857) = 22736 / 7114.3 = 3.196 -> n = 4.196
    ws = 14.2857142857 * PSF
    rho = 0.0023769 * 515.378818  # slug/ft^3 -> kg/m^3 (1 slug/ft^3 = 515.3788 kg/m^3)
    c, a = 5.0 * FOOT, 5.0
    kg, mu = gust_alleviation(ws, rho, c, a)
    src = "14 CFR 23.341, hand-worked imperial example"
    check(src, "gust mass ratio mu, W/S = 14.29 psf (-)", 14.944, mu, rel=1e-3)
    check(src, "gust alleviation factor Kg (-)", 0.6496, kg, rel=1e-3)
    n = gust_load_factor(140 * KNOT, 50 * FOOT, ws, rho, c, a)
    check(src, "gust load factor at 140 kt, 50 ft/s (-)", 4.196, n, rel=1e-3)
    # the rule's 498 is 2 / (rho0 * 1.6878 ft/s per kt) = 498.5 rounded, so the SI increment
    # dn agrees with the imperial formula to 0.11 %
    for v_kt, u_fps in ((140.0, 50.0), (196.0, 25.0), (90.0, 50.0)):
        dn_imperial = kg * u_fps * v_kt * a / (498.0 * 14.2857142857)
        up = gust_load_factor(v_kt * KNOT, u_fps * FOOT, ws, rho, c, a)
        down = gust_load_factor(v_kt * KNOT, u_fps * FOOT, ws, rho, c, a, sign=-1)
        at = f"{v_kt:g} kt, {u_fps:g} ft/s"
        check("14 CFR 23.341 imperial formula", f"up-gust increment dn, {at} (-)", dn_imperial, up - 1,
              rel=1.5e-3)
        check("14 CFR 23.341 imperial formula", f"down-gust increment dn, {at} (-)", dn_imperial,
              1 - down, rel=1.5e-3)
        check("14 CFR 23.341 imperial formula, 498 -> 498.53",
              f"up-gust increment x 498.53/498, {at} (-)", dn_imperial, (up - 1) * 498.53 / 498.0,
              rel=1e-4)


def test_rule_gust_velocities_with_altitude():
    # 23.333(c): 50 / 25 ft/s to 20,000 ft, linearly to 25 / 12.5 ft/s at 50,000 ft
    for h_ft, ref in ((0.0, (50.0, 25.0)), (20000.0, (50.0, 25.0)), (35000.0, (37.5, 18.75))):
        got = rule_gust_velocities(h_ft * FOOT)
        assert len(got) == 2
        for name, e, m in zip(("V_C", "V_D"), ref, got):
            check("14 CFR 23.333(c)(1)(i),(ii) (pre-2017 text, read)", f"gust velocity at {name}, {h_ft:g} ft (ft/s)", e,
                  m / FOOT, rel=1e-6)


# ---------------------------------------------------------------------------- the diagram
def test_vn_diagram_corners_lie_on_the_stall_and_limit_lines():
    spec = EnvelopeSpec("normal", 1.4, 0.8)
    m, s, c = 1100.0, 16.0, 1.5
    d = vn_diagram(spec, m, s, c, 5.0, atmosphere=atmosphere)
    pts = {p.label: p for p in d.corners}
    q = 0.5 * 1.225 * pts["pos-stall-corner"].v_eas ** 2
    # the positive corner is where the stall curve q S CLmax / W reaches n_pos
    check("stall line n = q S CLmax / W", "n at the positive stall corner = n_pos (-)", d.n_pos,
          q * s * 1.4 / (m * G), rel=1e-7)  # rho0 tabulated as 1.2250
    # the corners sit on the envelope's own lines (23.333(b) shape, from memory)
    assert pts["pos-limit-dive"].v_eas == pytest.approx(d.speeds.v_dive)
    assert pts["neg-limit-cruise"].n == pytest.approx(d.n_neg)
    check("14 CFR 23.333(b)(3) (pre-2017 text, read)", "n at the negative V_D corner, normal category (-)", 0.0,
          pts["neg-limit-dive"].n)  # exact
    vstall, nstall = d.curves["stall-neg"]
    # negative stall line n = -q S CLmax_neg / W, q = 1/2 rho0 V_EAS^2 (definition of EAS)
    np.testing.assert_allclose(nstall, -0.5 * 1.225 * vstall**2 * s * 0.8 / (m * G))
    # gust points use the density at altitude: thinner air -> larger mu -> larger Kg
    # (23.341(c) mu = 2 (W/S) / (rho c a g), Kg = 0.88 mu / (5.3 + mu), c the mean geometric
    # chord; definitions read in the pre-2017 text; the n formula itself from memory)
    hi = vn_diagram(spec, m, s, c, 5.0, altitude_m=3000.0, atmosphere=atmosphere)
    assert hi.gust_cruise[1] > d.gust_cruise[1] and hi.gust_cruise[0] > d.gust_cruise[0]
    rho3000 = atmosphere(3000.0)[0]
    check("14 CFR 23.341 mass ratio, ambiance density", "gust mass ratio mu at 3000 m (-)",
          2 * m * G / s / (rho3000 * c * 5.0 * G), hi.gust_cruise[1], rel=1e-12)


def test_lift_slope_is_asked_at_the_gust_mach():
    seen = []
    spec = EnvelopeSpec("custom", 1.3, 0.8, n_pos=4.0, n_neg=-2.0, v_cruise=30.0, v_dive=42.0)
    vn_diagram(spec, 30.0, 1.2, 0.3, lambda mach: seen.append(mach) or 5.2, altitude_m=1000.0,
               atmosphere=atmosphere)
    rho, a = atmosphere(1000.0)
    # Mach = V_TAS / a with V_TAS = V_EAS sqrt(rho0 / rho) (definition of EAS); rho and a from
    # the registry package `ambiance`
    assert seen == pytest.approx([30.0 * math.sqrt(1.225 / rho) / a, 42.0 * math.sqrt(1.225 / rho) / a])


def test_critical_points_names_masses_and_fuel():
    spec = EnvelopeSpec("custom", 1.3, 0.8, n_pos=4.0, n_neg=-2.0, v_cruise=30.0, v_dive=42.0,
                        altitudes_m=(0.0, 1500.0), min_mass_kg=32.0)
    pts = critical_points(spec, 36.0, 2.0, 0.3, 5.2, fuel_mass_kg=3.0, atmosphere=atmosphere)
    names = [p.name for p in pts]
    # project behaviour (no outside source): 2 masses x 2 altitudes x 10 points, unique names
    assert len(names) == len(set(names)) == 2 * 2 * 10
    # a small wing stalls above V_C at n_pos: the stall corners are capped at V_C
    # (14 CFR 23.335(c)(2), from memory)
    # and merge with the cruise points, leaving 8 per diagram
    small = critical_points(spec, 36.0, 1.2, 0.3, 5.2, atmosphere=atmosphere)
    assert len(small) == 2 * 2 * 8 and not any("stall-corner" in p.name for p in small)
    assert "pos-limit-dive-36kg-0m" in names and "gust-down-cruise-32kg-1500m" in names
    light = [p for p in pts if p.mass == 32.0]
    assert all(p.fuel_fraction == 0.0 for p in light)  # 4 kg lighter than 3 kg of fuel
    cases = points_to_load_cases(pts)
    assert cases[0].speed_type == "EAS" and cases[0].load_factor == pts[0].n


@pytest.mark.parametrize("spec, key", [
    (EnvelopeSpec("transport", 1.3, 0.8), "envelope.category"),
    (EnvelopeSpec("normal", 0.0, 0.8), "envelope.cl_max_pos"),
    (EnvelopeSpec("normal", 1.3, -0.8), "envelope.cl_max_neg"),
    (EnvelopeSpec("custom", 1.3, 0.8, n_pos=4.0, n_neg=-2.0, v_cruise=30.0, v_dive=42.0,
                  v_maneuver=45.0), "envelope.v_maneuver"),
    (EnvelopeSpec("custom", 1.3, 0.8, n_pos=4.0, n_neg=-2.0, v_cruise=44.0, v_dive=42.0),
     "envelope.v_cruise"),
])
def test_bad_envelope_input_names_the_key(spec, key):
    with pytest.raises(CaseError, match=key.replace(".", r"\.")):
        vn_diagram(spec, 36.0, 1.2, 0.3, 5.2, atmosphere=atmosphere)


def test_mass_above_the_maximum_is_refused():
    spec = EnvelopeSpec("normal", 1.3, 0.8)
    with pytest.raises(CaseError, match="above the maximum"):
        vn_diagram(spec, 1000.0, 15.0, 1.2, 5.0, mass_kg=1200.0, atmosphere=atmosphere)


# ----------------------------------------------------------------------- envelope of loads
def _loads(name, y, rng, factor=1.5):
    v = {q: rng.normal(0, 100, y.size) for q in QUANTITIES}
    z = np.zeros(y.size)
    return SpanLoads(name, y, z, z, z, z, v["shear_N"], v["bending_Nm"], v["torsion_Nm"],
                     v["inplane_shear_N"], v["inplane_bending_Nm"], z, factor)


@settings(max_examples=40, deadline=None)
@given(n_cases=st.integers(1, 6), n_st=st.integers(2, 12), seed=st.integers(0, 2**31 - 1))
def test_envelope_equals_stationwise_extremes(n_cases, n_st, seed):
    # definition of an envelope: the station-wise max / min over the individual case outputs
    rng = np.random.default_rng(seed)
    y = np.linspace(0, 2, n_st)
    cases = [_loads(f"c{i}", y, rng, factor=rng.choice([1.5, 2.0])) for i in range(n_cases)]
    env = envelope_of(cases)
    by_name = {c.case: c for c in cases}
    for q in QUANTITIES:
        stack = np.array([getattr(c, q) for c in cases])
        np.testing.assert_array_equal(env.maximum[q], stack.max(axis=0))
        np.testing.assert_array_equal(env.minimum[q], stack.min(axis=0))
        ult = stack * np.array([c.ultimate_factor for c in cases])[:, None]
        np.testing.assert_array_equal(env.ultimate_max[q], ult.max(axis=0))
        np.testing.assert_array_equal(env.ultimate_min[q], ult.min(axis=0))
        tol = TIE_RTOL * np.abs(stack).max()
        for i in range(n_st):  # the governing case produced the extreme (to round-off)
            assert getattr(by_name[env.max_case[q][i]], q)[i] >= env.maximum[q][i] - tol
            assert getattr(by_name[env.min_case[q][i]], q)[i] <= env.minimum[q][i] + tol
    cols = env.columns()
    assert list(cols)[0] == "y_m" and "bending_max_ult_Nm" in cols and "torsion_min_case" in cols


def test_round_off_ties_name_the_first_case_and_real_differences_the_larger():
    # a mirrored pair (a left and a right roll) equal in exact arithmetic differs only by the
    # round-off of its solve: the name must not depend on that round-off (common practice for a
    # reproducible governing-case table, no source); a real difference still names the larger
    y = np.linspace(0, 2, 5)
    rng = np.random.default_rng(7)
    a = _loads("roll right", y, rng)
    bend = a.bending_Nm.copy()
    scale = np.abs(np.array([getattr(a, q) for q in QUANTITIES])).max()
    bend_b = bend + np.array([1e-12, -1e-12, 0.0, 3e-13, 1e-6]) * scale  # last: real
    b = SpanLoads("roll left", y, a.lift_N_per_m, a.drag_N_per_m, a.pitch_Nm_per_m,
                  a.inertia_N_per_m, a.shear_N, bend_b, a.torsion_Nm, a.inplane_shear_N,
                  a.inplane_bending_Nm, a.schrenk_lift_N_per_m, a.ultimate_factor)
    for first, second in ((a, b), (b, a)):
        env = envelope_of([first, second])
        names = env.max_case["bending_Nm"]
        assert names[:4] == (first.case,) * 4  # within round-off: the first in the list
        assert names[4] == "roll left"  # 1e-6 of the scale larger: the larger, either order
        np.testing.assert_array_equal(env.maximum["bending_Nm"], np.maximum(bend, bend_b))
        assert env.min_case["bending_Nm"][:4] == (first.case,) * 4


def test_envelope_refuses_mixed_grids():
    rng = np.random.default_rng(0)
    with pytest.raises(Exception, match="station grid"):
        envelope_of([_loads("a", np.linspace(0, 1, 4), rng), _loads("b", np.linspace(0, 1.1, 4), rng)])


def test_negative_factor_at_dive_per_category():
    # 14 CFR 23.333(b)(3), pre-2017 text (read): the negative line runs from its V_C value to
    # 0.0 at V_D for the normal category and to -1.0 at V_D for utility and acrobatic
    from geomload.loads.envelope import negative_factor_at_dive

    for cat, expected in (("normal", 0.0), ("utility", -1.0), ("acrobatic", -1.0)):
        check("14 CFR 23.333(b)(3) (pre-2017 text, read)", f"n at V_D, negative side, {cat} (-)",
              expected, negative_factor_at_dive(cat), abs=1e-12)


def test_custom_negative_factor_at_dive_and_low_gust_note(tmp_path):
    # a custom envelope may set its negative limit at V_D; the V-n corner takes it (definition
    # of the input); a gust below the 23.333(c)(1) value (50 ft/s = 15.24 m/s at V_C, read) is
    # accepted with a note
    from geomload.loads.envelope import vn_diagram

    spec = EnvelopeSpec(category="custom", cl_max_pos=1.3, cl_max_neg=0.7, n_pos=4.0, n_neg=-2.0,
                        n_neg_dive=-0.5, v_cruise=30.0, v_dive=42.0, gust_cruise_m_s=9.0)
    d = vn_diagram(spec, 20.0, 0.9, 0.25, 5.2)
    corner = next(p for p in d.corners if p.label == "neg-limit-dive")
    check("case input n_neg_dive (definition)", "custom n at the negative V_D corner (-)", -0.5,
          corner.n, abs=1e-12)
    assert any("gust_cruise" in n and "15.24" in n for n in d.notes)
