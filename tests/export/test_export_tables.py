"""CSV / JSON tables: parse with numpy, carry the caution and conventions, round-trip the values."""

import json

import numpy as np
import pytest

from geomload import CAUTION
from geomload.export import tables

from helpers import fakerun


@pytest.fixture(scope="module")
def run():
    return fakerun.make_run(("cruise 1g", "pull-up, +3.8g #1", "push -1.5g"))


def _read(path):
    # '#' lines sit above the names row (spreadsheet-friendly); skip them, then read the names
    from geomload.export.tables import comment_lines

    return np.genfromtxt(path, skip_header=comment_lines(path), names=True, delimiter=",",
                         dtype=None, encoding="utf-8")


def _comments(path):
    return [ln for ln in path.read_text().splitlines() if ln.startswith("#")]


def test_loads_csv_columns_header_and_values(tmp_path, run):
    cr = run.cases[1]
    p = tables.write_loads_csv(tmp_path / "c.csv", cr, frame=run.frame)
    a = _read(p)
    need = {"y_m", "lift_N_per_m", "inertia_N_per_m", "shear_N", "bending_Nm", "torsion_Nm",
            "drag_N_per_m", "pitch_Nm_per_m", "inplane_shear_N", "inplane_bending_Nm",
            "schrenk_lift_N_per_m", "shear_ult_N", "bending_ult_Nm", "torsion_ult_Nm"}
    assert need <= set(a.dtype.names)
    L = cr.loads
    for col, ref in (("y_m", L.y), ("shear_N", L.shear_N), ("bending_Nm", L.bending_Nm),
                     ("torsion_Nm", L.torsion_Nm), ("lift_N_per_m", L.lift_N_per_m)):
        np.testing.assert_allclose(a[col], ref, rtol=1e-9, atol=1e-12)
    # ultimate = 1.5 x limit: factor of safety of 14 CFR 23.303
    np.testing.assert_allclose(a["bending_ult_Nm"], 1.5 * L.bending_Nm, rtol=1e-9)
    np.testing.assert_allclose(a["shear_ult_N"], 1.5 * L.shear_N, rtol=1e-9)
    head = "\n".join(_comments(p))
    assert CAUTION in head
    assert "shear positive up" in head and "bending positive tip-up" in head
    assert "torsion positive nose-up about the spar axis" in head
    assert "wing frame" in head and "span +Z" in head
    assert "pull-up, +3.8g #1" in head and f"CL {cr.aero.CL:.5f}" in head
    assert f"n {cr.load_factor:.4g}" in head and "v_eas 32 m/s" in head


def test_stations_csv(tmp_path, run):
    p = tables.write_stations_csv(tmp_path / "s.csv", run.stations, run.frame, "wing.stl", "mm")
    a = _read(p)
    np.testing.assert_allclose(a["chord_m"], run.stations.chord, rtol=1e-9)
    np.testing.assert_allclose(a["x_qc_m"], run.stations.x_qc, rtol=1e-9, atol=1e-12)
    assert any("wing.stl (read in mm)" in c for c in _comments(p))
    assert CAUTION in p.read_text()


def test_envelope_csv_is_stationwise_max_min_of_cases(tmp_path, run):
    # the check of issue 5: the envelope equals the station-wise max/min over the case outputs
    p = tables.write_envelope_csv(tmp_path / "e.csv", run.envelope)
    a = _read(p)
    names = [c.name.replace(",", ";").replace("#", "_") for c in run.cases]
    for q, attr in (("shear", "shear_N"), ("bending", "bending_Nm"), ("torsion", "torsion_Nm")):
        stack = np.array([getattr(c.loads, attr) for c in run.cases])
        u = attr.split("_")[1]
        np.testing.assert_allclose(a[f"{q}_max_{u}"], stack.max(0), rtol=1e-9, atol=1e-12)
        np.testing.assert_allclose(a[f"{q}_min_{u}"], stack.min(0), rtol=1e-9, atol=1e-12)
        np.testing.assert_allclose(a[f"{q}_max_ult_{u}"], 1.5 * stack.max(0), rtol=1e-9, atol=1e-12)
        assert [str(s) for s in a[f"{q}_max_case"]][0] == names[int(stack[:, 0].argmax())]
    assert CAUTION in p.read_text()


