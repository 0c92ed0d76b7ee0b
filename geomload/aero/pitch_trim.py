"""Balancing tail load: trim the aircraft in pitch with the wing from the lattice.

Two equations (rigid aircraft in steady symmetric flight; Etkin & Reid, Dynamics of Flight,
static longitudinal equilibrium; Perkins & Hage, Airplane Performance Stability and Control,
ch. 5), forces normal to the flight path, moments about the c.g. (nose-up positive):

    L_wing(alpha) + L_tail = n W
    M_wing,cg(alpha) + M_0,fuselage - l_t L_tail = 0,   l_t = x_tail - x_cg (> 0, tail aft)

with M_wing,cg = q S c Cm_ref(alpha) + (z_ref - z_cg) X_wing - (x_ref - x_cg) L_wing in the
wing frame (x aft, z up; X_wing the small chordwise force, neglected: the c.g. is taken at the
height of the moment reference) and M_0 = q S c Cm0_fuselage. Eliminating L_tail leaves one
equation in alpha, solved by Newton. The tail load is positive UP. The tail is a point force
at its aerodynamic centre; its own pitching moment and the downwash only change the elevator
setting, not this load balance.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from geomload.errors import AeroError, CaseError

CG_MAC_MARGIN = 0.5  # c.g. more than 50 % MAC ahead of the LE or behind the TE of the MAC: error
MIN_TAIL_ARM_MAC = 0.1  # a tail closer than 0.1 MAC to the c.g. is not a tail: error


@dataclass(frozen=True)
class Tailplane:
    """Horizontal tail: area_m2 (m^2, for the tail lift coefficient) and x_ac_m, the x of its
    aerodynamic centre in the wing frame (m, aft positive)."""

    area_m2: float
    x_ac_m: float


@dataclass(frozen=True)
class PitchTrim:
    """Trimmed state: alpha_deg; wing_lift_N (both sides, normal to the flight path, "wing
    normal force"); tail_load_N (positive up); CL_wing, Cm_wing_ref; CL_tail (tail load / q S_t);
    x_cg_m; tail_arm_m; residual_force_rel = |L_w + L_t - n W| / (n W);
    residual_moment_Nm (about the c.g.)."""

    alpha_deg: float
    wing_lift_N: float
    tail_load_N: float
    CL_wing: float
    Cm_wing_ref: float
    CL_tail: float
    x_cg_m: float
    tail_arm_m: float
    residual_force_rel: float
    residual_moment_Nm: float


def check_cg(x_cg_m: float, x_le_mac_m: float, mac_m: float, key: str = "cg.x_m") -> None:
    """CaseError when the c.g. lies more than 50 % MAC outside the MAC."""
    x = float(x_cg_m)
    f = (x - float(x_le_mac_m)) / float(mac_m)
    if not math.isfinite(f) or f < -CG_MAC_MARGIN or f > 1.0 + CG_MAC_MARGIN:
        raise CaseError(f"{key}: c.g. at {x:g} m is {100 * f:.0f} % MAC; more than "
                        f"{100 * CG_MAC_MARGIN:.0f} % outside the MAC "
                        f"(LE {x_le_mac_m:g} m, MAC {mac_m:g} m)")


def trim_pitch(coefficients, s_ref: float, c_ref: float, x_ref_m: float, n: float,
               weight_N: float, q_Pa: float, x_cg_m: float, tail: Tailplane,
               cm0_fuselage: float = 0.0, x_le_mac_m=None, alpha0_deg: float = 0.0) -> PitchTrim:
    """Trim in pitch.

    coefficients : callable alpha_deg -> (CL, Cm about x_ref) of the wing, e.g.
        AeroModel.coefficients or a bound ControlModel.coefficients with flap deflections.
    s_ref, c_ref : wing reference area (m^2) and MAC (m); x_ref_m : x of the moment reference.
    n : load factor; weight_N : aircraft weight (N); q_Pa : dynamic pressure (Pa).
    x_cg_m : c.g. x (wing frame, m); tail : Tailplane; cm0_fuselage : fuselage (and nacelle)
    Cm0 on S c (nose-up positive, optional); x_le_mac_m : MAC leading edge x for the c.g.
    check (default x_ref - c_ref / 4, the MAC quarter chord reference).
    """
    q, W = float(q_Pa), float(weight_N)
    if not (q > 0.0 and math.isfinite(q)):
        raise CaseError(f"q: dynamic pressure must be > 0, got {q_Pa!r}")
    if not (W > 0.0 and math.isfinite(W)):
        raise CaseError(f"mass: weight must be > 0, got {weight_N!r}")
    xle = float(x_ref_m) - 0.25 * c_ref if x_le_mac_m is None else float(x_le_mac_m)
    check_cg(x_cg_m, xle, c_ref)
    arm = float(tail.x_ac_m) - float(x_cg_m)
    if not (math.isfinite(arm) and arm >= MIN_TAIL_ARM_MAC * c_ref):
        raise CaseError(f"tail.x_ac_m: tail arm {arm:g} m from the c.g. must be at least "
                        f"{MIN_TAIL_ARM_MAC:g} MAC aft (a tail behind the c.g.)")
    if not (float(tail.area_m2) > 0.0):
        raise CaseError(f"tail.area_m2: must be > 0, got {tail.area_m2!r}")
    qS, qSc = q * s_ref, q * s_ref * c_ref
    dx = float(x_ref_m) - float(x_cg_m)

    def parts(a):
        CL, Cm = coefficients(a)
        Lw = qS * CL
        Mcg = qSc * (Cm + cm0_fuselage) - dx * Lw
        return Lw, Mcg, CL, Cm

    nW = n * W

    def f(a):  # parts(a) inline: the Newton step below calls it three times per iteration
        CL, Cm = coefficients(a)
        Lw = qS * CL
        return Lw + (qSc * (Cm + cm0_fuselage) - dx * Lw) / arm - nW

    a, h = float(alpha0_deg), 1e-3
    for _ in range(40):
        r = f(a)
        d = (f(a + h) - f(a - h)) / (2 * h)
        if not abs(d) > 0.0:
            raise AeroError("trim: the lift does not change with alpha; cannot trim")
        step = r / d
        a -= step
        if abs(step) < 1e-11:
            break
    if abs(a) > 60.0:
        raise AeroError(f"trim: n = {n:g} needs |alpha| > 60 deg; outside linear theory")
    Lw, Mcg, CL, Cm = parts(a)
    Lt = Mcg / arm
    total = n * W
    return PitchTrim(alpha_deg=a, wing_lift_N=Lw, tail_load_N=Lt, CL_wing=CL, Cm_wing_ref=Cm,
                     CL_tail=Lt / (q * float(tail.area_m2)), x_cg_m=float(x_cg_m),
                     tail_arm_m=arm,
                     residual_force_rel=abs(Lw + Lt - total) / max(abs(total), 1e-300),
                     residual_moment_Nm=Mcg - arm * Lt)
