"""The display surface: the CAD wing's triangles in the wing frame, welded (or decimated by
vertex clustering above MAX_DISPLAY_TRIANGLES), each triangle tied to its nearest lattice panel
in the plan view. Built once per run for surface.vtp (:mod:`geomload.export.vtk`), the renders
and the report's 3-D view; the loads are always computed on the full mesh.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

MAX_DISPLAY_TRIANGLES = 100_000  # above this the display surface is decimated: a 2-D picture
# and a ParaView overview gain nothing from more, and per-case arrays stay small (common
# practice, no source)


@dataclass(frozen=True)
class Surface:
    """The display surface, built once for surface.vtp and the 3-D pictures (wing frame, m).

    points (n, 3); tri (m, 3) vertex indices; panel (m,) nearest lattice panel; side (m,) +1
    starboard / -1 port (y < 0 of a full wing on a mirrored half lattice); plan_area_m2 (m,);
    source_triangles: the triangle count of the CAD mesh; decimated: True when the surface was
    simplified (vertex clustering) to at most about MAX_DISPLAY_TRIANGLES.
    """

    points: np.ndarray
    tri: np.ndarray
    panel: np.ndarray
    side: np.ndarray
    plan_area_m2: np.ndarray
    source_triangles: int
    decimated: bool

    def __post_init__(self):
        m = np.shape(self.tri)[0]
        if np.shape(self.points)[1:] != (3,) or np.shape(self.tri) != (m, 3):
            raise ValueError("display surface: points (n, 3) and tri (m, 3) expected")
        for k in ("panel", "side", "plan_area_m2"):
            if np.shape(getattr(self, k)) != (m,):
                raise ValueError(f"display surface {k}: expected shape ({m},), "
                                 f"got {np.shape(getattr(self, k))}")


def panel_centres(lattice) -> np.ndarray:
    """(N, 3) panel centres (mean of the four corners), strip-major."""
    c = np.asarray(lattice.corners, float)
    return (0.25 * (c[:-1, :-1] + c[1:, :-1] + c[:-1, 1:] + c[1:, 1:])).reshape(-1, 3)


def surface_points_faces(mesh, frame):
    """Weld the triangle soup (exactly equal vertices) and move it to the wing frame."""
    tri = np.ascontiguousarray(np.asarray(mesh.triangles, dtype=np.float64).reshape(-1, 3))
    rows = tri.view(np.dtype((np.void, 24))).ravel()  # one 24-byte key per vertex: fast unique
    _, first, inv = np.unique(rows, return_index=True, return_inverse=True)
    return frame.to_wing(tri[first]), inv.reshape(-1, 3)


def decimate_soup(triangles, target: int):
    """Vertex clustering of a triangle soup to about `target` triangles.

    The vertices are snapped to a cubic grid whose cell h is chosen from the surface area A so
    that about target / 2 cells are occupied (h = sqrt(2 A / target)); each occupied cell becomes
    one vertex at the mean of its members; collapsed and repeated triangles are dropped.
    Returns (points (n, 3), tri (m, 3)). Rossignac-Borrel vertex clustering (1993), the simplest
    decimation; the shape is kept to within about h.
    """
    t = np.asarray(triangles, np.float64).reshape(-1, 3, 3)
    step = max(1, t.shape[0] // 200_000)  # the area from a regular sample: it only sets h
    ts = t[::step]
    area = 0.5 * np.linalg.norm(np.cross(ts[:, 1] - ts[:, 0], ts[:, 2] - ts[:, 0]), axis=1).sum()
    area *= t.shape[0] / ts.shape[0]
    v = t.reshape(-1, 3)
    from ..geometry.readers import bounds

    lo, hi = bounds(t)
    h = max(float(np.sqrt(2.0 * area / max(target, 1))), 1e-12)
    dims = np.floor((hi - lo) / h).astype(np.int64) + 2
    key = _cell_keys(v, lo, 1.0 / h, dims)
    n_cells = int(np.prod(dims))
    if n_cells <= DENSE_GRID_MAX:  # a counting pass over a dense grid: no sort of the vertices
        counts = np.bincount(key, minlength=n_cells)
        occupied = counts > 0
        cnt = counts[occupied].astype(float)  # members per cell
        del counts
        n = int(occupied.sum())
        lut = np.cumsum(occupied, dtype=np.int64 if n >= 2 ** 31 else np.int32)
        del occupied
        lut -= 1
        inv = lut[key]  # the cell number of each vertex (int32 below 2**31 cells: half the size)
        del lut
    else:
        _, inv = np.unique(key, return_inverse=True)
        n = int(inv.max()) + 1
        cnt = np.zeros(n)  # members per cell; integer counts, so block sums are exact
        for a in range(0, inv.size, _KEY_BLOCK):
            cnt += np.bincount(inv[a:a + _KEY_BLOCK], minlength=n)
    del key
    # the per-cell sums in blocks, each an unbuffered ufunc.at accumulation in vertex order:
    # the same additions, in the same order, as np.bincount(inv, weights=v[:, k]) (bit for
    # bit), without its contiguous copy of a whole coordinate column (96 MB at 4 M triangles).
    # x and y go through one complex accumulation (complex addition adds the real and the
    # imaginary parts separately: the same two float64 additions), z on its own
    sxy, sz = np.zeros(n, np.complex128), np.zeros(n)
    vxy = _xy_complex(v)
    for a in range(0, v.shape[0], _KEY_BLOCK):
        blk = inv[a:a + _KEY_BLOCK]
        if vxy is None:
            np.add.at(sxy.real, blk, v[a:a + _KEY_BLOCK, 0])
            np.add.at(sxy.imag, blk, v[a:a + _KEY_BLOCK, 1])
        else:
            np.add.at(sxy, blk, vxy[a:a + _KEY_BLOCK])
        np.add.at(sz, blk, v[a:a + _KEY_BLOCK, 2])
    pts = np.empty((n, 3))
    pts[:, 0], pts[:, 1], pts[:, 2] = sxy.real, sxy.imag, sz
    del sxy, sz
    pts /= cnt[:, None]
    f = inv.reshape(-1, 3)
    ok = (f[:, 0] != f[:, 1]) & (f[:, 1] != f[:, 2]) & (f[:, 0] != f[:, 2])
    f = f[ok]
    del inv, ok
    s = np.sort(f, axis=1)  # int32 below 2**31 cells; the face key in int64
    if n ** 3 < 2 ** 62:
        _, first = np.unique((s[:, 0].astype(np.int64) * n + s[:, 1]) * n + s[:, 2],
                             return_index=True)
    else:
        _, first = np.unique(np.ascontiguousarray(s).view(np.dtype((np.void, 24))).ravel(),
                             return_index=True)
    return pts, f[np.sort(first)].astype(np.int64, copy=False)


def _xy_complex(v):
    """The (x, y) columns of v (n, 3) float64 as one complex128 column (a view), or None when
    v's rows do not allow the view."""
    try:
        return v[:, :2].view(np.complex128)[:, 0]
    except ValueError:
        return None