def test_vn_csv(tmp_path, run):
    p = tables.write_vn_csv(tmp_path / "vn.csv", run.vn)
    a = _read(p)
    pts = a[a["kind"] == "point"]
    corners = [c for d in run.vn for c in d.corners]
    assert [str(n) for n in pts["name"]] == [c.name for c in corners]
    np.testing.assert_allclose(pts["v_eas_m_s"], [c.v_eas for c in corners], rtol=1e-9)
    np.testing.assert_allclose(pts["n"], [c.n for c in corners], rtol=1e-9)
    n_curve = sum(len(v) for d in run.vn for v, _ in d.curves.values())
    assert (a["kind"] == "curve").sum() == n_curve
    assert {str(t) for t in a["diagram"]} == {"25 kg at 0 m", "18 kg at 0 m"}


def test_summary_json(tmp_path, run):
    p = tables.write_summary_json(tmp_path / "summary.json", run)
    d = json.loads(p.read_text())
    assert d["caution"] == CAUTION
    assert len(d["cases"]) == 3 and d["envelope"] is not None
    c = d["cases"][1]
    cr = run.cases[1]
    for k in ("alpha_deg", "CL", "CDi", "e", "total_lift_N", "root_shear_N", "root_bending_Nm",
              "root_torsion_Nm", "equilibrium_residual"):
        assert k in c
    assert c["root_bending_Nm"] == pytest.approx(cr.loads.bending_Nm[0], rel=1e-12)
    # total lift of both sides: twice the trapezoid integral of the semi-span lift (N)
    y, l = cr.loads.y, cr.loads.lift_N_per_m
    assert c["total_lift_N"] == pytest.approx(2 * np.sum(0.5 * (l[1:] + l[:-1]) * np.diff(y)), rel=1e-12)
    assert d["planform"]["aspect_ratio"] == pytest.approx(run.planform.aspect_ratio)
    env = d["envelope"]
    assert env["bending_max_Nm"][0] == pytest.approx(max(k.loads.bending_Nm[0] for k in run.cases))
    assert env["bending_max_case"][0] == "pull-up, +3.8g #1"
    assert {r["quantity"] for r in env["critical"]} >= {"shear max", "bending min", "torsion max"}


def test_aero_csv(tmp_path, run):
    sol = run.cases[0].aero
    a = _read(tables.write_aero_csv(tmp_path / "aero.csv", sol, "wing.stl"))
    np.testing.assert_allclose(a["cl_c_m"], sol.cl_c, rtol=1e-9)
    np.testing.assert_allclose(a["cl"] * a["chord_m"], a["cl_c_m"], rtol=1e-8)   # cl*c = cl_c
    text = (tmp_path / "aero.csv").read_text()
    assert CAUTION in text and f"CL {sol.CL:.5f}" in text


def test_numeric_csv_rows_format_like_each_cell():
    # the row-at-once path must write exactly what per-cell f"{v:.10g}" writes (Python format
    # spec 'g'), padding short columns with nan as before
    from geomload.export.tables import _csv

    rng = np.random.default_rng(3)
    a = rng.normal(size=40) * 10.0 ** rng.integers(-12, 12, size=40)
    b = np.array([0.0, -0.0, 1e-300, 1.5e300, np.inf, -np.inf, np.nan, 123456789.123456789])
    text = _csv(["head"], {"a_m": a, "b_N": b})
    rows = text.splitlines()[2:]
    assert len(rows) == 40
    for i, r in enumerate(rows):
        bv = f"{b[i]:.10g}" if i < b.size else "nan"
        assert r == f"{a[i]:.10g},{bv}"
