"""Design rules of 14 CFR Part 23 as it stood before the 2017 rewrite (values from memory, see
docs/methods_loads.md): 23.335 design speeds, 23.337 limit maneuvering load factors, 23.333
envelope shape and gust velocities, 23.341 gust load factors.

The rule formulas use pounds, feet and knots; they are implemented here in SI with the exact
unit factors of :mod:`geomload.units`. All speeds are equivalent airspeeds (EAS, m/s).
"""

from __future__ import annotations

import math

from geomload.aero.atmosphere import RHO0  # ISA sea level, p0 / (R T0) = 1.2250 kg/m^3
from geomload.config.schema import CATEGORIES, FlightEnvelopeSpec
from geomload.errors import CaseError
from geomload.units import FOOT, G0, KNOT, POUND as LB, PSF

from .records import DesignSpeeds

def _category(category: str) -> str:
    if category not in CATEGORIES:
        raise CaseError(f"envelope.category: unknown category {category!r} "
                        f"(use {', '.join(CATEGORIES)})")
    return category


def limit_load_factors(category: str, design_mass_kg: float, n_pos=None, n_neg=None) -> tuple:
    """(n_pos, n_neg) limit maneuvering load factors, 14 CFR 23.337 (pre-2017).

    normal: 2.1 + 24000/(W + 10000), W the design maximum take-off weight in lb, need not
    exceed 3.8; utility 4.4; acrobatic 6.0; negative 0.4 x positive (0.5 acrobatic).
    custom: the given n_pos (> 0) and n_neg (< 0).
    """
    category = _category(category)
    if design_mass_kg <= 0:
        raise CaseError(f"aircraft.gross_mass_kg: must be > 0, got {design_mass_kg:g}")
    if category == "custom":
        if n_pos is None or n_pos <= 0:
            raise CaseError("envelope.n_pos: required for category 'custom' and must be > 0")
        if n_neg is None or n_neg >= 0:
            raise CaseError("envelope.n_neg: required for category 'custom' and must be < 0")
        return float(n_pos), float(n_neg)
    w_lb = design_mass_kg / LB
    n = {"normal": min(2.1 + 24000.0 / (w_lb + 10000.0), 3.8), "utility": 4.4, "acrobatic": 6.0}[category]
    return n, -(0.5 if category == "acrobatic" else 0.4) * n


def negative_factor_at_dive(category: str) -> float:
    """Negative limit at V_D, 23.333(b): 0 for normal (and custom), -1 for utility/acrobatic."""
    return -1.0 if _category(category) in ("utility", "acrobatic") else 0.0


def _wing_loading_factor(ws_psf: float, at_20: float, at_100: float) -> float:
    # 23.335: above W/S = 20 psf the factor falls linearly to its value at 100 psf (from memory)
    t = min(max((ws_psf - 20.0) / 80.0, 0.0), 1.0)
    return at_20 + t * (at_100 - at_20)


def minimum_design_speeds(category: str, wing_loading_N_m2: float) -> tuple:
    """(V_C min, V_D min), EAS m/s, 14 CFR 23.335(a)(b) (pre-2017); (None, None) for custom.

    V_C >= 33 sqrt(W/S) kt (36 acrobatic), W/S in lbf/ft^2; V_D >= 1.40 / 1.50 / 1.55 V_C min
    (normal / utility / acrobatic). Above 20 psf the factors fall linearly to 28.6 and 1.35
    at 100 psf.
    """
    category = _category(category)
    if category == "custom":
        return None, None
    ws = wing_loading_N_m2 / PSF
    kc = _wing_loading_factor(ws, 36.0 if category == "acrobatic" else 33.0, 28.6)
    kd = _wing_loading_factor(ws, {"normal": 1.40, "utility": 1.50, "acrobatic": 1.55}[category], 1.35)
    vc = kc * math.sqrt(ws) * KNOT
    return vc, kd * vc


def stall_speed(mass_kg: float, area_m2: float, cl_max: float, g: float = G0) -> float:
    """1-g stall speed, EAS m/s: sqrt(2 m g / (rho0 S CLmax))."""
    return math.sqrt(2.0 * mass_kg * g / (RHO0 * area_m2 * cl_max))


def rule_gust_velocities(altitude_m: float) -> tuple:
    """(U_de at V_C, U_de at V_D) in m/s, 23.333(c): 50 and 25 ft/s up to 20,000 ft, falling
    linearly to 25 and 12.5 ft/s at 50,000 ft (held constant above; from memory)."""
    t = min(max((altitude_m / FOOT - 20000.0) / 30000.0, 0.0), 1.0)
    return (50.0 - 25.0 * t) * FOOT, (25.0 - 12.5 * t) * FOOT


