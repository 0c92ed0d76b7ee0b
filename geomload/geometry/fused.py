"""A whole aircraft fused into one shell (a boolean union of wing, fuselage, tail surfaces):
find the wing in it and cut it out at the fuselage side.

Method (common practice, no source):
- Span axis: of the shell's three principal axes, the one along which plane cuts give thin
  closed loops (t/c at most `stations.MAX_THICKNESS_RATIO`) over the longest reach, that reach
  being at least twice their median chord (a wing is longer than it is deep; cuts along the
  fuselage or across the wing's thickness give loops as long as the span).
- Symmetry plane: mid-way between the two ends of the shell along that axis (the wing tips).
- Fuselage side: marching in from near the tip, each cut's wing loop is the loop holding the
  previous station's quarter-chord point; the section stops being the wing's airfoil where its
  chord or thickness departs by more than DEPARTS from the straight extrapolation of the two
  stations outboard of it. The step found is refined by bisection. Another loop in the same
  plane (a tailplane beside the fuselage) is not the wing's and is left out.
- The shell is clipped by the plane just outboard of the fuselage side (edge points computed
  alike for both triangles of an edge, so the pieces stay welded); the piece that reaches
  farthest along the span is the exposed wing panel, the other pieces outboard are tail
  surfaces. The panel's root is closed by a flat fan, so the frame finds its root plane.
"""

from __future__ import annotations

import numpy as np

DEPARTS = 0.02  # a section departing 2 % in chord or thickness from the wing's trend is no longer the wing's
BODY_GROWTH = 1.5  # the innermost section at least 1.5 x the wing's chord or thickness: the wing meets a body
_LEVELS = 48  # marching steps from 95 % of the half-extent to the centre
_SCORE_LEVELS = np.linspace(0.02, 0.98, 33)
_BISECT = 10
# a second wing-like axis reaching 60 % as far as the first: two crossing surfaces (as
# bodies.SIMILAR_SPAN for separate ones)
SIMILAR_SPAN = 0.6
# a separate control surface behind the wing: its loop within 3 % of the chord of the wing's
# trailing edge (as bodies.GAP) belongs to the section; at its spanwise ends a clearance of 2 %
# of its span is still its cut-out (as control.END_MARGIN)
CONTROL_GAP = 0.03
CONTROL_END = 0.02


def _props(loop):
    from .section import section_properties

    try:
        sp = section_properties(loop)
    except (ValueError, FloatingPointError, IndexError, TypeError, ZeroDivisionError,
            np.linalg.LinAlgError):  # a loop no airfoil measure fits: not a wing section
        return None
    if not (np.isfinite(sp["chord"]) and sp["chord"] > 0 and np.isfinite(sp["thickness_ratio"])):
        return None
    return sp


def _basis(e, hint):
    x = hint - (hint @ e) * e
    x = x / np.linalg.norm(x)
    return np.vstack([x, e, np.cross(x, e)])


def span_axis(tris, source="<mesh>"):
    """(unit axis, centre level along it, cut basis) of the wing in a fused shell, or None when
    no axis gives wing-like cuts. Raises GeometryError (naming `source`) when two axes do
    alike (two crossing lifting surfaces)."""
    from .bodies import principal
    from .frameutil import snap
    from .slicing import slice_all
    from .stations import MAX_THICKNESS_RATIO

    _, axes, _ = principal(tris)
    pts = tris.reshape(-1, 3)
    valid = []
    for i in range(3):
        e = snap(axes[i], 5.0)[0]
        R = _basis(e, axes[(i + 1) % 3])
        s = pts @ e
        lo, hi = float(s.min()), float(s.max())
        levels = lo + (hi - lo) * _SCORE_LEVELS
        chords, n_thin = [], 0
        for loops in slice_all(tris, R, e * 0.0, levels):
            thin = [sp for sp in map(_props, loops) if sp is not None
                    and sp["thickness_ratio"] <= MAX_THICKNESS_RATIO]
            if thin:
                n_thin += 1
                chords.append(min(sp["chord"] for sp in thin))
        reach = (hi - lo) * n_thin / levels.size
        if chords and reach >= 2.0 * float(np.median(chords)):
            valid.append((reach, e, 0.5 * (lo + hi), R))
    if not valid:
        return None
    valid.sort(key=lambda v: -v[0])
    best = valid[0]
    if len(valid) > 1 and valid[1][0] >= SIMILAR_SPAN * best[0]:
        from ..errors import GeometryError

        raise GeometryError(f"{source}: one shell holding two crossing lifting surfaces of "
                            f"{best[0]:.3g} m and {valid[1][0]:.3g} m reach; export the wing as a "
                            "separate body and give --body N")
    return best[1], best[2], best[3]