def _cell_keys(v, lo, inv_h, dims):
    """Cell key of each vertex v (n, 3): (q0 d1 + q1) d2 + q2 with q = trunc((v - lo) / h)
    (non-negative), in blocks of `_CELL_BLOCK` vertices through reused buffers.

    While the grid has under 2**53 cells every product and sum is an exact integer in float64,
    so the key is formed as q0 (d1 d2) + q1 d2 + q2 (one (k, 3) by (3,) product, exact in any
    order), the keys of the integer formula; q comes from the flat block (x, y, z, x, ...)
    minus lo repeated per vertex (contiguous elementwise passes). int64 arithmetic above that.
    """
    n = v.shape[0]
    key = np.empty(n, np.int64)
    if float(np.prod(dims.astype(float))) >= 2.0 ** 53:
        return _cell_keys_int(v, lo, inv_h, dims, key)
    m = min(_CELL_BLOCK, n)
    lo_rep = np.tile(np.asarray(lo, float), m)  # lo per vertex of a flat block
    w = np.array([float(dims[1]) * float(dims[2]), float(dims[2]), 1.0])
    f, k = np.empty(3 * m), np.empty(m)
    from geomload.threads import one_blas_thread

    with one_blas_thread():  # an exact (k, 3) by (3,) product: threads only wait for each other
        for a in range(0, n, _CELL_BLOCK):
            b = min(a + _CELL_BLOCK, n)
            ff, kk = f[:3 * (b - a)], k[:b - a]
            np.subtract(np.ascontiguousarray(v[a:b]).reshape(-1), lo_rep[:ff.size], out=ff)
            np.multiply(ff, inv_h, out=ff)
            np.trunc(ff, out=ff)
            np.dot(ff.reshape(-1, 3), w, out=kk)
            key[a:b] = kk
    return key


