"""The display surface: the CAD wing's triangles in the wing frame, welded (or decimated by
vertex clustering above MAX_DISPLAY_TRIANGLES), each triangle tied to its nearest lattice panel
in the plan view. Built once per run for surface.vtp (:mod:`geomload.export.vtk`), the renders
and the report's 3-D view; the loads are always computed on the full mesh.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from geomload.geometry.display_soup import (  # noqa: F401  (the earlier home of these names)
    DENSE_GRID_MAX, _KEY_BLOCK, _CELL_BLOCK, _cell_keys, _xy_complex, decimate_soup)
from geomload.geometry.display_soup import DISPLAY_TRIANGLES as MAX_DISPLAY_TRIANGLES


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
        cad_pts, tri = _display_soup(run, m)
        pts, dec = run.frame.to_wing(cad_pts), True
    c = pts[tri].mean(axis=1)
    near = map_to_panels(c[:, :2], run.lattice)
    side = np.where((c[:, 1] < 0) & bool(run.lattice.mirrored), -1, 1).astype(np.int8)
    p0, p1, p2 = pts[tri[:, 0]], pts[tri[:, 1]], pts[tri[:, 2]]
    nz = (p1[:, 0] - p0[:, 0]) * (p2[:, 1] - p0[:, 1]) - (p1[:, 1] - p0[:, 1]) * (p2[:, 0] - p0[:, 0])
    return Surface(points=pts, tri=tri, panel=near, side=side, plan_area_m2=0.5 * np.abs(nz),
                   source_triangles=m.n_triangles, decimated=dec)


def _display_soup(run, mesh):
    """decimate_soup(mesh.triangles, MAX_DISPLAY_TRIANGLES): the one the geometry stage built
    alongside (`Wing.display_soup`, the same function on the same array) when it has it."""
    wing = getattr(run, "wing", None)
    pre = getattr(wing, "display_soup", None)
    if pre is not None and wing.mesh.triangles is mesh.triangles and pre[0] == MAX_DISPLAY_TRIANGLES:
        return pre[1], pre[2]
    return decimate_soup(mesh.triangles, MAX_DISPLAY_TRIANGLES)


def surface_polydata(run, surface: Surface | None = None, scalars: dict | None = None):
    """A pyvista PolyData of the display surface (renders and `view` only; imports pyvista)."""
    import pyvista as pv

    s = surface if surface is not None else surface_data(run)
    mesh = pv.PolyData(s.points, np.hstack([np.full((s.tri.shape[0], 1), 3), s.tri]).ravel())
    mesh.cell_data["panel"] = s.panel
    for k, v in (scalars or {}).items():
        mesh.cell_data[k] = v
    return mesh
