"""`read_wing`: the geometry stage from file to `Wing` record (read, bodies, frame, stations,
planform, control surfaces, tailplane)."""

from __future__ import annotations

import os

import numpy as np

from .display_soup import start_display_soup
from .frame import detect_frame_indexed
from .planform import summarize
from .readers import read_mesh
from .records import BodyInfo, GeometryWarning, TailPlanform, Wing, WingMesh
from .stations import cut_stations

MIN_SHELL_FRACTION = 1e-4  # shells under 0.01 % of the surface area are debris, not bodies


def _no_progress(stage, done, total):
    pass


def read_wing(path, units=None, body=None, span_axis=None, up_axis=None, n_stations=20,
              spacing="cosine", progress=None, side=None, require_units=False, units_hint=None,
              display=False):
    """See `geometry.read_wing`."""
    from geomload.threads import one_blas_thread

    with one_blas_thread():
        return _read_wing(path, units, body, span_axis, up_axis, n_stations, spacing, progress,
                          side, require_units, units_hint, display)


def _read_wing(path, units, body, span_axis, up_axis, n_stations, spacing, progress, side,
               require_units, units_hint, display=False):
    progress = progress or _no_progress
    box = []
    mesh = read_mesh(path, units=units, progress=progress, require_units=require_units,
                     units_hint=units_hint, all_bodies=True, bounds_out=box)
    # the display surface's clustering of a large single-body mesh, in a worker thread while
    # this one finds the frame and cuts the stations (the export uses it; see display_soup);
    # only when the caller writes one (a run), not for a command that only measures the wing
    one = display and body is None and len(mesh.body_sizes) <= 1
    soup = start_display_soup(mesh.triangles, box[0]) if one else None
    try:
        return _with_soup(_read_mesh_wing(mesh, body, span_axis, up_axis, n_stations, spacing,
                                          progress, side), soup)
    finally:
        if soup is not None:
            soup.join()  # no thread outlives the stage (the run forks after it)


def _with_soup(wing, soup):
    """The Wing with the display soup built alongside, when it is of the wing's own mesh."""
    if soup is None or wing.mesh.triangles is not soup.tris:
        return wing
    import dataclasses

    try:
        built = soup.result()
    except Exception:  # noqa: BLE001 - the export builds the display surface itself (and says
        return wing    # why there if it fails again): the geometry stage does not need it
    return dataclasses.replace(wing, display_soup=(soup.target, *built))


def _read_mesh_wing(mesh, body, span_axis, up_axis, n_stations, spacing, progress, side):
    from ..errors import GeometryError

    args = (body, span_axis, up_axis, n_stations, spacing, progress, side)
    try:
        return _from_mesh(mesh, *args)
    except GeometryError:
        # one shell whose cuts across its long axis each gave one loop, read as a plain wing
        # and found no wing: a wing-fuselage shell whose span is well over the fuselage's
        # length looks like that (the fuselage's cuts hold the wing's root); look for a fused
        # aircraft in it before giving up
        if body is not None or len(mesh.body_sizes) > 1 or len(_shells(mesh)) > 1:
            raise
        fused = _fused(mesh, span_axis, up_axis, side)
        if fused is None:
            raise
    return _from_mesh(mesh, *args, fused=fused)


