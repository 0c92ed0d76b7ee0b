"""Loads mapped on an analyst's structural mesh (meshio round trip, exact sums, bad input)."""

from helpers.paths import ROOT
import os

import numpy as np
import pytest

from geomload import CAUTION
from geomload.errors import InputError
from geomload.export import fe, mesh_map
from helpers.validation import check

SAMPLE_CASE = os.path.join(str(ROOT),
                           "sample_geometry", "pellin_case.toml")
SRC = "free-body statics: the case's total force and moment about the root (loads/beam.py)"


@pytest.fixture(scope="module")
def run():
    from geomload.case import load_case
    from geomload.pipeline import compute

    return compute(load_case(SAMPLE_CASE))


def wing_shell_mesh(st, frame, scale, n_ribs=13, n_chord=9, spar_fraction=0.28):
    """A simple shell mesh of the sample wing in the CAD frame and unit: upper and lower skins
    (quads), ribs at n_ribs stations and a spar web (quads), nodes shared."""
    import meshio

    ys = np.linspace(st.y[0], st.y[-1], n_ribs)
    u = np.unique(np.concatenate([np.linspace(0.02, 0.98, n_chord), [spar_fraction]]))
    jspar = int(np.flatnonzero(np.isclose(u, spar_fraction))[0])
    pts, idx = [], {}
    for i, y in enumerate(ys):
        c = np.interp(y, st.y, st.chord)
        xl, xt = np.interp(y, st.y, st.x_le), np.interp(y, st.y, st.x_te)
        zl, zt = np.interp(y, st.y, st.z_le), np.interp(y, st.y, st.z_te)
        t = np.interp(y, st.y, st.thickness_ratio) * c
        for j, f in enumerate(u):
            half = 0.5 * t * 2.0 * np.sqrt(f * (1 - f))  # a smooth thickness shape, max t
            for side, sgn in ((0, 1.0), (1, -1.0)):
                idx[i, j, side] = len(pts)
                pts.append([xl + f * (xt - xl), y, zl + f * (zt - zl) + sgn * 0.98 * half])
    quads = []
    for i in range(n_ribs - 1):
        for j in range(len(u) - 1):
            for side in (0, 1):  # skins
                quads.append([idx[i, j, side], idx[i + 1, j, side], idx[i + 1, j + 1, side],
                              idx[i, j + 1, side]])
        quads.append([idx[i, jspar, 0], idx[i + 1, jspar, 0], idx[i + 1, jspar, 1],
                      idx[i, jspar, 1]])  # spar web
    for i in range(n_ribs):  # ribs
        for j in range(len(u) - 1):
            quads.append([idx[i, j, 0], idx[i, j + 1, 0], idx[i, j + 1, 1], idx[i, j, 1]])
    cad = frame.to_cad(np.array(pts)) / scale
    return meshio.Mesh(cad, [("quad", np.array(quads))])


def totals_about_root(run, loads):
    nl = fe.nodal_loads(loads)
    P0 = nl.points_m[0]
    return nl.force_N.sum(0), (nl.moment_Nm + np.cross(nl.points_m - P0, nl.force_N)).sum(0), P0


@pytest.mark.parametrize("fmt,ext", [("abaqus", ".inp"), ("gmsh22", ".msh"), ("vtu", ".vtu")])
def test_mapped_loads_sum_exactly(run, tmp_path, fmt, ext):
    import meshio

    scale = 1e-3
    path = tmp_path / f"wing{ext}"
    meshio.write(str(path), wing_shell_mesh(run.stations, run.frame, scale), file_format=fmt)
    cases = [max(run.cases, key=lambda c: abs(c.loads.bending_Nm[0])).loads, run.cases[1].loads]
    paths, warns = mesh_map.write_mesh_loads(tmp_path / "out", path, cases, run.frame, scale,
                                             "mm", run.stations)
    assert len(paths) == 3 * len(cases)
    sm = mesh_map.read_structural_mesh(path)
    R = run.frame.rotation
    worst_f = worst_m = 0.0
    for loads in cases:
        ml = mesh_map.map_loads(sm, loads, run.frame, scale, run.stations)
        F, M, P0 = totals_about_root(run, loads)
        pw = run.frame.to_wing(sm.points * scale)
        fw = ml.force_N @ R.T
        worst_f = max(worst_f, np.abs(fw.sum(0) - F).max() / np.abs(F).max())
        Mm = np.cross(pw - P0, fw).sum(0) + (ml.moment_Nm @ R.T).sum(0)
        worst_m = max(worst_m, np.abs(Mm - M).max() / np.abs(M).max())
    check(SRC, f"{ext} shell mesh: mapped force sum vs total, worst of {len(cases)} cases "
          "(relative)", 0.0, worst_f, abs=1e-9)
    check(SRC, f"{ext} shell mesh: mapped moment about the root vs total, worst of "
          f"{len(cases)} cases (relative)", 0.0, worst_m, abs=1e-9)
    # the written CSV and *CLOAD lines carry the same loads against the file's node numbers
    csv = next(p for p in paths if str(p).endswith("_nodal_loads.csv"))
    text = csv.read_text().splitlines()
    assert text[0] == "# " + CAUTION
    rows = np.array([[float(v) for v in r.split(",")] for r in text if r[0].isdigit()])
    ml = mesh_map.map_loads(sm, cases[0], run.frame, scale, run.stations)
    assert np.allclose(rows[:, 4:7].sum(0), ml.force_N.sum(0), rtol=1e-12, atol=1e-9)
    assert set(rows[:, 0].astype(int)) <= set(sm.node_ids.tolist())
    cload = next(p for p in paths if str(p).endswith("_cload.inp")).read_text()
    assert cload.startswith("** " + CAUTION) and "*CLOAD" in cload
    vtu = meshio.read(str(next(p for p in paths if str(p).endswith(".vtu"))))
    assert np.allclose(vtu.point_data["force_N"].sum(0), ml.force_N.sum(0), atol=1e-9)


