"""VTK PolyData (.vtp) files for ParaView, written without VTK (geomload.export.vtkxml), atomically.

- lattice.vtp: the vortex-lattice panels as quads (wing frame); cell data per case
  ``gamma_<key>`` (circulation per unit speed, m), ``circulation_<key>`` (m^2/s, x V_TAS),
  ``dcp_<key>`` (pressure-coefficient jump lower - upper, -), plus ``strip`` and ``area_m2``.
- spar_axis.vtp: the spar axis as one polyline; point data per case ``shear_N_<key>``,
  ``bending_Nm_<key>``, ``torsion_Nm_<key>`` (limit) and, with an envelope, the envelope columns
  under the names of envelope.csv and summary.json (``shear_max_N``, ``shear_max_ult_N``, ...).
- surface.vtp: the CAD surface in the wing frame (a decimated display surface above
  MAX_DISPLAY_TRIANGLES, see `surface_data`); cell data ``panel`` (nearest lattice panel in the
  (x, |y|) plan view), ``plan_area_m2`` (the cell's area projected on the wing x-y plane) and,
  for every case, ``pressure_jump_Pa_<key>``: the case's lift per unit plan area carried by the
  cell. Split rule: each lattice panel's share of its strip lift is spread over the cells
  nearest that panel in proportion to their plan area, so a closed wing's upper and lower skins
  carry about half each, and sum(pressure_jump_Pa * plan_area_m2) over the surface equals the
  lift of the wing in the file (one semi-span for a half wing, both for a full one). Also
  ``dcp_critical`` (the nearest panel's jump coefficient, for colour) and
  ``pressure_jump_Pa_critical`` (= the critical case's ``pressure_jump_Pa_<key>``).

``<key>`` is an ASCII, file-safe form of the case name; field data ``case_names`` (String, UTF-8,
any Unicode) and ``case_keys`` (same order) map them back, and ``critical_case`` names the case
painted by default.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from geomload import CAUTION

from geomload.export import envelope_access as ea
from geomload.export.atomic import safe_name
from geomload.export.vtkxml import write_vtp

MAX_DISPLAY_TRIANGLES = 100_000  # above this the display surface is decimated: a 2-D picture
# and a ParaView overview gain nothing from more, and per-case arrays stay small (common
# practice, no source)




def case_keys(run) -> list:
    """File-safe unique ASCII key per case, in run order."""
    taken: set = set()
    return [safe_name(c.name, taken) for c in run.cases]


def _field(run, critical) -> dict:
    # the way back to the CAD frame: p_cad = p_wing @ R + origin (R rows = wing axes in CAD);
    # in ParaView, a Transform filter with this matrix puts the data back on the CAD model
    r = np.asarray(run.frame.rotation, float)
    m = np.block([[r.T, np.asarray(run.frame.origin, float)[:, None]],
                  [np.zeros((1, 3)), np.ones((1, 1))]]).ravel()
    return {"case_names": [str(c.name) for c in run.cases], "case_keys": case_keys(run),
            "critical_case": [str(critical.name)], "wing_to_cad_matrix_4x4": m,
            "units": ["m"], "caution": [CAUTION]}


def panel_centres(lattice) -> np.ndarray:
    """(N, 3) panel centres (mean of the four corners), strip-major."""
    c = np.asarray(lattice.corners, float)
    return (0.25 * (c[:-1, :-1] + c[1:, :-1] + c[:-1, 1:] + c[1:, 1:])).reshape(-1, 3)


def lattice_arrays(run, with_cases: bool = True):
    """(points (P, 3), quads (N, 4), cell_data) of the lattice, strip-major like AeroSolution.dcp.
    with_cases=False: only ``strip`` and ``area_m2`` (a wireframe needs no per-case arrays)."""
    lat = run.lattice
    c = np.asarray(lat.corners, float)
    ns, nc = c.shape[0] - 1, c.shape[1] - 1
    idx = np.arange((ns + 1) * (nc + 1)).reshape(ns + 1, nc + 1)
    quads = np.stack([idx[:-1, :-1], idx[1:, :-1], idx[1:, 1:], idx[:-1, 1:]], axis=-1).reshape(-1, 4)
    cells = {"strip": np.repeat(np.arange(ns), nc), "area_m2": np.asarray(lat.area, float)}
    for key, cr in zip(case_keys(run) if with_cases else (), run.cases):
        g = np.asarray(cr.aero.gamma, float)
        cells[f"gamma_{key}"] = g
        cells[f"circulation_{key}"] = g * float(cr.v_tas)
        cells[f"dcp_{key}"] = np.asarray(cr.aero.dcp, float)
    return c.reshape(-1, 3), quads, cells


def lattice_polydata(run, with_cases: bool = True):
    """The lattice as a pyvista PolyData (for renders and `view`; imports pyvista)."""
    import pyvista as pv

    pts, quads, cells = lattice_arrays(run, with_cases)
    mesh = pv.PolyData(pts, np.hstack([np.full((quads.shape[0], 1), 4), quads]).ravel())
    for k, v in cells.items():
        mesh.cell_data[k] = v
    return mesh


def write_lattice_vtp(path, run, inputs=()):
    """Write lattice.vtp (see module docstring)."""
    pts, quads, cells = lattice_arrays(run)
    fd = _field(run, ea.critical_case(run))
    fd["mirrored"] = np.array([int(bool(run.lattice.mirrored))])
    return write_vtp(path, pts, polys=quads, cell_data=cells, field_data=fd, inputs=inputs)


def spar_line(run, case_result=None) -> np.ndarray:
    """(n, 3) spar-axis points at the load stations, wing frame (m).

    Taken from the loads' ``spar_points_m`` (what loads.beam stores), else the case's
    ``spar.line`` polyline ((y, x, z), ...) or ``spar.chord_fraction`` (default 0.25) applied
    to the stations.
    """
    cr = case_result or run.cases[0]
    L, st = cr.loads, run.stations
    y = np.asarray(L.y, float)
    pts = L.spar_points_m
    if pts is not None and np.shape(pts) == (y.size, 3):
        return np.asarray(pts, float)
    spar = getattr(run.case, "spar", None)
    line = np.asarray(getattr(spar, "line", ()) or (), float)
    if line.ndim == 2 and line.shape[0] >= 2 and line.shape[1] == 3:
        order = np.argsort(line[:, 0])
        ly, lx, lz = line[order].T
        return np.column_stack([np.interp(y, ly, lx), y, np.interp(y, ly, lz)])
    f = getattr(spar, "chord_fraction", None)
    f = 0.25 if not isinstance(f, (int, float)) else float(f)
    x = np.interp(y, st.y, st.x_le + f * (st.x_te - st.x_le))
    z = np.interp(y, st.y, st.z_le + f * (st.z_te - st.z_le))
    return np.column_stack([x, y, z])


def spar_axis_arrays(run):
    """(points (n, 3), point_data) of the spar axis with every case's V, M, T and the envelope."""
    pts = spar_line(run)
    n = pts.shape[0]
    pdata = {"y_m": pts[:, 1]}
    for key, cr in zip(case_keys(run), run.cases):
        L = cr.loads
        for name, arr in (("shear_N", L.shear_N), ("bending_Nm", L.bending_Nm),
                          ("torsion_Nm", L.torsion_Nm)):
            a = np.asarray(arr, float)
            if a.size == n:
                pdata[f"{name}_{key}"] = a
    if run.envelope is not None:
        e = ea.table(run.envelope)
        if e["y"].size == n:
            for q, u in e["quantities"]:
                for side in ("max", "min"):
                    pdata[f"{q}_{side}_{u}"] = e[f"{q}_{side}"]
                    pdata[f"{q}_{side}_ult_{u}"] = e[f"{q}_{side}_ult"]
    return pts, pdata


