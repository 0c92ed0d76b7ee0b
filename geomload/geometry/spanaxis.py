"""The span axis when the principal axes of the surface do not settle it.

Candidates (both principal axes in the planform plane, the normals of flat end faces) are graded
by trial sections cut normal to each (common practice, no source).
"""

from __future__ import annotations

import numpy as np

from .section import section_properties
from .slicing import slice_indexed
from .spanindex import SpanIndex
from .frameutil import basis as _basis, root_cap_normal as _root_cap_normal, snap as _snap, unit as _unit

_AMBIGUOUS_EXTENT = 1.6  # two largest principal extents within this factor: span axis ambiguous
_CAP_AGREES_DEG = 5.0  # a flat end face within this of the principal span axis confirms it
_TRIAL = np.linspace(0.08, 0.92, 9)


def _flat_caps(sub, w, e_up, extent):
    """Normals (unit, sign arbitrary) of flat end faces of the subsample whose normal lies in the
    planform plane (normal to e_up) and whose outline is airfoil-like, largest area first.

    A face is a group of coplanar triangles (normals within 0.5 deg, one plane within 1e-4 of
    the extent) lying at the extreme of the surface along its normal, with area at least 0.1 %
    of the surface and a thickness/length outline ratio of 3 .. 50 % (a blunt trailing-edge
    strip or a leading-edge line of facets is far thinner).
    """
    n = np.cross(sub[:, 1] - sub[:, 0], sub[:, 2] - sub[:, 0])
    a = np.linalg.norm(n, axis=1)
    ok = a > 0
    u = n[ok] / a[ok][:, None]
    inplane = np.abs(u @ e_up) < np.sin(np.radians(20.0))
    idx = np.nonzero(ok)[0][inplane]
    u = u[inplane]
    if idx.size == 0:
        return []
    p = _unit(np.cross(e_up, [1.0, 0, 0]) if abs(e_up[0]) < 0.9 else np.cross(e_up, [0, 1.0, 0]))
    q = np.cross(e_up, p)
    phi = np.degrees(np.arctan2(u @ q, u @ p)) % 360.0
    hist = np.bincount(np.floor(phi / 0.5).astype(int) % 720, weights=w[idx], minlength=720)
    caps, total, verts = [], w.sum(), sub.reshape(-1, 3)
    for b in np.argsort(hist)[::-1][:6]:
        if hist[b] < 1e-3 * total:
            break
        d = np.abs((phi - (b + 0.5) * 0.5 + 180.0) % 360.0 - 180.0) < 0.75
        if not d.any():
            continue
        nrm = _unit((u[d] * w[idx[d], None]).sum(0))
        off = sub[idx[d], 0] @ nrm
        top = float((verts @ nrm).max())
        face = np.abs(off - top) < 1e-4 * extent
        area = float(w[idx[d]][face].sum())
        if area < 1e-3 * total or any(abs(c @ nrm) > np.cos(np.radians(1.0)) for c, _ in caps):
            continue
        pts = sub[idx[d]][face].reshape(-1, 3)
        thick, length = np.ptp(pts @ e_up), np.ptp(pts @ _unit(np.cross(e_up, nrm)))
        if length > 0 and 0.03 <= thick / length <= 0.5:
            caps.append((nrm, area))
    return sorted(caps, key=lambda c: -c[1])


def _end_cap(index, axis, deg=_CAP_AGREES_DEG, band=0.004):
    """[(end, cap area)] of the flat faces at either end of `index` whose normal lies within
    deg of axis (end 0 = low end, 1 = high end); empty when neither end is flat."""
    lo, hi = index.s_min, index.s_max
    out = []
    for k, (end, y_hat) in enumerate(((lo, axis), (hi, -axis))):
        near = index.query(end - band * (hi - lo), end + band * (hi - lo))
        c = _root_cap_normal(index.tris, y_hat, 0.002 * (hi - lo), with_area=True, rows=near)
        if c is not None and c[0] @ y_hat > np.cos(np.radians(deg)):
            out.append((k, c[1]))
    return out


def _loop_area(p):
    q = np.roll(p, -1, 0)
    return 0.5 * abs(float((p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]).sum()))


