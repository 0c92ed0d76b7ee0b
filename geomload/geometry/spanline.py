"""Stations along a non-planar wing: cut normal to the wing's own span line.

For winglets, polyhedral breaks and gull wings a cut normal to the wing-frame y axis goes
through a winglet lengthwise. Here the cuts march along the span line (the quarter-chord
points, in the y-z plane): each plane is normal to the line's local direction, found from the
quarter-chord points of the cuts already made (common practice, no source). Lengths m, angles
deg; twist is measured in the cut plane (nose-up positive about the local span direction).
"""

from __future__ import annotations

import numpy as np

from .records import Stations
from .section import camber_x, section_properties
from .slicing import slice_indexed
from .spanindex import SpanIndex

# the span line is non-planar (cut along it) when its direction turns by more than this between
# the root and the outermost planar station (a dihedral break of a few degrees cuts fine either way)
TURN_DEG = 15.0
_STEPS = 160  # marching steps along the span line (each a short cut; the stations are resampled)


def needs_span_line(stations):
    """True when the planar stations show the span line turning by more than TURN_DEG."""
    d = np.asarray(stations.dihedral_deg, float)
    return bool(d.size >= 3 and np.ptp(d) > TURN_DEG)


def cut_along_span_line(mesh, frame, n, index=None, spacing="cosine"):
    """Stations cut normal to the span line through the quarter-chord points, or None when the
    march does not reach beyond the planar cut's reach (then the planar stations stand)."""
    R = np.asarray(frame.rotation, float)
    o = np.asarray(frame.origin, float)
    tris = mesh.triangles
    if frame.full_span:  # march on the starboard half only (a plane past one tip meets the other)
        yv = (tris.reshape(-1, 3) - o) @ R[1]
        tris = tris[yv.reshape(-1, 3).max(1) > -1e-9]
        index = None
    index = index if index is not None else SpanIndex(tris, R[1])
    ex, ey, ez = R
    ext = float(np.ptp(tris.reshape(-1, 3)[::11] @ ey)) + float(np.ptp(tris.reshape(-1, 3)[::11] @ ez))
    ds = ext / _STEPS
    y0 = 0.0 if frame.full_span else frame.y_root + 0.005 * ds * _STEPS
    q = np.array([0.0, y0, 0.0])  # current point on the span line (wing frame)
    t = np.array([0.0, 1.0, 0.0])  # its direction (in the y-z plane)
    pts, secs, dirs = [], [], []
    for _ in range(2 * _STEPS):
        nrm = t[1] * ey + t[2] * ez  # plane normal in CAD coordinates
        side = np.cross(ex, nrm)  # in-plane "up" of the cut
        Rc = np.vstack([ex, nrm, side])
        origin = o + R.T @ q
        loop = slice_indexed(index, Rc, origin, [0.0])[0][0]
        if loop is None:
            break
        # a plane past the tip can meet the other half of a full wing: the section must lie
        # around the span line (within one chord of the current point), else the tip is passed
        if abs(float(loop[:, 1].mean())) > float(np.ptp(loop[:, 0])):
            break
        sp = section_properties(loop)
        qc = sp["le"] + 0.25 * (sp["te"] - sp["le"])
        # back to the wing frame: x along ex, the in-plane up along (0, -t_z, t_y)
        up_w = np.array([0.0, -t[2], t[1]])
        p_qc = np.array([qc[0], q[1], q[2]]) + qc[1] * up_w
        pts.append(p_qc)
        secs.append((sp, q.copy(), up_w.copy()))
        dirs.append(t.copy())
        if len(pts) >= 3:
            d = pts[-1] - pts[-3]
            d[0] = 0.0
            if np.linalg.norm(d) > 0:
                t = d / np.linalg.norm(d)
        q = np.array([0.0, p_qc[1], p_qc[2]]) + ds * t  # step on from the span line itself
    if len(secs) < 6:
        return None
    from .stations import MAX_THICKNESS_RATIO, MAX_TWIST_DEG

    tc = np.array([r[0]["thickness_ratio"] for r in secs])
    tw = np.array([r[0]["twist_deg"] for r in secs])
    ch = np.array([r[0]["chord"] for r in secs])
    length = float(np.hypot(*np.diff(np.array(pts)[:, 1:], axis=0).T).sum())
    if (not np.median(tc) <= MAX_THICKNESS_RATIO or not np.all(np.abs(tw) <= MAX_TWIST_DEG)
            or length < 0.5 * float(np.mean(ch))):
        return None  # not a wing along this line either: the planar cut's verdict stands
    # the geometric tip: the farthest reach of the surface beyond the last cut along the line
    tw = np.array([0.0, t[1], t[2]])
    reach = float(((tris.reshape(-1, 3) - o) @ R.T @ tw).max() - np.array(pts[-1]) @ tw)
    p = np.array(pts)
    s = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(p[:, 1]), np.diff(p[:, 2])))])
    s_tip = s[-1]
    from .stations import station_levels

    want = station_levels(s[0], s_tip, int(n), spacing)
    k = np.clip(np.searchsorted(s, want), 0, len(secs) - 1)
    rows = [secs[i] for i in k]
    le = np.array([r[1] + np.array([r[0]["le"][0], 0, 0]) + r[0]["le"][1] * r[2] for r in rows])
    te = np.array([r[1] + np.array([r[0]["te"][0], 0, 0]) + r[0]["te"][1] * r[2] for r in rows])
    g = {key: np.array([r[0][key] for r in rows]) for key in rows[0][0] if key not in ("le", "te")}
    dirs_k = np.array([dirs[i] for i in k])
    y = le[:, 1] + 0.25 * (te[:, 1] - le[:, 1])
    return Stations(y=y, x_le=le[:, 0], z_le=le[:, 2], x_te=te[:, 0], z_te=te[:, 2], chord=g["chord"],
                    twist_deg=g["twist_deg"], thickness_ratio=g["thickness_ratio"],
                    x_thickness=g["x_thickness"], camber_ratio=g["camber_ratio"],
                    x_camber=g["x_camber"],
                    dihedral_deg=np.degrees(np.arctan2(dirs_k[:, 2], dirs_k[:, 1])),
                    camber_x=camber_x(), camber_z=g["camber"], semispan=float(p[:, 1].max()),
                    notes=(f"stations cut normal to the span line (it turns by "
                           f"{np.degrees(np.arctan2(dirs[-1][2], dirs[-1][1])):.0f} deg)",),
                    s_m=s[k] + (p[0, 1] if not frame.full_span else 0.0),
                    s_tip_m=float(s_tip + max(reach, 0.0) + (p[0, 1] if not frame.full_span else 0.0)))
