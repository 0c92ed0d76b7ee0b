"""The one unit plausibility check and the refusal of a unit-less mesh read without a unit.

Unit factors are exact by definition (1 in = 0.0254 m, 1 ft = 0.3048 m: international yard and
pound agreement of 1959, NIST SP 811 appendix B). The NACA wing is built from the equations
of NACA Report 460 (Jacobs, Ward and Pinkerton, 1933; restated in Report 824) by tests/wingfactory.py.
"""

import numpy as np
import pytest

from geomload.errors import GeometryError
from geomload.geometry import guess_unit, load_wing, read_wing
from geomload.geometry.read import STL_RECORD
from helpers.validation import check
from helpers.wingfactory import naca_wing_mesh


def _write_stl(path, tris):
    rec = np.zeros(len(tris), STL_RECORD)
    rec["v"] = tris
    with open(path, "wb") as f:
        f.write(b"x" * 80 + np.uint32(len(tris)).tobytes())
        rec.tofile(f)


@pytest.fixture(scope="module")
def wing_mm(tmp_path_factory):
    mesh, design = naca_wing_mesh(n_chord=30, n_span=8)
    p = tmp_path_factory.mktemp("u") / "wing_mm.stl"
    _write_stl(p, mesh.triangles * 1000.0)  # the same wing in millimetres
    return p, design, mesh


def test_guess_unit_from_size():
    # a 1.8 m span in mm reads as 1800 "m": mm is the unit that makes it plausible
    assert guess_unit(1800.0)[0] == "mm"
    assert guess_unit(1.8)[0] == "m"
    # a 3.6 m span drawn in inches reads as 141.7: metres implausible; with a mass of 22 kg and
    # an area of 1000 in^2-as-m^2 the wing loading of inches is plausible, of mm is not
    span_in, area_in2 = 3.6 / 0.0254, 0.9 / 0.0254**2
    unit, why = guess_unit(span_in, mass_kg=22.0, area_m2=area_in2)
    assert unit == "in" and "wing loading" in why


def test_require_units_refuses_with_one_line(wing_mm):
    p, _, _ = wing_mm
    with pytest.raises(GeometryError) as e:
        load_wing(p, require_units=True, n_stations=8)
    msg = str(e.value)
    assert "\n" not in msg and str(p) in msg and "mm" in msg and "geometry.units" in msg
    assert "--units" in msg
    with pytest.raises(GeometryError) as e:
        load_wing(p, require_units=True, units_hint="give --units", n_stations=8)
    assert str(e.value).endswith("give --units")


def test_inspect_guess_is_a_warning_and_units_scale_exactly(wing_mm):
    p, design, mesh = wing_mm
    w = read_wing(p, n_stations=8)
    kinds = [x.kind for x in w.warnings]
    assert "units" in kinds and any("likely unit mm" in x.text for x in w.warnings)
    w_mm = read_wing(p, units="mm", n_stations=8)
    assert not [x for x in w_mm.warnings if x.kind == "units"]
    check("exact unit factor (1 mm = 1e-3 m)", "span read in m / span read in mm", 1000.0,
          w.planform.span / w_mm.planform.span, rel=1e-9)


def test_3mf_reads_in_its_declared_millimetres(tmp_path):
    # 3MF core specification 1.x: the model's `unit` attribute, millimetre by default; the file
    # is written by trimesh's 3MF exporter (a general-purpose library) from the NACA wing in mm
    import trimesh

    mesh, design = naca_wing_mesh(n_chord=30, n_span=8)
    t = mesh.triangles.reshape(-1, 3) * 1000.0
    tm = trimesh.Trimesh(t, np.arange(t.shape[0]).reshape(-1, 3), process=False)
    tm.merge_vertices()
    tm.export(tmp_path / "w.3mf")
    w = read_wing(tmp_path / "w.3mf", n_stations=8)
    assert w.mesh.units == "file" and not w.warnings
    check("3MF core spec (unit attribute, default millimetre)", "semi-span (m)",
          design["semispan"], w.stations.semispan, rel=1e-6)
