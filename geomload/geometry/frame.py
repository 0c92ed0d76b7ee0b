"""Find the wing frame of a CAD triangle soup (`WingFrame`).

Rules (common practice, no source):
- span axis = the principal axis of largest spread of the surface (area-weighted), chord axis the
  next, up the thinnest; `span_axis` / `up_axis` ("x", "+y", "-z") override. When that span
  axis is in doubt (two largest extents within a factor 1.6, or no flat end face normal to it)
  the candidates (both principal axes in the planform plane, flat end-face normals) are graded
  by trial sections (`_choose_span_axis`) and the notes say which evidence decided.
- full wing when cuts mirrored about the mid-span plane match (or the chord falls off towards both
  ends); otherwise a half wing whose root is the end with the larger chord. y = 0 on the root
  plane (half; its normal is taken from the flat root cap when there is one, so dihedral is
  measured from it) or on the mid-span symmetry plane (full).
- x aft along the root chord. The trailing edge is the contour point farthest from the section's
  area centroid (an airfoil's centroid lies ahead of mid-chord: the rounded nose is full, the tail
  thin), the leading edge the point farthest from the trailing edge.
- z = x cross y (right-handed). For a full wing the sign of y is chosen so that z is up: the
  given `up_axis`, else positive camber, else tips above the centre (positive dihedral), else
  the positive CAD axis. A half wing is taken as the starboard side (y from root to tip); a
  negative camber there is reported (it may be a port wing).
"""

from __future__ import annotations

import numpy as np

from ..errors import GeometryError, InputError
from .records import WingFrame
from .frameutil import basis as _basis, root_cap_normal as _root_cap_normal, snap as _snap, unit as _unit
from .readers import triangle_areas
from .section import section_properties
from .slicing import slice_indexed
from .spanaxis import _AMBIGUOUS_EXTENT, _choose_span_axis, _end_cap
from .spanindex import SpanIndex
from .stations import INSET

_AXES = {"x": 0, "y": 1, "z": 2}
_PROFILE = np.linspace(0.04, 0.96, 9)


def parse_axis(text, what):
    """'x', '+Y', '-z' -> (unit vector or None sign, index). Raises InputError."""
    s = str(text).strip().lower()
    sign = None
    if s[:1] in "+-" and len(s) == 2:
        sign, s = (1.0 if s[0] == "+" else -1.0), s[1:]
    if s not in _AXES:
        raise InputError(f"{what} {text!r} not one of x, y, z (optionally signed, e.g. +y, -z)")
    return _AXES[s], sign


def axis_label(v):
    """'+Y' / '-Z' when v lies within 1 degree of a CAD axis, else its components."""
    v = np.asarray(v, float)
    i = int(np.argmax(np.abs(v)))
    if abs(v[i]) >= np.cos(np.radians(1.0)):
        return ("+" if v[i] > 0 else "-") + "XYZ"[i]
    return "({:+.3f}, {:+.3f}, {:+.3f})".format(*v)


def detect_frame(mesh, span_axis=None, up_axis=None, side=None) -> WingFrame:
    """Detect span / chord / up axes, half or full wing, and the root plane of a `WingMesh`.

    Returns a `WingFrame` with p_wing = rotation @ (p_cad - origin); the origin is the root
    (half wing) or centre-section (full wing) leading edge. Raises GeometryError when the mesh
    has no closed section or is not wing-shaped (section thicker than half its chord).
    """
    return detect_frame_indexed(mesh, span_axis, up_axis, side)[0]


