"""Case positions against the wing: CAD-frame positions converted to the wing frame, and every
point position checked to lie on the wing.

A case file may give a point mass, a fuel tank's ends, the spar points and the moment reference
in the CAD frame and unit (``frame = "cad"``, :mod:`geomload.config.position_keys`). The
conversion needs the wing's frame transform (``Wing.frame``: p_wing = R (p_cad - origin), both
in metres) and the CAD unit (``Wing.mesh.unit_scale_m``, metres per CAD unit), which exist only
once the geometry is read: :func:`resolve_positions` is called then, and returns a new Case with
every position in the wing frame (metres), so that nothing past it sees a CAD coordinate.

The wing frame: origin at the leading edge of the root section on the root / symmetry plane, x
aft along the root chord, y along the span (starboard positive), z up.
"""

from __future__ import annotations

import dataclasses

import numpy as np

from geomload.errors import CaseError
from geomload.messages import Message

from .checks import SPAN_TOLERANCE_REL
from .schema import Case

# A point mass (or the moment reference) more than this many local chords ahead of the leading
# edge, behind the trailing edge, or above or below the chord line, is not carried by the wing:
# nacelles, pods and boom roots sit well within it, while a position in the wrong unit (mm
# read as m: x 1000) or the wrong axes lands far outside (common practice, no source).
POSITION_MARGIN_CHORDS = 2.0


def resolve_positions(case: Case, wing) -> tuple:
    """(Case, messages): the case with its CAD-frame positions in the wing frame, checked.

    case : a Case from :func:`geomload.config.read_case_file` (its ``cad_positions`` are the
        positions to convert; the records they belong to hold placeholders until now).
    wing : the `geomload.geometry.records.Wing` of the case's geometry (frame, mesh unit,
        stations).

    A number of a CAD-frame position is in the CAD unit, a value written with its unit ("350
    mm") in that unit; both are converted to metres, then by ``wing.frame.to_wing``. A point on
    the port side of a full-wing model is taken as its starboard mirror image (the masses are
    symmetric by the case-file convention), with a note. Every point mass and the moment
    reference, in either frame, must lie on the wing: within the semi-span and within
    POSITION_MARGIN_CHORDS local chords of the section; otherwise CaseError names the key.
    Returns the new Case (``cad_positions`` empty) and a tuple of `Message` notes saying where
    each CAD position landed.
    """
    scale = float(getattr(wing.mesh, "unit_scale_m", 1.0))
    frame, st = wing.frame, wing.stations
    unit = _unit_text(wing.mesh.units, scale)
    points, tanks = list(case.point_masses), list(case.fuel_tanks)
    spar, ref = case.spar, case.moment_reference
    names, notes = dict(case.key_names), []
    for cp in case.cad_positions:
        v, u = np.asarray(cp.values, float), np.asarray(cp.with_unit, bool)
        wing_pts = np.atleast_2d(frame.to_wing(np.where(u, v, v * scale)))
        what = f"{cp.key} (frame = \"cad\", {unit})"
        kind = cp.target[0]
        if kind == "point_mass":
            q, flipped = _starboard(case, what, wing_pts[0], frame, st)
            points[cp.target[1]] = dataclasses.replace(points[cp.target[1]], position=q)
            names.update({f"{cp.key}.{c}": what for c in "xyz"})
            notes.append(_landed(what, q, flipped))
        elif kind == "fuel_tank":
            ends = [_starboard(case, what, p, frame, st, on_root=True) for p in wing_pts]
            ys = [float(q[1]) for q, _ in ends]
            if any(f for _, f in ends) and any(not f and y > _tolerance(st) for (_, f), y in
                                               zip(ends, ys)):
                _fail(case, what, "the tank's ends lie on both sides of the plane of symmetry: "
                                  "give the ends of the tank on one side (it is mirrored)")
            y_from, y_to = min(ys), max(ys)
            if not y_to > y_from:
                _fail(case, what, f"the tank's ends lie at the same wing-frame y ({y_to:.4g} m)")
            tanks[cp.target[1]] = dataclasses.replace(tanks[cp.target[1]], y_from_m=float(y_from),
                                                      y_to_m=float(y_to))
            names.update({f"{cp.key}.y_from": what, f"{cp.key}.y_to": what})
            notes.append(f"{what}: the tank spans wing-frame y {y_from:.4g} to {y_to:.4g} m")
        elif kind == "spar":
            line = _spar_line(case, what, wing_pts, frame.full_span, _tolerance(st))
            spar = dataclasses.replace(spar, chord_fraction=None, line=line)
            names["spar.points"] = what
            notes.append(f"{what}: the spar line runs from wing-frame (x, y, z) = "
                         f"{_xyz(np.array(line[0])[[1, 0, 2]])} to "
                         f"{_xyz(np.array(line[-1])[[1, 0, 2]])} m")
        elif kind == "moment_reference":
            ref = wing_pts[0].copy()
            names.update({f"moment_reference.{c}": what for c in "xyz"})
            notes.append(_landed(what, ref, False))
        else:  # a record of this module's own making only
            raise CaseError(f"{case.path}: {cp.key}: unknown position target {cp.target!r}")
    out = dataclasses.replace(case, point_masses=tuple(points), fuel_tanks=tuple(tanks),
                              spar=spar, moment_reference=ref, cad_positions=(),
                              key_names=tuple(sorted(names.items())))
    for i, p in enumerate(out.point_masses):
        _on_wing(out, lambda c, i=i: out.key(f"point_mass[{i + 1}].{c}"), p.position, st)
    if out.moment_reference is not None:  # the reference's side does not matter: its mirror
        q = np.array(out.moment_reference, float)
        q[1] = abs(q[1])
        _on_wing(out, lambda c: out.key(f"moment_reference.{c}"), q, st)
    return out, tuple(Message("note", n) for n in notes)


