"""Case checks that need the wing: positions against the span, the spar inside the sections,
the flying masses against the mass the wing itself carries. Each raises CaseError naming the key.
"""

from __future__ import annotations

from geomload.errors import CaseError

from .schema import Case

SPAN_TOLERANCE_REL = 1e-6  # x semi-span: a micrometre per metre, far below drawing accuracy,
# far above the float round-off of a unit conversion (a mass at exactly the tip is valid)


def check_against_wing(case: Case, stations) -> None:
    """Raise CaseError when a spanwise position of the case lies beyond the semi-span of the
    wing's stations (a Stations record, or the semi-span in metres) by more than
    SPAN_TOLERANCE_REL."""
    semispan = float(getattr(stations, "semispan", stations))
    tol = SPAN_TOLERANCE_REL * max(semispan, 1e-3)
    span = f"the span (semi-span {semispan:.4g} m)"
    for i, p in enumerate(case.point_masses):
        if p.position[1] > semispan + tol:
            raise CaseError(f"{case.path}: point_mass[{i + 1}].y_m: {p.position[1]:g} m is outside "
                            f"{span}")
    for i, k in enumerate(case.fuel_tanks):
        if k.y_to_m > semispan + tol:
            raise CaseError(f"{case.path}: fuel_tank[{i + 1}].y_to_m: {k.y_to_m:g} m is outside "
                            f"{span}")
    table_y = case.wing_mass.table_y_m if case.wing_mass is not None else ()
    if table_y and table_y[-1] > semispan + tol:
        raise CaseError(f"{case.path}: wing_mass.table: y {table_y[-1]:g} m is "
                        f"outside {span}")
