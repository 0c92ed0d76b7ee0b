"""The case loads mapped onto an analyst's own structural mesh (read with meshio).

Strips. The spar beam's nodal loads (export/fe.py) give, per strip [y_i, y_{i+1}) of the
semi-span, a force f_i and a moment m_i about the spar point P_i that together are the
integral of every load in that strip. Each strip goes to the mesh nodes whose wing-frame y lies
in it (nodes outside the wing's outline get nothing).

Scheme (forces only, so shell, solid and beam meshes all take it). For the N nodes of a strip,
centroid c, offsets r_k = x_k - c:

    g_k = f / N + w x r_k,   with   (tr(S) I - S) w = m + (P_i - c) x f,   S = sum r_k r_k^T.

Then sum g_k = f (the w x r_k sum to zero because sum r_k = 0) and
sum (x_k - P_i) x g_k = (c - P_i) x f + sum r_k x (w x r_k) = (c - P_i) x f + (tr(S) I - S) w = m:
the strip's force and its moment are preserved exactly, hence the total force and the moment
about the root. The w x r_k part is the least-squares (minimum sum |g_k|^2) set of
self-equilibrated forces carrying the moment: a rigid-rotation pattern, like a bolt group.
A strip with no node passes its load (as force and moment about the root) to the nearest strip
with nodes; a strip whose nodes lie on one line (S degenerate: a stick model, one node) takes
f / N per node and its moment about the centroid as equal nodal moments (DOF 4-6, for nodes
with rotational DOFs). Both are reported as warnings, since they shift the distribution (never
the totals).

Node numbers: the file's own for Abaqus/CalculiX .inp (read from its *NODE lines); for other
formats the 1-based order of the points in the file.
"""

from __future__ import annotations

import contextlib
import io
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from geomload import CAUTION
from geomload.errors import InputError
from geomload.export.atomic import atomic_path, safe_name, write_text_atomic
from geomload.export.fe_nodes import nodal_loads

OUTLINE_MARGIN = 0.05    # x chord: a node this far outside the section outline still counts
DEGENERATE_RATIO = 1e-9  # smallest/largest eigenvalue of tr(S) I - S below this: nodes on a line
ROOT_ONLY_FRACTION = 0.1  # nodes spanning less than this x semi-span: "nodes only at the root"


@dataclass(frozen=True)
class StructuralMesh:
    """A structural mesh: path, points (N, 3) in the CAD unit and frame, node_ids (N,), and the
    meshio.Mesh itself (for writing the VTU)."""

    path: str
    points: np.ndarray
    node_ids: np.ndarray
    mesh: object


@dataclass(frozen=True)
class MappedLoads:
    """Nodal loads of one case on a structural mesh, CAD frame: case; force_N (N, 3) (zero on
    nodes that take no load); moment_Nm (N, 3) (N m; non-zero only in strips whose nodes lie on
    one line); loaded (N,) bool; warnings."""

    case: str
    force_N: np.ndarray
    moment_Nm: np.ndarray
    loaded: np.ndarray
    warnings: tuple = ()


def _inp_node_ids(path, n):
    ids, on = [], False
    with open(path, encoding="utf-8", errors="replace") as fh:
        for line in fh:
            t = line.strip()
            if t.startswith("*"):
                on = t.upper().startswith("*NODE") and not t.upper().startswith(("*NODE PRINT",
                                                                               "*NODE FILE",
                                                                               "*NODE OUTPUT"))
                continue
            if on and t and not t.startswith("**"):
                ids.append(int(t.split(",")[0]))
    if len(ids) != n or len(set(ids)) != n:
        raise InputError(f"{path}: its *NODE lines ({len(ids)} numbers) do not match the "
                         f"{n} nodes read; cannot name the nodes for *CLOAD")
    return np.array(ids, dtype=np.int64)


def read_structural_mesh(path) -> StructuralMesh:
    """Read any mesh meshio reads; raise InputError (one line naming the file) if it cannot."""
    import meshio

    name = os.fspath(path)
    if not os.path.isfile(name):
        raise InputError(f"{name}: structural mesh not found")
    sink = io.StringIO()
    try:  # meshio prints and may call sys.exit on a file it cannot read: keep both in here
        with contextlib.redirect_stdout(sink), contextlib.redirect_stderr(sink):
            mesh = meshio.read(name)
    except (Exception, SystemExit) as e:  # meshio raises many types for bad files
        said = " ".join(sink.getvalue().split())
        msg = (" ".join(str(e).split()) if not isinstance(e, SystemExit) else said)[:200] \
            or type(e).__name__
        raise InputError(f"{name}: cannot be read as a structural mesh ({msg})") from None
    pts = np.asarray(mesh.points, float)
    if pts.ndim != 2 or pts.shape[0] == 0 or not np.all(np.isfinite(pts)):
        raise InputError(f"{name}: the structural mesh holds no finite node coordinates")
    if pts.shape[1] == 2:
        pts = np.column_stack([pts, np.zeros(len(pts))])
    ids = _inp_node_ids(name, len(pts)) if name.lower().endswith(".inp") else \
        np.arange(1, len(pts) + 1)
    return StructuralMesh(path=name, points=pts, node_ids=ids, mesh=mesh)


