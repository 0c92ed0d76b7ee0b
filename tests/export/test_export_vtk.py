"""VTK files read back with pyvista: geometry in the wing frame, arrays per case."""

import numpy as np
import pytest
import pyvista as pv

from geomload.export import vtk

from helpers import fakerun


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    run = fakerun.make_run(("cruise 1g", "<script>alert(1)</script>", "push -1.5g"))
    d = tmp_path_factory.mktemp("vtk")
    vtk.write_all_vtk(d, run)
    return run, {k: pv.read(str(d / f"{k}.vtp")) for k in ("lattice", "spar_axis", "surface")}


def test_lattice_vtp(written):
    run, m = written
    lat, ns, nc = run.lattice, run.lattice.n_span, run.lattice.n_chord
    g = m["lattice"]
    assert g.n_cells == ns * nc and g.n_points == (ns + 1) * (nc + 1)
    keys = [str(k) for k in g.field_data["case_keys"]]
    assert [str(n) for n in g.field_data["case_names"]] == [c.name for c in run.cases]
    for key, cr in zip(keys, run.cases):
        np.testing.assert_allclose(g.cell_data[f"dcp_{key}"], cr.aero.dcp, rtol=1e-6)
        np.testing.assert_allclose(g.cell_data[f"circulation_{key}"], cr.aero.gamma * cr.v_tas, rtol=1e-6)
    # cell k is panel k (strip-major): its centre is the panel's corner mean
    centres = g.cell_centers().points
    np.testing.assert_allclose(centres, vtk.panel_centres(lat), atol=1e-9)
    # quad areas (shoelace on the planar panels) equal the lattice panel areas
    np.testing.assert_allclose(g.compute_cell_sizes()["Area"], lat.area, rtol=1e-6)


def test_spar_axis_vtp(written):
    run, m = written
    a = m["spar_axis"]
    cr = run.cases[1]
    key = str(a.field_data["case_keys"][1])
    np.testing.assert_allclose(a.points[:, 1], cr.loads.y, atol=1e-9)
    np.testing.assert_allclose(a.point_data[f"bending_Nm_{key}"], cr.loads.bending_Nm, rtol=1e-9)
    np.testing.assert_allclose(a.point_data[f"torsion_Nm_{key}"], cr.loads.torsion_Nm, rtol=1e-9)
    stack = np.array([c.loads.shear_N for c in run.cases])
    np.testing.assert_allclose(a.point_data["shear_max_N"], stack.max(0), rtol=1e-9, atol=1e-9)
    assert a.n_cells == 1 and a.n_lines == 1


def test_surface_vtp_in_wing_frame_with_nearest_panel_dcp(written):
    run, m = written
    s = m["surface"]
    assert s.n_cells == run.mesh.n_triangles
    # the CAD frame of the fake run spans along +Z; in the wing frame the span is along y
    assert s.bounds[3] == pytest.approx(fakerun.SEMISPAN, abs=1e-9)
    assert s.bounds[2] == pytest.approx(0.0, abs=1e-9)
    assert s.bounds[1] == pytest.approx(fakerun.C_ROOT, rel=1e-6)
    # brute-force nearest panel centre in the (x, y) plan view for every triangle
    cen = vtk.panel_centres(run.lattice)[:, :2]
    tc = s.cell_centers().points[:, :2]
    near = np.argmin(((tc[:, None, :] - cen[None, :, :]) ** 2).sum(-1), axis=1)
    crit = max(run.cases, key=lambda c: abs(c.loads.bending_Nm[0]))
    assert str(s.field_data["critical_case"][0]) == crit.name
    np.testing.assert_allclose(s.cell_data["dcp_critical"], crit.aero.dcp[near], rtol=1e-6)
    # every case carries its pressure jump; the critical case's copy is the same array
    key = vtk.case_keys(run)[run.cases.index(crit)]
    np.testing.assert_array_equal(s.cell_data["pressure_jump_Pa_critical"],
                                  s.cell_data[f"pressure_jump_Pa_{key}"])


def test_vtk_files_carry_the_way_back_to_the_cad_frame(tmp_path):
    # p_cad = R^T p_wing + origin (rigid-body transform, common practice, no source): the 4x4
    # matrix in the field data must map wing-frame points back onto the CAD mesh
    import pyvista as pv

    from geomload.export import vtk

    run = fakerun.make_run(("cruise",))
    path = tmp_path / "surface.vtp"
    vtk.write_surface_vtp(path, run)
    m = pv.read(path)
    t = np.asarray(m.field_data["wing_to_cad_matrix_4x4"], float).reshape(4, 4)
    p_wing = np.array([0.1, 0.5, 0.02])
    p_cad = (t @ np.append(p_wing, 1.0))[:3]
    assert np.allclose(p_cad, run.frame.to_cad(p_wing), atol=1e-12)