def detect_frame_indexed(mesh, span_axis=None, up_axis=None, side=None):
    """`detect_frame`, also returning the `SpanIndex` it built over the soup, so that
    `sections.cut_stations(..., index=...)` can cut without a second pass over all triangles."""
    tris, src = mesh.triangles, mesh.source
    notes = []
    stride = max(1, tris.shape[0] // 200_000)
    sub = tris[::stride]
    w = triangle_areas(sub)
    cen = (sub[:, 0] + sub[:, 1] + sub[:, 2]) / 3  # triangle centroids
    mean = (w[:, None] * cen).sum(0) / w.sum()
    dev = cen - mean
    evals, evecs = np.linalg.eigh((dev.T * w) @ dev / w.sum())
    e_span, e_chord, e_up = evecs[:, 2], evecs[:, 1], evecs[:, 0]
    s_given = u_given = None
    if span_axis is not None:
        i, sg = parse_axis(span_axis, "span axis")
        e_span = np.eye(3)[i] * (sg or 1.0)
        s_given = sg
    if up_axis is not None:
        i, sg = parse_axis(up_axis, "up axis")
        e_up = np.eye(3)[i] * (sg or 1.0)
        u_given = e_up
        if span_axis is not None and abs(e_up @ e_span) > 0.5:
            raise InputError(f"up axis {up_axis!r} is the same as span axis {span_axis!r}")
    if span_axis is None and up_axis is not None:  # largest spread in the plane normal to up
        P = np.eye(3) - np.outer(e_up, e_up)
        ev, V = np.linalg.eigh(P @ ((dev.T * w) @ dev) @ P)
        e_span = V[:, 2]
    e_chord = _unit(np.cross(e_up, e_span))  # in the planform plane
    if span_axis is None:
        extents = np.ptp(dev @ np.column_stack([e_span, e_chord]), axis=0)
        e_span, snapped = _snap(e_span, 5.0)
        index = SpanIndex(tris, e_span)  # the one pass over all triangles; cuts touch only candidates
        why = None
        if extents[0] < _AMBIGUOUS_EXTENT * extents[1] or not _end_cap(index, e_span):
            e_span, snapped, index, why = _choose_span_axis(tris, sub, w, index, e_span, e_chord, e_up)
            e_chord = _unit(np.cross(e_up, e_span))
        notes.append(why or "span axis from the principal axes of the surface")
    else:
        snapped = True
        notes.append("span axis given")
        index = SpanIndex(tris, e_span)

    # profile of cuts along the provisional span axis
    R0 = _basis(e_span, e_chord)
    lo, hi = index.s_min, index.s_max  # CAD coordinate range along the span axis
    o0 = e_span * lo
    cuts = slice_indexed(index, R0, o0, (hi - lo) * _PROFILE)
    prof = np.full((_PROFILE.size, 4), np.nan)
    for k, (loop, _, _) in enumerate(cuts):
        if loop is not None:
            prof[k] = [np.ptp(loop[:, 0]), loop[:, 0].min(), loop[:, 0].max(), loop[:, 1].mean()]
    ok = ~np.isnan(prof[:, 0])
    if ok.sum() < 3:
        raise GeometryError(f"{src}: cannot find closed sections across the span (is it a closed wing surface?)")
    cmax = np.nanmax(prof[:, 0])
    both = ok & ok[::-1]
    resid = float(np.nanmax(np.abs(prof[both] - prof[both][::-1])) / cmax) if both.any() else 1.0
    c_first, c_last = prof[ok][0, 0], prof[ok][-1, 0]
    c_mid = np.nanmax(prof[3:6, 0]) if ok[3:6].any() else cmax
    tapered_both = max(c_first, c_last) < 0.9 * c_mid and abs(c_first - c_last) < 0.1 * c_mid
    full = resid < 0.05 or tapered_both
    if full and resid < 0.05 and abs(c_mid - max(c_first, c_last)) < 0.02 * cmax and snapped:
        if lo >= -0.01 * (hi - lo) or hi <= 0.01 * (hi - lo):  # constant chord: use the CAD origin
            full = False
            notes.append("constant-chord mirror-symmetric mesh on one side of the CAD origin: taken as a half wing")
    if full:
        y_hat = e_span
        notes.append(f"full wing (cuts mirror about mid-span to {100 * resid:.1f} % of chord)")
    else:
        root_at_lo = c_first >= c_last
        if abs(c_first - c_last) < 0.02 * cmax:
            if snapped:
                root_at_lo = abs(lo) <= abs(hi)
                notes.append("root and tip chords are alike: root taken at the end nearer the CAD origin")
            else:
                notes.append("root and tip chords are alike: root end chosen arbitrarily")
        if s_given is not None:
            root_at_lo = True  # a signed span axis points root -> tip
        y_hat = e_span if root_at_lo else -e_span
        if s_given is None:
            band = 0.004 * (hi - lo)
            if root_at_lo:
                cand = index.query(lo, lo + band)
                near = cand[index.lo[cand] - lo < band]
            else:
                cand = index.query(hi - band, hi)
                near = cand[hi - index.hi[cand] < band]
            cap = _root_cap_normal(tris[near], y_hat, 0.002 * (hi - lo))
            if cap is not None:
                y_hat = _snap(cap, 0.2)[0]
                notes.append("root plane from the flat root cap")
        notes.append("half wing (root at the larger-chord end)" if abs(c_first - c_last) >= 0.02 * cmax
                     else "half wing")
    par = float(y_hat @ e_span)
    if abs(par) == 1.0:
        yv_min, yv_max = (lo, hi) if par > 0 else (-hi, -lo)
    else:
        yv_min, yv_max = index.extent(y_hat)
    y_root = 0.5 * (yv_min + yv_max) if full else float(yv_min)
    semispan = float(yv_max - y_root)
    root_level = 0.0 if full else INSET * semispan

    # chord direction from the root (or centre) section
    R1 = _basis(y_hat, e_chord)
    o1 = y_hat * y_root
    levels = [root_level] if full else [root_level, 3 * root_level]
    sps = []
    for loop, _, _ in slice_indexed(index, R1, o1, levels):
        if loop is None:
            raise GeometryError(f"{src}: the root section is not a closed loop (hole in the mesh?)")
        sps.append(section_properties(loop))
    sp = sps[0]
    if sp["thickness_ratio"] > 0.5:
        raise GeometryError(f"{src}: does not look like a wing (root section is "
                            f"{100 * sp['thickness_ratio']:.0f} % as thick as it is long)")
    le3 = R1.T @ np.array([sp["le"][0], root_level, sp["le"][1]]) + o1
    te3 = R1.T @ np.array([sp["te"][0], root_level, sp["te"][1]]) + o1
    R = _basis(y_hat, te3 - le3)
    if full:
        origin = le3
    else:  # extrapolate the LE of the two cuts next to the root to the root plane
        le3b = R1.T @ np.array([sps[1]["le"][0], levels[1], sps[1]["le"][1]]) + o1
        origin = le3 + (le3 - le3b) * 0.5
    # up direction
    if full:
        flip, why = _full_wing_up(index, R, origin, semispan, u_given, sp["camber_ratio"])
        if flip:
            R = np.vstack([R[0], -R[1], -R[2]])
        notes.append(f"z up from {why}")
    else:
        if u_given is not None and R[2] @ u_given < 0:
            raise GeometryError(f"{src}: with up axis {up_axis!r} this half wing is a port (left) wing; "
                                f"mirror it to starboard")
        camber = 0.5 * (sps[0]["camber_ratio"] + sps[1]["camber_ratio"])  # same in R1 and R
        if camber < -0.002:
            notes.append("sections show negative camber in the detected frame: a port (left) or "
                         "upside-down half wing? (give --up-axis)")
    asym = _asymmetry(index, R, origin, semispan) if full else 0.0
    return WingFrame(rotation=R, origin=origin, full_span=bool(full), span_axis=axis_label(R[1]),
                     up_axis=axis_label(R[2]), asymmetry=asym, notes=tuple(notes)), index


def _full_wing_up(index, R, origin, semispan, u_given, cam):
    """Should y and z be flipped so that z is up? Returns (flip, reason)."""
    if u_given is not None:
        return bool(R[2] @ u_given < 0), "the given up axis"
    if abs(cam) > 0.002:
        return cam < 0, "positive camber"
    cuts = slice_indexed(index, R, origin, semispan * np.array([0.0, 0.9]))
    if cuts[0][0] is not None and cuts[1][0] is not None:
        dz = cuts[1][0][:, 1].mean() - cuts[0][0][:, 1].mean()
        if abs(dz) > np.tan(np.radians(0.5)) * 0.9 * semispan:
            return dz < 0, "positive dihedral (symmetric sections)"
    i = int(np.argmax(np.abs(R[2])))
    return bool(R[2][i] < 0), "the positive CAD axis (no camber or dihedral to tell)"


def _asymmetry(index, R, origin, semispan):
    """Max |starboard - port| LE/TE position and chord difference over mirrored cuts / semispan."""
    f = np.array([0.2, 0.4, 0.6, 0.8, 0.95]) * semispan
    cuts = slice_indexed(index, R, origin, np.concatenate([f, -f]))
    worst = 0.0
    for (a, _, _), (b, _, _) in zip(cuts[:f.size], cuts[f.size:]):
        if a is None or b is None:
            continue
        pa, pb = section_properties(a), section_properties(b)
        diff = max(np.abs(pa["le"] - pb["le"]).max(), np.abs(pa["te"] - pb["te"]).max(), abs(pa["chord"] - pb["chord"]))
        worst = max(worst, float(diff))
    return worst / semispan
