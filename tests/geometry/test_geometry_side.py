"""Handedness, side and up of half wings; exposed wings off the CAD plane.

Truth: the NACA 4-digit equations (NACA Report 460, Jacobs, Ward and Pinkerton 1933; restated in
Report 824) lofted on a straight-tapered planform (tests/wingfactory.py), with the chord line by
the farthest-point rule (`expected_stations`). Tolerances: chord 1 %, twist relative to the root
0.25 deg, span 0.5 %, dihedral 0.3 deg. Straight-taper area formulas: Raymer, Aircraft Design,
ch. 4. Unit factor 1 mm = 1e-3 m (SI).
"""

import numpy as np
import pytest

from geomload.geometry import read_wing
from helpers.wingfactory import write_stl  # noqa: E402
from helpers.validation import NACA_STATIONS, STRAIGHT_TAPER, check, check_worst_station
from helpers.wingcopies import Y_UP_LEFT, Y_UP_RIGHT, in_frame, port_of, three_copies
from helpers.wingfactory import design, expected_stations, wing_triangles

NACA, TAPER = NACA_STATIONS, STRAIGHT_TAPER


_stl = write_stl  # binary STL writer shared by the geometry tests


_worst = check_worst_station  # helpers.validation: one row per distribution


def _truth_ok(w, d, label):
    st, pf = w.stations, w.planform
    ex = expected_stations(d, st.y - w.frame.y_root)
    _worst(f"{label}: chord (m)", ex["chord"], st.chord, rel=0.01)
    _worst(f"{label}: twist relative to the root (deg)", ex["twist"], st.twist_deg - st.twist_deg[0]
           + ex["twist"][0], abs=0.25)
    check(TAPER, f"{label}: exposed span (m)", d["span"], pf.exposed_span, rel=0.005)
    check("design dihedral", f"{label}: dihedral (deg)", d["dihedral_deg"], pf.dihedral_deg, abs=0.3)


@pytest.fixture(scope="module")
def d():
    return design()


def test_port_half_in_right_handed_y_up_mm_frame(tmp_path, d):
    port = port_of(wing_triangles(d, 60, 24))
    p = _stl(tmp_path / "port_yup_mm.stl", in_frame(port, Y_UP_RIGHT) * 1000.0)
    w = read_wing(p, units="mm", n_stations=12)
    assert w.frame.side == "port" and w.frame.mirrored
    assert np.linalg.det(w.frame.rotation) == pytest.approx(-1.0, abs=1e-9)
    assert any(x.kind == "side" and "port" in x.text and "mirrored" in x.text for x in w.warnings)
    assert w.frame.up_axis == "+Y"
    _truth_ok(w, d, "port half, right-handed Y-up mm frame")


def test_mirrored_cad_frame_maps_back_exactly(tmp_path, d):
    stb = wing_triangles(d, 60, 24)
    cad = in_frame(stb, Y_UP_LEFT)  # a left-handed frame: the same vertex order, reflected axes
    p = _stl(tmp_path / "mirrored.stl", cad)
    w = read_wing(p, units="m", n_stations=12)
    assert w.frame.mirrored and w.frame.side == "starboard"
    assert any(x.kind == "side" and "left-handed" in x.text for x in w.warnings)
    pts = w.mesh.triangles.reshape(-1, 3)[::97]
    back = w.frame.to_cad(w.frame.to_wing(pts))
    assert np.max(np.abs(back - pts)) < 1e-12  # the transform maps back to the CAD points
    _truth_ok(w, d, "starboard half in a mirrored CAD frame")


def test_side_and_signed_up_axis_overrides(tmp_path, d):
    stb = wing_triangles(d, 60, 24)
    p = _stl(tmp_path / "stb.stl", stb)
    auto = read_wing(p, units="m", n_stations=8)
    assert auto.frame.side == "starboard" and not auto.frame.mirrored
    assert not [x for x in auto.warnings if x.kind == "side"]
    # the user says "port": with outward normals that is the mirror image, read upside down
    forced = read_wing(p, units="m", n_stations=8, side="port")
    assert forced.frame.mirrored and forced.frame.side == "port"
    # a signed up axis decides up against the camber: "-z" reads the wing upside down
    down = read_wing(p, units="m", n_stations=8, up_axis="-z")
    assert down.frame.mirrored and down.frame.up_axis == "-Z"
    assert np.all(down.stations.camber_ratio < 0)


def test_symmetric_section_half_wing_warns_up(tmp_path):
    d0 = design(code="0012", dihedral_deg=0.0, washout_deg=0.0)
    p = _stl(tmp_path / "sym.stl", port_of(wing_triangles(d0, 60, 16)))
    w = read_wing(p, units="m", n_stations=8)
    assert any(x.kind == "up" for x in w.warnings)  # up versus down could not be decided


def test_starboard_port_and_full_copies_give_the_same_stations():
    stb, port, full, d = three_copies()
    ws = [read_wing_mesh(m) for m in (stb, port, full)]
    y = np.linspace(0.1, 1.7, 9)
    ref = np.interp(y, ws[0].stations.y, ws[0].stations.chord)
    for copy, w in zip(("port half", "full span"), ws[1:]):
        # the same wing: chord and twist at the same span positions (invariance)
        assert np.allclose(np.interp(y, w.stations.y, w.stations.chord), ref, rtol=1e-3)
        assert np.allclose(np.interp(y, w.stations.y, w.stations.twist_deg),
                           np.interp(y, ws[0].stations.y, ws[0].stations.twist_deg), atol=0.02)
        check(TAPER, f"{copy} copy: span b (m)", d["span"], w.planform.span, rel=0.005)


def read_wing_mesh(mesh, n=15, **kw):
    """read_wing on an in-memory mesh (written to a temporary STL)."""
    import os
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        return read_wing(_stl(os.path.join(tmp, "w.stl"), mesh.triangles), units="m",
                         n_stations=n, **kw)


def test_exposed_wing_keeps_the_cad_plane(tmp_path, d):
    stb = wing_triangles(d, 60, 24)
    p = _stl(tmp_path / "exposed.stl", stb + np.array([0.0, 0.3, 0.0]))  # root at CAD y = 0.3 m
    w = read_wing(p, units="m", n_stations=12)
    assert w.frame.y_root == pytest.approx(0.3, abs=1e-6)  # float32 STL
    assert w.stations.y[0] > 0.3 and any(x.kind == "exposed" for x in w.warnings)
    _truth_ok(w, d, "exposed wing, root at y = 0.3 m")
    # gross planform: leading and trailing edges extended to y = 0 (straight taper, Raymer ch. 4)
    cr, ct, s, e = d["root_chord"], d["root_chord"] * d["taper"], d["semispan"], 0.3
    c0 = cr + (cr - ct) * e / s
    check(TAPER, "exposed wing: gross span (m)", 2 * (s + e), w.planform.span, rel=0.005)
    check(TAPER, "exposed wing: gross area (m^2)", d["area"] + e * (cr + c0), w.planform.area, rel=0.01)
    check(TAPER, "exposed wing: exposed area (m^2)", d["area"], w.planform.exposed_area, rel=0.01)
