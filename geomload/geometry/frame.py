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
- Full wing: z = x cross y, the sign of y chosen so that z is up: a signed `up_axis`, else
  positive camber, else an unsigned `up_axis`, else tips above the centre (positive dihedral),
  else the positive CAD axis.
- Half wing: y runs root -> tip (starboard in the wing frame). Up is decided by a signed
  `up_axis`, else the given `side`, else the camber of the root sections, else an unsigned
  `up_axis`, else the dihedral or the positive CAD axis (both a warning). When up is against
  x cross y the half wing lies mirrored in the file (a port half in right-handed axes, or a
  starboard one in a left-handed frame, told apart by the winding of the mesh normals): the
  rotation becomes a reflection (det -1, `WingFrame.mirrored`), with a warning.
- A half wing whose root lies off the CAD plane normal to a CAD-axis span (an exposed-wing
  export) keeps that plane as y = 0 (`WingFrame.y_root`), with a warning.
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
# Thresholds of the frame detection (common practice, no source):
# a mean-line height above 0.2 % of the chord is camber, not faceting noise (NACA 1xxx sections
# have 1 %, and a 100-point contour misplaces the mean line by under 0.05 % c)
CAMBER_DECIDES = 0.002
# tips more than 0.5 deg of dihedral above the root: the dihedral says which way is up
DIHEDRAL_DECIDES_DEG = 0.5
# a root further than 0.1 % of the span from the CAD plane and no further than half the span
# (fuselage half-widths are a fraction of the semi-span) is an exposed wing's root
EXPOSED_MIN, EXPOSED_MAX = 1e-3, 0.5
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


def detect_frame_indexed(mesh, span_axis=None, up_axis=None, side=None, index=None):
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
    u_signed = False
    if side not in (None, "port", "starboard"):
        raise InputError(f"side {side!r} not one of port, starboard")
    if span_axis is not None:
        i, sg = parse_axis(span_axis, "span axis")
        e_span = np.eye(3)[i] * (sg or 1.0)
        s_given = sg
    if up_axis is not None:
        i, sg = parse_axis(up_axis, "up axis")
        e_up = np.eye(3)[i] * (sg or 1.0)
        u_given, u_signed = e_up, sg is not None
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
        if index is None or index.tris is not tris or not np.array_equal(index.e, e_span):
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
            cap = _root_cap_normal(tris, y_hat, 0.002 * (hi - lo), rows=near)
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
    sps, loops = [], []
    for loop, _, _ in slice_indexed(index, R1, o1, levels):
        if loop is None:
            raise GeometryError(f"{src}: the root section is not a closed loop (hole in the mesh?)")
        sps.append(section_properties(loop))
        loops.append(loop)
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
        flip, why = _full_wing_up(index, R, origin, semispan, u_given, u_signed, sp["camber_ratio"])
        if flip:
            R = np.vstack([R[0], -R[1], -R[2]])
        notes.append(f"z up from {why}")
        side_found, mirrored = "full", False
    else:
        camber = 0.5 * (sps[0]["camber_ratio"] + sps[1]["camber_ratio"])  # same in R1 and R
        hand = _winding(loops[0])
        up, why, guessed = _half_wing_up(index, R, origin, semispan, u_given, u_signed, side, camber,
                                         hand, src)
        mirrored = up < 0
        if mirrored:
            R = np.vstack([R[0], R[1], -R[2]])  # a reflection: det -1, maps back exactly
        side_found = _side_text(mirrored, hand)
        text = (f"z up from {why}; {side_found} half wing"
                + (" (mesh normals point inward in right-handed axes: a mirrored, left-handed "
                   "CAD frame)" if hand < 0 else ""))
        if mirrored:
            how = "mirrored onto the starboard side" if hand > 0 else "reflected into the right-handed wing frame"
            notes.append(f"warning: side: {text}: {how} (wing y = CAD "
                         f"{axis_label(R[1])}, up = CAD {axis_label(R[2])}); the transform "
                         f"is a reflection (det -1)")
        elif guessed:
            notes.append(f"warning: up: {text}; give up_axis (e.g. \"-y\") or side if wrong")
        else:
            notes.append(text)
        if guessed and mirrored:
            notes.append("warning: up: the sections are symmetric, so up versus down was not "
                         "decided by the airfoil; give up_axis or side if wrong")
        side_found = "port" if mirrored == (hand > 0) else "starboard"
    y_root = 0.0
    if not full and snapped and s_given is None:
        y_root = _exposed_root(y_hat, yv_min, semispan)
        if y_root > 0.0:
            origin = origin - y_hat * y_root
            notes.append(f"warning: exposed: the root lies {y_root:.4g} m off the CAD's plane "
                         f"{axis_label(y_hat)[1]} = 0, which is kept as the plane of symmetry "
                         f"(y = 0); the planform reports the exposed and the gross wing")
    asym = _asymmetry(index, R, origin, semispan) if full else 0.0
    return WingFrame(rotation=R, origin=origin, full_span=bool(full), span_axis=axis_label(R[1]),
                     up_axis=axis_label(R[2]), asymmetry=asym, notes=tuple(notes),
                     mirrored=bool(mirrored), side=side_found, y_root=float(y_root)), index