def inside_wing(points_wing, stations):
    """Mask of wing-frame points (m) inside the wing's outline (semi-span, chord, depth), with
    OUTLINE_MARGIN x chord around it. stations: records.Stations."""
    y = points_wing[:, 1]
    inside_y = (y >= stations.y[0] - 1e-9) & (y <= stations.semispan * (1 + 1e-6))
    yc = np.clip(y, stations.y[0], stations.y[-1])
    c = np.interp(yc, stations.y, stations.chord)
    tol = OUTLINE_MARGIN * c
    x_le, x_te = np.interp(yc, stations.y, stations.x_le), np.interp(yc, stations.y, stations.x_te)
    z_le, z_te = np.interp(yc, stations.y, stations.z_le), np.interp(yc, stations.y, stations.z_te)
    t = np.interp(yc, stations.y, stations.thickness_ratio) * c
    x = points_wing[:, 0]
    frac = np.clip((x - x_le) / np.where(x_te > x_le, x_te - x_le, 1.0), 0, 1)
    zc = z_le + frac * (z_te - z_le)
    return (inside_y & (x >= np.minimum(x_le, x_te) - tol) & (x <= np.maximum(x_le, x_te) + tol)
            & (np.abs(points_wing[:, 2] - zc) <= t + tol))


def map_loads(smesh: StructuralMesh, loads, frame, unit_scale_m: float, stations) -> MappedLoads:
    """Distribute one case (SpanLoads) onto the mesh's nodes; see the module docstring."""
    nl = nodal_loads(loads)
    pw = frame.to_wing(smesh.points * float(unit_scale_m)) if frame is not None \
        else smesh.points * float(unit_scale_m)
    inside = inside_wing(pw, stations)
    if not inside.any():
        raise InputError(f"{smesh.path}: no node of the structural mesh lies inside the wing "
                         "(wrong unit or frame? the mesh must be in the CAD frame and unit)")
    yi = pw[inside, 1]
    if yi.max() - yi.min() < ROOT_ONLY_FRACTION * stations.semispan:
        raise InputError(f"{smesh.path}: the structural mesh's nodes inside the wing span only "
                         f"y = {yi.min():.4g} to {yi.max():.4g} m of a {stations.semispan:.4g} m "
                         "semi-span (nodes only at the root, or a mesh in another unit than the "
                         "CAD file's?)")
    P0 = nl.points_m[0]
    ys = nl.y_m
    m0 = nl.moment_Nm + np.cross(nl.points_m - P0, nl.force_N)  # each strip's moment about P0
    strip = np.searchsorted(ys, pw[:, 1], side="right") - 1
    strip[~inside] = -1
    strip[inside & (strip < 0)] = 0  # inside the margin just inboard of the first station
    strip = np.minimum(strip, ys.size - 2)  # the tip node's load joins the last strip
    fs = nl.force_N[:-1].copy()
    ms = m0[:-1].copy()
    fs[-1] += nl.force_N[-1]
    ms[-1] += m0[-1]
    g = np.zeros_like(pw)
    mom = np.zeros_like(pw)
    groups, empty, lines = {}, [], []
    order = np.argsort(strip, kind="stable")
    bounds = np.searchsorted(strip[order], np.arange(ys.size), side="left")
    for j in range(ys.size - 1):
        idx = order[bounds[j]:bounds[j + 1]]
        if not idx.size:
            empty.append(j)
            continue
        r = pw[idx] - pw[idx].mean(0)
        S = r.T @ r
        A = np.trace(S) * np.eye(3) - S
        ev = np.linalg.eigvalsh(A)
        if ev[0] <= DEGENERATE_RATIO * max(ev[-1], 1e-300):
            A = None  # nodes on one line (or one node): the moment goes on as nodal moments
            lines.append(j)
        groups[j] = [idx, fs[j].copy(), ms[j].copy(), A]
    if not groups:
        raise InputError(f"{smesh.path}: no strip of the span holds a mesh node")
    good = np.array(sorted(groups))
    mid = 0.5 * (ys[:-1] + ys[1:])
    for j in empty:  # force and moment about the root move unchanged: the sums stay exact
        t = int(good[np.argmin(np.abs(mid[good] - mid[j]))])
        groups[t][1] += fs[j]
        groups[t][2] += ms[j]
    warnings = []
    if empty:
        warnings.append(f"{len(empty)} of {ys.size - 1} load strips hold no mesh node; their "
                        "loads went to the nearest strip with nodes (total force and root moment "
                        "unchanged)")
    if lines:
        warnings.append(f"{len(lines)} load strips have their nodes on one line: their moment "
                        "is applied as nodal moments (DOF 4-6), which only nodes with rotational "
                        "DOFs (beams, shells) carry")
    for idx, f, m, A in groups.values():
        c = pw[idx].mean(0)
        r = pw[idx] - c
        mc = m - np.cross(c - P0, f)  # the strip's moment about its node centroid
        g[idx] = f / idx.size
        if A is None:
            mom[idx] = mc / idx.size
        else:
            g[idx] += np.cross(np.linalg.solve(A, mc), r)
    R = np.eye(3) if frame is None else np.asarray(frame.rotation, float)
    return MappedLoads(case=str(loads.case), force_N=g @ R, moment_Nm=mom @ R,
                       loaded=(strip >= 0) & ((np.abs(g).sum(1) > 0) | (np.abs(mom).sum(1) > 0)),
                       warnings=tuple(warnings))


