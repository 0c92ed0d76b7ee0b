"""Several bodies in one file: touching panels, a separate aileron, a whole aircraft, and the
files that must be refused.

Truth: the NACA 4-digit equations (NACA Report 460, Jacobs, Ward and Pinkerton 1933; restated
in Report 824) on straight-tapered planforms (tests/wingfactory.py, tests/aircraftfactory.py);
straight-taper area, MAC and its position: Raymer, Aircraft Design, ch. 4. Tolerances: chord
1 %, twist relative to the root 0.25 deg, span 0.5 %, dihedral 0.3 deg.
"""

import numpy as np
import pytest

from helpers.aircraftfactory import aircraft, fuselage, wing_with_aileron
from geomload.errors import GeometryError
from geomload.geometry import read_wing
from helpers.wingfactory import write_stl  # noqa: E402
from helpers.validation import NACA_STATIONS, STRAIGHT_TAPER, check, check_worst_station
from helpers.wingfactory import design, expected_stations, wing_triangles

NACA, TAPER = NACA_STATIONS, STRAIGHT_TAPER


_stl = write_stl  # binary STL writer shared by the geometry tests


_worst = check_worst_station  # helpers.validation: one row per distribution


def _truth_ok(w, d, label):
    st, pf = w.stations, w.planform
    ex = expected_stations(d, st.y)
    _worst(f"{label}: chord (m)", ex["chord"], st.chord, rel=0.01)
    _worst(f"{label}: twist relative to the root (deg)", ex["twist"] - ex["twist"][0],
           st.twist_deg - st.twist_deg[0], abs=0.25)
    check(TAPER, f"{label}: span (m)", d["span"], pf.span, rel=0.005)
    check("design dihedral", f"{label}: dihedral (deg)", d["dihedral_deg"], pf.dihedral_deg, abs=0.3)


def test_four_touching_panels_and_an_aileron_behind_a_gap(tmp_path):
    bodies, d = wing_with_aileron(hinge=0.75, gap=0.006)
    w = read_wing(_stl(tmp_path / "panels.stl", bodies), units="m", n_stations=15)
    kinds = [b.kind for b in w.bodies]
    assert kinds.count("control surface") == 1 and kinds.count("wing part") == 3
    assert any(x.kind == "bodies" for x in w.warnings)
    assert any(x.kind == "control_surface" for x in w.warnings)
    # the sections that carry the aileron run from the wing's LE to the aileron's TE
    _truth_ok(w, d, "four panels + aileron")
    (cs,) = w.control_surfaces
    on = np.asarray(cs.stations)
    assert np.all((w.stations.y[on] > 0.98) & (w.stations.y[on] < 1.62))
    assert on.size == np.sum((w.stations.y > 1.0) & (w.stations.y < 1.6))
    # hinge at the aileron's leading edge: mean-line station 0.75 + 0.006 of the chord
    check(NACA, "aileron hinge x/c (-)", 0.756, float(np.mean(cs.hinge_x_over_c)), abs=0.01)


def test_whole_aircraft_as_separate_shells(tmp_path):
    bodies, dw, dt = aircraft()
    w = read_wing(_stl(tmp_path / "aircraft.stl", bodies), units="m", n_stations=15)
    assert [b.kind for b in w.bodies] == ["wing", "fuselage", "tailplane", "fin"]
    assert w.frame.full_span
    _truth_ok(w, dw, "wing of a whole aircraft")
    # the fuselage (a 0.2 m radius capsule) meets the wing root chord at y = 0.2 m
    check("fuselage radius of the generated capsule", "fuselage side y (m)", 0.2,
          w.fuselage_side_y_m, rel=0.02)
    tp = w.tailplane
    check(TAPER, "tailplane area S = s (c_r + c_t) (m^2)", dt["area"], tp.area, rel=0.01)
    check(TAPER, "tailplane span (m)", dt["span"], tp.span, rel=0.005)
    # quarter-chord of the tail MAC: 2.2 m + y_MAC tan(sweep_LE) + MAC / 4
    x_qc = 2.2 + dt["y_mac"] * np.tan(np.radians(dt["sweep_le_deg"])) + 0.25 * dt["mac"]
    check(TAPER, "tailplane MAC quarter-chord x (m)", x_qc, tp.x_qc_mac, rel=0.01)


