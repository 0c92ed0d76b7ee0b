"""Control surfaces found as separate bodies behind the wing: extend the sections to them.

A section that carries a control surface runs from the wing's leading edge to the control
surface's trailing edge (the chord of the whole section, common practice, no source); the hinge
is taken at the control surface's leading edge (its point nearest the wing's leading edge).
"""

from __future__ import annotations

import numpy as np

from .records import ControlSurfaceGeometry, Stations
from .slicing import slice_loops

END_MARGIN = 0.02  # spanwise clearance of a control surface to its cut-out: under 2 % of its span


def attach(stations: Stations, frame, body_tris, body_no):
    """(new Stations, ControlSurfaceGeometry or None): sections extended to the body's TE."""
    R, o = np.asarray(frame.rotation, float), np.asarray(frame.origin, float)
    yb = (body_tris.reshape(-1, 3) - o) @ R[1]
    y0, y1 = float(yb.min()), float(yb.max())
    # stations in the small spanwise clearance at either end of the control surface belong to
    # its cut-out too: cut it just inside its end there (END_MARGIN of its span)
    pad = END_MARGIN * (y1 - y0)
    on = np.nonzero((stations.y > y0 - pad) & (stations.y < y1 + pad))[0]
    if on.size == 0:
        return stations, None
    inner = 1e-3 * (y1 - y0)
    cuts = slice_loops(body_tris, R, o, np.clip(stations.y[on], y0 + inner, y1 - inner))
    f = {k: np.array(getattr(stations, k), float, copy=True)
         for k in ("x_te", "z_te", "chord", "twist_deg", "thickness_ratio", "camber_ratio")}
    kept, hinge_f, hinge_xz = [], [], []
    for i, (loop, _, _) in zip(on, cuts):
        if loop is None:
            continue
        le = np.array([stations.x_le[i], stations.z_le[i]])
        d = np.hypot(*(loop - le).T)
        te = loop[int(np.argmax(d))]
        hinge = loop[int(np.argmin(d))]
        c_old = f["chord"][i]
        c_new = float(np.linalg.norm(te - le))
        if c_new <= c_old:
            continue
        f["x_te"][i], f["z_te"][i] = te
        f["chord"][i] = c_new
        f["twist_deg"][i] = float(np.degrees(np.arctan2(le[1] - te[1], te[0] - le[0])))
        f["thickness_ratio"][i] *= c_old / c_new  # the thickness is the wing's; the chord grew
        f["camber_ratio"][i] *= c_old / c_new
        u = (te - le) / c_new
        kept.append(int(i))
        hinge_f.append(float((hinge - le) @ u / c_new))
        hinge_xz.append(hinge)
    if not kept:
        return stations, None
    new = Stations(y=stations.y, x_le=stations.x_le, z_le=stations.z_le, x_te=f["x_te"],
                   z_te=f["z_te"], chord=f["chord"], twist_deg=f["twist_deg"],
                   thickness_ratio=f["thickness_ratio"], x_thickness=stations.x_thickness,
                   camber_ratio=f["camber_ratio"], x_camber=stations.x_camber,
                   dihedral_deg=stations.dihedral_deg, camber_x=stations.camber_x,
                   camber_z=stations.camber_z, semispan=stations.semispan, notes=stations.notes)
    cs = ControlSurfaceGeometry(y_from_m=max(y0, 0.0), y_to_m=y1, stations=tuple(kept),
                                hinge_x_over_c=np.array(hinge_f), hinge_xz_m=np.array(hinge_xz),
                                body=int(body_no))
    return new, cs