def test_inp_keeps_the_files_node_numbers(run, tmp_path):
    import meshio

    m = wing_shell_mesh(run.stations, run.frame, 1e-3, n_ribs=5, n_chord=4)
    path = tmp_path / "wing.inp"
    meshio.write(str(path), m, file_format="abaqus")
    text = path.read_text()
    # renumber the nodes 1001.. in the file (elements follow)
    lines, out, sect = text.splitlines(), [], None
    for line in lines:
        if line.startswith("*"):
            sect = line.split(",")[0].upper()
            out.append(line)
        elif sect in ("*NODE", "*ELEMENT") and line.strip():
            v = [s.strip() for s in line.split(",")]
            if sect == "*NODE":
                v[0] = str(int(v[0]) + 1000)
            else:
                v[1:] = [str(int(x) + 1000) for x in v[1:]]
            out.append(", ".join(v))
        else:
            out.append(line)
    path.write_text("\n".join(out) + "\n")
    sm = mesh_map.read_structural_mesh(path)
    assert sm.node_ids.min() == 1001 and sm.node_ids.size == len(m.points)


def test_bad_meshes_name_the_file_and_write_nothing(run, tmp_path):
    import meshio

    good = wing_shell_mesh(run.stations, run.frame, 1e-3)
    cases = [run.cases[0].loads]
    bad = {
        # wrong frame: span along CAD z instead of y
        "frame": meshio.Mesh(good.points[:, [0, 2, 1]], good.cells),
        # wrong unit: written in metres while the CAD unit is mm (all nodes within 1.5 mm)
        "unit": meshio.Mesh(good.points * 1e-3, good.cells),
    }
    for name, m in bad.items():
        p = tmp_path / f"{name}.vtu"
        meshio.write(str(p), m)
        with pytest.raises(InputError, match=str(p).replace(".", r"\.")) as e:
            mesh_map.write_mesh_loads(tmp_path / name, p, cases, run.frame, 1e-3, "mm",
                                      run.stations)
        assert "\n" not in str(e.value)
        assert not (tmp_path / name).exists()
    rootonly = good.points[good.points[:, 1] < good.points[:, 1].min() + 50.0]
    p = tmp_path / "root.vtu"
    meshio.write(str(p), meshio.Mesh(rootonly, [("vertex", np.arange(len(rootonly))[:, None])]))
    with pytest.raises(InputError, match="only at the root"):
        mesh_map.write_mesh_loads(tmp_path / "r", p, cases, run.frame, 1e-3, "mm", run.stations)
    p = tmp_path / "garbage.msh"
    p.write_bytes(b"\x00\x01 not a mesh at all \xff")
    with pytest.raises(InputError, match="cannot be read"):
        mesh_map.write_mesh_loads(tmp_path / "g", p, cases, run.frame, 1e-3, "mm", run.stations)
    assert not (tmp_path / "r").exists() and not (tmp_path / "g").exists()


def test_stick_model_takes_nodal_moments(run, tmp_path):
    """A beam (stick) mesh along the spar line: nodes on one line per strip; the moments go on
    as nodal moments and the totals stay exact."""
    import meshio

    cr = max(run.cases, key=lambda c: abs(c.loads.bending_Nm[0]))
    nl = fe.nodal_loads(cr.loads)
    y = np.linspace(nl.y_m[0], nl.y_m[-1], 31)
    pts = np.column_stack([np.interp(y, nl.y_m, nl.points_m[:, 0]), y,
                           np.interp(y, nl.y_m, nl.points_m[:, 2])])
    path = tmp_path / "stick.inp"
    cells = [("line", np.column_stack([np.arange(30), np.arange(1, 31)]))]
    meshio.write(str(path), meshio.Mesh(run.frame.to_cad(pts) / 1e-3, cells), file_format="abaqus")
    sm = mesh_map.read_structural_mesh(path)
    ml = mesh_map.map_loads(sm, cr.loads, run.frame, 1e-3, run.stations)
    assert any("nodal moments" in w for w in ml.warnings)
    R = run.frame.rotation
    F, M, P0 = totals_about_root(run, cr.loads)
    fw, mw = ml.force_N @ R.T, ml.moment_Nm @ R.T
    pw = run.frame.to_wing(sm.points * 1e-3)
    check(SRC, "stick model: mapped moment about the root vs total (relative)", 0.0,
          np.abs(np.cross(pw - P0, fw).sum(0) + mw.sum(0) - M).max() / np.abs(M).max(), abs=1e-9)
    check(SRC, "stick model: mapped force sum vs total (relative)", 0.0,
          np.abs(fw.sum(0) - F).max() / np.abs(F).max(), abs=1e-9)


