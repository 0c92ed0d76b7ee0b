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

import numpy as np

from geomload import CAUTION
from geomload.export import envelope_access as ea
from geomload.export.atomic import safe_name
from geomload.export.display_surface import (  # noqa: F401  (the earlier home of these names)
    BRUTE_NEAREST_MAX, DENSE_GRID_MAX, MAX_DISPLAY_TRIANGLES, Surface, decimate_soup,
    map_to_panels, nearest_centre, panel_centres, surface_data, surface_points_faces,
    surface_polydata)
from geomload.export.surface_pressure import (_jump_map, jump_map,  # noqa: F401
                                              panel_forces, pressure_jump)
from geomload.export.vtkxml import write_vtp
from geomload.loads.beam import spar_line as beam_spar_line
from geomload.loads.cases import DEFAULT_SPAR_CHORD_FRACTION


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
    """(n, 3) spar-axis points at the load stations, wing frame (m): the loads'
    ``spar_points_m`` (what loads.beam integrated about); for loads without that detail, the
    loads stage's own rule (:func:`geomload.loads.beam.spar_line`: the case's ``spar.line`` or
    its chord fraction, default DEFAULT_SPAR_CHORD_FRACTION) on the stations."""
    cr = case_result or run.cases[0]
    L, st = cr.loads, run.stations
    if L.spar_points_m is not None:
        return L.spar_points_m
    y = L.y
    spar = run.case.spar
    f = DEFAULT_SPAR_CHORD_FRACTION if spar.chord_fraction is None else spar.chord_fraction
    edges = [np.interp(y, st.y, e) for e in (st.x_le, st.x_te, st.z_le, st.z_te)]
    x, z = beam_spar_line(y, *edges, chord_fraction=f, line=spar.line)
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


write_load_axis_vtp = write_spar_axis_vtp  # the earlier name


# ------------------------------------------------------------------------------ the surface
def surface_cell_data(run, surface: Surface) -> dict:
    """The cell arrays of surface.vtp (see the module docstring)."""
    crit = ea.critical_case(run)
    cells = {"panel": surface.panel, "plan_area_m2": surface.plan_area_m2}
    jmap = jump_map(run, surface)
    for key, cr in zip(case_keys(run), run.cases):
        p = pressure_jump(run, surface, cr, jmap)
        cells[f"pressure_jump_Pa_{key}"] = p.astype(np.float32) if len(run.cases) > 50 else p
        if cr is crit:
            cells["pressure_jump_Pa_critical"] = p
    cells["dcp_critical"] = np.asarray(crit.aero.dcp, float)[surface.panel]
    return cells


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
