"""One name for one thing: the same quantity has the same column / key name in the CSV files,
summary.json, the VTK files and `inspect --json`."""

import csv
import json

import pytest

from helpers import fakerun


def _header(path):
    with open(path, newline="", encoding="utf-8") as f:
        return next(r for r in csv.reader(f) if r and not r[0].startswith("#"))


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    from geomload.export import write_all

    run = fakerun.make_run(("cruise 1g", "pull-up +3.8g"))
    out = tmp_path_factory.mktemp("names")
    write_all(run, out, render=False)
    return run, out


def test_envelope_names_agree_in_csv_json_and_vtk(written):
    import pyvista as pv

    run, out = written
    csv_cols = set(_header(out / "envelope.csv"))
    js = json.loads((out / "summary.json").read_text())["envelope"]
    vtk_names = set(pv.read(str(out / "spar_axis.vtp")).point_data.keys())
    numeric = {c for c in csv_cols if not c.endswith("_case")}
    assert "shear_max_N" in numeric and "bending_min_ult_Nm" in numeric
    assert numeric <= set(js), numeric - set(js)
    assert numeric <= vtk_names, numeric - vtk_names
    # no second spelling of the same column (unit before the side)
    assert not any(n.endswith(("_N_max", "_Nm_max", "_N_min", "_Nm_min")) for n in vtk_names)


def test_case_loads_names_agree_in_csv_and_vtk(written):
    import pyvista as pv

    run, out = written
    cols = set(_header(next((out / "loads").glob("*.csv"))))
    vtk_names = set(pv.read(str(out / "spar_axis.vtp")).point_data.keys())
    for q in ("shear_N", "bending_Nm", "torsion_Nm"):
        assert q in cols
        assert any(n.startswith(q + "_") and not n.startswith(q + "_m") for n in vtk_names), q


def test_planform_and_station_names_agree_with_inspect(written):
    from geomload.report_text import inspect_json

    run, out = written
    ins = inspect_json(run.mesh, run.frame, run.stations, run.planform)
    summ = json.loads((out / "summary.json").read_text())
    assert set(summ["planform"]) == set(ins["planform"])
    assert "area_m2" in summ["planform"] and "span_m" in summ["planform"]
    st_cols = set(_header(out / "stations.csv"))
    assert set(ins["stations"][0]) <= st_cols, set(ins["stations"][0]) - st_cols
    assert not (out / "load_axis.vtp").exists() and (out / "spar_axis.vtp").is_file()


def test_frame_names_agree_with_inspect(written):
    """summary.json's "frame" table has the keys of `inspect --json`'s (its frame dict plus the
    wing frame's origin and axes in CAD terms)."""
    from geomload.config.frame_text import frame_in_cad
    from geomload.report_text import inspect_json

    run, out = written
    ins = inspect_json(run.mesh, run.frame, run.stations, run.planform)["frame"]
    ins.update(frame_in_cad(run.frame, run.mesh))
    summ = json.loads((out / "summary.json").read_text())["frame"]
    assert set(summ) == set(ins)
    assert {"origin_cad_m", "cad_unit", "origin_cad_in_cad_unit", "wing_axes_in_cad"} <= set(summ)


def test_loads_csv_carries_strip_cl_and_cl_c(written):
    import numpy as np

    from helpers.validation import check

    run, out = written
    cr = run.cases[1]
    path = next(p for p in (out / "loads").glob("*.csv") if "3.8" in p.name)
    rows = list(csv.DictReader(ln for ln in path.read_text(encoding="utf-8").splitlines()
                               if not ln.startswith("#")))
    y = np.array([float(r["y_m"]) for r in rows])
    clc = np.array([float(r["cl_c_m"]) for r in rows])
    cl = np.array([float(r["cl"]) for r in rows])
    chord = np.array([float(r["chord_m"]) for r in rows])
    np.testing.assert_allclose(cl * chord, clc, rtol=1e-6)
    # definition of CL: both sides of the running lift over q integrate to CL S
    lift = 2 * float(np.sum(0.5 * (clc[1:] + clc[:-1]) * np.diff(y)))
    check("definition: CL = L / (q S)", "2 x integral of cl*c dy over CL S (-)",
          expected=1.0, measured=lift / (cr.aero.CL * run.lattice.s_ref), rel=0.03)
