"""Generated multi-body files with known truth: a wing cut into panels with a separate aileron,
a whole aircraft (wing, fuselage, tailplane, fin) as separate shells, two crossing wings, a
biplane.

Sections from the NACA 4-digit equations (NACA Report 460, Jacobs, Ward and Pinkerton 1933;
restated in Report 824), evaluated by tests/wingfactory.py; planform from its `design`.
"""

from __future__ import annotations

import numpy as np

from helpers.wingfactory import _naca4_side, design, wing_triangles


def section_ring(d, y, x_from=0.0, x_to=1.0, n=60):
    """Closed (k, 3) contour of the design's section at span y between mean-line stations
    x_from..x_to (x/c), upper surface aft -> fore then lower fore -> aft (the order
    `loft_wing` uses); a cut end is closed by a straight face."""
    t = float(d["t"](y))
    s = np.linspace(0.0, 1.0, n)
    x = x_from + (x_to - x_from) * (0.5 * (1 - np.cos(np.pi * s)) if x_from == 0.0 else s)
    xu, zu = _naca4_side(d["code"], t, True, x, True)
    xl, zl = _naca4_side(d["code"], t, True, x, False)
    up = np.column_stack([xu, zu])[::-1]
    lo = np.column_stack([xl, zl])
    if x_from == 0.0:
        lo = lo[1:]  # the leading edge point once
    c2 = np.vstack([up, lo])
    a = np.radians(float(d["twist"](y)))
    xs = c2[:, 0] * np.cos(a) + c2[:, 1] * np.sin(a)
    zs = -c2[:, 0] * np.sin(a) + c2[:, 1] * np.cos(a)
    c = float(d["chord"](y))
    return np.column_stack([d["x_le"](y) + c * xs, np.full(xs.size, y), d["z_le"](y) + c * zs])


def loft_rings(rings):
    """Closed soup through rings (ns, k, 3), side faces wound outward, fan caps at both ends."""
    rings = np.asarray(rings)
    k = rings.shape[1]
    i = np.arange(k)
    i1 = (i + 1) % k
    a0, a1, b0, b1 = rings[:-1][:, i], rings[:-1][:, i1], rings[1:][:, i], rings[1:][:, i1]
    tris = [np.stack([a0, b0, b1], -2).reshape(-1, 3, 3), np.stack([a0, b1, a1], -2).reshape(-1, 3, 3)]
    for ring, out in ((rings[0], -1.0), (rings[-1], 1.0)):
        c = ring.mean(0)
        fan = np.stack([np.broadcast_to(c, ring.shape), ring, np.roll(ring, -1, 0)], 1)
        n = np.cross(fan[:, 1] - fan[:, 0], fan[:, 2] - fan[:, 0])
        if (n[:, 1].sum() * out) < 0:
            fan = fan[:, ::-1]
        tris.append(fan)
    return np.concatenate(tris)


def panel(d, y0, y1, x_from=0.0, x_to=1.0, n_span=8, n=60):
    """A lofted body from y0 to y1; its first ring moved 1 um outboard so that two panels
    meeting at a joint touch without sharing vertices (separate solids of a CAD export)."""
    ys = np.linspace(y0, y1, n_span)
    ys[0] += 1e-6 if y0 > 0 else 0.0
    return loft_rings([section_ring(d, y, x_from, x_to, n) for y in ys])


def wing_with_aileron(hinge=0.75, gap=0.006, y_ail=(1.0, 1.6), end_gap=0.004, **design_kw):
    """(list of bodies, design): four panels touching at production joints (0.5, 1.0, 1.6 m)
    and an aileron from y_ail[0] to y_ail[1] (end_gap m clear of the panels beside it) behind a
    gap of `gap` chords at x/c = hinge."""
    d = design(**design_kw)
    s = d["semispan"]
    bodies = [panel(d, 0.0, 0.5), panel(d, 0.5, y_ail[0]),
              panel(d, y_ail[0], y_ail[1], 0.0, hinge, n_span=10),
              panel(d, y_ail[1], s),
              panel(d, y_ail[0] + end_gap, y_ail[1] - end_gap, hinge + gap, 1.0, n_span=10, n=20)]
    return bodies, d


def fuselage(length=3.4, radius=0.2, x0=-1.0, z0=0.0):
    """A capsule (trimesh.creation) along x: a slender body."""
    import trimesh

    cap = trimesh.creation.capsule(height=length - 2 * radius, radius=radius, count=[24, 24])
    t = np.asarray(cap.triangles)  # axis along z, centred
    t = t[:, :, [2, 1, 0]]  # swap x and z (and reverse winding to keep it outward)
    t = t[:, ::-1]
    return t + np.array([x0 + 0.5 * length, 0.0, z0])


