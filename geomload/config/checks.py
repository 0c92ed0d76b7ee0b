"""Case checks that need the wing: positions against the span, the spar inside the sections,
the flying masses against the mass the wing itself carries. Each raises CaseError naming the key.
"""

from __future__ import annotations

import numpy as np

from geomload.errors import CaseError

from .schema import Case

SPAN_TOLERANCE_REL = 1e-6  # x semi-span: a micrometre per metre, far below drawing accuracy,
# far above the float round-off of a unit conversion (a mass at exactly the tip is valid)


def check_against_wing(case: Case, stations) -> None:
    """Raise CaseError when a spanwise position of the case lies beyond the semi-span of the
    wing's stations (a Stations record, or the semi-span in metres) by more than
    SPAN_TOLERANCE_REL."""
    if case.cad_positions:
        raise CaseError(f"{case.path}: {case.cad_positions[0].key}: given in the CAD frame but not "
                        "converted to the wing frame (geomload.config.positions.resolve_positions "
                        "must run once the wing is read)")
    semispan = float(getattr(stations, "semispan", stations))
    tol = SPAN_TOLERANCE_REL * max(semispan, 1e-3)
    span = f"the span (semi-span {semispan:.4g} m)"
    for i, p in enumerate(case.point_masses):
        if p.position[1] > semispan + tol:
            raise CaseError(f"{case.path}: {case.key(f'point_mass[{i + 1}].y')}: "
                            f"{p.position[1]:g} m is outside "
                            f"{span}")
    for i, k in enumerate(case.fuel_tanks):
        if k.y_to_m > semispan + tol:
            raise CaseError(f"{case.path}: {case.key(f'fuel_tank[{i + 1}].y_to')}: "
                            f"{k.y_to_m:g} m is outside "
                            f"{span}")
    table_y = case.wing_mass.table_y_m if case.wing_mass is not None else ()
    if table_y and table_y[-1] > semispan + tol:
        raise CaseError(f"{case.path}: wing_mass.table: y {table_y[-1]:g} m is "
                        f"outside {span}")
    if table_y and table_y[-1] < semispan - tol:
        # held constant to the tip it would move mass outboard and overstate the weight relief
        raise CaseError(f"{case.path}: wing_mass.table: it stops at y {table_y[-1]:g} m, short of "
                        f"the tip ({semispan:.4g} m); give rows from the root to the tip")
    root = float(getattr(stations, "y", [0.0])[0]) if hasattr(stations, "y") else 0.0
    if table_y and table_y[0] > root + tol:
        raise CaseError(f"{case.path}: wing_mass.table: it starts at y {table_y[0]:g} m, outboard "
                        f"of the root station ({root:.4g} m); give rows from the root to the tip")
    for r in case.spar.rib_y_m:
        if r > semispan + tol:
            raise CaseError(f"{case.path}: {case.key('spar.rib_y')}: {r:g} m is outside {span}")
    if hasattr(stations, "y"):
        check_spar_inside(case, stations)


SPAR_INSIDE_TOL = 1e-3  # x chord: a spar on the leading or trailing edge is still inside


def check_spar_inside(case: Case, stations) -> None:
    """Raise CaseError when the spar polyline ([spar] line) leaves the section (chordwise, x
    outside the leading to trailing edge) at any station."""
    line = case.spar.line
    if not line:
        return  # a chord fraction in 0..1 lies on the chord by construction
    from geomload.geometry.sparline import spar_line

    sx, _ = spar_line(stations.y, stations.x_le, stations.x_te, stations.z_le, stations.z_te,
                      None, line)
    lo = np.minimum(stations.x_le, stations.x_te) - SPAR_INSIDE_TOL * stations.chord
    hi = np.maximum(stations.x_le, stations.x_te) + SPAR_INSIDE_TOL * stations.chord
    bad = np.nonzero((sx < lo) | (sx > hi))[0]
    if bad.size:
        k = int(bad[0])
        raise CaseError(f"{case.path}: {case.key('spar.points')}: at y {stations.y[k]:.4g} m the "
                        f"spar x {sx[k]:.4g} m is outside the section (leading edge "
                        f"{stations.x_le[k]:.4g} m, trailing edge {stations.x_te[k]:.4g} m)")