def _inside(p, loop):
    """True when point p (2,) lies inside the closed polygon loop (k, 2) (even-odd rule)."""
    a, b = loop, np.roll(loop, -1, 0)
    cross = (a[:, 1] > p[1]) != (b[:, 1] > p[1])
    with np.errstate(divide="ignore", invalid="ignore"):
        x = a[:, 0] + (p[1] - a[:, 1]) * (b[:, 0] - a[:, 0]) / (b[:, 1] - a[:, 1])
    return bool(np.count_nonzero(cross & (x > p[0])) % 2)


def _behind(sp, loops, wing_loop):
    """The section's props extended to the trailing edge of a separate control surface whose
    loop lies behind the wing's trailing edge (its nearest point within CONTROL_GAP of the
    chord from the TE): chord from the wing's LE to the control surface's farthest point along
    the chord line, t/c scaled to that chord. sp unchanged when there is none."""
    if sp is None:
        return sp
    le, te = np.asarray(sp["le"], float), np.asarray(sp["te"], float)
    c = float(sp["chord"])
    u = (te - le) / c
    best = None
    for lp in loops:
        if lp is wing_loop:
            continue
        if _distance_to_loop(te, lp) > CONTROL_GAP * c:
            continue
        reach = float(((lp - le) @ u).max())
        if reach > c and (best is None or reach > best[0]):
            best = (reach, lp[int(np.argmax((lp - le) @ u))])
    if best is None:
        return sp
    out = dict(sp)
    out["chord"] = best[0]
    out["thickness_ratio"] = sp["thickness_ratio"] * c / best[0]
    out["te"] = best[1]
    return out


def _distance_to_loop(p, loop):
    """Distance (m) from point p (2,) to the closed polygon loop (k, 2), edges included."""
    a, b = loop, np.roll(loop, -1, 0)
    ab = b - a
    t = np.clip(((p - a) * ab).sum(1) / np.maximum((ab * ab).sum(1), 1e-300), 0.0, 1.0)
    d = a + ab * t[:, None] - p
    return float(np.sqrt((d * d).sum(1)).min())


def _control_cuts(controls, R, origin, levels):
    """Per level, the loops of the control-surface soups cut there; a level in the small
    spanwise clearance at either end of a control surface (CONTROL_END of its span) cuts it just
    inside its end, as the station cuts do (`control.attach`)."""
    from .slicing import slice_all

    out = [[] for _ in levels]
    R = np.asarray(R, float)
    for t in controls:
        yb = (t.reshape(-1, 3) - origin) @ R[1]
        y0, y1 = float(yb.min()), float(yb.max())
        pad, inner = CONTROL_END * (y1 - y0), 1e-3 * (y1 - y0)
        on = [i for i, lv in enumerate(levels) if y0 - pad < lv < y1 + pad]
        if not on:
            continue
        cl = np.clip([levels[i] for i in on], y0 + inner, y1 - inner)
        for i, loops in zip(on, slice_all(t, R, origin, cl)):
            out[i] += list(loops)
    return out


