"""Plain summaries of a `Wing` record for the outputs (JSON, CSV): the gross and exposed
planform and whether the span line turns enough for the arc length to be reported."""

from __future__ import annotations

import numpy as np

# The span along the quarter-chord line exceeds the projected span by more than this fraction
# on a wing whose span line turns (winglets, gull and polyhedral breaks, strong dihedral: 0.5 %
# is a constant dihedral of about 6 deg); a plain wing with a few degrees of dihedral stays under
# it (common practice, no source). Above it the station table carries the arc length s_m.
NONPLANAR_ARC_EXCESS = 0.005


def is_nonplanar(stations) -> bool:
    """True when the arc length along the span line departs from y by NONPLANAR_ARC_EXCESS of
    the semi-span or more at some station."""
    s, y = np.asarray(stations.s_m, float), np.asarray(stations.y, float)
    if s.size == 0 or not stations.semispan > 0:
        return False
    return bool(np.max(s - y) >= NONPLANAR_ARC_EXCESS * float(stations.semispan))


def gross_and_exposed(wing) -> dict:
    """Gross (carried through to y = 0) and exposed (outboard of the geometry's root) planform
    of a `Wing`, both sides, m and m^2; the span along the surface; the fuselage side station."""
    pf = wing.planform
    ea = pf.exposed_area if pf.exposed_area is not None else pf.area
    es = pf.exposed_span if pf.exposed_span is not None else pf.span
    return {"y_root_m": float(getattr(wing.frame, "y_root", 0.0) or 0.0),
            "gross": {"area_m2": float(pf.area), "span_m": float(pf.span)},
            "exposed": {"area_m2": float(ea), "span_m": float(es)},
            "span_along_surface_m": None if pf.span_surface is None else float(pf.span_surface),
            "fuselage_side_y_m": (None if wing.fuselage_side_y_m is None
                                  else float(wing.fuselage_side_y_m))}
