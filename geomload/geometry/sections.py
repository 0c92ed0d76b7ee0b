"""Plane cuts of the triangle soup and the airfoil quantities of each cut (`Stations`).

The cut is vectorised numpy: one pass gives each triangle's bounds along the span axis and a
bucket index (`spanindex.SpanIndex`), so each set of planes touches only the triangles near
it; the planes each candidate crosses are found with `np.searchsorted`, and every (triangle,
plane) edge crossing is interpolated at once. An edge is always interpolated from its lower to
its upper vertex, so the two triangles sharing it give bit-identical points and segments chain
into loops by exact key (with a small snapping fallback for unwelded meshes).

Section definitions (common practice, no source): trailing edge = mid-point of a blunt TE face or
the sharp TE vertex; leading edge = point of the contour farthest from the TE (refined between
vertices by a local parabola); chord line LE -> TE; twist = chord-line angle, nose-up positive;
camber and thickness measured normal to the chord line, normalised by chord.
"""

from __future__ import annotations

import numpy as np

from ..errors import GeometryError
from ..records import Stations, no_progress
from .airfoil import cosine_spacing
from .spanindex import SpanIndex, coord

INSET = 0.005  # stations inset from tip cap and root cap, fraction of the semi-span
N_CAMBER = 41
# Not-a-wing limits (common practice, no source): no practical wing section is more than 35 %
# thick (the thickest in service are about 25 %, from memory), and no station's chord line is
# turned more than 45 deg from the root's (wing twist is a few degrees; a block or a blob cut
# across gives chord lines that swing with the cut). Low aspect ratio alone is no test: AR 2-3
# flying wings have a semi-span shorter than the root chord; only AR < 1 is refused.
MAX_THICKNESS_RATIO = 0.35
MAX_TWIST_DEG = 45.0
_FINE = cosine_spacing(401)


def frame_coords(p: np.ndarray, rotation: np.ndarray, origin: np.ndarray, rows=(0, 1, 2)) -> list:
    """Coordinates of points p (..., 3) along rotation rows (elementwise, so bit-reproducible)."""
    q = [p[..., i] - origin[i] for i in range(3)]
    return [rotation[r, 0] * q[0] + rotation[r, 1] * q[1] + rotation[r, 2] * q[2] for r in rows]


def _min3(a):
    return np.minimum(np.minimum(a[:, 0], a[:, 1]), a[:, 2])


def _max3(a):
    return np.maximum(np.maximum(a[:, 0], a[:, 1]), a[:, 2])


def slice_loops(tris, rotation, origin, levels, tol=None):
    """Cut the soup by the planes y_frame = level; per level return (loop, n_stray, open).

    loop: (k, 2) ordered (x, z) frame coordinates of the largest closed loop (None when the
    largest piece is an open chain or nothing was cut); n_stray: other pieces ignored;
    open: True when the largest piece is not closed (a hole in the mesh).
    """
    return slice_indexed(SpanIndex(tris, np.asarray(rotation, float)[1]), rotation, origin, levels, tol)


