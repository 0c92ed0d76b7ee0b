"""Several loops of one station joined into one airfoil: the outer boundary of their union.

Touching or overlapping bodies of one wing (inner and outer panels at a production joint cut at
an angle, two nodes of a scene) give, at a station that cuts both, one loop per body: pieces of
one airfoil that touch along their joint face or overlap. An airfoil is monotone along its chord
(each line normal to the chord meets it twice), and so is each piece. Their union is then bounded
by the upper envelope of the pieces' upper chains and the lower envelope of their lower chains
(common practice, no source). A piece's vertex is kept when no other piece lies beyond it at the
same chordwise position: the joint faces, inside the union, drop out, and overlapping skins
interleave their vertices on the one surface.

Pieces that do not overlap the largest loop chordwise with a common interval at every shared
chordwise position (a second surface above, a separate body) are not joined: they stay stray
loops, as before.
"""

from __future__ import annotations

import numpy as np

GROW = 1e-3  # bounding boxes within 0.1 % of the section's extent touch (a joint face)
TOL = 1e-6  # heights within 1e-6 of the section's extent are equal (one surface, two meshes)


def _signed_area(p):
    q = np.roll(p, -1, 0)
    return 0.5 * float((p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]).sum())


def _chains(uv):
    """(upper, lower) chains of a chord-monotone loop in (u, v), each (k, 2) with u increasing
    from the loop's forward-most to its aft-most vertex."""
    k = uv.shape[0]
    i0, i1 = int(np.argmin(uv[:, 0])), int(np.argmax(uv[:, 0]))
    fwd = uv[np.arange(i0, i0 + (i1 - i0) % k + 1) % k]
    bwd = uv[np.arange(i0, i0 - (i0 - i1) % k - 1, -1) % k]
    out = []
    for c in (fwd, bwd):
        keep = np.concatenate([[True], c[1:, 0] > np.maximum.accumulate(c[:, 0])[:-1]])
        out.append(c[keep])
    a, b = out
    return (a, b) if a[:, 1].mean() >= b[:, 1].mean() else (b, a)


def _at(chain, u):
    """Height of a chain at u (NaN outside its chordwise range)."""
    v = np.interp(u, chain[:, 0], chain[:, 1])
    return np.where((u >= chain[0, 0]) & (u <= chain[-1, 0]), v, np.nan)


def join_loops(loops):
    """(loop (k, 2), n_joined): the outer boundary of the union of the loops that overlap the
    largest one (by extent), and how many loops went into it (1: the largest loop alone)."""
    loops = [np.asarray(lp, float) for lp in loops if lp is not None and len(lp) >= 3]
    ext = [float(np.ptp(lp, 0).max()) for lp in loops]
    main = loops[int(np.argmax(ext))]
    size = max(ext)
    lo, hi = main.min(0) - GROW * size, main.max(0) + GROW * size
    group = [main] + [lp for lp in loops if lp is not main
                      and np.all(lp.min(0) <= hi) and np.all(lp.max(0) >= lo)]
    if len(group) == 1:
        return main, 1
    pts = np.concatenate(group)
    a, b = pts[np.argmin(pts[:, 0])], pts[np.argmax(pts[:, 0])]
    u_hat = (b - a) / np.linalg.norm(b - a)
    v_hat = np.array([-u_hat[1], u_hat[0]])
    ch = [_chains(np.column_stack([(lp - a) @ u_hat, (lp - a) @ v_hat])) for lp in group]
    tol = TOL * size
    # only pieces whose span of heights meets the main one's at every shared chordwise position
    keep = [0]
    for j in range(1, len(group)):
        up_m, lo_m = ch[0]
        up_j, lo_j = ch[j]
        u = np.concatenate([up_j[:, 0], lo_j[:, 0]])
        gap = np.maximum(_at(lo_m, u) - _at(up_j, u), _at(lo_j, u) - _at(up_m, u))
        if np.all(np.isnan(gap)) and not (abs(up_j[0, 0] - up_m[-1, 0]) <= GROW * size
                                         or abs(up_m[0, 0] - up_j[-1, 0]) <= GROW * size):
            continue  # no common chordwise position and not end to end
        if np.nanmax(np.append(gap, -1.0)) > tol:
            continue  # above or below the main piece: another surface
        keep.append(j)
    if len(keep) == 1:
        return main, 1
    ch = [ch[j] for j in keep]
    env = []
    for side, better in ((0, np.greater_equal), (1, np.less_equal)):
        kept = []
        for i, c in enumerate(ch):
            ok = np.ones(c[side].shape[0], bool)
            for j, d in enumerate(ch):
                if j != i:
                    other = _at(d[side], c[side][:, 0])
                    shifted = other - tol if side == 0 else other + tol
                    ok &= np.isnan(other) | better(c[side][:, 1], shifted)
            kept.append(c[side][ok])
        e = np.concatenate(kept)
        env.append(e[np.argsort(e[:, 0], kind="stable")])
    upper, lower = env
    uv = np.concatenate([upper[::-1], lower])
    step = np.linalg.norm(np.diff(np.vstack([uv, uv[:1]]), axis=0), axis=1)
    uv = uv[step > tol]  # drop repeated points (the shared nose and tail vertices)
    loop = a + uv[:, :1] * u_hat + uv[:, 1:] * v_hat
    if np.sign(_signed_area(loop)) != np.sign(_signed_area(main)):
        loop = loop[::-1]
    return loop, len(keep)