@pytest.mark.parametrize("case", ["crossing", "biplane", "fuselage"])
def test_refused_files_say_what_was_found(tmp_path, case):
    d = design()
    full = wing_triangles(d, 40, 10, full_span=True)
    if case == "crossing":  # the same wing turned 90 deg about the vertical, through the first
        rot = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
        tris = [full, full @ rot.T + np.array([0.2, 0.0, 0.0])]
        words = "crossing"
    elif case == "biplane":
        tris = [full, full + np.array([0.1, 0.0, 0.6])]
        words = "biplane"
    else:
        tris = [fuselage()]
        words = "wing"
    p = _stl(tmp_path / f"{case}.stl", tris)
    with pytest.raises(GeometryError) as e:
        read_wing(p, units="m", n_stations=9)
    msg = str(e.value)
    assert "\n" not in msg and str(p) in msg and words in msg
    if case != "fuselage":
        assert "give --body N" in msg and "2 bodies" in msg


def test_body_option_picks_one_wing_of_a_biplane(tmp_path):
    d = design()
    full = wing_triangles(d, 40, 10, full_span=True)
    p = _stl(tmp_path / "biplane.stl", [full, full + np.array([0.1, 0.0, 0.6])])
    w = read_wing(p, units="m", n_stations=9, body=2)
    # the upper wing alone, as the user chose: the design's span (Raymer ch. 4 definitions)
    check(TAPER, "biplane, --body 2: span (m)", d["span"], w.planform.span, rel=0.005)
    with pytest.raises(Exception, match="out of range"):
        read_wing(p, units="m", n_stations=9, body=3)


@pytest.mark.parametrize("port_first", [True, False])
def test_mirror_image_halves_beside_a_fuselage_are_one_wing(tmp_path, port_first):
    """Separate port and starboard halves from the fuselage side (y = +-0.2 m) outward and a
    fuselage: one wing (not a biplane, not two wings), the starboard half analysed, the plane
    midway between the halves kept as y = 0 and the gross planform the design's."""
    from helpers.aircraftfactory import panel
    from helpers.wingcopies import port_of

    d = design()
    stb = panel(d, 0.2, d["semispan"], n_span=13)
    halves = [port_of(stb), stb] if port_first else [stb, port_of(stb)]
    w = read_wing(_stl(tmp_path / "halves.stl", halves + [fuselage()]), units="m", n_stations=15)
    kinds = [b.kind for b in w.bodies]
    assert sorted(kinds[:2]) == ["wing", "wing (other half)"] and kinds[2] == "fuselage"
    assert kinds[1 if port_first else 0] == "wing"  # the starboard half
    assert not w.frame.mirrored and not w.frame.full_span
    assert any("mirror images" in x.text for x in w.warnings)
    check("generator: halves from y = 0.2 m", "mirror halves: exposed root y (m)", 0.2,
          w.frame.y_root, rel=0.005)
    _truth_ok(w, d, "mirror halves beside a fuselage")
    check(TAPER, "mirror halves: gross area S = s (c_r + c_t) (m^2)", d["area"], w.planform.area,
          rel=0.01)
    # the carried-through part keeps the exposed root's incidence: washout = twist(0.2) - tip
    ex = expected_stations(d, np.array([0.2, d["semispan"]]))
    check(NACA, "mirror halves: washout of the gross wing, root incidence kept inboard (deg)",
          ex["twist"][0] - ex["twist"][1], w.planform.washout_deg, abs=0.25)
