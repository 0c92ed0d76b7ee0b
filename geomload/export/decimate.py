"""Display decimation of a triangle mesh by vertex clustering, and fields carried onto it.

For pictures only (the report's 3-D view): the loads are always computed on the full mesh.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np


class Decimated(NamedTuple):
    """Result of `decimate`.

    points : (p, 3) float64, cluster mean positions (same unit as the input).
    triangles : (t, 3) int64, t <= max_triangles, no degenerate or repeated triangles.
    vertex_map : (n,) int64, input vertex -> output vertex.
    triangle_map : (m,) int64, input triangle -> output triangle, -1 where it collapsed.
    """

    points: np.ndarray
    triangles: np.ndarray
    vertex_map: np.ndarray
    triangle_map: np.ndarray


def _vertex_normals(pts, tri):
    fn = np.cross(pts[tri[:, 1]] - pts[tri[:, 0]], pts[tri[:, 2]] - pts[tri[:, 0]])
    vn = np.zeros_like(pts)
    for k in range(3):
        np.add.at(vn, tri[:, k], fn)
    return vn


def _cluster(pts, tri, normal_bucket, cell):
    lo = pts.min(axis=0)
    g = np.floor((pts - lo) / cell).astype(np.int64)
    dims = g.max(axis=0) + 1
    key = ((g[:, 0] * dims[1] + g[:, 1]) * dims[2] + g[:, 2]) * 7 + normal_bucket
    _, vmap = np.unique(key, return_inverse=True)
    vmap = vmap.ravel()
    t = vmap[tri]
    ok = (t[:, 0] != t[:, 1]) & (t[:, 1] != t[:, 2]) & (t[:, 0] != t[:, 2])
    s = np.sort(t, axis=1)
    s[~ok] = -1
    n = int(vmap.max()) + 2
    if n < 2_000_000:  # one int64 key per triangle (n^3 < 2^63): much faster than axis=0
        s = ((s[:, 0] + 1) * n + (s[:, 1] + 1)) * n + (s[:, 2] + 1)
    _, first, tmap = np.unique(s, axis=0, return_index=True, return_inverse=True)
    tmap = tmap.ravel()
    keep = ok[first]
    new_index = np.full(first.size, -1, np.int64)
    new_index[keep] = np.arange(int(keep.sum()))
    return vmap, t[first[keep]], new_index[tmap]


def decimate(points, triangles, max_triangles: int) -> Decimated:
    """Reduce a triangle mesh to at most `max_triangles` by vertex clustering (display only).

    Vertices are grouped on a uniform grid of cubic cells and each group is replaced by its mean;
    triangles whose corners fall in fewer than three groups vanish. Vertices are also split by the
    dominant axis and sign of their normal (6 buckets), so the upper and lower skins of a thin
    wing, closer than one cell, do not merge. The finest cell meeting the budget is found by
    bisection on the cell size.

    Parameters
    ----------
    points : (n, 3) float, any unit.
    triangles : (m, 3) int, indices into points.
    max_triangles : the budget (>= 1).

    Returns
    -------
    Decimated (points, triangles, vertex_map, triangle_map); the mesh is returned unchanged (maps
    are identities) when it already fits the budget.

    Notes
    -----
    Vertex clustering after Rossignac and Borrel (1993), "Multi-resolution 3D approximations for
    rendering complex scenes"; the normal split is common practice, no source.
    """
    pts = np.asarray(points, float)
    tri = np.asarray(triangles, np.int64)
    if pts.ndim != 2 or pts.shape[1] != 3 or tri.ndim != 2 or tri.shape[1] != 3:
        raise ValueError("decimate: points must be (n, 3) and triangles (m, 3)")
    if max_triangles < 1:
        raise ValueError("decimate: max_triangles must be at least 1")
    m = tri.shape[0]
    if m <= max_triangles:
        return Decimated(pts, tri, np.arange(pts.shape[0]), np.arange(m))
    vn = _vertex_normals(pts, tri)
    ax = np.argmax(np.abs(vn), axis=1)
    bucket = 2 * ax + (vn[np.arange(vn.shape[0]), ax] < 0) + 1
    bucket[~np.isfinite(vn).all(axis=1) | (np.abs(vn).sum(axis=1) == 0)] = 0
    extent = float(np.max(np.ptp(pts, axis=0))) or 1.0
    area = 0.5 * float(np.linalg.norm(np.cross(pts[tri[:, 1]] - pts[tri[:, 0]],
                                               pts[tri[:, 2]] - pts[tri[:, 0]]), axis=1).sum())
    # start where ~max_triangles/2 vertices would tile the area; bisection on log(cell)
    cell = math.sqrt(max(area, 1e-30) / max(max_triangles / 2, 1))
    lo_c, hi_c, best = None, None, None
    for _ in range(40):
        vmap, t, tmap = _cluster(pts, tri, bucket, cell)
        if t.shape[0] <= max_triangles:
            hi_c, best = cell, (vmap, t, tmap)
            if lo_c is not None and hi_c / lo_c < 1.03:
                break
            cell = cell / 2 if lo_c is None else math.sqrt(lo_c * hi_c)
        else:
            lo_c = cell
            if hi_c is not None and hi_c / lo_c < 1.03:
                break
            cell = cell * 2 if hi_c is None else math.sqrt(lo_c * hi_c)
        if cell > 4 * extent:  # one cell holds everything: nothing finer fits
            break
    if best is None:
        vmap, t, tmap = _cluster(pts, tri, bucket, 4 * extent)
        best = (vmap, t[:max_triangles], np.where(tmap < max_triangles, tmap, -1))
    vmap, t, tmap = best
    n = int(vmap.max()) + 1
    cnt = np.bincount(vmap, minlength=n).astype(float)
    newp = np.column_stack([np.bincount(vmap, weights=pts[:, k], minlength=n) for k in range(3)])
    newp /= cnt[:, None]
    # drop clusters no surviving triangle uses, renumber
    used = np.zeros(n, bool)
    used[t.ravel()] = True
    ren = np.cumsum(used) - 1
    return Decimated(newp[used], ren[t], np.where(used[vmap], ren[vmap], -1), tmap)


def decimated_field(values, dec: Decimated, points, triangles) -> np.ndarray:
    """Carry a per-vertex or per-triangle field of the input mesh onto a `decimate` result.

    Per-vertex: the mean over each cluster. Per-triangle: the area-weighted mean over the input
    triangles merged into each output triangle (collapsed triangles drop out). NaN stays NaN.
    """
    v = np.asarray(values, float).ravel()
    pts, tri = np.asarray(points, float), np.asarray(triangles, np.int64)
    if v.size == pts.shape[0]:
        ok = dec.vertex_map >= 0
        n = dec.points.shape[0]
        s = np.bincount(dec.vertex_map[ok], weights=v[ok], minlength=n)
        c = np.bincount(dec.vertex_map[ok], minlength=n)
        return s / np.maximum(c, 1)
    if v.size == tri.shape[0]:
        a = 0.5 * np.linalg.norm(np.cross(pts[tri[:, 1]] - pts[tri[:, 0]],
                                          pts[tri[:, 2]] - pts[tri[:, 0]]), axis=1)
        ok = dec.triangle_map >= 0
        n = dec.triangles.shape[0]
        w = np.bincount(dec.triangle_map[ok], weights=a[ok], minlength=n)
        s = np.bincount(dec.triangle_map[ok], weights=(a * v)[ok], minlength=n)
        plain = np.bincount(dec.triangle_map[ok], weights=v[ok], minlength=n)
        cnt = np.bincount(dec.triangle_map[ok], minlength=n)
        return np.where(w > 0, s / np.where(w > 0, w, 1), plain / np.maximum(cnt, 1))
    raise ValueError(f"field of {v.size} values fits neither {pts.shape[0]} vertices nor "
                     f"{tri.shape[0]} triangles")


__all__ = ["Decimated", "decimate", "decimated_field"]