def _texts(smesh, ml, unit, unit_scale_m):
    u = unit
    mo = ml.moment_Nm / float(unit_scale_m)  # N*unit, like the coordinates
    head = [CAUTION, f"geomload loads of case '{ml.case}' mapped on {os.path.basename(smesh.path)}"
            " (limit loads)", f"CAD frame; coordinates in {u} (1 {u} = {unit_scale_m:g} m); "
            f"forces N; moments N*{u}; node numbers of the mesh file", *ml.warnings]
    csv = [f"# {h}" for h in head] + [f"node,x_{u},y_{u},z_{u},Fx_N,Fy_N,Fz_N,Mx_N{u},My_N{u},Mz_N{u}"]
    inp = [f"** {h}" for h in head] + ["*CLOAD"]
    for k in np.flatnonzero(ml.loaded):
        nid = int(smesh.node_ids[k])
        vals = [*ml.force_N[k].tolist(), *mo[k].tolist()]
        csv.append(f"{nid}," + ",".join(map(repr, [*smesh.points[k].tolist(), *vals])))
        inp += [f"{nid}, {d + 1}, {v:.14g}" for d, v in enumerate(vals) if v != 0]
    return "\n".join(csv) + "\n", "\n".join(inp) + "\n"


def write_mesh_loads(folder, mesh_path, loads_list, frame, unit_scale_m: float, unit: str,
                     stations, inputs=()) -> list:
    """Map every case onto the mesh and write fe/mesh_<case>_nodal_loads.csv,
    fe/mesh_<case>_cload.inp (*CLOAD lines against the mesh's node numbers) and
    fe/mesh_<case>.vtu (the mesh with point data force_N). Everything is computed before the
    first file is written: bad input writes nothing. Returns (paths, warnings)."""
    import meshio

    smesh = read_structural_mesh(mesh_path)
    inputs = [*inputs, mesh_path]
    todo, taken, warnings = [], set(), []
    for loads in loads_list:
        ml = map_loads(smesh, loads, frame, unit_scale_m, stations)
        warnings += [f"{smesh.path}: case '{ml.case}': {w}" for w in ml.warnings]
        todo.append((safe_name(loads.case, taken), ml, *_texts(smesh, ml, unit, unit_scale_m)))
    paths = []
    d = Path(folder) / "fe"
    for name, ml, csv, inp in todo:
        paths.append(write_text_atomic(d / f"mesh_{name}_nodal_loads.csv", csv, inputs))
        paths.append(write_text_atomic(d / f"mesh_{name}_cload.inp", inp, inputs))
        out = meshio.Mesh(smesh.points, smesh.mesh.cells,
                          point_data={"force_N": ml.force_N, "moment_Nm": ml.moment_Nm,
                                      "node_id": smesh.node_ids.astype(np.int64)},
                          field_data={})
        with atomic_path(d / f"mesh_{name}.vtu", inputs) as tmp:
            meshio.write(str(tmp), out, file_format="vtu")
            text = Path(tmp).read_text(encoding="utf-8")  # XML: the caution as a comment
            head, _, rest = text.partition("\n")
            Path(tmp).write_text(f"{head}\n<!-- {CAUTION} -->\n{rest}", encoding="utf-8")
        paths.append(d / f"mesh_{name}.vtu")
    return paths, warnings