def test_mapped_cload_file_solved_by_ccx_with_the_mesh(run, tmp_path):
    """The *CLOAD lines written against the mesh file's own node numbers (1001...), included
    in a shell model of that mesh held at its root rib and solved by CalculiX: the load the
    structure transmits to the root equals the case's total force and root moment."""
    import shutil
    import subprocess

    ccx = shutil.which("ccx")
    if ccx is None:
        if os.environ.get("GEOMLOAD_REQUIRE_CCX") == "1":
            pytest.fail("ccx (calculix-ccx) is required (GEOMLOAD_REQUIRE_CCX=1)")
        pytest.skip("ccx (CalculiX, Debian package calculix-ccx) not on PATH")
    m = wing_shell_mesh(run.stations, run.frame, 1e-3, n_ribs=9, n_chord=7)
    quads = m.cells[0].data
    text = ["*NODE, NSET=NALL"] + [f"{k + 1001}, {p[0]:.14g}, {p[1]:.14g}, {p[2]:.14g}"
                                   for k, p in enumerate(m.points)]
    text += ["*ELEMENT, TYPE=S4, ELSET=SKIN"] + [f"{e + 1}, " + ", ".join(str(v + 1001) for v in q)
                                                 for e, q in enumerate(quads)]
    mesh_inp = tmp_path / "wing.inp"
    mesh_inp.write_text("\n".join(text) + "\n")
    cr = max(run.cases, key=lambda c: abs(c.loads.bending_Nm[0]))
    paths, _ = mesh_map.write_mesh_loads(tmp_path / "out", mesh_inp, [cr.loads], run.frame,
                                         1e-3, "mm", run.stations)
    cload = next(p for p in paths if str(p).endswith("_cload.inp"))
    pw = run.frame.to_wing(m.points * 1e-3)
    root = np.flatnonzero(pw[:, 1] <= pw[:, 1].min() + 1e-9)
    deck = [*text, "*NSET, NSET=ROOTRIB"] + [f"{k + 1001}," for k in root]
    deck += ["*MATERIAL, NAME=AL", "*ELASTIC", "70000., 0.33",
             "*SHELL SECTION, ELSET=SKIN, MATERIAL=AL", "1.0", "*BOUNDARY", "ROOTRIB, 1, 3",
             "*STEP", "*STATIC", f"*INCLUDE, INPUT={cload.name}",
             "*NODE PRINT, NSET=ROOTRIB", "RF", "*END STEP"]
    (cload.parent / "shell.inp").write_text("\n".join(deck) + "\n")
    r = subprocess.run([ccx, "-i", "shell"], cwd=cload.parent, capture_output=True, text=True,
                       timeout=300)
    dat = cload.parent / "shell.dat"
    assert r.returncode == 0 and dat.exists(), r.stdout[-2000:]
    rf = fe.read_reactions(dat.read_text())
    ml = mesh_map.map_loads(mesh_map.read_structural_mesh(mesh_inp), cr.loads, run.frame, 1e-3,
                            run.stations)
    R = run.frame.rotation
    F, M, P0 = totals_about_root(run, cr.loads)
    held = {k + 1001 for k in root}
    # transmitted = minus the reactions of the element forces, plus the loads put on held nodes
    # (the solver's RF leaves out a load applied at a held node)
    f_t = -sum(R @ rf[k] for k in held) + sum(R @ ml.force_N[k - 1001] for k in held)
    m_t = (-sum(np.cross(pw[k - 1001] - P0, R @ rf[k]) for k in held)
           + sum(np.cross(pw[k - 1001] - P0, R @ ml.force_N[k - 1001]) for k in held))
    src = "CalculiX ccx static solution of the mapped *CLOAD on the shell mesh (real FE solver)"
    L = cr.loads
    s, b, n = L.axis_s[0], L.axis_b[0], L.axis_n[0]
    check(src, "shell mesh: root shear from the reactions (N)", L.shear_N[0], f_t @ n, rel=1e-3)
    check(src, "shell mesh: root bending from the reactions (N m)", L.bending_Nm[0], m_t @ b,
          rel=1e-3)
    check(src, "shell mesh: root torsion from the reactions (N m; floor 0.1 % of bending)",
          L.torsion_Nm[0], m_t @ s, rel=1e-3, abs=1e-3 * abs(L.bending_Nm[0]))
