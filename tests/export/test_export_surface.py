"""surface.vtp: every case's pressure jump, integrating to the case's lift; .vtp files written
without VTK and read back by VTK itself (pyvista, the reference reader); Unicode names; a full
disk; the decimated display surface of a large mesh."""

from helpers.paths import ROOT, TESTS
import os
import subprocess
import sys

import numpy as np
import pytest

from geomload.errors import OutputError
from geomload.export import display_surface, vtk
from geomload.export.run_folder import leftovers

from helpers import fakerun
from helpers.validation import check

NAMES = ("banked turn 60°", "Überziehen", "=cmd|' /C calc'!A0", "$\\alpha$ pull", "\x1b[31mred")


@pytest.fixture(scope="module")
def unicode_run():
    return fakerun.make_run(NAMES)


def test_vtp_files_read_back_by_vtk_with_unicode_names(unicode_run, tmp_path):
    pv = pytest.importorskip("pyvista")
    run = unicode_run
    vtk.write_all_vtk(tmp_path, run)
    lat = pv.read(str(tmp_path / "lattice.vtp"))
    axis = pv.read(str(tmp_path / "spar_axis.vtp"))
    surf = pv.read(str(tmp_path / "surface.vtp"))
    for m in (lat, axis, surf):
        assert [str(n) for n in m.field_data["case_names"]] == list(NAMES)
    keys = [str(k) for k in lat.field_data["case_keys"]]
    assert all(k.isascii() for k in keys) and len(set(keys)) == len(keys)
    for key, cr in zip(keys, run.cases):
        np.testing.assert_array_equal(lat.cell_data[f"dcp_{key}"], cr.aero.dcp)
        np.testing.assert_array_equal(axis.point_data[f"bending_Nm_{key}"], cr.loads.bending_Nm)
        assert f"pressure_jump_Pa_{key}" in surf.cell_data
    pts, quads, _ = vtk.lattice_arrays(run)
    np.testing.assert_array_equal(lat.points, pts)
    assert lat.n_cells == quads.shape[0] and axis.n_lines == 1
    # VTK's own cell areas of the quads equal the lattice panel areas
    np.testing.assert_allclose(lat.compute_cell_sizes()["Area"], run.lattice.area, rtol=1e-9)


def test_surface_pressure_integrates_to_each_case_lift(unicode_run, tmp_path):
    """sum(pressure_jump_Pa x plan_area_m2) = the case's semi-span lift (half wing), every case."""
    pv = pytest.importorskip("pyvista")
    run = unicode_run
    vtk.write_surface_vtp(tmp_path / "surface.vtp", run)
    s = pv.read(str(tmp_path / "surface.vtp"))
    # the plan area written equals VTK's own triangle area x |n_z| (independent geometry)
    n = s.compute_normals(cell_normals=True, point_normals=False, auto_orient_normals=False,
                          consistent_normals=False, split_vertices=False).cell_data["Normals"]
    area = s.compute_cell_sizes()["Area"]
    np.testing.assert_allclose(s.cell_data["plan_area_m2"], area * np.abs(n[:, 2]), rtol=1e-6,
                               atol=1e-12)
    for key, cr in zip(vtk.case_keys(run), run.cases):
        total = float(np.sum(s.cell_data[f"pressure_jump_Pa_{key}"] * s.cell_data["plan_area_m2"]))
        # the case's trim: its lift is n m g over the whole wing (synthetic case, lift share 1,
        # 14 CFR 23.321(a) definition of the load factor); the half wing in the file carries half
        check("trim condition L = n m g (14 CFR 23.321(a)), half wing",
              f"surface pressure integral, case {fakerun.__name__}:{key} (N)",
              0.5 * cr.load_factor * cr.mass_kg * fakerun.G, total, rel=0.005)


def test_full_span_surface_carries_both_halves(tmp_path):
    """A full wing on a mirrored half lattice: the port half gets its own share; the integral
    is the whole wing's lift, n m g (14 CFR 23.321(a))."""
    run = fakerun.make_run(("cruise 1g",))
    tri = np.asarray(run.mesh.triangles)
    wing = run.frame.to_wing(tri.reshape(-1, 3))
    port = wing * np.array([1.0, -1.0, 1.0])
    both = run.frame.to_cad(np.vstack([wing, port])).reshape(-1, 3, 3)
    import dataclasses

    run2 = dataclasses.replace(run, mesh=dataclasses.replace(run.mesh, triangles=both))
    s = vtk.surface_data(run2)
    cr = run2.cases[0]
    total = float(np.sum(vtk.pressure_jump(run2, s, cr) * s.plan_area_m2))
    check("trim condition L = n m g (14 CFR 23.321(a)), full wing",
          "surface pressure integral, full wing (N)", cr.load_factor * cr.mass_kg * fakerun.G,
          total, rel=0.005)


def test_vtp_writing_does_not_import_vtk_or_pyvista(tmp_path):
    code = ("import sys; sys.path.insert(0, 'tests'); from helpers import fakerun\n"
            "from geomload.export import vtk\n"
            f"vtk.write_all_vtk({str(tmp_path)!r}, fakerun.make_run())\n"
            "bad = [m for m in sys.modules if m.split('.')[0] in ('pyvista', 'vtkmodules', 'vtk')]\n"
            "print('heavy:', bad)\n")
    root = str(ROOT)
    p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120,
                       cwd=root, env={**os.environ, "PYTHONPATH": root})
    assert p.returncode == 0, p.stderr
    assert "heavy: []" in p.stdout
    assert sorted(os.listdir(tmp_path)) == ["lattice.vtp", "spar_axis.vtp", "surface.vtp"]