def _from_mesh(mesh, body, span_axis, up_axis, n_stations, spacing, progress, side, fused=None):
    """The `Wing` of a read mesh (see `read_wing`); fused: a fused aircraft already found."""
    if fused is not None:
        wing_mesh, index, found = mesh, None, None
    elif body is None:
        wing_mesh, index, found = _pick_wing(mesh)
        if found is None and index is None:  # one shell that is not one plain wing
            fused = _fused(mesh, span_axis, up_axis, side)
        elif found is not None and found.get("mirror") is None:  # a fused shell among bodies?
            from .fusedbodies import fused_among

            fused = fused_among(mesh, found, span_axis, up_axis, side)
    else:
        wing_mesh, index, found = _given_body(mesh, body), None, None
    if fused is not None:
        wing_mesh, frame, fused_info = fused
    else:
        halves = found is not None and found.get("mirror") is not None
        frame, index = detect_frame_indexed(wing_mesh, span_axis=span_axis, up_axis=up_axis,
                                            side=None if halves else side, index=index)
    if found is not None and found.get("mirror") is not None:
        wing_mesh, frame, index = _mirror_halves(found, wing_mesh, frame, index, span_axis,
                                                 up_axis, side)
    stations = _cut(wing_mesh, frame, n_stations, spacing, progress, index)
    if frame.y_root > 0.0:  # exposed wing: the origin of the wing carried through to y = 0
        from .exposed import carried_through_frame

        frame = carried_through_frame(frame, stations)
        stations = _cut(wing_mesh, frame, n_stations, spacing, progress, index)
    controls, bodies, tail, extra, side_y = (), (), None, [], None
    if found is not None and fused is not None:  # a fused shell among separate bodies
        from .fusedbodies import merge_reports

        stations, controls, tail_s, bodies_s, extra_s = _other_bodies(found, frame, stations,
                                                                       n_stations)
        tail, bodies, extra = merge_reports(
            found, fused_info, _fused_others(fused_info["shell"], frame, fused_info),
            (tail_s, bodies_s, extra_s))
        side_y = fused_info["y_side"]
    elif found is not None:
        stations, controls, tail, bodies, extra = _other_bodies(found, frame, stations, n_stations)
        side_y = _fuselage_side(found, frame, stations, extra)
    elif fused is not None:
        tail, bodies, extra = _fused_others(mesh, frame, fused_info)
        side_y = fused_info["y_side"]
    planform = summarize(stations, y_root=frame.y_root)
    warnings, notes = split_notes(list(wing_mesh.notes) + list(frame.notes) + list(stations.notes)
                                  + extra)
    return Wing(mesh=wing_mesh, frame=frame, stations=stations, planform=planform,
                control_surfaces=tuple(controls), bodies=tuple(bodies), tailplane=tail,
                warnings=tuple(warnings), notes=tuple(notes), fuselage_side_y_m=side_y)


def _cut(mesh, frame, n, spacing, progress, index):
    """Planar stations, or stations along the span line when it turns (winglets, gull)."""
    from ..errors import GeometryError
    from .spanline import cut_along_span_line, needs_span_line

    try:
        st = cut_stations(mesh, frame, n=n, spacing=spacing, progress=progress, index=index)
    except GeometryError as exc:
        if "turned" not in str(exc):  # only a chord line swinging round can be a winglet
            raise
        st, err = None, exc
    if st is None or needs_span_line(st):
        alt = cut_along_span_line(mesh, frame, n, index=index, spacing=spacing)
        if alt is not None and (st is None or alt.semispan >= 0.9 * st.semispan):
            return alt
        if st is None:
            raise err
    return st


def _mirror_halves(cls, wing_mesh, frame, index, span_axis, up_axis, side=None):
    """Two mirror-image wing halves either side of a fuselage: one wing. The half the frame
    does not mirror is analysed (the other when the first lies on the port side), or with
    side = "port" the port half, mirrored onto the starboard frame (the file holds both halves,
    so the side names the half to analyse, as for a fused aircraft; up versus down is decided
    by the airfoil or `up_axis`); y = 0 is the plane midway between the halves, so the root is
    carried through to it."""
    import dataclasses

    a, b = cls["wing"][0], cls["mirror"]
    if frame.mirrored != (side == "port"):
        a, b = b, a
        a.kind, b.kind = "wing", "wing (other half)"
        cls["wing"], cls["mirror"] = [a], b
        notes = tuple(n for n in wing_mesh.notes if not n.startswith(
            f"warning: bodies: {len(cls['all'])} bodies in "))
        notes += (_kept_text(wing_mesh, cls["all"], [a]),)
        wing_mesh = dataclasses.replace(wing_mesh, triangles=a.tris, notes=notes,
                                        body_sizes=(int(a.tris.shape[0]),))
        frame, index = detect_frame_indexed(wing_mesh, span_axis=span_axis, up_axis=up_axis)
    from .fusedwing import to_plane

    frame = to_plane(frame, 0.5 * (a.mean + b.mean))
    text = (f"warning: bodies: bodies {a.index} and {b.index} are mirror images either side of "
            f"the plane midway between them, taken as one wing: body {a.index} is analysed and "
            f"its root (y = {frame.y_root:.4g} m from that plane) carried through to it by "
            "extending the leading and trailing edges")
    wing_mesh = dataclasses.replace(wing_mesh, notes=tuple(wing_mesh.notes) + (text,))
    return wing_mesh, frame, index


def _fused(mesh, span_axis, up_axis, side=None):
    """(wing mesh, frame, info) of a whole aircraft fused into one shell, or None."""
    from .fusedwing import find_fused

    return find_fused(mesh, span_axis=span_axis, up_axis=up_axis, side=side)