def aircraft(**wing_kw):
    """(bodies, wing design, tail design): wing (full span through the fuselage), fuselage,
    tailplane at x = 2.2 m, fin at x = 2.2 m. wing_kw: the wing's `design` arguments."""
    dw = design(**wing_kw)
    wing = wing_triangles(dw, 60, 16, full_span=True)
    dt = design(semispan=0.6, root_chord=0.22, taper=0.6, sweep_le_deg=5.0, dihedral_deg=0.0,
                washout_deg=0.0, t_root=0.10, t_tip=0.10, code="0010")
    tail = wing_triangles(dt, 40, 8, full_span=True) + np.array([2.2, 0.0, 0.05])
    df = design(semispan=0.5, root_chord=0.26, taper=0.6, sweep_le_deg=20.0, dihedral_deg=0.0,
                washout_deg=0.0, t_root=0.10, t_tip=0.10, code="0010")
    fin = wing_triangles(df, 40, 8) @ np.array([[1.0, 0, 0], [0, 0, -1.0], [0, 1.0, 0]]).T
    fin = fin + np.array([2.15, 0.0, 0.12])
    return [wing, fuselage(), tail, fin], dw, dt


def fused(bodies):
    """One closed shell: the boolean union of the bodies (manifold3d through trimesh, a
    general-purpose mesh boolean library; test-only dependency)."""
    import trimesh

    meshes = []
    for b in bodies:
        m = trimesh.Trimesh(**trimesh.triangles.to_kwargs(np.asarray(b, float)))
        m.merge_vertices()
        meshes.append(m)
    u = trimesh.boolean.union(meshes, engine="manifold")
    assert u.is_watertight  # a closed shell, as a CAD boolean union exports it
    return np.asarray(u.triangles, float)


def winglet_path(s, y_straight=1.5, radius=0.15):
    """Span line of a wing with a blended 90-degree winglet: (y, z, phi) at arc length s (m):
    straight along y to y_straight, a circular blend of `radius` turning up by 90 deg, then
    vertical."""
    s = np.asarray(s, float)
    arc = 0.5 * np.pi * radius
    y = np.where(s <= y_straight, s, np.where(s <= y_straight + arc,
                 y_straight + radius * np.sin((s - y_straight) / radius), y_straight + radius))
    z = np.where(s <= y_straight, 0.0, np.where(s <= y_straight + arc,
                 radius * (1 - np.cos((s - y_straight) / radius)), radius + (s - y_straight - arc)))
    phi = np.where(s <= y_straight, 0.0, np.minimum((s - y_straight) / radius, 0.5 * np.pi))
    return y, z, phi


def winglet_wing(s_tip=2.0356, chord_root=0.36, chord_tip=0.15, n=40):
    """(soup, chord(s)) of a full-span wing with blended 90-degree winglets; NACA 2412 sections
    normal to the span line, chord tapering linearly along the arc length s."""
    chord = lambda s: chord_root + (chord_tip - chord_root) * np.asarray(s) / s_tip  # noqa: E731
    d = dict(code="2412", t=lambda y: 0.12, twist=lambda y: 0.0, chord=lambda y: 1.0,
             x_le=lambda y: 0.0, z_le=lambda y: 0.0)
    ss = np.concatenate([np.linspace(0, 1.4, 8), np.linspace(1.45, 1.5 + 0.5 * np.pi * 0.15, 14),
                         np.linspace(1.5 + 0.5 * np.pi * 0.15 + 0.02, s_tip, 6)])
    rings = []
    for s in ss:
        base = section_ring(d, 0.0, n=n)  # unit chord, at y = 0
        c = float(chord(s))
        y, z, phi = winglet_path(s)
        xs, zs = base[:, 0] * c, base[:, 2] * c
        rings.append(np.column_stack([xs, y - zs * np.sin(phi), z + zs * np.cos(phi)]))
    half = loft_rings(rings)
    port = half.copy()
    port[:, :, 1] *= -1
    # the two halves share the root ring: drop both root caps by lofting through -s .. s
    full_rings = [r * np.array([1, -1, 1]) for r in rings[:0:-1]] + rings
    return loft_rings(full_rings), chord


def split_at_an_angle(tris, y_split=0.9, angle_deg=30.0, overlap=0.0):
    """(inner, outer) bodies of one closed soup split by the plane through (0, y_split, 0)
    swept back by angle_deg (so that stations near y_split cut both bodies), each reaching
    `overlap` m past the plane into the other (0: they touch). Boolean intersections with a
    half-space box by manifold3d through trimesh (test-only)."""
    import trimesh

    m = trimesh.Trimesh(**trimesh.triangles.to_kwargs(np.asarray(tris, float)))
    m.merge_vertices()
    a = np.radians(angle_deg)
    n = np.array([-np.sin(a), np.cos(a), 0.0])  # the plane's normal, outboard
    pieces = []
    for sgn in (-1.0, 1.0):  # inner: n . (p - p0) <= overlap; outer: >= -overlap
        box = trimesh.creation.box(extents=(20.0, 20.0, 20.0))
        T = np.eye(4)
        T[:3, :3] = np.column_stack([np.cross(n, [0, 0, 1.0]), n, [0, 0, 1.0]])
        T[:3, 3] = np.array([0.0, y_split, 0.0]) + n * (sgn * 10.0 - sgn * overlap)
        box.apply_transform(T)
        pieces.append(np.asarray(trimesh.boolean.intersection([m, box], engine="manifold")
                                 .triangles, float))
    return pieces[0], pieces[1]
