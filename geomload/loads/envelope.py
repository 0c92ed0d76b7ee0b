"""Flight envelope: V-n maneuver and gust diagram, its critical points, envelope of loads.

Rules: 14 CFR Part 23 as it stood before the 2017 rewrite (values from memory, see
docs/methods_loads.md): 23.335 design speeds, 23.337 limit maneuvering load factors, 23.333
envelope shape, 23.341 gust load factors, 23.303 factor of safety. The rule formulas use
pounds, feet and knots; they are implemented here in SI with the exact unit factors below.
All speeds are equivalent airspeeds (EAS, m/s) unless named otherwise.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable, Optional, Sequence, Union

import numpy as np

from ..case import CATEGORIES, FOOT, EnvelopeSpec, LoadCase, default_atmosphere
from ..errors import CaseError, InputError
from ..records import SpanLoads

LB = 0.45359237  # kg per pound mass, exact
LBF = LB * 9.80665  # N per pound force, exact
PSF = LBF / FOOT**2  # N/m^2 per lbf/ft^2 (47.880...)
KNOT = 1852.0 / 3600.0  # m/s
from ..aero.atmosphere import RHO0  # noqa: E402  ISA sea level, p0 / (R T0) = 1.2250 kg/m^3
G0 = 9.80665  # m/s^2
QUANTITIES = ("shear_N", "bending_Nm", "torsion_Nm", "inplane_shear_N", "inplane_bending_Nm")


@dataclass(frozen=True)
class FlightPoint:
    """A point of the V-n diagram run as a load case: v_eas (m/s), altitude (m), n, mass (kg).
    label: the point's kind ("pos-limit-dive", ...); name adds mass and altitude."""

    name: str
    v_eas: float
    altitude: float
    n: float
    mass: float
    label: str = ""
    fuel_fraction: float = 1.0


@dataclass(frozen=True)
class DesignSpeeds:
    """Design speeds, EAS m/s: cruise, dive, maneuver; the rule minimums (None for custom)."""

    v_cruise: float
    v_dive: float
    v_maneuver: float
    v_cruise_min: Optional[float]
    v_dive_min: Optional[float]
    notes: tuple = ()


@dataclass(frozen=True)
class VnDiagram:
    """V-n diagram at one mass and altitude. Speeds EAS m/s. curves: name -> (v, n) arrays for
    plotting ("stall-pos", "stall-neg", "maneuver" closed outline, "gust-up", "gust-down").
    corners: FlightPoint per critical point; gust_*: (Kg, mu, lift slope per rad, n up, n down)."""

    category: str
    mass_kg: float
    altitude_m: float
    n_pos: float
    n_neg: float
    n_neg_dive: float
    v_stall_pos: float
    v_stall_neg: float
    speeds: DesignSpeeds
    gust_cruise: tuple
    gust_dive: tuple
    curves: dict
    corners: tuple
    notes: tuple = ()


@dataclass(frozen=True)
class Envelope:
    """Station-wise extremes over the cases. For each quantity of QUANTITIES: maximum/minimum
    (limit), max_case/min_case (governing case names), ultimate_max/ultimate_min (each case's
    ultimate_factor x limit) with ultimate_max_case/ultimate_min_case."""

    y: np.ndarray
    cases: tuple
    maximum: dict
    minimum: dict
    max_case: dict
    min_case: dict
    ultimate_max: dict
    ultimate_min: dict
    ultimate_max_case: dict = field(default_factory=dict)
    ultimate_min_case: dict = field(default_factory=dict)

    def columns(self) -> dict:
        """Ordered columns for a table: y_m, then <q>_max_<unit>, <q>_max_case, <q>_min_...,
        and the ultimate pairs (e.g. bending_max_Nm, bending_max_ult_Nm), as in envelope.csv."""
        out = {"y_m": self.y}
        for q in QUANTITIES:
            base, unit = q.rsplit("_", 1)
            out[f"{base}_max_{unit}"] = self.maximum[q]
            out[f"{base}_max_case"] = list(self.max_case[q])
            out[f"{base}_min_{unit}"] = self.minimum[q]
            out[f"{base}_min_case"] = list(self.min_case[q])
            out[f"{base}_max_ult_{unit}"] = self.ultimate_max[q]
            out[f"{base}_min_ult_{unit}"] = self.ultimate_min[q]
        return out


# ----------------------------------------------------------------------------- rule values
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


# ----------------------------------------------------------------------------- the diagram
def _check(spec: EnvelopeSpec):
    _category(spec.category)
    for k in ("cl_max_pos", "cl_max_neg"):
        if not getattr(spec, k) or getattr(spec, k) <= 0:
            raise CaseError(f"envelope.{k}: must be > 0, got {getattr(spec, k)!r}")


def design_speeds(spec: EnvelopeSpec, design_mass_kg: float, area_m2: float, g=G0) -> DesignSpeeds:
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