load_axis_arrays = spar_axis_arrays  # the earlier name


def write_spar_axis_vtp(path, run, inputs=()):
    """Write spar_axis.vtp (see module docstring)."""
    pts, pdata = spar_axis_arrays(run)
    return write_vtp(path, pts, lines=[np.arange(pts.shape[0])], point_data=pdata,
                     field_data=_field(run, ea.critical_case(run)), inputs=inputs)


# ------------------------------------------------------------------------------ the surface
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
    cell_data: dict = field(default_factory=dict)



write_load_axis_vtp = write_spar_axis_vtp  # the earlier name

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
    lo, hi = np.array([v[:, k].min() for k in range(3)]), np.array([v[:, k].max() for k in range(3)])
    h = max(float(np.sqrt(2.0 * area / max(target, 1))), 1e-12)
    dims = np.floor((hi - lo) / h).astype(np.int64) + 2
    # the cell key, in blocks of vertices (no full-size temporaries besides the key itself):
    # key = (q0 d1 + q1) d2 + q2 with q = floor((v - lo) / h) (non-negative: truncation)
    inv_h = 1.0 / h
    key = np.empty(v.shape[0], np.int64)
    for a in range(0, v.shape[0], _KEY_BLOCK):
        q = ((v[a:a + _KEY_BLOCK] - lo) * inv_h).astype(np.int64)
        key[a:a + _KEY_BLOCK] = (q[:, 0] * dims[1] + q[:, 1]) * dims[2] + q[:, 2]
    n_cells = int(np.prod(dims))
    if n_cells <= DENSE_GRID_MAX:  # a counting pass over a dense grid: no sort of the vertices
        occupied = np.bincount(key, minlength=n_cells) > 0
        n = int(occupied.sum())
        lut = np.cumsum(occupied, dtype=np.int64 if n >= 2 ** 31 else np.int32)
        del occupied
        lut -= 1
        inv = lut[key]  # the cell number of each vertex (int32 below 2**31 cells: half the size)
        del lut
    else:
        _, inv = np.unique(key, return_inverse=True)
        n = int(inv.max()) + 1
    del key
    cnt = np.zeros(n)  # members per cell; integer counts, so block sums are exact
    for a in range(0, inv.size, _KEY_BLOCK):
        cnt += np.bincount(inv[a:a + _KEY_BLOCK], minlength=n)
    # the per-cell sums in blocks, each an unbuffered ufunc.at accumulation in vertex order:
    # the same additions, in the same order, as np.bincount(inv, weights=v[:, k]) (bit for
    # bit), without its contiguous copy of a whole coordinate column (96 MB at 4 M triangles)
    pts = np.zeros((n, 3))
    for a in range(0, v.shape[0], _KEY_BLOCK):
        blk = inv[a:a + _KEY_BLOCK]
        for k in range(3):
            np.add.at(pts[:, k], blk, v[a:a + _KEY_BLOCK, k])
    pts /= cnt[:, None]
    f = inv.reshape(-1, 3)
    ok = (f[:, 0] != f[:, 1]) & (f[:, 1] != f[:, 2]) & (f[:, 0] != f[:, 2])
    f = f[ok]
    del inv, ok
    s = np.sort(f, axis=1).astype(np.int64, copy=False)
    if n ** 3 < 2 ** 62:
        _, first = np.unique((s[:, 0] * n + s[:, 1]) * n + s[:, 2], return_index=True)
    else:
        _, first = np.unique(np.ascontiguousarray(s).view(np.dtype((np.void, 24))).ravel(),
                             return_index=True)
    return pts, f[np.sort(first)].astype(np.int64, copy=False)