def _cell_keys_int(v, lo, inv_h, dims, key):
    """`_cell_keys` in int64 arithmetic (grids of 2**53 cells or more)."""
    d1, d2 = int(dims[1]), int(dims[2])
    f = np.empty((min(_CELL_BLOCK, v.shape[0]), 3))
    q = np.empty(f.shape, np.int64)
    k = np.empty(f.shape[0], np.int64)
    for a in range(0, v.shape[0], _CELL_BLOCK):
        b = min(a + _CELL_BLOCK, v.shape[0])
        ff, kk, qq = f[:b - a], k[:b - a], q[:b - a]
        np.subtract(v[a:b], lo, out=ff)
        np.multiply(ff, inv_h, out=ff)
        qq[...] = ff  # truncation, as astype(int64)
        np.multiply(qq[:, 0], d1, out=kk)
        kk += qq[:, 1]
        kk *= d2
        kk += qq[:, 2]
        key[a:b] = kk
    return key


_KEY_BLOCK = 1 << 16  # vertices per block of the count and sum passes
_CELL_BLOCK = 1 << 13  # vertices per block of the cell-key pass (cache-sized buffers)
DENSE_GRID_MAX = 40_000_000  # grid cells counted densely (320 MB of int64 at most)


BRUTE_NEAREST_MAX = 100_000_000  # query-centre pairs up to which the nearest centre is found by
# direct distances in numpy (the sample: 24,000 triangles x 400 panels in about 0.05 s, x 3000
# panels about 0.4 s); above it a k-d tree pays for its import (scipy.spatial, about 0.5 s)
_BRUTE_CHUNK = 1 << 15  # pairs per block of the direct search (cache-sized temporaries)
_TILE_QUERIES = 256  # queries per tile (on average) of the pruned search
_TILE_MIN_CENTRES = 64  # fewer centres than this: every pair is measured (pruning gains little)
_PRUNE_SLACK = 1e-9  # relative widening of a tile's distance bound, far above round-off (1e-15)


def nearest_centre(centres, query) -> np.ndarray:
    """Index of the nearest of `centres` (k, 2) to each of `query` (m, 2) (Euclidean; the lowest
    index among equally near ones)."""
    cen = np.asarray(centres, float)
    q = np.asarray(query, float)
    if cen.shape[0] * q.shape[0] > BRUTE_NEAREST_MAX:
        from scipy.spatial import cKDTree

        return cKDTree(cen).query(q)[1]
    if cen.shape[0] < _TILE_MIN_CENTRES or q.shape[0] < 2 * _TILE_QUERIES:
        return _nearest_brute(cen, q)
    return _nearest_tiled(cen, q)