def _slope(lift_slope, mach):
    a = float(lift_slope(mach)) if callable(lift_slope) else float(lift_slope)
    if not a > 0:
        raise InputError(f"envelope: lift slope must be > 0 per rad, got {a!r}")
    return a


def vn_diagram(spec: EnvelopeSpec, design_mass_kg: float, area_m2: float, mean_chord_m: float,
               lift_slope: Union[float, Callable], mass_kg: Optional[float] = None,
               altitude_m: float = 0.0, atmosphere: Optional[Callable] = None,
               fuel_fraction: float = 1.0, g: float = G0) -> VnDiagram:
    """The V-n diagram of one mass and altitude (14 CFR 23.333, 23.335, 23.337, 23.341).

    area_m2: wing reference area (both sides); mean_chord_m: mean geometric chord S/b (m);
    lift_slope: wing lift slope per rad, or a callable mach -> per rad (the lattice at that
    Mach); mass_kg: flying mass (default design); atmosphere: h -> (rho, speed of sound).
    Corner points are FlightPoints whose name is their label.
    """
    mass = design_mass_kg if mass_kg is None else float(mass_kg)
    if mass > design_mass_kg * (1 + 1e-12):
        raise CaseError(f"envelope.min_mass_kg: {mass:g} kg is above the maximum "
                        f"(aircraft.gross_mass_kg = {design_mass_kg:g} kg)")
    if mass <= 0:
        raise CaseError(f"envelope.min_mass_kg: must be > 0, got {mass:g}")
    sp = design_speeds(spec, design_mass_kg, area_m2, g)
    n_pos, n_neg = limit_load_factors(spec.category, design_mass_kg, spec.n_pos, spec.n_neg)
    n_dive = negative_factor_at_dive(spec.category)
    if spec.category == "custom" and getattr(spec, "n_neg_dive", None) is not None:
        n_dive = float(spec.n_neg_dive)
    rho, a_sound = (atmosphere or default_atmosphere)(altitude_m)
    ws = mass * g / area_m2
    vs_pos = stall_speed(mass, area_m2, spec.cl_max_pos, g)
    vs_neg = stall_speed(mass, area_m2, spec.cl_max_neg, g)
    v_corner = min(vs_pos * math.sqrt(n_pos), sp.v_cruise)
    v_neg_corner = min(vs_neg * math.sqrt(-n_neg), sp.v_cruise)
    gc_rule, gd_rule = rule_gust_velocities(altitude_m)
    gc = spec.gust_cruise_m_s if spec.gust_cruise_m_s is not None else gc_rule
    gd = spec.gust_dive_m_s if spec.gust_dive_m_s is not None else gd_rule
    gust_notes = tuple(
        f"envelope.{key}: {u:.2f} m/s is below the 23.333(c) value {u_rule:.2f} m/s at "
        f"{altitude_m:g} m (accepted: set by the design team)"
        for key, u, u_rule in (("gust_cruise", gc, gc_rule), ("gust_dive", gd, gd_rule))
        if u < u_rule * (1 - 1e-9))
    gusts = []
    for v, u in ((sp.v_cruise, gc), (sp.v_dive, gd)):
        a = _slope(lift_slope, v * math.sqrt(RHO0 / rho) / a_sound)
        kg, mu = gust_alleviation(ws, rho, mean_chord_m, a, g)
        up, down = (gust_load_factor(v, u, ws, rho, mean_chord_m, a, s, g) for s in (1, -1))
        gusts.append((kg, mu, a, up, down))

    def stall_n(v, cl):
        return RHO0 * v**2 * area_m2 * cl / (2.0 * mass * g)

    vp = np.linspace(0.0, v_corner, 41)
    vn = np.linspace(0.0, v_neg_corner, 41)
    outline_v = np.concatenate([vp, [sp.v_dive, sp.v_dive, sp.v_cruise], vn[::-1]])
    outline_n = np.concatenate([np.minimum(stall_n(vp, spec.cl_max_pos), n_pos), [n_pos, n_dive, n_neg],
                                np.maximum(-stall_n(vn[::-1], spec.cl_max_neg), n_neg)])
    curves = {
        "stall-pos": (vp, stall_n(vp, spec.cl_max_pos)),
        "stall-neg": (vn, -stall_n(vn, spec.cl_max_neg)),
        "maneuver": (outline_v, outline_n),
        "gust-up": (np.array([0.0, sp.v_cruise, sp.v_dive]), np.array([1.0, gusts[0][3], gusts[1][3]])),
        "gust-down": (np.array([0.0, sp.v_cruise, sp.v_dive]), np.array([1.0, gusts[0][4], gusts[1][4]])),
    }
    # a stall corner capped at V_C is the cruise point itself, so it is listed once, as that
    pts = [("pos-stall-corner", v_corner, n_pos)] if v_corner < sp.v_cruise else []
    if spec.v_maneuver is not None and sp.v_maneuver > v_corner * (1 + 1e-9):
        pts.append(("pos-maneuver", sp.v_maneuver, n_pos))
    pts += [("pos-limit-cruise", sp.v_cruise, n_pos), ("pos-limit-dive", sp.v_dive, n_pos)]
    pts += [("neg-stall-corner", v_neg_corner, n_neg)] if v_neg_corner < sp.v_cruise else []
    pts += [("neg-limit-cruise", sp.v_cruise, n_neg),
            ("neg-limit-dive", sp.v_dive, n_dive),
            ("gust-up-cruise", sp.v_cruise, gusts[0][3]), ("gust-down-cruise", sp.v_cruise, gusts[0][4]),
            ("gust-up-dive", sp.v_dive, gusts[1][3]), ("gust-down-dive", sp.v_dive, gusts[1][4])]
    corners = tuple(FlightPoint(lab, float(v), float(altitude_m), float(n), mass, lab, fuel_fraction)
                    for lab, v, n in pts)
    return VnDiagram(spec.category, mass, float(altitude_m), n_pos, n_neg, n_dive, vs_pos, vs_neg,
                     sp, tuple(gusts[0]), tuple(gusts[1]), curves, corners, sp.notes + gust_notes)