def slice_indexed(index, rotation, origin, levels, tol=None):
    """`slice_loops` on the soup of a `SpanIndex` (whose axis may differ from the plane normal).

    Only the triangles the index finds near the planes are touched; tolerances are relative to
    the extent of the whole soup along the plane normal, as in `slice_loops`.
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
    res = _chain_oriented(seg, pl, lv.size)
    out = [None] * levels.size
    for k in range(lv.size):
        out[order[k]] = res[k] if res[k] is not None else _chain(seg[bounds[k]:bounds[k + 1]], tol)
    return out


def _chain_oriented(seg, pl, n_levels):
    """Vectorised chaining of head-to-tail segments; None for levels that need `_chain`."""
    S = seg.shape[0]
    res = [(None, 0, False)] * n_levels
    if S == 0:
        return res
    os_, oe = _point_orders(seg, pl)
    match = (seg[os_, 0] == seg[oe, 1]).all(1)
    bad = np.unique(pl[os_][~match])
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


def _chain(seg, tol):
    """Chain (S, 2, 2) segments into loops; return (largest loop, n_stray, largest_is_open)."""
    if seg.shape[0] < 3:
        return None, 0, seg.shape[0] > 0
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
    # node coordinates
    xy = np.zeros((nn, 2))
    xy[node] = flat
    best, size = None, -1.0
    for closed, nodes_ in pieces:
        p = xy[nodes_]
        ext = float(np.ptp(p, 0).max()) if len(nodes_) else 0.0
        if ext > size:
            best, size = (closed, p), ext
    n_stray = len(pieces) - 1
    closed, p = best
    if not closed or p.shape[0] < 3:
        return None, n_stray, True
    return p, n_stray, False


def section_properties(loop: np.ndarray) -> dict:
    """Airfoil quantities of one closed (k, 2) loop in (x, z), x roughly aft.

    Returns LE, TE (2,), chord, twist_deg, thickness_ratio, x_thickness, camber_ratio, x_camber,
    camber (N_CAMBER,) on `camber_x()`, blunt (bool).
    """
    p = np.asarray(loop, float)
    k = p.shape[0]
    q = np.roll(p, -1, 0)
    cr = p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]
    area = 0.5 * cr.sum()
    g = ((p + q) * cr[:, None]).sum(0) / (6 * area) if abs(area) > 1e-300 else p.mean(0)
    ia = int(np.argmax(np.hypot(*(p - g).T)))
    ax = (p[ia] - g) / np.linalg.norm(p[ia] - g)
    span_ax = float(np.ptp(p @ ax))
    seg = q - p
    seglen = np.hypot(*seg.T)
    steep = (np.abs(seg @ ax) < 0.5 * seglen) & ((p - p[ia]) @ ax > -0.02 * span_ax) & ((q - p[ia]) @ ax > -0.02 * span_ax)
    # walk the TE face both ways from the aft-most vertex (segment i joins vertex i and i + 1)
    e_fwd = ia
    while steep[e_fwd % k] and (e_fwd - ia) < k // 4:
        e_fwd += 1
    e_bwd = ia
    while steep[(e_bwd - 1) % k] and (ia - e_bwd) < k // 4:
        e_bwd -= 1
    e_fwd, e_bwd = e_fwd % k, e_bwd % k
    blunt = e_fwd != e_bwd
    te = 0.5 * (p[e_fwd] + p[e_bwd])
    j = int(np.argmax(np.hypot(*(p - te).T)))
    le = _refine_le(p, j, te)
    chord = float(np.linalg.norm(te - le))
    cx = (te - le) / chord
    nz = np.array([-cx[1], cx[0]])
    uv = np.column_stack([(p - le) @ cx, (p - le) @ nz]) / chord
    # two chains LE -> TE
    idx_f = np.arange(j, j + ((e_bwd - j) % k) + 1) % k  # forward from LE to the face end e_bwd
    idx_b = np.arange(j, j - ((j - e_fwd) % k) - 1, -1) % k  # backward from LE to e_fwd
    ca, cb = _chain_curve(uv[idx_f]), _chain_curve(uv[idx_b])
    va, vb = np.interp(_FINE, *ca), np.interp(_FINE, *cb)
    if va.mean() < vb.mean():
        va, vb = vb, va
    thick = va - vb
    camb = 0.5 * (va + vb)
    it = int(np.argmax(thick))
    ic = int(np.argmax(np.abs(camb)))
    xt, tmax = _peak(_FINE, thick, it)
    xc, cmax = _peak(_FINE, camb, ic)
    cz = np.interp(camber_x(), _FINE, camb)
    cz[0] = cz[-1] = 0.0
    twist = float(np.degrees(np.arctan2(le[1] - te[1], te[0] - le[0])))
    return dict(le=le, te=te, chord=chord, twist_deg=twist, thickness_ratio=tmax, x_thickness=xt,
                camber_ratio=cmax, x_camber=xc, camber=cz, blunt=blunt)


def camber_x() -> np.ndarray:
    """The chordwise stations (x/c) shared by every camber line: 41 cosine-spaced points."""
    return cosine_spacing(N_CAMBER)


def _chain_curve(uv):
    """(u, v) of a chain LE -> TE with u made strictly increasing (for interpolation)."""
    u, v = uv[:, 0], uv[:, 1]
    u = np.concatenate([[0.0], u[1:]])
    v = np.concatenate([[0.0], v[1:]])
    keep = np.concatenate([[True], u[1:] > np.maximum.accumulate(u)[:-1]])
    return u[keep], v[keep]


def _peak(x, f, i):
    """Parabolic refinement of an extremum of f at index i; returns (x_peak, f_peak)."""
    if 0 < i < x.size - 1:
        xs, fs = x[i - 1:i + 2], f[i - 1:i + 2]
        a = np.polyfit(xs - x[i], fs, 2)
        if a[0] != 0:
            dx = -a[1] / (2 * a[0])
            if abs(dx) <= max(x[i + 1] - x[i], x[i] - x[i - 1]):
                return float(x[i] + dx), float(np.polyval(a, dx))
    return float(x[i]), float(f[i])


def _refine_le(p, j, te):
    """Sub-vertex farthest point from te: fit u = a + b v + q v^2 to the vertices near p[j]."""
    L = float(np.linalg.norm(te - p[j]))
    cx = (te - p[j]) / L
    nz = np.array([-cx[1], cx[0]])
    k = p.shape[0]
    idx = np.arange(j - 8, j + 9) % k
    u, v = (p[idx] - p[j]) @ cx, (p[idx] - p[j]) @ nz
    near = u < 0.01 * L
    if near.sum() < 3 or np.ptp(v[near]) <= 0:
        return p[j].copy()
    A = np.column_stack([np.ones(near.sum()), v[near], v[near] ** 2])
    a, b, qq = np.linalg.lstsq(A, u[near], rcond=None)[0]
    den = 2 * qq - 1.0 / L
    if den <= 0:
        return p[j].copy()
    vs = -b / den
    if not v[near].min() <= vs <= v[near].max():
        return p[j].copy()
    us = a + b * vs + qq * vs * vs
    return p[j] + us * cx + vs * nz


def station_levels(y0, y1, n, spacing):
    """n station positions from y0 to y1, 'cosine' (clustered at both ends) or 'uniform'."""
    if spacing == "cosine":
        return y0 + (y1 - y0) * cosine_spacing(n)
    if spacing == "uniform":
        return np.linspace(y0, y1, n)
    raise GeometryError(f"station spacing {spacing!r} not one of cosine, uniform")


def cut_stations(mesh, frame, n=20, spacing="cosine", progress=None, index=None) -> Stations:
    """Cut n stations along the starboard semi-span and measure each airfoil section.

    Stations run from the root (inset 0.5 % of the semi-span from a root cap; y = 0 for a full
    wing) to 0.5 % inside the tip. Stations whose cut is not a closed loop are skipped with a
    note; fewer than 3 good stations, a median section thicker than 35 % of its chord, a station
    twisted more than 45 deg, or a semi-span under half the mean chord (AR < 1) raise
    GeometryError. Lengths m, angles deg, wing frame (see `records.Stations`).
    index: an optional `SpanIndex` over mesh.triangles (e.g. from
    `frame.detect_frame_indexed`), reused instead of a new pass over all triangles.
    """
    progress = progress or no_progress
    if int(n) < 3:
        raise GeometryError(f"{mesh.source}: at least 3 stations are needed (got {n})")
    r1 = np.asarray(frame.rotation, float)[1]
    if index is None or index.tris is not mesh.triangles:
        index = SpanIndex(mesh.triangles, r1)  # the one pass over all triangles
    if np.array_equal(index.e, r1):
        s_max = index.s_max
    elif np.array_equal(index.e, -r1):
        s_max = -index.s_min
    else:
        s_max = float(index.extent(r1)[1])
    semispan = float(s_max - r1 @ frame.origin)
    if semispan <= 0:
        raise GeometryError(f"{mesh.source}: no geometry on the starboard side of the root plane")
    y0 = 0.0 if frame.full_span else INSET * semispan
    ys = station_levels(y0, semispan * (1 - INSET), int(n), spacing)
    progress("cut", 0, len(ys))
    cuts = slice_indexed(index, frame.rotation, frame.origin, ys)
    rows, notes, stray = [], [], 0
    for i, (y, (loop, n_stray, is_open)) in enumerate(zip(ys, cuts)):
        stray += n_stray
        if loop is None:
            notes.append(f"station {i + 1} at y = {y:.4f} m skipped: the cut is not a closed loop "
                         f"(hole in the mesh?)")
        else:
            rows.append((y, section_properties(loop)))
        progress("cut", i + 1, len(ys))
    if stray:
        notes.append(f"{stray} stray loop(s) beside the airfoil ignored (over all stations)")
    if len(rows) < 3:
        raise GeometryError(f"{mesh.source}: only {len(rows)} of {len(ys)} stations give a closed "
                            f"airfoil section (need 3)")
    y = np.array([r[0] for r in rows])
    g = {k: np.array([r[1][k] for r in rows]) for k in rows[0][1]}
    tc = float(np.median(g["thickness_ratio"]))
    if not tc <= MAX_THICKNESS_RATIO:
        raise GeometryError(f"{mesh.source}: does not look like a wing (sections are {100 * tc:.1f} % "
                            f"as thick as they are long; a wing section is at most "
                            f"{100 * MAX_THICKNESS_RATIO:.0f} %)")
    twist = np.abs(g["twist_deg"])
    if not np.all(twist <= MAX_TWIST_DEG):
        k = int(np.argmax(np.where(np.isfinite(twist), twist, np.inf)))
        raise GeometryError(f"{mesh.source}: does not look like a wing (the chord line at y = "
                            f"{y[k]:.4g} m is turned {g['twist_deg'][k]:+.0f} deg from the root's; "
                            f"a wing's twist is under {MAX_TWIST_DEG:.0f} deg)")
    if semispan / float(np.mean(g["chord"])) < 0.5:
        raise GeometryError(f"{mesh.source}: does not look like a wing (semi-span "
                            f"{semispan:.3g} m is under half the mean chord)")
    le, te = g["le"], g["te"]
    z_qc = le[:, 1] + 0.25 * (te[:, 1] - le[:, 1])
    dihedral = np.degrees(np.arctan(np.gradient(z_qc, y)))
    return Stations(y=y, x_le=le[:, 0], z_le=le[:, 1], x_te=te[:, 0], z_te=te[:, 1], chord=g["chord"],
                    twist_deg=g["twist_deg"], thickness_ratio=g["thickness_ratio"],
                    x_thickness=g["x_thickness"], camber_ratio=g["camber_ratio"], x_camber=g["x_camber"],
                    dihedral_deg=dihedral, camber_x=camber_x(), camber_z=g["camber"],
                    semispan=semispan, notes=tuple(notes))