def test_vtp_on_a_full_disk_fails_cleanly(small_tmpfs):
    disk = small_tmpfs(48 * 1024)
    run = fakerun.make_run(NAMES)
    with pytest.raises(OutputError) as e:
        vtk.write_all_vtk(disk, run)
    assert "No space left on device" in str(e.value) and str(disk) in str(e.value)
    assert leftovers(disk) == []
    for f in os.listdir(disk):  # whatever fitted is whole: VTK reads it
        pv = pytest.importorskip("pyvista")
        assert pv.read(str(disk / f)).n_points > 0


def test_decimated_display_surface_of_a_large_mesh(monkeypatch):
    """Above MAX_DISPLAY_TRIANGLES the surface is clustered: fewer triangles, the same outline
    within the cluster size, and the pressure integral still equal to the lift."""
    import dataclasses

    run = fakerun.make_run(("cruise 1g",))
    # refine the synthetic mesh 4x by splitting every triangle at its edge midpoints
    t = np.asarray(run.mesh.triangles)
    a, b, c = t[:, 0], t[:, 1], t[:, 2]
    ab, bc, ca = (a + b) / 2, (b + c) / 2, (c + a) / 2
    fine = np.concatenate([np.stack(x, axis=1) for x in ((a, ab, ca), (ab, b, bc), (ca, bc, c),
                                                          (ab, bc, ca))])
    run2 = dataclasses.replace(run, mesh=dataclasses.replace(run.mesh, triangles=fine))
    monkeypatch.setattr(display_surface, "MAX_DISPLAY_TRIANGLES", fine.shape[0] // 6)
    full = vtk.surface_data(run2, full=True)
    dec = vtk.surface_data(run2)
    assert dec.decimated and not full.decimated and dec.source_triangles == fine.shape[0]
    assert dec.tri.shape[0] < 0.5 * full.tri.shape[0]
    span_full = full.points.max(0) - full.points.min(0)
    span_dec = dec.points.max(0) - dec.points.min(0)
    assert np.allclose(span_dec, span_full, rtol=0.1, atol=0.02)
    cr = run2.cases[0]
    for s in (full, dec):
        total = float(np.sum(vtk.pressure_jump(run2, s, cr) * s.plan_area_m2))
        check("trim condition L = n m g (14 CFR 23.321(a)), half wing",
              f"surface pressure integral, {'decimated' if s.decimated else 'full'} surface (N)",
              0.5 * cr.load_factor * cr.mass_kg * fakerun.G, total, rel=0.005)


def test_pipeline_surface_pressure_equals_each_case_lift(tmp_path):
    """The real pipeline on the corpus wing with an envelope (many cases): for every case the
    surface integral equals the lift the loads carry (the loads CSV's integral of lift_N_per_m)
    and the trim's n m g share (14 CFR 23.321(a), body-axis normal force, within 0.5 %)."""
    pv = pytest.importorskip("pyvista")
    from helpers import make_corpus

    from geomload.pipeline import run_case_file

    make_corpus.build(tmp_path / "c")
    res, _ = run_case_file(tmp_path / "c" / "good_envelope.toml", tmp_path / "out", render=False)
    s = pv.read(str(tmp_path / "out" / "surface.vtp"))
    from geomload.export.run_folder import read_marker

    marker = read_marker(tmp_path / "out")  # the run folder says it is geomload's, file by file
    assert {"surface.vtp", "summary.json", "report.html"} <= set(marker["files"])
    assert marker["case_file"] == str(tmp_path / "c" / "good_envelope.toml")
    keys = [str(k) for k in s.field_data["case_keys"]]
    assert len(keys) == len(res.cases) >= 5
    for key, cr in zip(keys, res.cases):
        total = float(np.sum(s.cell_data[f"pressure_jump_Pa_{key}"] * s.cell_data["plan_area_m2"]))
        y, w = np.asarray(cr.loads.y), np.asarray(cr.loads.lift_N_per_m)
        semispan_lift = float(np.sum(0.5 * (w[1:] + w[:-1]) * np.diff(y)))
        assert total == pytest.approx(semispan_lift, rel=0.005, abs=1e-6 * cr.mass_kg)
        # body-axis trim: N = L cos(a) + D sin(a) = share n m g, so L = (N - D sin a) / cos a
        normal = 0.5 * cr.lift_share * cr.load_factor * cr.mass_kg * 9.80665
        d = np.asarray(cr.loads.drag_N_per_m)
        drag = float(np.sum(0.5 * (d[1:] + d[:-1]) * np.diff(y)))
        a = np.radians(cr.aero.alpha_deg)
        check("trim condition N = L cos a + D sin a = n m g share (14 CFR 23.321(a)), half wing",
              f"pipeline surface pressure integral, {key} (N)",
              (normal - drag * np.sin(a)) / np.cos(a), total, rel=0.005,
              abs=0.005 * 0.5 * cr.mass_kg * 9.80665)
