"""A whole aircraft fused into one shell, written into one file beside separate bodies (a
separate tailplane, fin, control surface, fuselage...).

The body classification (`bodies.classify`) takes the fused shell for the lifting surface of
largest span. When the fused-aircraft search (`fusedwing.find_fused`) finds a wing growing into
a body in it, the wing is taken from the shell as for a lone fused shell; the separate bodies
keep the kinds the classification gave them (a control surface extends the sections it lies
behind, a separate tailplane's planform is kept, the others are reported). A fused shell whose
wing is continued by separate touching bodies (outer panels bolted to a fused centre) is
refused with one line: the joined-loops path works on separate bodies, the fused path on one
shell, and mixing the two is not supported.
"""

from __future__ import annotations

import os

from .records import BodyInfo, WingMesh


def fused_among(mesh, cls, span_axis=None, up_axis=None, side=None):
    """(wing WingMesh, WingFrame, info) when the wing body of a several-body file is a whole
    aircraft fused into one shell, else None. info as `fusedwing.find_fused`, plus "body" (the
    shell's `bodies.Body`) and "shell" (its WingMesh). Raises GeometryError (one line naming the
    file) when the fused shell's wing goes on in separate touching bodies."""
    from ..errors import GeometryError
    from .fusedwing import find_fused

    main = next(p for p in cls["wing"] if p.kind == "wing")
    # no cheaper gate: a wing-body shell whose fuselage is its longest extent gives one loop per
    # cut across that extent, as a plain wing does across its span
    shell = WingMesh(triangles=main.tris, source=mesh.source, units=mesh.units,
                     notes=tuple(mesh.notes), units_assumed=mesh.units_assumed,
                     body_sizes=(int(main.tris.shape[0]),), unit_scale_m=mesh.unit_scale_m)
    # the bodies beside the shell that may be control surfaces (decided again below, beside
    # the wing panels): a wing with a cut-out for one must not end at the cut-out
    controls = [b.tris for b in cls["controls"]]
    found = find_fused(shell, span_axis=span_axis, up_axis=up_axis, side=side,
                       controls=controls)
    if found is None:
        return None
    if len(cls["wing"]) > 1:
        parts = ", ".join(str(p.index) for p in cls["wing"] if p is not main)
        raise GeometryError(
            f"{mesh.source}: body {main.index} is a whole aircraft fused into one shell and "
            f"separate bod{'ies' if ',' in parts else 'y'} {parts} touch it as more of its wing; "
            "a wing that is partly fused and partly separate is not supported: export the wing "
            "as one body (or all of it fused), or give --body N")
    wing, frame, info = found
    info["body"], info["shell"] = main, shell
    _kinds_beside_the_panels(cls, main, wing, frame, mesh.source)
    text = (f"warning: bodies: {len(cls['all'])} bodies in {os.path.basename(mesh.source)}: "
            f"body {main.index} is a whole aircraft in one fused shell, whose wing is analysed; "
            "the other bodies: " + "; ".join(f"body {b.index} {b.kind} ({b.describe()})"
                                              for b in cls["all"] if b is not main))
    wing = _with_notes(wing, tuple(mesh.notes) + (text,))
    return wing, frame, info


def _kinds_beside_the_panels(cls, main, wing, frame, path):
    """Decide again what each separate lifting body is, beside the fused shell's wing panels
    (both sides: the analysed panel and its mirror image across the plane of symmetry) rather
    than beside the whole shell: a tailplane that meets the fuselage is close to the shell but
    far from the wing, so beside the shell it would pass for a control surface. Updates cls."""
    import numpy as np

    from .bodies import Body, kinds_beside

    t = np.asarray(wing.triangles, float)
    pw = frame.to_wing(t.reshape(-1, 3))
    pw[:, 1] *= -1.0
    other_half = frame.to_cad(pw).reshape(t.shape)
    ref = Body(main.index, np.concatenate([t, other_half]))
    rest = [b for b in cls["all"] if b is not main and b.lifting and not b.slender]

    def found():
        return (f"{len(cls['all'])} bodies: " + ", ".join(b.describe() for b in cls["all"])
                + "; give --body N")

    controls, tail, fins, others, _ = kinds_beside([ref], ref, rest, ref.span, found, path,
                                                   mirrors=False)
    others += [b for b in cls["all"] if b.kind == "other"]
    cls.update(controls=controls, tail=tail, fins=fins, others=others, mirror=None)


def _with_notes(wing, notes):
    import dataclasses

    return dataclasses.replace(wing, notes=notes)


def merge_reports(cls, info, fused_part, separate_part):
    """(tailplane, BodyInfo tuple, warning lines) of a fused shell among separate bodies.

    fused_part: (tailplane, bodies, extra) of the shell (`wing._fused_others`); separate_part:
    (tailplane, bodies, extra) of the separate bodies (`wing._other_bodies`, whose list holds
    every body). The shell's entry in the body list becomes the fused aircraft's one; the
    tailplane is the shell's when it holds one, else the separate one (a second one is named)."""
    tail_f, bodies_f, extra_f = fused_part
    tail_s, bodies_s, extra_s = separate_part
    main = info["body"]
    (fb,) = bodies_f
    fb = BodyInfo(main.index, fb.kind, fb.n_triangles, fb.span_m, fb.length_m, fb.text)
    bodies = tuple(fb if b.index == main.index else b for b in bodies_s)
    extra = list(extra_f) + list(extra_s)
    tail = tail_f if tail_f is not None else tail_s
    if tail_f is not None and tail_s is not None:
        extra.append(f"warning: bodies: both the fused shell and body {cls['tail'].index} hold a "
                     "horizontal tail surface: the fused shell's is kept as the tailplane")
    return tail, bodies, extra
