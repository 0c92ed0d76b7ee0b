"""VTK PolyData (.vtp) files for ParaView, written with pyvista (imported lazily), atomically.

- lattice.vtp: the vortex-lattice panels as quads (wing frame); cell data per case
  ``gamma_<key>`` (circulation per unit speed, m), ``circulation_<key>`` (m^2/s, x V_TAS),
  ``dcp_<key>`` (pressure-coefficient jump lower - upper, -), plus ``strip`` and ``area_m2``.
- load_axis.vtp: the spar line as one polyline; point data per case ``shear_N_<key>``,
  ``bending_Nm_<key>``, ``torsion_Nm_<key>`` (limit) and, with an envelope, ``*_max``/``*_min``.
- surface.vtp: the CAD surface in the wing frame; cell data ``dcp_<key>`` per case (when at most
  MAX_SURFACE_CASES cases) and always ``dcp_critical`` and ``pressure_jump_Pa_critical``, each
  triangle taking the value of the nearest lattice panel in the (x, |y|) plan projection.

``<key>`` is a file-safe form of the case name; field data ``case_names`` / ``case_keys`` (in the
same order) map them back, and ``critical_case`` names the case painted by default.
"""

from __future__ import annotations

import numpy as np

from geomload import CAUTION

from geomload.export import envelope_access as ea
from geomload.export.atomic import atomic_path, safe_name

MAX_SURFACE_CASES = 12


def case_keys(run) -> list:
    """File-safe unique key per case, in run order."""
    taken: set = set()
    return [safe_name(c.name, taken) for c in run.cases]


def _save(mesh, path, inputs=()):
    with atomic_path(path, inputs) as tmp:
        mesh.save(str(tmp), binary=True)
    return path


def _field(mesh, run, critical):
    mesh.field_data["case_names"] = np.array([c.name for c in run.cases])
    mesh.field_data["case_keys"] = np.array(case_keys(run))
    mesh.field_data["critical_case"] = np.array([critical.name])
    # the way back to the CAD frame: p_cad = p_wing @ R + origin (R rows = wing axes in CAD);
    # in ParaView, a Transform filter with this matrix puts the data back on the CAD model
    r = np.asarray(run.frame.rotation, float)
    mesh.field_data["wing_to_cad_matrix_4x4"] = np.block(
        [[r.T, np.asarray(run.frame.origin, float)[:, None]], [np.zeros((1, 3)), np.ones((1, 1))]]
    ).ravel()
    mesh.field_data["units"] = np.array(["m"])
    mesh.field_data["caution"] = np.array([CAUTION])


def panel_centres(lattice) -> np.ndarray:
    c = np.asarray(lattice.corners, float)
    return (0.25 * (c[:-1, :-1] + c[1:, :-1] + c[:-1, 1:] + c[1:, 1:])).reshape(-1, 3)


def lattice_polydata(run):
    """The lattice as a pyvista PolyData of quads (strip-major, matching AeroSolution.dcp)."""
    import pyvista as pv

    lat = run.lattice
    c = np.asarray(lat.corners, float)
    ns, nc = c.shape[0] - 1, c.shape[1] - 1
    idx = np.arange((ns + 1) * (nc + 1)).reshape(ns + 1, nc + 1)
    quads = np.stack([idx[:-1, :-1], idx[1:, :-1], idx[1:, 1:], idx[:-1, 1:]], axis=-1).reshape(-1, 4)
    faces = np.hstack([np.full((quads.shape[0], 1), 4), quads]).ravel()
    mesh = pv.PolyData(c.reshape(-1, 3), faces)
    mesh.cell_data["strip"] = np.repeat(np.arange(ns), nc)
    mesh.cell_data["area_m2"] = np.asarray(lat.area, float)
    for key, cr in zip(case_keys(run), run.cases):
        g = np.asarray(cr.aero.gamma, float)
        mesh.cell_data[f"gamma_{key}"] = g
        mesh.cell_data[f"circulation_{key}"] = g * float(cr.v_tas)
        mesh.cell_data[f"dcp_{key}"] = np.asarray(cr.aero.dcp, float)
    return mesh


def write_lattice_vtp(path, run, inputs=()):
    """Write lattice.vtp (see module docstring)."""
    mesh = lattice_polydata(run)
    _field(mesh, run, ea.critical_case(run))
    mesh.field_data["mirrored"] = np.array([int(bool(run.lattice.mirrored))])
    return _save(mesh, path, inputs)