def _unit_text(units, scale) -> str:
    if units in ("m", "cm", "mm", "in", "ft"):
        return f"CAD unit {units}"
    return f"CAD unit = {scale:g} m"


def _xyz(p) -> str:
    return "(" + ", ".join(f"{float(c):.4g}" for c in p) + ")"


def _landed(what, q, flipped) -> str:
    side = " (its starboard mirror image: the point is on the port side)" if flipped else ""
    return f"{what}: at wing-frame (x, y, z) = {_xyz(q)} m{side}"


def _fail(case, key, msg):
    raise CaseError(f"{case.path}: {key}: {msg}")


def _tolerance(st) -> float:
    return SPAN_TOLERANCE_REL * max(float(st.semispan), 1e-3)


def _starboard(case, what, q, frame, st, on_root=False) -> tuple:
    """(point on the starboard side, mirrored?) of a CAD-frame point in wing coordinates.
    on_root: a point on the plane of symmetry is valid (a tank's inboard end), at y = 0."""
    q = np.asarray(q, float).copy()
    tol = _tolerance(st)
    if q[1] < -tol:
        if not frame.full_span:
            _fail(case, what, f"the point lies at wing-frame y {q[1]:.4g} m, inboard of the root "
                              "plane of this half wing: check the CAD coordinates and unit")
        q[1] = -q[1]
        return q, True
    if q[1] <= tol and on_root:
        q[1] = max(q[1], 0.0)
    elif q[1] <= tol:
        _fail(case, what, "the point lies on the plane of symmetry (wing-frame y = 0); a wing "
                          "item is on one side (it is mirrored to the other)")
    return q, False


def _spar_line(case, what, pts, full_span, tol) -> tuple:
    """((y, x, z), ...) of the spar points, root to tip, all on the starboard side."""
    y = pts[:, 1]
    if full_span and np.all(y <= tol):
        pts = pts * np.array([1.0, -1.0, 1.0])  # the port half of a full wing: its mirror image
        y = pts[:, 1]
    if np.any(y < -tol):
        _fail(case, what, "the points must lie on one side of the plane of symmetry (wing-frame "
                          f"y {', '.join(f'{v:.4g}' for v in y)} m): check the CAD coordinates "
                          "and unit")
    d = np.diff(y)
    if np.all(d < 0):
        pts, d = pts[::-1], -d[::-1]
    if not np.all(d > 0):
        _fail(case, what, "the points must run along the span, one side only (wing-frame y "
                          f"{', '.join(f'{v:.4g}' for v in y)} m)")
    return tuple((float(p[1]), float(p[0]), float(p[2])) for p in pts)


def _on_wing(case, key, q, st) -> None:
    """CaseError naming key(coordinate) when the wing-frame point q lies beyond the tip or
    further than POSITION_MARGIN_CHORDS local chords from the section."""
    y = float(q[1])
    if y > st.semispan + _tolerance(st):
        _fail(case, key("y"), f"the point lies at wing-frame y {y:.4g} m, beyond the tip "
                              f"(semi-span {st.semispan:.4g} m): check its unit and frame")
    at = lambda a: float(np.interp(y, st.y, a))  # noqa: E731
    x_le, x_te, z_le, z_te, c = (at(st.x_le), at(st.x_te), at(st.z_le), at(st.z_te),
                                 at(st.chord))
    margin = POSITION_MARGIN_CHORDS * c
    x = float(q[0])
    if not min(x_le, x_te) - margin <= x <= max(x_le, x_te) + margin:
        _fail(case, key("x"), f"the point lies at wing-frame x {x:.4g} m, more than "
                         f"{POSITION_MARGIN_CHORDS:g} chords from the section at y {y:.4g} m "
                         f"(leading edge {x_le:.4g} m, trailing edge {x_te:.4g} m): check its "
                         "unit and frame")
    f = np.clip((x - x_le) / (x_te - x_le), 0.0, 1.0) if x_te != x_le else 0.0
    z_chord = z_le + f * (z_te - z_le)
    if abs(float(q[2]) - z_chord) > margin:
        _fail(case, key("z"), f"the point lies at wing-frame z {float(q[2]):.4g} m, more than "
                         f"{POSITION_MARGIN_CHORDS:g} chords from the chord line (z "
                         f"{z_chord:.4g} m at y {y:.4g} m): check its unit and frame")


__all__ = ["resolve_positions", "POSITION_MARGIN_CHORDS"]