def gust_alleviation(wing_loading_N_m2, rho, mean_chord_m, lift_slope_per_rad, g=G0) -> tuple:
    """(Kg, mu), 23.341: mu = 2 (W/S) / (rho c a g), Kg = 0.88 mu / (5.3 + mu).

    rho: density at altitude (kg/m^3); c: mean geometric chord S/b (m); a: lift slope (1/rad).
    """
    mu = 2.0 * wing_loading_N_m2 / (rho * mean_chord_m * lift_slope_per_rad * g)
    return 0.88 * mu / (5.3 + mu), mu


def gust_load_factor(v_eas, u_de, wing_loading_N_m2, rho, mean_chord_m, lift_slope_per_rad,
                     sign=+1, g=G0) -> float:
    """Gust load factor, 23.341, SI form: n = 1 +/- Kg rho0 U_de V_EAS a / (2 W/S).

    The rule's n = 1 + Kg U_de V a / (498 W/S) (U_de ft/s, V kt, W/S lbf/ft^2) is the same
    with rho0 = 0.0023769 slug/ft^3 and 1 kt = 1.6878 ft/s (2 / (rho0 1.6878) = 498.5).
    """
    kg, _ = gust_alleviation(wing_loading_N_m2, rho, mean_chord_m, lift_slope_per_rad, g)
    return 1.0 + sign * kg * RHO0 * u_de * v_eas * lift_slope_per_rad / (2.0 * wing_loading_N_m2)


def _check(spec: FlightEnvelopeSpec):
    _category(spec.category)
    for k in ("cl_max_pos", "cl_max_neg"):
        if not getattr(spec, k) or getattr(spec, k) <= 0:
            raise CaseError(f"envelope.{k}: must be > 0, got {getattr(spec, k)!r}")


def design_speeds(spec: FlightEnvelopeSpec, design_mass_kg: float, area_m2: float, g=G0) -> DesignSpeeds:
    """Design speeds given in the spec, else derived: V_C = rule minimum; V_D = max(rule
    minimum, 1.25 V_C) (23.335(b)); V_A = V_S sqrt(n_pos) at design mass, not above V_C
    (23.335(c)). Raises CaseError when V_A > V_D or V_C >= V_D."""
    _check(spec)
    n_pos, _ = limit_load_factors(spec.category, design_mass_kg, spec.n_pos, spec.n_neg)
    vc_min, vd_min = minimum_design_speeds(spec.category, design_mass_kg * g / area_m2)
    notes = []
    vc = spec.v_cruise if spec.v_cruise is not None else vc_min
    if vc is None:
        raise CaseError("envelope.v_cruise: required for category 'custom'")
    if spec.v_dive is not None:
        vd = spec.v_dive
    elif vd_min is not None:
        vd = max(vd_min, 1.25 * vc)
    else:
        raise CaseError("envelope.v_dive: required for category 'custom'")
    va_stall = min(stall_speed(design_mass_kg, area_m2, spec.cl_max_pos, g) * math.sqrt(n_pos), vc)
    va = spec.v_maneuver if spec.v_maneuver is not None else va_stall
    if vc_min is not None and vc < vc_min * (1 - 1e-9):
        notes.append(f"envelope.v_cruise {vc:.1f} m/s is below the 23.335(a) minimum {vc_min:.1f} m/s")
    if vd_min is not None and vd < max(vd_min, 1.25 * vc) * (1 - 1e-9):
        notes.append(f"envelope.v_dive {vd:.1f} m/s is below the 23.335(b) minimum "
                     f"{max(vd_min, 1.25 * vc):.1f} m/s")
    if va < va_stall * (1 - 1e-9):
        notes.append(f"envelope.v_maneuver {va:.1f} m/s is below V_S sqrt(n) = {va_stall:.1f} m/s")
    if va > vd:
        raise CaseError(f"envelope.v_maneuver: speeds out of order: V_A {va:.1f} m/s is above "
                        f"V_D {vd:.1f} m/s")
    if vc >= vd:
        raise CaseError(f"envelope.v_cruise: speeds out of order: V_C {vc:.1f} m/s is not below "
                        f"V_D {vd:.1f} m/s")
    return DesignSpeeds(vc, vd, va, vc_min, vd_min, tuple(notes))