def spar_line(run, case_result=None) -> np.ndarray:
    """(n, 3) spar-axis points at the load stations, wing frame (m).

    Taken from ``loads.extras['spar_points_m']`` (what loads.beam stores), else the case's
    ``spar.line`` polyline ((y, x, z), ...) or ``spar.chord_fraction`` (default 0.25) applied
    to the stations.
    """
    cr = case_result or run.cases[0]
    L, st = cr.loads, run.stations
    y = np.asarray(L.y, float)
    ex = L.extras or {}
    pts = ex.get("spar_points_m")
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


def load_axis_polydata(run):
    import pyvista as pv

    pts = spar_line(run)
    n = pts.shape[0]
    line = pv.PolyData(pts, lines=np.concatenate([[n], np.arange(n)]))
    line.point_data["y_m"] = pts[:, 1]
    for key, cr in zip(case_keys(run), run.cases):
        L = cr.loads
        for name, arr in (("shear_N", L.shear_N), ("bending_Nm", L.bending_Nm),
                          ("torsion_Nm", L.torsion_Nm)):
            a = np.asarray(arr, float)
            if a.size == n:
                line.point_data[f"{name}_{key}"] = a
    if run.envelope is not None:
        e = ea.table(run.envelope)
        if e["y"].size == n:
            for q, u in e["quantities"]:
                for side in ("max", "min"):
                    line.point_data[f"{q}_{u}_{side}"] = e[f"{q}_{side}"]
                    line.point_data[f"{q}_{u}_{side}_ult"] = e[f"{q}_{side}_ult"]
    return line


def write_load_axis_vtp(path, run, inputs=()):
    """Write load_axis.vtp (see module docstring)."""
    line = load_axis_polydata(run)
    _field(line, run, ea.critical_case(run))
    return _save(line, path, inputs)


def surface_points_faces(mesh, frame):
    """Weld the triangle soup (exactly equal vertices) and move it to the wing frame."""
    tri = np.ascontiguousarray(np.asarray(mesh.triangles, dtype=np.float64).reshape(-1, 3))
    rows = tri.view(np.dtype((np.void, 24))).ravel()  # one 24-byte key per vertex: fast unique
    _, first, inv = np.unique(rows, return_index=True, return_inverse=True)
    return frame.to_wing(tri[first]), inv.reshape(-1, 3)


def map_to_panels(points_xy, lattice) -> np.ndarray:
    """Index of the nearest lattice panel centre in the (x, y) projection; |y| for a half lattice."""
    from scipy.spatial import cKDTree

    cen = panel_centres(lattice)[:, :2]
    q = np.array(points_xy, float)
    if lattice.mirrored:
        q[:, 1] = np.abs(q[:, 1])
    return cKDTree(cen).query(q)[1]


def surface_polydata(run):
    import pyvista as pv

    pts, tri = surface_points_faces(run.mesh, run.frame)
    faces = np.hstack([np.full((tri.shape[0], 1), 3), tri]).ravel()
    surf = pv.PolyData(pts, faces)
    near = map_to_panels(pts[tri].mean(axis=1)[:, :2], run.lattice)
    surf.cell_data["panel"] = near
    crit = ea.critical_case(run)
    if len(run.cases) <= MAX_SURFACE_CASES:
        for key, cr in zip(case_keys(run), run.cases):
            surf.cell_data[f"dcp_{key}"] = np.asarray(cr.aero.dcp, float)[near]
    dcp = np.asarray(crit.aero.dcp, float)[near]
    surf.cell_data["dcp_critical"] = dcp
    surf.cell_data["pressure_jump_Pa_critical"] = dcp * float(crit.q_pa)
    return surf


def write_surface_vtp(path, run, inputs=(), surface=None):
    """Write surface.vtp (see module docstring); `surface`: a prebuilt surface_polydata(run)."""
    surf = surface if surface is not None else surface_polydata(run)
    _field(surf, run, ea.critical_case(run))
    return _save(surf, path, inputs)


def write_all_vtk(folder, run, inputs=(), surface=None):
    """lattice.vtp, load_axis.vtp and surface.vtp into `folder`; returns their paths.
    `surface`: a prebuilt surface_polydata(run), shared with the renders."""
    from pathlib import Path

    f = Path(folder)
    return [write_lattice_vtp(f / "lattice.vtp", run, inputs),
            write_load_axis_vtp(f / "load_axis.vtp", run, inputs),
            write_surface_vtp(f / "surface.vtp", run, inputs, surface)]
