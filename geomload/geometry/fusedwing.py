"""The wing of a whole aircraft fused into one shell, as an exposed wing carried through to the
aircraft's plane of symmetry (see `fused` for how the wing is found and cut out).

The exposed panel outboard of the fuselage side is framed like any half wing; its frame is then
moved so that y = 0 is the aircraft's plane of symmetry (mid-way between the wing tips) and
`y_root` is the panel's root, so the run carries it through to y = 0 on the gross planform, as
an exposed-wing export. The starboard panel is taken (the one the frame does not mirror).
"""

from __future__ import annotations

import dataclasses
import os

import numpy as np

from .records import WingMesh

# the two exposed panels' fuselage sides within 2 % of the half-span of each other: a
# symmetric aircraft; else the user is told that the sides differ (common practice, no source)
SIDES_AGREE = 0.02
MIN_STATIONS = 4  # a fin needs 4 good sections in the march to be called one


def find_fused(mesh, span_axis=None, up_axis=None, side=None, controls=()):
    """(wing WingMesh, WingFrame, info dict) of a fused aircraft shell, or None when the shell
    is not one (no wing-like axis, or no wing that grows into a body inboard).

    side: None or "starboard" analyse the starboard exposed panel (the one the frame does not
    mirror); "port" the port panel, mirrored onto the starboard wing frame. Up versus down is
    decided for each panel as for any half wing (the airfoil, or `up_axis`), so the side names
    which half of the aircraft is analysed (an unsymmetric aircraft: say which half).
    controls: triangle soups of separate bodies that may be control surfaces behind the wing
    (the march runs the wing's sections to their trailing edges, `fused.march`).

    info: y_side (wing-frame y of the fuselage side, m), y_side_other (the other side's), shift
    (CAD point on the plane of symmetry), tails (list of CAD triangle soups of the other
    surfaces outboard of the fuselage side, starboard side), text (warning lines).
    """
    from .bodies import components
    from .frame import detect_frame_indexed
    from .fused import cap, clip_above, march, span_axis as find_axis

    tris = mesh.triangles
    found = find_axis(tris, mesh.source)
    if found is None:
        return None
    e, c, R = found
    h = 0.5 * float(np.ptp(tris.reshape(-1, 3) @ e))
    shift = e * c
    sides = {}
    for sgn in (1.0, -1.0):
        Rs = np.vstack([R[0], sgn * R[1], np.cross(R[0], sgn * R[1])])
        good, y_side, y_good, body = march(tris, Rs, shift, 0.95 * h, 0.0, controls=controls)
        if y_side is None or not body or len(good) < 3:
            return None
        sides[sgn] = (y_side, y_good)
    want_mirrored = side == "port"
    tried = {}
    for sgn in (1.0, -1.0):
        y_side, y_good = sides[sgn]
        kept, seg, owner = clip_above(tris, sgn * e, sgn * c + y_good)
        parts = components(kept)
        reach = [float((kept[p].reshape(-1, 3) @ (sgn * e)).max()) for p in parts]
        k = int(np.argmax(reach))
        wing_idx = parts[k]
        root = cap(seg[np.isin(owner, wing_idx)])
        panel = np.concatenate([kept[wing_idx], root])
        shifted = WingMesh(panel - shift, mesh.source, mesh.units)
        frame, _ = detect_frame_indexed(shifted, span_axis=span_axis, up_axis=up_axis)
        tails = [np.concatenate([kept[p], cap(seg[np.isin(owner, p)])])
                 for i, p in enumerate(parts) if i != k]
        tried[sgn] = (frame, panel, tails)
        if frame.mirrored == want_mirrored:
            break
    else:
        if side is not None:  # both panels framed alike: the side cannot be told apart
            from ..errors import GeometryError

            raise GeometryError(
                f"{mesh.source}: side {side!r} given for a whole aircraft in one shell, but "
                f"both wing halves frame as {'port' if frame.mirrored else 'starboard'}; give "
                "up_axis (e.g. \"+z\") so that the halves can be told apart")
        sgn = -1.0  # no panel framed as asked (up guessed alike for both): the last one
        frame, panel, tails = tried[sgn]
    frame = on_symmetry_plane(frame, shift)
    y_side, y_side_o = sides[sgn][0], sides[-sgn][0]
    info = dict(y_side=y_side, y_side_other=y_side_o, shift=shift, tails=tails, text=[],
                span=2 * h, half="port" if frame.mirrored else "starboard")
    name = os.path.basename(mesh.source)
    text = (f"warning: bodies: {name} is one shell holding a whole aircraft: the wing (span "
            f"{2 * h:.4g} m along CAD {_label(e)}) is analysed outboard of the fuselage side at "
            f"y = {y_side:.4g} m (where its section stops being an airfoil) and carried through "
            "to the plane of symmetry by extending its leading and trailing edges")
    half = "port" if frame.mirrored else "starboard"
    if side is not None:
        text += f"; the {half} half is analysed (side = {side})"
    if abs(y_side - y_side_o) > SIDES_AGREE * h:
        text += (f"; the other side's fuselage side is at {y_side_o:.4g} m: the aircraft is not "
                 f"symmetric, the {half} side is analysed"
                 + ("" if side is not None else
                    f" (give side = \"{'starboard' if frame.mirrored else 'port'}\" for the other)"))
    info["text"].append(text)
    wing = WingMesh(triangles=panel, source=mesh.source, units=mesh.units,
                    notes=tuple(mesh.notes), units_assumed=mesh.units_assumed,
                    body_sizes=(int(panel.shape[0]),), unit_scale_m=mesh.unit_scale_m)
    return wing, frame, info