def _fused_others(mesh, frame, info):
    """(tailplane planform or None, BodyInfo tuple, warning lines) of a fused aircraft."""
    from .fusedwing import others

    found, _ = others(mesh, frame, info)
    extra = list(info["text"])
    tail = None
    for (kind, text), tris in zip([f for f in found if f[0] != "fuselage" and f[0] != "fin"],
                                  info["tails"]):
        if kind == "tailplane":
            part = _Part(tris - info["shift"], 1)
            tail = _tail_planform(part, frame, None, extra, shift=info["shift"])
    listed = "; ".join(f"{kind}: {text}" for kind, text in found) or "nothing else"
    n = int(mesh.triangles.shape[0])
    if tail is not None:
        listed += (f"; the tailplane's gross planform (carried through to the plane of "
                   f"symmetry): S = {tail.area:.4g} m^2, b = {tail.span:.4g} m")
    extra.append(f"warning: bodies: besides the wing the shell holds {listed}; at stations "
                 "where another surface lies in the same plane only the wing's loop is kept")
    bodies = (BodyInfo(1, "aircraft (one fused shell)", n, info["span"], info["span"],
                       "one shell: " + listed),)
    return tail, bodies, extra


class _Part:
    """A piece of a shell measured like a body (triangles and a number)."""

    def __init__(self, tris, index):
        self.tris, self.index = tris, index


def _pick_wing(mesh):
    """(wing mesh, a reusable SpanIndex or None, classification or None)."""
    from .bodies import Body, classify, looks_single

    tris = mesh.triangles
    if len(mesh.body_sizes) <= 1:
        single, index = looks_single(tris)
        if single:
            return mesh, index, None
    shells = _shells(mesh)
    if len(shells) <= 1:
        return mesh, None, None
    bodies = [Body(i + 1, s) for i, s in enumerate(shells)]
    cls = classify(bodies, mesh.source)
    wing_tris = np.concatenate([p.tris for p in cls["wing"]])
    text = _kept_text(mesh, bodies, cls["wing"])
    wing_mesh = WingMesh(triangles=wing_tris, source=mesh.source, units=mesh.units,
                         notes=tuple(mesh.notes) + (text,), units_assumed=mesh.units_assumed,
                         body_sizes=tuple(int(p.tris.shape[0]) for p in cls["wing"]))
    cls["all"] = bodies
    return wing_mesh, None, cls


def _kept_text(mesh, bodies, wing):
    """The warning line saying which bodies make the wing and what the others were taken for."""
    if len(wing) == 1:
        why = "the lifting surface of largest span"
        if wing[0].area >= max(b.area for b in bodies):
            why += ", also the one of largest surface area"
        kept = f"kept body {wing[0].index} as the wing ({why})"
    else:
        kept = (f"kept bodies {', '.join(str(p.index) for p in wing)} as the wing (touching parts "
                "of one lifting surface)")
    left = [f"body {b.index} {b.kind} ({b.describe()})" for b in bodies if b not in wing]
    return (f"warning: bodies: {len(bodies)} bodies in {os.path.basename(mesh.source)}: {kept}; "
            f"left out of the wing: {'; '.join(left)}")


def _shells(mesh):
    """The bodies of a file: each body the reader gives, split into its connected shells."""
    from .bodies import components

    tris = mesh.triangles
    starts = np.concatenate([[0], np.cumsum(mesh.body_sizes or (tris.shape[0],))])
    shells = []
    for a, b in zip(starts[:-1], starts[1:]):
        part = tris[a:b]
        idx = components(part)
        shells += [part] if len(idx) == 1 else [part[i] for i in idx]
    total = sum(float(_area(s)) for s in shells)
    return [s for s in shells if _area(s) >= MIN_SHELL_FRACTION * total]


def _given_body(mesh, body):
    """The 1-based body `body` of the file (numbered as the body report numbers them)."""
    from ..errors import InputError

    shells = _shells(mesh)
    if not 1 <= int(body) <= len(shells):
        raise InputError(f"{mesh.source}: --body {body} out of range (the file has {len(shells)} "
                         f"bod{'ies' if len(shells) != 1 else 'y'})")
    left = len(shells) - 1
    note = (f"{len(shells)} bodies in {os.path.basename(mesh.source)}: kept body {body} (--body "
            f"{body}); {left} left out",) if left else ()
    return WingMesh(triangles=shells[int(body) - 1], source=mesh.source, units=mesh.units,
                    notes=tuple(mesh.notes) + note, units_assumed=mesh.units_assumed,
                    body_sizes=(int(shells[int(body) - 1].shape[0]),))


