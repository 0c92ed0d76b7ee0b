"""Plane cuts of a triangle soup: the slicing engine.

The cut is vectorised numpy: one pass gives each triangle's bounds along the span axis and a
bucket index (`spanindex.SpanIndex`), so each set of planes touches only the triangles near
it; the planes each candidate crosses are found with `np.searchsorted`, and every (triangle,
plane) edge crossing is interpolated at once. An edge is always interpolated from its lower to
its upper vertex, so the two triangles sharing it give bit-identical points and segments chain
into loops by exact key (with a small snapping fallback for unwelded meshes).
"""

from __future__ import annotations

import numpy as np

from .spanindex import SpanIndex, coord


def frame_coords(p: np.ndarray, rotation: np.ndarray, origin: np.ndarray, rows=(0, 1, 2)) -> list:
    """Coordinates of points p (..., 3) along rotation rows (elementwise, so bit-reproducible)."""
    q = [p[..., i] - origin[i] for i in range(3)]
    return [rotation[r, 0] * q[0] + rotation[r, 1] * q[1] + rotation[r, 2] * q[2] for r in rows]


def _min3(a):
    return np.minimum(np.minimum(a[:, 0], a[:, 1]), a[:, 2])


def _max3(a):
    return np.maximum(np.maximum(a[:, 0], a[:, 1]), a[:, 2])


def slice_all(tris, rotation, origin, levels):
    """Every closed loop of each plane cut y_frame = level: a list of (k, 2) (x, z) arrays per
    level (pieces of several bodies, or of one body that the plane meets several times)."""
    return slice_indexed(SpanIndex(tris, np.asarray(rotation, float)[1]), rotation, origin,
                         levels, all_loops=True)


def slice_loops(tris, rotation, origin, levels, tol=None):
    """Cut the soup by the planes y_frame = level; per level return (loop, n_stray, open).

    loop: (k, 2) ordered (x, z) frame coordinates of the largest closed loop (None when the
    largest piece is an open chain or nothing was cut); n_stray: other pieces ignored;
    open: True when the largest piece is not closed (a hole in the mesh).
    """
    return slice_indexed(SpanIndex(tris, np.asarray(rotation, float)[1]), rotation, origin, levels, tol)


def slice_indexed(index, rotation, origin, levels, tol=None, all_loops=False):
    """`slice_loops` on the soup of a `SpanIndex` (whose axis may differ from the plane normal).

    Only the triangles the index finds near the planes are touched; tolerances are relative to
    the extent of the whole soup along the plane normal, as in `slice_loops`.
    all_loops: return, per level, the list of every closed loop ((k, 2) arrays) instead.
    """
    tris = index.tris
    levels = np.asarray(levels, float)
    order = np.argsort(levels)
    lv = levels[order].copy()
    rotation = np.asarray(rotation, float)
    origin = np.asarray(origin, float)
    c0 = float(rotation[1] @ origin)
    s_lo, s_hi = index.extent(rotation[1])
    scale = max(s_hi - s_lo, 1e-300)
    eps = 1e-9 * scale
    tol = 1e-7 * scale if tol is None else tol
    cand = index.near_planes(rotation[1], lv + c0, 1e-6 * scale)  # in file order
    cos = float(rotation[1] @ index.e)
    if abs(cos) == 1.0 and not (rotation[1] - cos * index.e).any():  # normal along the index axis
        lo, hi = (index.lo[cand], index.hi[cand]) if cos > 0 else (-index.hi[cand], -index.lo[cand])
        lo, hi = lo - c0, hi - c0  # selection only
    else:
        yfast = coord(tris[cand], rotation[1]) - c0  # selection only
        lo, hi = _min3(yfast), _max3(yfast)
    for _ in range(8):  # move a plane off any vertex lying on it, then cut
        k0 = np.searchsorted(lv, lo - 4 * eps, "left")
        k1 = np.searchsorted(lv, hi + 4 * eps, "right")
        cnt = k1 - k0
        sel = np.nonzero(cnt > 0)[0]
        c = cnt[sel]
        tri = np.repeat(cand[sel], c)
        start = np.repeat(np.cumsum(c) - c, c)
        pl = np.repeat(k0[sel], c) + (np.arange(tri.size) - start)
        x, yc, z = frame_coords(tris[tri], rotation, origin)  # bit-reproducible per vertex
        d = yc - lv[pl][:, None]
        on = np.abs(d) < eps
        if not on.any():
            break
        lv[np.unique(pl[on.any(1)])] += 7 * eps
    above = d >= 0
    keep = above.any(1) & ~above.all(1)
    pl, d, above = pl[keep], d[keep], above[keep]
    df, xf, zf = d.ravel(), x[keep].ravel(), z[keep].ravel()  # flat (P * 3,) for np.take
    r3 = 3 * np.arange(d.shape[0])
    # each crossed triangle has one up-crossing edge a -> b (a below the plane, b above) and one
    # down-crossing edge; orient its segment from the first to the second: with a consistently
    # wound surface the segments then chain head to tail
    ea, eb = np.array([0, 1, 2]), np.array([1, 2, 0])
    up = ~above[:, ea] & above[:, eb]
    down = above[:, ea] & ~above[:, eb]
    ends = []
    for e in (np.argmax(up, 1), np.argmax(down, 1)):
        a, b = ea[e], eb[e]
        a_up = np.take(above.ravel(), r3 + a)
        lo_v = r3 + np.where(a_up, b, a)  # canonical order: lower vertex first, so both
        hi_v = r3 + np.where(a_up, a, b)  # triangles of an edge give the same point
        dl, dh = np.take(df, lo_v), np.take(df, hi_v)
        t = dl / (dl - dh)
        xl, zl = np.take(xf, lo_v), np.take(zf, lo_v)
        ends.append(np.stack([xl + (np.take(xf, hi_v) - xl) * t, zl + (np.take(zf, hi_v) - zl) * t], -1))
    seg = np.stack(ends, 1)
    srt = np.argsort(pl, kind="stable")
    pl, seg = pl[srt], seg[srt]
    bounds = np.searchsorted(pl, np.arange(lv.size + 1))
    res = _chain_oriented(seg, pl, lv.size, all_loops)
    if all_loops:
        out = [None] * levels.size
        for k in range(lv.size):
            if res[k] is None:
                pieces = _pieces(_cancel(seg[bounds[k]:bounds[k + 1]]), tol)
                res[k] = [p for closed, p in pieces if closed and p.shape[0] >= 3]
            out[order[k]] = res[k]
        return out
    out = [None] * levels.size
    for k in range(lv.size):
        out[order[k]] = (res[k] if res[k] is not None
                         else _chain(_cancel(seg[bounds[k]:bounds[k + 1]]), tol))
    return out


