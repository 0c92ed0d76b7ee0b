"""A whole aircraft fused into one shell (a boolean union of wing, fuselage, tailplane and fin):
the wing is found in it, cut out at the fuselage side and carried through to the plane of
symmetry; the other parts are reported.

Truth: the NACA 4-digit equations (NACA Report 460, Jacobs, Ward and Pinkerton 1933; restated
in Report 824) on straight-tapered planforms (tests/wingfactory.py, tests/aircraftfactory.py);
straight-taper area, MAC and its position: Raymer, Aircraft Design, ch. 4. The shell is the
union computed by a general-purpose mesh boolean library (manifold3d through trimesh).
Tolerances: chord 1 %, twist relative to the root 0.25 deg, span 0.5 %, dihedral 0.3 deg.
"""

import numpy as np
import pytest

from helpers.aircraftfactory import aircraft, fused
from geomload.geometry import read_wing
from geomload.geometry.fused import clip_above
from helpers.validation import NACA_STATIONS, STRAIGHT_TAPER, check, check_worst_station
from helpers.wingfactory import expected_stations, write_stl

NACA, TAPER = NACA_STATIONS, STRAIGHT_TAPER


_worst = check_worst_station  # helpers.validation: one row per distribution


@pytest.fixture(scope="module")
def fused_aircraft(tmp_path_factory):
    bodies, dw, dt = aircraft()
    p = write_stl(tmp_path_factory.mktemp("fused") / "aircraft.stl", fused(bodies))
    return read_wing(p, units="m", n_stations=15), dw, dt


def test_fused_aircraft_wing_recovers_the_design(fused_aircraft):
    w, d, _ = fused_aircraft
    st, pf = w.stations, w.planform
    ex = expected_stations(d, st.y)
    _worst("fused aircraft: chord (m)", ex["chord"], st.chord, rel=0.01)
    _worst("fused aircraft: twist relative to the root (deg)", ex["twist"] - ex["twist"][0],
           st.twist_deg - st.twist_deg[0], abs=0.25)
    check(TAPER, "fused aircraft: gross span (m)", d["span"], pf.span, rel=0.005)
    check("design dihedral", "fused aircraft: dihedral (deg)", d["dihedral_deg"],
          pf.dihedral_deg, abs=0.3)
    # gross planform: the straight edges carried through to y = 0 give the design's wing
    check(TAPER, "fused aircraft: gross area S = s (c_r + c_t) (m^2)", d["area"], pf.area,
          rel=0.01)
    check(TAPER, "fused aircraft: MAC (m)", d["mac"], pf.mac, rel=0.01)
    # the exposed wing starts at the fuselage side (the capsule's 0.2 m radius)
    c02 = float(d["chord"](0.2))
    check(TAPER, "fused aircraft: exposed area (m^2)",
          (d["semispan"] - 0.2) * (c02 + d["root_chord"] * d["taper"]), pf.exposed_area,
          rel=0.01)
    assert w.stations.y[0] > 0.2 and not w.frame.full_span and not w.frame.mirrored


def test_fused_aircraft_reports_the_fuselage_side_and_the_other_parts(fused_aircraft):
    w, _, dt = fused_aircraft
    # the wing (z within +-0.04 m) meets the 0.2 m radius capsule at its widest
    check("fuselage radius of the generated capsule", "fused: fuselage side y (m)", 0.2,
          w.fuselage_side_y_m, rel=0.02)
    check("fuselage radius of the generated capsule", "fused: exposed root y (m)", 0.2,
          w.frame.y_root, rel=0.02)
    text = " ".join(x.text for x in w.warnings if x.kind == "bodies")
    for word in ("one shell", "fuselage side at y = 0.2 m", "fuselage", "fin", "tailplane"):
        assert word in text, (word, text)
    (b,) = w.bodies
    assert b.kind == "aircraft (one fused shell)" and "fin" in b.text
    tp = w.tailplane
    check(TAPER, "fused: tailplane gross area S = s (c_r + c_t) (m^2)", dt["area"], tp.area,
          rel=0.01)
    check(TAPER, "fused: tailplane span (m)", dt["span"], tp.span, rel=0.005)
    x_qc = 2.2 + dt["y_mac"] * np.tan(np.radians(dt["sweep_le_deg"])) + 0.25 * dt["mac"]
    check(TAPER, "fused: tailplane MAC quarter-chord x (m)", x_qc, tp.x_qc_mac, rel=0.01)
    # fin: 0.5 m span from z = 0.12 m, above a fuselage whose top is at 0.2 m (generator)
    fin = [x for x in text.split(";") if "a fin" in x][0]
    height = float(fin.split("a fin ")[1].split(" m")[0])
    check("fin and capsule of the generator", "fused: fin height above the fuselage (m)",
          0.12 + 0.5 - 0.2, height, rel=0.03)


