"""The V-n diagram of the flight envelope (14 CFR 23.333, 23.335, 23.337, 23.341) and its
critical points, turned into load cases.
"""

from __future__ import annotations

import math
from typing import Callable, Optional, Sequence, Union

import numpy as np

from geomload.aero.atmosphere import RHO0, density_and_sound
from geomload.config.schema import FlightEnvelopeSpec, LoadCase
from geomload.errors import CaseError, InputError
from geomload.units import G0

from .records import FlightPoint, GustPoint, VnDiagram
from .rules_part23 import (design_speeds, gust_alleviation, gust_load_factor, limit_load_factors,
                           negative_factor_at_dive, rule_gust_velocities, stall_speed)

def _slope(lift_slope, mach):
    a = float(lift_slope(mach)) if callable(lift_slope) else float(lift_slope)
    if not a > 0:
        raise InputError(f"envelope: lift slope must be > 0 per rad, got {a!r}")
    return a


def vn_diagram(spec: FlightEnvelopeSpec, design_mass_kg: float, area_m2: float, mean_chord_m: float,
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
    if spec.category == "custom" and spec.n_neg_dive is not None:
        n_dive = float(spec.n_neg_dive)
    rho, a_sound = (atmosphere or density_and_sound)(altitude_m)
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
        gusts.append(GustPoint(kg, mu, a, up, down))

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
                     sp, gusts[0], gusts[1], curves, corners, sp.notes + gust_notes)


def critical_points(spec: FlightEnvelopeSpec, design_mass_kg: float, area_m2: float, mean_chord_m: float,
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


def flight_envelope_cases(case, area_m2: float, mean_chord_m: float, lift_slope,
                          atmosphere=None) -> tuple:
    """The flight envelope of a Case as load cases: (load_cases, diagrams, warnings).

    load_cases: a LoadCase per critical point of every mass (design and min_mass_kg) and
    altitude; diagrams: a VnDiagram per mass and altitude; warnings: one-line texts (design
    speeds or gusts below the rule, a minimum mass below the zero-fuel mass).
    """
    spec, gross = case.envelope, case.aircraft.gross_mass_kg
    pts = critical_points(spec, gross, area_m2, mean_chord_m, lift_slope, case.fuel_mass_kg,
                          atmosphere)
    notes = []
    zero_fuel = gross - case.fuel_mass_kg
    if spec.min_mass_kg is not None and spec.min_mass_kg < zero_fuel - 1e-9:
        notes.append(f"envelope.min_mass_kg {spec.min_mass_kg:g} kg is below the zero-fuel "
                     f"mass {zero_fuel:g} kg: the wing tanks are run empty and the rest is "
                     "taken as payload off the wing")
    cases = points_to_load_cases(pts, spec.lift_share, case.aircraft.cl_max, case.aircraft.cd0)
    masses = [gross] + ([spec.min_mass_kg] if spec.min_mass_kg not in (None, gross) else [])
    diagrams = tuple(vn_diagram(spec, gross, area_m2, mean_chord_m, lift_slope, m, h, atmosphere)
                     for m in masses for h in spec.altitudes_m)
    notes += list(dict.fromkeys(n for d in diagrams for n in d.notes))
    return tuple(cases), diagrams, notes
