"""One name for one thing: the same quantity has the same column / key name in the CSV files,
summary.json, the VTK files and `inspect --json`."""

import csv
import json

import pytest

import fakerun


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