def on_symmetry_plane(frame, shift):
    """The frame of a panel framed with its triangles moved by -shift (so that the aircraft's
    plane of symmetry is the CAD plane through the origin), moved so that y = 0 is that plane
    and `y_root` the panel's root, in the unmoved CAD coordinates."""
    f = to_plane(frame, np.zeros(3))
    return dataclasses.replace(f, origin=np.asarray(f.origin, float) + np.asarray(shift, float))


def to_plane(frame, point):
    """The frame moved along its y so that y = 0 is the plane through the CAD `point` normal to
    the frame's y (the aircraft's plane of symmetry), `y_root` the root's distance from it; the
    frame's own exposed-root warning (about the CAD plane) is dropped."""
    y_sym = float(frame.to_wing(np.asarray(point, float))[1])
    R_w = np.asarray(frame.rotation, float)
    origin = np.asarray(frame.origin, float) + R_w[1] * y_sym
    notes = tuple(n for n in frame.notes if not n.startswith("warning: exposed:"))
    return dataclasses.replace(frame, origin=origin, y_root=float(frame.y_root) - y_sym,
                               notes=notes)


def others(mesh, frame, info):
    """Describe what else the fused shell holds: the fuselage (length of the shell inside the
    fuselage side), a fin (a thin surface above the wing that meets a body), the tail surfaces
    outboard. Returns (list of (kind, text)), fin height or None)."""
    from .fused import march

    tris = mesh.triangles
    pw = frame.to_wing(tris.reshape(-1, 3))
    inner = np.abs(pw[:, 1]) < 0.9 * info["y_side"]
    found = []
    if inner.any():
        length = float(np.ptp(pw[inner, 0]))
        found.append(("fuselage", f"a fuselage {length:.3g} m long (the shell inside the "
                                  "fuselage sides)"))
    R = np.asarray(frame.rotation, float)
    Rf = np.vstack([R[0], R[2], np.cross(R[0], R[2])])  # cuts normal to the wing's z
    top = float(pw[:, 2].max())
    good, z_side, _, body = march(tris, Rf, np.asarray(frame.origin, float), 0.97 * top, 0.0)
    fin = None
    if body and z_side is not None and len(good) >= MIN_STATIONS:
        chord = float(np.median([g[2]["chord"] for g in good]))
        if top - z_side >= 0.5 * chord:
            fin = top - z_side
            found.append(("fin", f"a fin {fin:.3g} m high above the fuselage"))
    for t in info["tails"]:
        span = float(np.ptp(frame.to_wing(t.reshape(-1, 3))[:, 1]))
        found.append(("tailplane" if not any(k == "tailplane" for k, _ in found) else
                      "other lifting surface",
                      f"a horizontal surface reaching {span:.3g} m outboard of the fuselage "
                      "side"))
    return found, fin


def _label(e):
    from .frame import axis_label

    return axis_label(e)