def _full_wing_up(index, R, origin, semispan, u_given, u_signed, cam):
    """Should y and z be flipped so that z is up? Returns (flip, reason)."""
    if u_given is not None and u_signed:
        return bool(R[2] @ u_given < 0), "the given up axis"
    if abs(cam) > CAMBER_DECIDES:
        return cam < 0, "positive camber"
    if u_given is not None:
        return bool(R[2] @ u_given < 0), "the given up axis"
    dz = _tip_rise(index, R, origin, semispan)
    if dz is not None and abs(dz) > np.tan(np.radians(DIHEDRAL_DECIDES_DEG)) * 0.9 * semispan:
        return dz < 0, "positive dihedral (symmetric sections)"
    i = int(np.argmax(np.abs(R[2])))
    return bool(R[2][i] < 0), "the positive CAD axis (no camber or dihedral to tell)"


def _tip_rise(index, R, origin, semispan):
    """Height (along R[2]) of the section at 90 % semi-span above the root's, or None."""
    cuts = slice_indexed(index, R, origin, semispan * np.array([INSET, 0.9]))
    if cuts[0][0] is None or cuts[1][0] is None:
        return None
    return float(cuts[1][0][:, 1].mean() - cuts[0][0][:, 1].mean())


def _winding(loop):
    """+1 when a root cut's loop runs as an outward-wound surface's does in right-handed axes.

    The cut orients each segment from the triangle's up-crossing edge to its down-crossing edge
    (see `slicing`); for a closed surface with outward normals in right-handed axes that loop
    is counter-clockwise in (x, z) (positive signed area; checked on the lofted NACA wings,
    whose faces are wound outward).
    """
    p = np.asarray(loop, float)
    q = np.roll(p, -1, 0)
    area = 0.5 * float((p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]).sum())
    return 1 if area > 0 else -1


def _half_wing_up(index, R, origin, semispan, u_given, u_signed, side, camber, hand, src):
    """(+1 or -1, reason, guessed): is the wing's up R[2] (+1) or -R[2] (-1)?

    R has rows (chord aft, root -> tip, their cross product). Decided by, in this order: a
    signed up axis given; the side given (with the handedness the mesh normals show); the
    camber of the root sections (an airfoil's mean line bulges up); an unsigned up axis; the
    dihedral (tips above the root: guessed); the positive CAD axis (guessed).
    """
    if u_given is not None and u_signed:
        return (1 if R[2] @ u_given > 0 else -1), "the given up axis", False
    if side is not None:
        return (hand if side == "starboard" else -hand), f"the given side ({side})", False
    if abs(camber) > CAMBER_DECIDES:
        return (1 if camber > 0 else -1), f"the camber of the sections ({100 * abs(camber):.2f} % c)", False
    if u_given is not None:
        return (1 if R[2] @ u_given > 0 else -1), "the given up axis", False
    dz = _tip_rise(index, R, origin, semispan)
    if dz is not None and abs(dz) > np.tan(np.radians(DIHEDRAL_DECIDES_DEG)) * 0.9 * semispan:
        return (1 if dz > 0 else -1), "the dihedral (symmetric sections; tip taken above the root)", True
    i = int(np.argmax(np.abs(R[2])))
    return (1 if R[2][i] > 0 else -1), "the positive CAD axis (symmetric sections, no dihedral)", True


def _side_text(mirrored, hand):
    if hand > 0:
        return "a port" if mirrored else "a starboard"
    return "a starboard" if mirrored else "a port"


def _exposed_root(y_hat, yv_min, semispan):
    """Distance of the root from the CAD's plane normal to a CAD-axis span (0: keep the root).

    A root between 0.1 % and EXPOSED_MAX of the wing's own span outboard of the CAD plane is an
    exposed-wing export: the CAD plane is its plane of symmetry (common practice, no source).
    """
    i = int(np.argmax(np.abs(y_hat)))
    if abs(y_hat[i]) != 1.0:
        return 0.0
    reach = float(yv_min)  # y_hat . p at the root; the CAD plane is y_hat . p = 0
    span = float(semispan)
    if EXPOSED_MIN * span < reach <= EXPOSED_MAX * span:
        return reach
    return 0.0


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