def _nearest_brute(cen, q):
    """`nearest_centre` by direct squared distances (dx*dx + dy*dy), in cache-sized blocks."""
    out = np.empty(q.shape[0], dtype=np.intp)
    step = max(1, _BRUTE_CHUNK // max(cen.shape[0], 1))
    cx, cy = cen[:, 0], cen[:, 1]
    for i in range(0, q.shape[0], step):
        dx = q[i:i + step, 0:1] - cx
        dy = q[i:i + step, 1:2] - cy
        dx *= dx
        dy *= dy
        dx += dy
        out[i:i + step] = np.argmin(dx, axis=1)
    return out


def _nearest_tiled(cen, q):
    """`nearest_centre` with the queries grouped in square tiles: for each tile only the centres
    that can be nearest to one of its queries are measured, with the same arithmetic.

    A tile's reference centre r (the one nearest the tile's middle) bounds every query's nearest
    squared distance by U = max over the tile of |q - r|^2; a centre farther than U from the
    tile's box is nearer to none of them. The bound is widened by _PRUNE_SLACK (relative) so
    that round-off cannot drop a centre whose computed distance ties the minimum; candidates
    keep their index order, so the lowest index still wins a tie. The result is the index the
    direct search gives, query by query.
    """
    m = q.shape[0]
    lo, hi = q.min(axis=0), q.max(axis=0)
    g = max(1, int(np.sqrt(m / _TILE_QUERIES)))
    size = np.maximum(hi - lo, 1e-300) / g
    t = np.minimum(((q - lo) / size).astype(np.int64), g - 1)
    tile = t[:, 1] * g + t[:, 0]
    order = np.argsort(tile, kind="stable")
    starts = np.searchsorted(tile[order], np.arange(g * g + 1))
    out = np.empty(m, dtype=np.intp)
    cx, cy = cen[:, 0], cen[:, 1]
    for k in range(g * g):
        idx = order[starts[k]:starts[k + 1]]
        if idx.size == 0:
            continue
        qq = q[idx]
        b0, b1 = qq.min(axis=0), qq.max(axis=0)
        mid = 0.5 * (b0 + b1)
        r = int(np.argmin((mid[0] - cx) ** 2 + (mid[1] - cy) ** 2))
        u = float((((qq[:, 0] - cx[r]) ** 2) + ((qq[:, 1] - cy[r]) ** 2)).max())
        gx = np.maximum(np.maximum(b0[0] - cx, cx - b1[0]), 0.0)
        gy = np.maximum(np.maximum(b0[1] - cy, cy - b1[1]), 0.0)
        cand = np.nonzero(gx * gx + gy * gy <= u * (1.0 + _PRUNE_SLACK) + 1e-300)[0]
        out[idx] = cand[_nearest_brute(cen[cand], qq)]
    return out


def map_to_panels(points_xy, lattice) -> np.ndarray:
    """Index of the nearest lattice panel centre in the (x, y) projection; |y| for a half lattice."""
    cen = panel_centres(lattice)[:, :2]
    q = np.array(points_xy, float)
    if lattice.mirrored:
        q[:, 1] = np.abs(q[:, 1])
    return nearest_centre(cen, q)


def surface_data(run, full: bool = False) -> Surface:
    """The display surface of `run` (see Surface). full=True keeps every CAD triangle."""
    m = run.mesh
    if full or m.n_triangles <= MAX_DISPLAY_TRIANGLES:
        pts, tri = surface_points_faces(m, run.frame)
        dec = False
    else:
        cad_pts, tri = decimate_soup(m.triangles, MAX_DISPLAY_TRIANGLES)
        pts, dec = run.frame.to_wing(cad_pts), True
    c = pts[tri].mean(axis=1)
    near = map_to_panels(c[:, :2], run.lattice)
    side = np.where((c[:, 1] < 0) & bool(run.lattice.mirrored), -1, 1).astype(np.int8)
    p0, p1, p2 = pts[tri[:, 0]], pts[tri[:, 1]], pts[tri[:, 2]]
    nz = (p1[:, 0] - p0[:, 0]) * (p2[:, 1] - p0[:, 1]) - (p1[:, 1] - p0[:, 1]) * (p2[:, 0] - p0[:, 0])
    return Surface(points=pts, tri=tri, panel=near, side=side, plan_area_m2=0.5 * np.abs(nz),
                   source_triangles=m.n_triangles, decimated=dec)


def surface_polydata(run, surface: Surface | None = None, scalars: dict | None = None):
    """A pyvista PolyData of the display surface (renders and `view` only; imports pyvista)."""
    import pyvista as pv

    s = surface if surface is not None else surface_data(run)
    mesh = pv.PolyData(s.points, np.hstack([np.full((s.tri.shape[0], 1), 3), s.tri]).ravel())
    mesh.cell_data["panel"] = s.panel
    for k, v in (scalars or {}).items():
        mesh.cell_data[k] = v
    return mesh