def _chain_oriented(seg, pl, n_levels, all_loops=False):
    """Vectorised chaining of head-to-tail segments; None for levels that need `_chain`.
    all_loops: per level the list of every closed loop instead of (largest, n_stray, open)."""
    S = seg.shape[0]
    res = [[] if all_loops else (None, 0, False) for _ in range(n_levels)]
    if S == 0:
        return res
    os_, oe = _point_orders(seg, pl)
    match = (seg[os_, 0] == seg[oe, 1]).all(1)
    # two segments starting at one point (two bodies sharing a joint face's points): chained
    # with the joint face's opposite segments cancelled (`_cancel`)
    s0 = seg[os_, 0]
    twice = np.concatenate([[False], (s0[1:] == s0[:-1]).all(1) & (pl[os_][1:] == pl[os_][:-1])])
    bad = np.unique(np.concatenate([pl[os_][~match], pl[os_][twice]]))
    nxt = np.empty(S, np.int64)
    nxt[oe] = os_  # the segment that starts where segment oe[i] ends
    badseg = np.isin(pl, bad)
    nxt[badseg] = np.nonzero(badseg)[0]
    # a cycle is no longer than the segments of its level: that bounds the doubling steps
    steps = int(np.ceil(np.log2(np.bincount(pl).max() + 1))) + 1
    lab = np.arange(S)
    p = nxt.copy()
    for _ in range(steps):  # cycle label = smallest index in the cycle
        lab = np.minimum(lab, lab[p])
        p = p[p]
    term = lab == np.arange(S)
    succ = np.where(term, np.arange(S), nxt)
    w = (~term).astype(np.int64)
    for _ in range(steps):  # list ranking: steps to the label
        w, succ = w + w[succ], succ[succ]
    # cycles by label, each from the segment after its label round to the label (no sort)
    count = np.bincount(lab, minlength=S)
    first = np.cumsum(count) - count
    order = np.empty(S, np.int64)
    order[first[lab] + count[lab] - 1 - w] = np.arange(S)
    lab_o = lab[order]
    starts = np.concatenate([[0], np.nonzero(np.diff(lab_o))[0] + 1])
    p0 = seg[order, 0]
    ext = np.maximum(np.maximum.reduceat(p0[:, 0], starts) - np.minimum.reduceat(p0[:, 0], starts),
                     np.maximum.reduceat(p0[:, 1], starts) - np.minimum.reduceat(p0[:, 1], starts))
    size = np.diff(np.concatenate([starts, [S]]))
    cyc_pl = pl[lab_o[starts]]
    for k in range(n_levels):
        if k in bad:
            res[k] = None
            continue
        idx = np.nonzero(cyc_pl == k)[0]
        if all_loops:
            res[k] = [p0[starts[i]:starts[i] + size[i]] for i in idx if size[i] >= 3]
            continue
        if idx.size == 0:
            continue
        best = idx[np.argmax(ext[idx])]
        if size[best] < 3:
            res[k] = (None, idx.size - 1, True)
        else:
            res[k] = (p0[starts[best]:starts[best] + size[best]], idx.size - 1, False)
    return res


