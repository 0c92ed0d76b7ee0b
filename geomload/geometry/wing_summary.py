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


FUSED_KIND = "aircraft (one fused shell)"


def found_in_file(wing) -> dict:
    """What the reader found in the file and took each body to be, for `inspect`: kind (one
    phrase: "whole aircraft, one fused shell", "two mirror-image wing halves", "N bodies",
    "full wing", "half wing", "exposed half wing"), half (the side analysed: "starboard",
    "port" mirrored onto the starboard frame, or "both" for a full wing), the gross and exposed
    planform (m, m^2), the fuselage side (m or None), every body (index, kind, text) and the
    tailplane's planform (or None)."""
    frame, bodies = wing.frame, tuple(wing.bodies)
    kinds = [b.kind for b in bodies]
    y_root = float(getattr(frame, "y_root", 0.0) or 0.0)
    if FUSED_KIND in kinds:
        kind = "whole aircraft, one fused shell"
        if len(bodies) > 1:
            kind += f", beside {len(bodies) - 1} separate bod{'ies' if len(bodies) > 2 else 'y'}"
    elif "wing (other half)" in kinds:
        kind = "two mirror-image wing halves"
    elif len(bodies) > 1:
        kind = f"{len(bodies)} bodies"
    elif frame.full_span:
        kind = "full wing"
    else:
        kind = "exposed half wing" if y_root > 0.0 else "half wing"
    half = "both" if frame.full_span else ("port" if frame.mirrored else "starboard")
    tp = wing.tailplane
    out = gross_and_exposed(wing)
    out.update(kind=kind, half=half,
               bodies=[{"index": int(b.index), "kind": b.kind, "text": b.text} for b in bodies],
               tailplane=None if tp is None else {"area_m2": float(tp.area),
                                                  "span_m": float(tp.span),
                                                  "x_qc_mac_m": float(tp.x_qc_mac)})
    return out


def frame_side_text(wing):
    """The phrase for the frame line of `inspect` when the file held more than one wing half
    (a fused aircraft, mirror-image halves), else None (the frame's own half/full phrase)."""
    f = found_in_file(wing)
    if f["kind"].startswith("whole aircraft") or f["kind"].startswith("two mirror"):
        return f"{f['kind']}: the {f['half']} half analysed"
    return None


def found_lines(wing) -> list:
    """Console lines for `inspect`: what was found and what each body was taken to be (empty
    for a plain one-body wing on the plane of symmetry)."""
    f = found_in_file(wing)
    if f["kind"] in ("half wing", "full wing") and not f["bodies"]:
        return []
    g, e = f["gross"], f["exposed"]
    lines = [f"Found: {f['kind']}; the {f['half']} wing half analysed"
             + (" (mirrored onto the starboard wing frame)" if f["half"] == "port" else "")]
    if f["y_root_m"] > 0.0:
        lines.append(f"  exposed wing root at y = {f['y_root_m']:.4f} m, carried through to the "
                     "plane of symmetry y = 0 by extending the leading and trailing edges")
    if f["fuselage_side_y_m"] is not None:
        lines.append(f"  fuselage side at y = {f['fuselage_side_y_m']:.4f} m")
    lines.append(f"  gross planform: S = {g['area_m2']:.4f} m^2, b = {g['span_m']:.4f} m; "
                 f"exposed: S = {e['area_m2']:.4f} m^2, b = {e['span_m']:.4f} m")
    for b in f["bodies"]:
        lines.append(f"  body {b['index']}: {b['kind']}: {b['text']}")
    if f["tailplane"] is not None:
        t = f["tailplane"]
        lines.append(f"  tailplane planform (gross): S = {t['area_m2']:.4f} m^2, "
                     f"b = {t['span_m']:.4f} m, MAC quarter chord at x = {t['x_qc_mac_m']:.4f} m")
    return lines