def test_clipped_shell_stays_closed_and_welded():
    """Clipping a closed shell by a plane: the kept part plus its flat cap encloses the
    volume of the cut-off part of a unit cube, 1 x 1 x (1 - 0.3) (analytic), and its pieces
    share exact edge points (one connected shell)."""
    import trimesh

    from geomload.geometry.bodies import components
    from geomload.geometry.fused import cap

    box = np.asarray(trimesh.creation.box(extents=(1.0, 1.0, 1.0)).triangles) + 0.5
    n = np.array([0.0, 1.0, 0.0])
    kept, seg, owner = clip_above(box, n, 0.3)
    shell = np.concatenate([kept, cap(seg)])
    assert len(components(kept)) == 1
    v = float(np.einsum("ij,ij->i", shell[:, 0], np.cross(shell[:, 1], shell[:, 2])).sum()) / 6
    check("volume of a box (analytic)", "clipped unit cube: volume (m^3)", 0.7, v, rel=1e-9)


def test_fused_aircraft_in_a_y_up_mm_frame_off_the_origin(tmp_path):
    """The same fused aircraft exported in a right-handed Y-up frame, in millimetres, with its
    plane of symmetry 200 mm off the CAD origin: the same wing, the same fuselage side."""
    from helpers.wingcopies import Y_UP_RIGHT, in_frame

    bodies, d, _ = aircraft()
    t = in_frame(fused(bodies), Y_UP_RIGHT, translation=[0.5, 0.3, -0.2]) * 1000.0
    w = read_wing(write_stl(tmp_path / "aircraft_mm.stl", t), units="mm", n_stations=15)
    st, pf = w.stations, w.planform
    ex = expected_stations(d, st.y)
    _worst("fused aircraft, Y-up mm frame: chord (m)", ex["chord"], st.chord, rel=0.01)
    _worst("fused aircraft, Y-up mm frame: twist relative to the root (deg)",
           ex["twist"] - ex["twist"][0], st.twist_deg - st.twist_deg[0], abs=0.25)
    check(TAPER, "fused aircraft, Y-up mm frame: gross span (m)", d["span"], pf.span, rel=0.005)
    check("design dihedral", "fused aircraft, Y-up mm frame: dihedral (deg)",
          d["dihedral_deg"], pf.dihedral_deg, abs=0.3)
    check("fuselage radius of the generated capsule", "fused, Y-up mm frame: fuselage side y (m)",
          0.2, w.fuselage_side_y_m, rel=0.02)
    assert not w.frame.mirrored


def test_two_crossing_wings_fused_into_one_shell_are_refused(tmp_path):
    """Two copies of a wing crossing at right angles, fused by a boolean union: no wing can
    be chosen without the user; one line naming the file and what was found."""
    from geomload.errors import GeometryError
    from helpers.wingfactory import design, wing_triangles

    full = wing_triangles(design(), 40, 10, full_span=True)
    rot = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    p = write_stl(tmp_path / "cross.stl", fused([full, full @ rot.T + np.array([0.2, 0, 0])]))
    with pytest.raises(GeometryError) as e:
        read_wing(p, units="m", n_stations=9)
    msg = str(e.value)
    assert "\n" not in msg and str(p) in msg and "crossing" in msg and "--body" in msg