def _trial_sections(tris, axis, e_up, index=None):
    """Cut 9 trial sections normal to `axis` (8 .. 92 % of the extent) and grade them as a wing's.

    Returns dict(ok, penalty, cap, text, index): ok when at least 7 cuts give one closed loop
    and the median t/c is at most 0.35; penalty = missing or multi-loop cuts + twist spread /
    5 deg + relative t/c spread + chord roughness / 1 % (largest residual of a straight or a
    V-shaped chord line, the latter for a full wing); cap when an end is a flat face normal to
    axis (within 1 deg) with at least 30 % of the area of the nearest trial section.
    """
    index = index if index is not None else SpanIndex(tris, axis)
    lo, hi = index.s_min, index.s_max
    R = _basis(axis, np.cross(e_up, axis))
    cuts = slice_indexed(index, R, axis * lo, (hi - lo) * _TRIAL)
    bad, rows, areas = 0, [], {}
    for k, (f, (loop, n_stray, _)) in enumerate(zip(_TRIAL, cuts)):
        bad += int(loop is None or n_stray > 0)
        if loop is not None:
            sp = section_properties(loop)
            rows.append((f, sp["chord"], sp["thickness_ratio"], sp["twist_deg"]))
            areas[k] = _loop_area(loop)
    ends = {0: areas.get(0, 0.0), 1: areas.get(_TRIAL.size - 1, 0.0)}
    cap = any(a >= 0.3 * ends[k] > 0 for k, a in _end_cap(index, axis, 1.0))
    if len(rows) < 4:
        return dict(ok=False, penalty=np.inf, cap=cap, text="no closed sections", index=index)
    f, ch, tc, tw = np.array(rows).T
    tc_med = float(np.median(tc))
    spread = float(np.ptp((tw - np.median(tw) + 180.0) % 360.0 - 180.0))
    rough = min(np.abs(np.polyval(np.polyfit(x, ch, 1), x) - ch).max()
                for x in (f, np.abs(f - 0.5))) / ch.max()
    pen = bad + spread / 5.0 + float(np.ptp(tc)) / max(tc_med, 1e-9) + rough / 0.01
    ok = bad <= 2 and tc_med <= 0.35
    text = (f"{len(rows)}/{_TRIAL.size} closed single loops, median t/c {tc_med:.2f}, twist spread "
            f"{spread:.1f} deg, chord roughness {100 * rough:.1f} %" + (", flat end cap" if cap else ""))
    return dict(ok=ok, penalty=pen, cap=cap, text=text, index=index)


def _choose_span_axis(tris, sub, w, index, e_span, e_chord, e_up):
    """(span axis, snapped, its SpanIndex, note) when the principal span axis is in doubt.

    In doubt (see detect_frame): the two largest principal extents lie within a factor 1.6, or
    neither end along the principal span axis is a flat face normal to it within 5 deg (a
    swept or strongly tapered wing turns its principal axes). Each candidate (the two
    principal axes in the planform plane, and the normals of flat end faces) is graded by
    `_trial_sections`: candidates whose sections look like a wing's come first, among them
    those with a flat end cap normal to the axis (a root cap's normal is the span axis), then
    the lowest penalty.
    """
    cands = [("principal axis", e_span), ("second principal axis", e_chord)]
    for c, _ in _flat_caps(sub, w, e_up, float(np.ptp(sub.reshape(-1, 3) @ e_span))):
        if all(abs(c @ v) < np.cos(np.radians(1.0)) for _, v in cands):
            cands.append(("flat end cap normal", c))
    graded = [(name, v, _trial_sections(tris, v, e_up, index if k == 0 else None))
              for k, (name, v) in enumerate(cands)]
    name, v, g = min(graded, key=lambda t: (not t[2]["ok"], not t[2]["cap"], t[2]["penalty"]))
    s, snapped = _snap(v, 0.2 if name == "flat end cap normal" else 5.0)
    idx = g["index"] if np.array_equal(s, g["index"].e) else SpanIndex(tris, s)
    others = "; ".join(f"{n}: {t['text']}" for n, _, t in graded if n != name)
    return s, snapped, idx, f"span axis chosen from trial sections: {name} ({g['text']}) over {others}"