def critical_points(spec: EnvelopeSpec, design_mass_kg: float, area_m2: float, mean_chord_m: float,
                    lift_slope, fuel_mass_kg: float = 0.0, atmosphere=None, g: float = G0) -> list:
    """Corner and gust points of the V-n diagrams at every mass (design, and min_mass_kg if
    given) and altitude, as FlightPoints named "<label>-<mass>kg-<altitude>m". Lighter masses
    take fuel out first: fuel_fraction = 1 - (design - mass) / fuel_mass_kg, clipped to 0..1.
    Coincident points (same speed, n, mass, altitude) are kept once."""
    masses = [design_mass_kg]
    if spec.min_mass_kg is not None and spec.min_mass_kg != design_mass_kg:
        masses.append(spec.min_mass_kg)
    out, seen = [], set()
    for m in masses:
        ff = 1.0 if fuel_mass_kg <= 0 else min(max(1.0 - (design_mass_kg - m) / fuel_mass_kg, 0.0), 1.0)
        for h in spec.altitudes_m:
            d = vn_diagram(spec, design_mass_kg, area_m2, mean_chord_m, lift_slope, m, h, atmosphere, ff, g)
            for p in d.corners:
                key = (round(p.v_eas, 9), round(p.n, 9), m, h)
                if key in seen:
                    continue
                seen.add(key)
                out.append(FlightPoint(f"{p.label}-{m:g}kg-{h:g}m", p.v_eas, p.altitude, p.n, p.mass,
                                       p.label, p.fuel_fraction))
    return out


def points_to_load_cases(points: Sequence[FlightPoint], lift_share: float = 1.0, cl_max=None,
                         cd0=None) -> tuple:
    """The flight points as case.LoadCase records (speed EAS) for the loads pipeline."""
    return tuple(LoadCase(p.name, p.v_eas, "EAS", p.altitude, p.n, lift_share, p.mass, cl_max, cd0,
                          p.fuel_fraction) for p in points)


# -------------------------------------------------------------------------- envelope of loads
def envelope_of(span_loads: Sequence[SpanLoads]) -> Envelope:
    """Station-wise maximum and minimum of every quantity over the cases, with the case that
    governs each; ultimate extremes from each case's own ultimate_factor. All cases must share
    the station grid. Ties go to the first case in the list."""
    span_loads = list(span_loads)
    if not span_loads:
        raise InputError("envelope_of: no load cases")
    y = span_loads[0].y
    for s in span_loads[1:]:
        if s.y.shape != y.shape or not np.allclose(s.y, y, rtol=0, atol=1e-9 * max(1.0, abs(y).max())):
            raise InputError(f"envelope_of: case {s.case!r} has a different station grid")
    names = tuple(s.case for s in span_loads)
    cols = np.arange(y.size)
    res = {k: {} for k in ("maximum", "minimum", "max_case", "min_case", "ultimate_max",
                           "ultimate_min", "ultimate_max_case", "ultimate_min_case")}
    for q in QUANTITIES:
        lim = np.array([getattr(s, q) for s in span_loads])
        ult = lim * np.array([s.ultimate_factor for s in span_loads])[:, None]
        for arr, mx, mn, cmx, cmn in ((lim, "maximum", "minimum", "max_case", "min_case"),
                                      (ult, "ultimate_max", "ultimate_min", "ultimate_max_case",
                                       "ultimate_min_case")):
            imax, imin = np.argmax(arr, axis=0), np.argmin(arr, axis=0)
            res[mx][q], res[mn][q] = arr[imax, cols], arr[imin, cols]
            res[cmx][q] = tuple(names[i] for i in imax)
            res[cmn][q] = tuple(names[i] for i in imin)
    return Envelope(y=y.copy(), cases=names, **res)