def _point_orders(seg, pl):
    """Orders of the segment starts and of the ends by level, then position (stable).

    One float sort each on a key that is a fixed function of (level, x, z), the same for starts
    and ends, so the end and start of segments that meet get equal keys; distinct points that
    share a key only send their level to the slower `_chain` (the match check fails there).
    """
    k = seg[:, :, 0] + 0.6180339887498949 * seg[:, :, 1]  # (S, 2)
    lo, hi = float(k.min()), float(k.max())
    key = (k - lo) + (pl * (2.0 * (hi - lo) + 1.0))[:, None]
    return np.argsort(key[:, 0], kind="stable"), np.argsort(key[:, 1], kind="stable")


def _cancel(seg):
    """The segments (S, 2, 2) without pairs that run the same points in opposite directions
    (the cut of a face two touching bodies share: inside their union, no boundary)."""
    if seg.shape[0] < 2:
        return seg
    fwd = np.ascontiguousarray(seg.reshape(-1, 4))
    rev = np.ascontiguousarray(seg[:, ::-1].reshape(-1, 4))
    v = np.dtype((np.void, 32))
    _, ids = np.unique(np.concatenate([fwd, rev]).view(v).ravel(), return_inverse=True)
    ids = ids.ravel()
    n = seg.shape[0]
    return seg[~np.isin(ids[:n], ids[n:])]


def _chain(seg, tol):
    """Chain (S, 2, 2) segments into loops; return (largest loop, n_stray, largest_is_open)."""
    if seg.shape[0] < 3:
        return None, 0, seg.shape[0] > 0
    pieces = _pieces(seg, tol)
    best, size = None, -1.0
    for closed, p in pieces:
        ext = float(np.ptp(p, 0).max()) if p.shape[0] else 0.0
        if ext > size:
            best, size = (closed, p), ext
    n_stray = len(pieces) - 1
    closed, p = best
    if not closed or p.shape[0] < 3:
        return None, n_stray, True
    return p, n_stray, False


def _pieces(seg, tol):
    """Chain (S, 2, 2) segments into pieces: list of (closed, (k, 2) points)."""
    if seg.shape[0] == 0:
        return []
    flat = np.ascontiguousarray(seg.reshape(-1, 2))
    _, node = np.unique(flat.view(np.dtype((np.void, 16))).ravel(), return_inverse=True)
    node = node.ravel()
    deg = np.bincount(node)
    if np.any(deg != 2):  # unwelded mesh: snap loose ends together
        from scipy.spatial import cKDTree

        loose = np.nonzero(deg[node] != 2)[0]
        pairs = cKDTree(flat[loose]).query_pairs(tol, output_type="ndarray")
        for i, j in pairs:
            node[node == node[loose[j]]] = node[loose[i]]
        _, node = np.unique(node, return_inverse=True)
        deg = np.bincount(node)
    sn = node.reshape(-1, 2)
    good = sn[:, 0] != sn[:, 1]
    sn = sn[good]
    nn = deg.size
    inc = [[] for _ in range(nn)]
    for s, (a, b) in enumerate(sn.tolist()):
        inc[a].append(s)
        inc[b].append(s)
    used = np.zeros(sn.shape[0], bool)
    pieces = []
    snl = sn.tolist()
    for s0 in range(sn.shape[0]):
        if used[s0]:
            continue
        closed = True
        chain_nodes = []
        for direction in (1, 0):  # walk forward, then backward from s0 if the chain is open
            s, n = s0, snl[s0][direction]
            seq = []
            while True:
                used[s] = True
                seq.append(n)
                nxt = [q for q in inc[n] if q != s]
                if len(nxt) != 1:
                    closed = False
                    break
                s = nxt[0]
                if s == s0:
                    break
                n = snl[s][1] if snl[s][0] == n else snl[s][0]
            if closed:
                chain_nodes = seq
                break
            chain_nodes = seq[::-1] + chain_nodes if direction == 0 else seq
        pieces.append((closed, chain_nodes))
    xy = np.zeros((nn, 2))  # node coordinates
    xy[node] = flat
    return [(closed, xy[nodes_]) for closed, nodes_ in pieces]