def march(tris, R, origin, start, stop, steps=_LEVELS, controls=()):
    """March cuts normal to R[1] from level `start` towards `stop` (frame levels from origin).

    controls: triangle soups of separate control surfaces behind the wing (a fused shell's
    wing with a cut-out for them): where one lies behind the wing's section, the section runs
    to its trailing edge, so a cut-out does not pass for the end of the wing.

    Returns (good, y_side, y_good, reached_body): good = list of (level, loop, props) of the
    wing's sections, y_side the level where the section stops being the wing's airfoil (None
    when it never does), y_good the innermost level still on the wing, reached_body True when
    the section there grows into a body (BODY_GROWTH)."""
    from .slicing import slice_all

    levels = np.linspace(start, stop, steps)
    cuts = slice_all(tris, R, origin, levels)
    extra = _control_cuts(controls, R, origin, levels) if controls else [[]] * len(levels)
    good = []

    def pick(loops, level):
        if not good:
            loops = [lp for lp in loops if _props(lp) is not None]
            return max(loops, key=lambda lp: float(np.ptp(lp[:, 0]))) if loops else None
        sp = good[-1][2]
        qc = sp["le"] + 0.25 * (sp["te"] - sp["le"])
        hold = [lp for lp in loops if _inside(qc, lp)]
        return hold[0] if hold else None

    def departs(loop, level, more=()):
        sp = _props(loop) if loop is not None else None
        sp = _behind(sp, more, loop) if more else sp
        if sp is None:
            return True, None
        if len(good) < 2:
            return False, sp
        (y1, _, a), (y2, _, b) = good[-2], good[-1]
        t = (level - y2) / (y2 - y1)
        for key in ("chord", "thick"):
            va = a["chord"] * (a["thickness_ratio"] if key == "thick" else 1.0)
            vb = b["chord"] * (b["thickness_ratio"] if key == "thick" else 1.0)
            v = sp["chord"] * (sp["thickness_ratio"] if key == "thick" else 1.0)
            pred = vb + t * (vb - va)
            if not abs(v - pred) <= DEPARTS * abs(pred):
                return True, sp
        return False, sp

    bad_level = None
    for level, loops, more in zip(levels, cuts, extra):
        loop = pick(loops, level)
        bad, sp = departs(loop, level, more)
        if bad:
            if not good:
                return [], None, None, False
            bad_level = level
            break
        good.append((float(level), loop, sp))
    if bad_level is None:
        return good, None, good[-1][0] if good else None, False
    lo, hi = good[-1][0], float(bad_level)
    for _ in range(_BISECT):
        mid = 0.5 * (lo + hi)
        loops = slice_all(tris, R, origin, [mid])[0]
        more = _control_cuts(controls, R, origin, [mid])[0] if controls else ()
        bad, _ = departs(pick(loops, mid), mid, more)
        lo, hi = (lo, mid) if bad else (mid, hi)
    # does the section inboard grow into a body all the way in (a fuselage), or just end (a
    # hole), or become the wing again (a nacelle or pod on the wing)?
    sp_w = good[-1][2]
    body = True
    for loops in slice_all(tris, R, origin, [stop + f * (hi - stop) for f in (0.5, 0.05)]):
        loop = pick(loops, hi)
        sp_in = _props(loop) if loop is not None else None
        body &= sp_in is not None and (
            sp_in["chord"] >= BODY_GROWTH * sp_w["chord"]
            or sp_in["chord"] * sp_in["thickness_ratio"]
            >= BODY_GROWTH * sp_w["chord"] * sp_w["thickness_ratio"])
    return good, hi, lo, bool(body)


def clip_above(tris, n, level):
    """(kept triangles, boundary segments (k, 2, 3), triangle index of each segment) of the part
    of the soup with n . p >= level. Edge points are interpolated from the edge's lower to its
    upper vertex, so both triangles of an edge give bit-identical points."""
    d = tris[..., 0] * n[0] + tris[..., 1] * n[1] + tris[..., 2] * n[2] - level  # per vertex
    up = d >= 0
    cnt = up.sum(1)
    out, seg, owner = [tris[cnt == 3]], [], []
    base = np.nonzero(cnt == 3)[0].size

    def cross(P, Q, dP, dQ):  # P below, Q above
        t = (dP / (dP - dQ))[:, None]
        return P + (Q - P) * t

    for k in (1, 2):
        idx = np.nonzero(cnt == k)[0]
        if idx.size == 0:
            continue
        T, D, U = tris[idx], d[idx], up[idx]
        lone = U if k == 1 else ~U  # the vertex alone on its side
        i = np.argmax(lone, 1)
        r = np.arange(idx.size)
        i1, i2 = (i + 1) % 3, (i + 2) % 3
        P0, P1, P2 = T[r, i], T[r, i1], T[r, i2]
        d0, d1, d2 = D[r, i], D[r, i1], D[r, i2]
        if k == 1:  # P0 above: X01 from P1 (below), X20 from P2 (below)
            X01, X20 = cross(P1, P0, d1, d0), cross(P2, P0, d2, d0)
            new = np.stack([P0, X01, X20], 1)
            out.append(new)
            seg.append(np.stack([X01, X20], 1))
            owner.append(base + np.arange(idx.size))
            base += idx.size
        else:  # P0 below: the quad X01, P1, P2, X20
            X01, X20 = cross(P0, P1, d0, d1), cross(P0, P2, d0, d2)
            out += [np.stack([X01, P1, P2], 1), np.stack([X01, P2, X20], 1)]
            seg.append(np.stack([X20, X01], 1))
            owner.append(base + idx.size + np.arange(idx.size))  # the second triangle holds it
            base += 2 * idx.size
    kept = np.concatenate(out)
    seg = np.concatenate(seg) if seg else np.zeros((0, 2, 3))
    owner = np.concatenate(owner) if owner else np.zeros(0, int)
    return kept, seg, owner


def cap(seg):
    """Fan triangles closing a planar boundary (segments in the kept part's order), wound
    outward (against the kept triangles' traversal of each boundary edge)."""
    if seg.shape[0] == 0:
        return np.zeros((0, 3, 3))
    c = seg.reshape(-1, 3).mean(0)
    return np.stack([seg[:, 1], seg[:, 0], np.broadcast_to(c, seg[:, 0].shape)], 1)