_KEY_BLOCK = 1 << 16  # vertices per block of the cell-key pass
DENSE_GRID_MAX = 40_000_000  # grid cells counted densely (320 MB of int64 at most)


BRUTE_NEAREST_MAX = 100_000_000  # query-centre pairs up to which the nearest centre is found by
# direct distances in numpy (the sample: 24,000 triangles x 400 panels in about 0.05 s, x 3000
# panels about 0.4 s); above it a k-d tree pays for its import (scipy.spatial, about 0.5 s)
_BRUTE_CHUNK = 1 << 15  # pairs per block of the direct search (cache-sized temporaries)


def nearest_centre(centres, query) -> np.ndarray:
    """Index of the nearest of `centres` (k, 2) to each of `query` (m, 2) (Euclidean; the lowest
    index among equally near ones)."""
    cen = np.asarray(centres, float)
    q = np.asarray(query, float)
    if cen.shape[0] * q.shape[0] > BRUTE_NEAREST_MAX:
        from scipy.spatial import cKDTree

        return cKDTree(cen).query(q)[1]
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


def panel_forces(run, case_result) -> np.ndarray:
    """(N,) force (N) of each lattice panel such that each strip's panels sum to the strip's lift
    (lift_per_q x q x width: the lift the loads integrate); the shape within a strip follows
    dcp x area, corrected additively in proportion to |dcp x area| (exact for a one-signed strip,
    and it keeps the shape of a strip whose net lift is about zero)."""
    lat, a = run.lattice, case_result.aero
    ns, nc = int(lat.n_span), int(lat.n_chord)
    q = float(case_result.q_pa)
    f = (np.asarray(a.dcp, float) * np.asarray(lat.area, float) * q).reshape(ns, nc)
    target = np.asarray(a.lift_per_q, float) * q * np.asarray(lat.strip_width, float)
    w = np.abs(f)
    wsum = w.sum(axis=1, keepdims=True)
    share = np.where(wsum > 0, w / np.where(wsum > 0, wsum, 1.0), 1.0 / nc)
    return (f + (target - f.sum(axis=1))[:, None] * share).ravel()