def _area(t):
    from .readers import triangle_areas

    return triangle_areas(t).sum()


def _other_bodies(cls, frame, stations, n_stations):
    """Attach control surfaces, measure the tailplane, and describe every body."""
    from .control import attach

    extra, controls = [], []
    for b in cls["controls"]:
        stations, cs = attach(stations, frame, b.tris, b.index)
        if cs is not None:
            controls.append(cs)
            extra.append(f"warning: control_surface: body {b.index} is a control surface behind the "
                         f"wing from y = {cs.y_from_m:.4g} to {cs.y_to_m:.4g} m: the sections there "
                         f"run to its trailing edge (hinge at {100 * np.mean(cs.hinge_x_over_c):.0f} "
                         f"% chord)")
        else:
            extra.append(f"warning: control_surface: body {b.index} lies behind the wing but "
                         "outside its stations: left out")
    tail = None
    if cls["tail"] is not None:
        tail = _tail_planform(cls["tail"], frame, cls, extra)
    bodies = tuple(BodyInfo(b.index, b.kind, int(b.tris.shape[0]), b.span, float(b.ext[0]),
                            b.describe()) for b in cls["all"])
    return stations, tuple(controls), tail, bodies, extra


def _fuselage_side(cls, frame, stations, extra):
    """Half-width of the fuselage at the wing's root chord (wing frame y, m), or None."""
    if not cls["fuselage"]:
        return None
    from .slicing import slice_loops

    R = np.asarray(frame.rotation, float)
    x_mid = 0.5 * float(stations.x_le[0] + stations.x_te[0])  # mid root chord
    Rx = np.vstack([R[1], R[0], R[2]])  # cut normal to the wing x axis; loop in (y, z)
    best = None
    for b in cls["fuselage"]:
        loop = slice_loops(b.tris, Rx, frame.origin, [x_mid])[0][0]
        if loop is not None:
            y = float(np.abs(loop[:, 0]).max())
            best = y if best is None else max(best, y)
    if best is not None:
        extra.append(f"the fuselage side at the wing root is at y = {best:.4g} m; the wing is "
                     "analysed through the fuselage to the plane of symmetry")
    return best


def _tail_planform(b, frame, cls, extra, shift=None):
    """The tailplane's planform in the wing frame, or None (with a warning) when it cannot be
    measured. shift: CAD offset of b's triangles (a fused shell's piece, moved so that its
    plane of symmetry passes through the CAD origin and its gross planform is measured)."""
    from ..errors import GeometryError

    try:
        m = WingMesh(b.tris, "tailplane", "m")
        f, idx = detect_frame_indexed(m)
        if shift is not None:  # a piece of a fused shell: its root is off the plane of symmetry
            from .fusedwing import on_symmetry_plane

            f = on_symmetry_plane(f, np.zeros(3))
        st = cut_stations(m, f, n=11, index=idx)
        pf = summarize(st, y_root=f.y_root)
    except GeometryError as exc:
        extra.append(f"warning: bodies: the tailplane (body {b.index}) could not be measured: {exc}")
        return None
    # quarter-chord point of the tail's MAC, carried from the tail frame to the wing frame
    p_tail = np.array([pf.x_mac_qc, pf.y_mac, float(np.interp(pf.y_mac, st.y, st.z_qc))])
    d = np.zeros(3) if shift is None else np.asarray(shift, float)
    p_wing = frame.to_wing(f.to_cad(p_tail) + d)
    z0 = frame.to_wing(f.to_cad(np.array([st.x_qc[0], 0.0, st.z_qc[0]])) + d)[2]
    return TailPlanform(area=pf.area, span=pf.span, x_qc_mac=float(p_wing[0]), mac=pf.mac,
                        z_m=float(z0))


def split_notes(lines):
    """(GeometryWarning records, plain notes) from note lines ("warning: ..." -> a warning)."""
    warnings, notes = [], []
    for line in lines:
        if line.startswith("warning: "):
            text = line[len("warning: "):]
            head = text.split(":", 1)[0]
            warnings.append(GeometryWarning(head if head in _KINDS else "geometry", text))
        else:
            notes.append(line)
    return warnings, notes


_KINDS = ("units", "side", "up", "bodies", "control_surface", "exposed", "frame")
