"""Unsymmetric (rolling) and flaps-down load cases as case descriptions, 14 CFR part 23.

Rule texts are the pre-2017 14 CFR part 23 (amendment 23-62 era), FROM MEMORY; check the
applicable certification basis before relying on them:

- 23.349 Rolling conditions. (a) the wing must be designed for (1) unsymmetrical wing loads:
  unless shown unrealistic, modify the symmetrical flight condition A of 23.333(d) by assuming
  100 % of the semispan wing airload acts on one side of the plane of symmetry and 75 % on the
  other (normal, utility and commuter categories), or, for the acrobatic category in conditions
  A and F, 60 % on the other; (2) the loads from the aileron deflections and speeds of 23.455
  combined with a load factor of at least two thirds of the positive maneuvering load factor;
  the effect of aileron displacement on wing torsion may be accounted for by adding
  delta_cm = -0.01 delta (delta = down-aileron deflection in degrees) to the section moment
  coefficient over the aileron span (paragraph numbering recalled loosely).
- 23.455 Ailerons. (a)(2) deflections: (i) sudden maximum displacement at V_A; (ii) at V_C
  (if above V_A) enough deflection for a roll rate not less than that of (i); (iii) at V_D
  enough for one third of that roll rate. With linear aerodynamics the steady roll rate p is
  proportional to delta V (p b / 2V = -Cl_delta delta / Cl_p), so delta_C = delta_max V_A / V_C,
  delta_D = delta_max V_A / (3 V_D).
- 23.345 High-lift devices. (a) flaps fully extended at V_F: symmetrical maneuver to n = 2.0
  and gusts of +-25 ft/s (EAS) normal to the flight path in level flight; (b) V_F not less than
  the greater of 1.4 V_S and 1.8 V_SF (V_S stall speed flaps retracted, V_SF flaps extended,
  both at the design weight).

Everything here returns frozen case descriptions; the loads come from `aero.roll` and the beam.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geomload.errors import CaseError

FT_S = 0.3048  # m/s per ft/s (exact)
ROLL_FACTOR_N = 2.0 / 3.0  # 23.349(a)(2): two thirds of the positive maneuvering load factor
FLAP_MANEUVER_N = 2.0  # 23.345(a)(1)
FLAP_GUST_FT_S = 25.0  # 23.345(a)(2), EAS
VF_OVER_VS, VF_OVER_VSF = 1.4, 1.8  # 23.345(b)
DCM_PER_DEG = -0.01  # 23.349 torsion increment per degree of down-aileron
OTHER_SIDE = {"normal": 0.75, "utility": 0.75, "commuter": 0.75, "acrobatic": 0.60}


@dataclass(frozen=True)
class RollingCase:
    """One rolling-condition case description.

    name : our label; method : "simplified" (side factors on the symmetric airload) or
    "lattice" (aileron deflection with steady roll); rule : the paragraph recalled;
    speed_label : "V_A", "V_C", "V_D"; v_eas_m_s : equivalent airspeed (m/s);
    load_factor : n of the case (-); aileron : surface name ("" for simplified);
    aileron_deg : deflection (deg, the surface's positive sense; see aero.controls);
    factor_starboard, factor_port : multipliers on the semispan airload (simplified method;
    1.0 for the lattice method).
    roll_state : lattice method: "steady" (roll rate where aileron and damping moments balance)
    or "initial" (p = 0 at the instant of the sudden deflection; the rolling acceleration's
    inertia relief is not modelled, so this is the conservative unsymmetric airload).
    """

    name: str
    method: str
    rule: str
    speed_label: str
    v_eas_m_s: float
    load_factor: float
    aileron: str = ""
    aileron_deg: float = 0.0
    factor_starboard: float = 1.0
    factor_port: float = 1.0
    roll_state: str = "steady"


@dataclass(frozen=True)
class CaseState:
    """The lattice state of a rolling or flaps-down case: alpha_deg, deflections_deg ((name, deg)
    pairs), pb_2V, CL (both sides, = wing lift / (q S)), and `solution`, the ControlledSolution
    (per-side strip loads per unit q: multiply by q for N/m, N m/m)."""

    alpha_deg: float
    deflections_deg: tuple
    pb_2V: float
    CL: float
    solution: object


@dataclass(frozen=True)
class FlapCase:
    """Flaps-down case: flap surface name and deflection (deg), V_F (m/s EAS), n, rule, kind
    ("maneuver" or "gust"), gust velocity (m/s EAS, 0 for maneuver)."""

    name: str
    rule: str
    kind: str
    flap: str
    flap_deg: float
    v_eas_m_s: float
    load_factor: float
    gust_m_s: float = 0.0


def _positive(value, key):
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise CaseError(f"{key}: expected a number, got {value!r}") from None
    if not (math.isfinite(v) and v > 0.0):
        raise CaseError(f"{key}: must be a finite number > 0, got {value!r}")
    return v


def side_factors(category: str) -> tuple:
    """(more loaded side, less loaded side) airload factors of 23.349(a)(1) for `category`."""
    c = str(category).lower()
    if c not in OTHER_SIDE:
        raise CaseError(f"category: expected one of {sorted(OTHER_SIDE)}, got {category!r}")
    return 1.0, OTHER_SIDE[c]


def simplified_rolling_cases(category: str, v_a: float, n1: float, v_f_neg=None,
                             n_neg=None) -> list:
    """23.349(a)(1) simplified cases: condition A (V_A, n1) with 100 % / 75 % (60 % acrobatic)
    airload, each side being the more loaded one in turn; acrobatic adds condition F.

    Condition F is the negative-maneuver corner of the 23.333(d) V-n diagram at the design
    cruising speed: V_C with the negative limit maneuvering load factor n3 (pre-2017 figure,
    from memory); v_f_neg, n_neg: its speed (m/s EAS) and load factor (< 0), required for the
    acrobatic category (CaseError naming them otherwise)."""
    hi, lo = side_factors(category)
    v_a, n1 = _positive(v_a, "envelope.v_maneuver"), _positive(n1, "load_factor.n_pos")
    pts = [("A", "V_A", v_a, n1)]
    if str(category).lower() == "acrobatic":
        if v_f_neg is None or n_neg is None:
            raise CaseError("rolling: acrobatic category needs condition F (speed and negative "
                            "load factor) for 23.349(a)(1)")
        nf = float(n_neg)
        if not (math.isfinite(nf) and nf < 0.0):
            raise CaseError(f"load_factor.n_neg: condition F needs a negative load factor, got "
                            f"{n_neg!r}")
        pts.append(("F", "V_C", _positive(v_f_neg, "envelope.v_cruise"), nf))
    out = []
    for label, speed, v, n in pts:
        for heavy in ("starboard", "port"):
            fs, fp = (hi, lo) if heavy == "starboard" else (lo, hi)
            out.append(RollingCase(
                name=f"roll_simplified_{label}_{heavy}", method="simplified",
                rule="14 CFR 23.349(a)(1), pre-2017, from memory", speed_label=speed,
                v_eas_m_s=v, load_factor=n, factor_starboard=fs, factor_port=fp))
    return out


def aileron_deflections(delta_max_deg: float, v_a: float, v_c: float, v_d: float) -> dict:
    """{speed label: (V, delta deg)} per 23.455(a)(2): full deflection at V_A; at V_C the same
    roll rate (delta V_A / V_C) when V_C > V_A; at V_D a third of it (delta V_A / (3 V_D))."""
    d = float(delta_max_deg)
    v_a, v_c, v_d = (_positive(v, k) for v, k in ((v_a, "envelope.v_maneuver"), (v_c, "envelope.v_cruise"),
                                                  (v_d, "envelope.v_dive")))
    out = {"V_A": (v_a, d)}
    if v_c > v_a:
        out["V_C"] = (v_c, d * v_a / v_c)
    out["V_D"] = (v_d, d * v_a / (3.0 * v_d))
    return out


def lattice_rolling_cases(aileron: str, delta_max_deg: float, v_a: float, v_c: float,
                          v_d: float, n_pos: float, states=("steady",)) -> list:
    """23.349(a)(2) with 23.455: at each speed the aileron deflection of `aileron_deflections`,
    both senses (roll to starboard and to port), at n = 2/3 n_pos, in each roll state of
    `states` ("steady" and/or "initial", see RollingCase)."""
    n = ROLL_FACTOR_N * _positive(n_pos, "load_factor.n_pos")
    for st in states:
        if st not in ("steady", "initial"):
            raise CaseError(f"rolling.states: expected 'steady' or 'initial', got {st!r}")
    out = []
    for label, (v, d) in aileron_deflections(delta_max_deg, v_a, v_c, v_d).items():
        for sense, sgn in (("right", 1.0), ("left", -1.0)):
            for st in states:
                out.append(RollingCase(
                    name=f"roll_{label}_{sense}" + ("" if st == "steady" else "_initial"),
                    method="lattice",
                    rule="14 CFR 23.349(a)(2) and 23.455(a)(2), pre-2017, from memory",
                    speed_label=label, v_eas_m_s=v, load_factor=n, aileron=aileron,
                    aileron_deg=sgn * d, roll_state=st))
    return out


def lattice_state(model, case, q_Pa: float, wing_lift_N: float) -> CaseState:
    """Lattice state of a RollingCase (method "lattice") or FlapCase on a factorised
    `aero.roll.ControlModel`: the angle of attack giving wing_lift_N (both sides, N, e.g.
    n W times the lift share or the trimmed wing lift of `aero.pitch_trim`) at q_Pa with the
    case's deflection (and, for a steady roll, the balancing roll rate, iterated twice with
    alpha because the quadratic force terms couple them weakly)."""
    q = _positive(q_Pa, "q")
    CL = float(wing_lift_N) / (q * model.lattice.s_ref)
    if isinstance(case, FlapCase):
        defl = {case.flap: case.flap_deg}
        a = model.alpha_for_cl(CL, defl)
        return CaseState(a, tuple(defl.items()), 0.0, CL, model.solve(a, defl))
    if not isinstance(case, RollingCase) or case.method != "lattice":
        raise CaseError("rolling: lattice_state needs a lattice RollingCase or a FlapCase")
    defl = {case.aileron: case.aileron_deg}
    p = 0.0
    a = model.alpha_for_cl(CL, defl)
    if case.roll_state == "steady":
        for _ in range(2):
            p = model.steady_roll(case.aileron, case.aileron_deg, alpha_deg=a).pb_2V
            a = model.alpha_for_cl(CL, defl, p)
    return CaseState(a, tuple(defl.items()), p, CL, model.solve(a, defl, p))


def simplified_side_airloads(lift_per_span, case: RollingCase) -> tuple:
    """(starboard, port) airload per span (same units) of a simplified case from the symmetric
    semispan airload `lift_per_span` (root to tip)."""
    lw = np.asarray(lift_per_span, float)
    return case.factor_starboard * lw, case.factor_port * lw


def aileron_torsion_increment(y, chord, q_pa: float, y_from: float, y_to: float,
                              delta_down_deg: float) -> np.ndarray:
    """Section pitching moment increment per span (N m / m, nose-up positive) over the aileron
    span by the 23.349 simplified rule: delta_cm = -0.01 delta (delta in deg, down aileron),
    delta_m = q c^2 delta_cm for y_from <= y <= y_to, 0 elsewhere."""
    y, c = np.asarray(y, float), np.asarray(chord, float)
    inside = (y >= y_from) & (y <= y_to)
    return np.where(inside, q_pa * c * c * DCM_PER_DEG * abs(float(delta_down_deg)), 0.0)


def flap_speed_minimum(v_s: float, v_sf: float) -> float:
    """Minimum V_F of 23.345(b): max(1.4 V_S, 1.8 V_SF) (m/s, same speed basis as the inputs)."""
    return max(VF_OVER_VS * _positive(v_s, "envelope (V_S1)"),
               VF_OVER_VSF * _positive(v_sf, "flaps.v_sf"))


def flap_cases(flap: str, flap_deg: float, v_s: float, v_sf: float, wing_loading_n_m2: float,
               rho0: float, mean_chord_m: float, lift_slope_per_rad: float, v_f=None,
               g: float = 9.80665) -> tuple:
    """23.345 flaps-down cases: maneuver n = 2.0 at V_F and +-25 ft/s gusts in level flight,
    with the 23.341 gust formula n = 1 +- Kg U V a rho0 / (2 W/S), Kg = 0.88 mu / (5.3 + mu),
    mu = 2 (W/S) / (rho0 c a g) (a: flapped-wing lift slope, 1/rad). V_F: `v_f` if given (it
    must not be below the rule minimum, else CaseError), else the minimum of 23.345(b).
    Returns (cases, warnings)."""
    vmin = flap_speed_minimum(v_s, v_sf)
    warnings = []
    if v_f is None:
        vf = vmin
        warnings.append(f"flaps.v_f: not given; using the 23.345(b) minimum "
                        f"max(1.4 V_S, 1.8 V_SF) = {vf:.4g} m/s EAS")
    else:
        vf = _positive(v_f, "flaps.v_f")
        if vf < vmin * (1 - 1e-9):
            raise CaseError(f"flaps.v_f: {vf:g} m/s is below the 23.345(b) minimum "
                            f"{vmin:.4g} m/s (max(1.4 V_S, 1.8 V_SF))")
    ws = _positive(wing_loading_n_m2, "mass.wing_loading")
    a = _positive(lift_slope_per_rad, "lift_slope")
    mu = 2.0 * ws / (_positive(rho0, "rho0") * _positive(mean_chord_m, "mean_chord") * a * g)
    kg = 0.88 * mu / (5.3 + mu)
    u = FLAP_GUST_FT_S * FT_S
    dn = kg * u * vf * a * rho0 / (2.0 * ws)
    rule = "14 CFR 23.345(a), pre-2017, from memory"
    cases = [FlapCase("flaps_maneuver", rule, "maneuver", flap, float(flap_deg), vf,
                      FLAP_MANEUVER_N),
             FlapCase("flaps_gust_up", rule, "gust", flap, float(flap_deg), vf, 1.0 + dn, u),
             FlapCase("flaps_gust_down", rule, "gust", flap, float(flap_deg), vf, 1.0 - dn, -u)]
    return cases, warnings