def _jump_map(run, surface: Surface) -> tuple:
    """The case-independent part of `pressure_jump`: (bins (m,) cell -> panel bin, area (2N,)
    plan area per bin, [(slice, dest)] per side: the panel each panel's force goes to)."""
    n_pan = int(np.asarray(run.lattice.area).size)
    bins = surface.panel + n_pan * (surface.side < 0)
    sides = (1, -1) if np.any(surface.side < 0) else (1,)
    area = np.bincount(bins, weights=surface.plan_area_m2, minlength=2 * n_pan)
    cen = panel_centres(run.lattice)[:, :2]
    routes = []
    for k, sgn in enumerate(sides):
        sl = slice(k * n_pan, (k + 1) * n_pan)
        have = area[sl] > 0
        if not have.any():
            continue
        dest = np.arange(n_pan)
        if not have.all():
            idx = np.flatnonzero(have)
            dest[~have] = idx[nearest_centre(cen[idx], cen[~have])]
        routes.append((sl, dest))
    return bins, area, routes


def pressure_jump(run, surface: Surface, case_result, _map=None) -> np.ndarray:
    """(m,) lift per unit plan area (Pa) each surface cell carries for one case (split rule in the
    module docstring). Panels nearest to no cell hand their force to the nearest panel that has
    cells (same side), so the surface total equals the lattice lift of the wing in the file."""
    bins, area, routes = _jump_map(run, surface) if _map is None else _map
    n_pan = area.size // 2
    fp = panel_forces(run, case_result)
    force = np.zeros(2 * n_pan)
    for sl, dest in routes:
        force[sl] = np.bincount(dest, weights=fp, minlength=n_pan)
    with np.errstate(divide="ignore", invalid="ignore"):
        per_area = np.where(area > 0, force / np.where(area > 0, area, 1.0), 0.0)
    return per_area[bins]


def surface_cell_data(run, surface: Surface) -> dict:
    """The cell arrays of surface.vtp (see the module docstring)."""
    crit = ea.critical_case(run)
    cells = {"panel": surface.panel, "plan_area_m2": surface.plan_area_m2}
    jmap = _jump_map(run, surface)
    for key, cr in zip(case_keys(run), run.cases):
        p = pressure_jump(run, surface, cr, jmap)
        cells[f"pressure_jump_Pa_{key}"] = p.astype(np.float32) if len(run.cases) > 50 else p
        if cr is crit:
            cells["pressure_jump_Pa_critical"] = p
    cells["dcp_critical"] = np.asarray(crit.aero.dcp, float)[surface.panel]
    return cells


def surface_polydata(run, surface: Surface | None = None, scalars: dict | None = None):
    """A pyvista PolyData of the display surface (renders and `view` only; imports pyvista)."""
    import pyvista as pv

    s = surface if surface is not None else surface_data(run)
    mesh = pv.PolyData(s.points, np.hstack([np.full((s.tri.shape[0], 1), 3), s.tri]).ravel())
    mesh.cell_data["panel"] = s.panel
    for k, v in (scalars or {}).items():
        mesh.cell_data[k] = v
    return mesh


def write_surface_vtp(path, run, inputs=(), surface=None):
    """Write surface.vtp (see module docstring); `surface`: a prebuilt surface_data(run)."""
    s = surface if isinstance(surface, Surface) else surface_data(run)
    fd = _field(run, ea.critical_case(run))
    fd["source_triangles"] = np.array([s.source_triangles])
    fd["decimated"] = np.array([int(s.decimated)])
    fd["pressure_jump_rule"] = [
        "pressure_jump_Pa_<case>: lift per unit plan area carried by each cell; each lattice "
        "panel's share of its strip lift is spread over its nearest cells in proportion to their "
        "plan area (upper and lower skins about half each); sum(pressure_jump_Pa * plan_area_m2) "
        "= the lift of the wing in this file"]
    return write_vtp(path, s.points, polys=s.tri, cell_data=surface_cell_data(run, s),
                     field_data=fd, inputs=inputs)


def write_all_vtk(folder, run, inputs=(), surface=None):
    """lattice.vtp, spar_axis.vtp and surface.vtp into `folder`; returns their paths.
    `surface`: a prebuilt surface_data(run), shared with the renders."""
    from pathlib import Path

    f = Path(folder)
    return [write_lattice_vtp(f / "lattice.vtp", run, inputs),
            write_spar_axis_vtp(f / "spar_axis.vtp", run, inputs),
            write_surface_vtp(f / "surface.vtp", run, inputs, surface)]
