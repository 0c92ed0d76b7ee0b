"""A whole aircraft partly fused: a wing-fuselage shell (a boolean union) written into one file
beside a separate tailplane and fin; and the side of a fused aircraft chosen by the user.

Truth: the NACA 4-digit equations (NACA Report 460, Jacobs, Ward and Pinkerton 1933; restated
in Report 824) on straight-tapered planforms (tests/helpers/wingfactory.py,
tests/helpers/aircraftfactory.py); straight-taper area and span: Raymer, Aircraft Design, ch. 4.
The fused shells are unions computed by a general-purpose mesh boolean library (manifold3d
through trimesh). Tolerances: chord 1 %, twist relative to the root 0.25 deg, span 0.5 %.
"""

import json

import numpy as np
import pytest
from click.testing import CliRunner

from geomload.geometry import read_wing
from helpers.aircraftfactory import aircraft, fused, fuselage, panel
from helpers.validation import NACA_STATIONS, STRAIGHT_TAPER, check, check_worst_station
from helpers.wingcopies import port_of
from helpers.wingfactory import design, expected_stations, wing_triangles, write_stl

NACA, TAPER = NACA_STATIONS, STRAIGHT_TAPER
CAPSULE = "fuselage radius of the generated capsule"


_worst = check_worst_station  # helpers.validation: one row per distribution


@pytest.fixture(scope="module")
def mixed(tmp_path_factory):
    """A wing-fuselage shell, a separate tailplane and a separate fin in one STL."""
    (wing, fus, tail, fin), dw, dt = aircraft()
    p = write_stl(tmp_path_factory.mktemp("mixed") / "wingbody_tail_fin.stl",
                  [fused([wing, fus]), tail, fin])
    return p, read_wing(p, units="m", n_stations=15), dw, dt


def test_fused_wing_body_beside_separate_tail_bodies_recovers_the_wing(mixed):
    _, w, d, _ = mixed
    st, pf = w.stations, w.planform
    ex = expected_stations(d, st.y)
    _worst("wing-body shell + separate tail: chord (m)", ex["chord"], st.chord, rel=0.01)
    _worst("wing-body shell + separate tail: twist relative to the root (deg)",
           ex["twist"] - ex["twist"][0], st.twist_deg - st.twist_deg[0], abs=0.25)
    check(TAPER, "wing-body shell + separate tail: gross span (m)", d["span"], pf.span, rel=0.005)
    check(TAPER, "wing-body shell + separate tail: gross area S = s (c_r + c_t) (m^2)",
          d["area"], pf.area, rel=0.01)
    check(CAPSULE, "wing-body shell + separate tail: fuselage side y (m)", 0.2,
          w.fuselage_side_y_m, rel=0.02)
    assert not w.control_surfaces  # the tailplane meets the fuselage: it is no aileron


def test_fused_wing_body_beside_separate_tail_bodies_reports_every_body(mixed):
    p, w, _, dt = mixed
    kinds = {b.index: b.kind for b in w.bodies}
    assert kinds == {1: "aircraft (one fused shell)", 2: "tailplane", 3: "fin"}, kinds
    text = " ".join(x.text for x in w.warnings if x.kind == "bodies")
    assert "3 bodies in wingbody_tail_fin.stl" in text and "body 2 tailplane" in text
    assert "body 3 fin" in text and "fuselage" in text
    tp = w.tailplane
    check(TAPER, "separate tailplane beside a fused shell: gross area (m^2)", dt["area"],
          tp.area, rel=0.01)
    check(TAPER, "separate tailplane beside a fused shell: span (m)", dt["span"], tp.span,
          rel=0.005)
    # inspect prints what was found, not "half wing"
    r = CliRunner().invoke(_cli(), ["inspect", str(p), "--units", "m", "--stations", "9"])
    assert r.exit_code == 0, r.stderr
    assert "half wing" not in r.stdout and "whole aircraft" in r.stdout, r.stdout
    for word in ("one fused shell", "fuselage side", "exposed", "gross", "tailplane", "fin"):
        assert word in r.stdout, (word, r.stdout)


def _cli():
    from geomload.cli import cli

    return cli


def test_fused_shell_continued_by_separate_panels_is_refused_in_one_line(tmp_path):
    """A fused centre wing-body with separate outer wing panels touching it: not supported;
    one line naming the file and what was found."""
    from geomload.errors import GeometryError

    d = design()
    centre = fused([panel(d, 0.0, 0.9, n_span=6), port_of(panel(d, 0.0, 0.9, n_span=6)),
                    fuselage()])
    outer = panel(d, 0.9, d["semispan"], n_span=8)
    p = write_stl(tmp_path / "centre_outer.stl", [centre, outer, port_of(outer)])
    with pytest.raises(GeometryError) as e:
        read_wing(p, units="m", n_stations=9)
    msg = str(e.value)
    assert "\n" not in msg and str(p) in msg and "fused" in msg and "--body" in msg, msg


@pytest.fixture(scope="module")
def unsymmetric(tmp_path_factory):
    """A fused aircraft whose port wing has a 0.32 m root chord, the starboard one 0.36 m (same
    span, taper and sections): which half is analysed shows in the chord."""
    stb, prt = design(), design(root_chord=0.32)
    (_, fus, tail, fin), _, _ = aircraft()
    shell = fused([wing_triangles(stb, 60, 12), port_of(wing_triangles(prt, 60, 12)), fus,
                   tail, fin])
    return write_stl(tmp_path_factory.mktemp("unsym") / "unsym.stl", shell), stb, prt


@pytest.mark.parametrize("side", [None, "starboard", "port"])
def test_side_chooses_the_half_of_a_fused_aircraft(unsymmetric, side):
    p, stb, prt = unsymmetric
    w = read_wing(p, units="m", n_stations=11, side=side)
    d = prt if side == "port" else stb
    ex = expected_stations(d, w.stations.y)
    _worst(f"fused aircraft, side {side}: chord of that half (m)", ex["chord"], w.stations.chord,
           rel=0.01)
    check(TAPER, f"fused aircraft, side {side}: gross area of that half (m^2)", d["area"],
          w.planform.area, rel=0.01)
    assert w.frame.mirrored == (side == "port")
    text = " ".join(x.text for x in w.warnings)
    if side == "port":
        assert "port half is analysed (side = port)" in text and "mirrored" in text, text


def test_side_of_a_fused_aircraft_from_the_command_line(unsymmetric):
    p, _, prt = unsymmetric
    r = CliRunner().invoke(_cli(), ["inspect", str(p), "--units", "m", "--side", "port",
                                    "--stations", "9", "--json"])
    assert r.exit_code == 0, r.stderr
    out = json.loads(r.stdout)
    check(TAPER, "inspect --side port on a fused aircraft: gross area (m^2)", prt["area"],
          out["planform_gross_exposed"]["gross"]["area_m2"], rel=0.01)
    assert out["found"]["kind"] == "whole aircraft, one fused shell"
    assert out["found"]["half"] == "port"


@pytest.mark.parametrize("side", [None, "port"])
def test_side_chooses_the_half_of_separate_mirror_image_halves(tmp_path, side):
    """Starboard and port wing bodies from the fuselage side (y = +-0.2 m) outward, beside a
    fuselage: the side names the half analysed; a symmetric pair gives the same wing."""
    d = design()
    stb = panel(d, 0.2, d["semispan"], n_span=13)
    p = write_stl(tmp_path / "halves.stl", [port_of(stb), stb, fuselage()])
    w = read_wing(p, units="m", n_stations=11, side=side)
    assert w.frame.mirrored == (side == "port")
    check(TAPER, f"mirror halves, side {side}: gross area S = s (c_r + c_t) (m^2)", d["area"],
          w.planform.area, rel=0.01)
    check(TAPER, f"mirror halves, side {side}: gross span (m)", d["span"], w.planform.span,
          rel=0.005)
    ex = expected_stations(d, w.stations.y)
    _worst(f"mirror halves, side {side}: twist relative to the root (deg)",
           ex["twist"] - ex["twist"][0], w.stations.twist_deg - w.stations.twist_deg[0],
           abs=0.25)


def _slot(d, y0, y1, hinge, sgn=1.0):
    """A prism cutting the wing aft of x/c = hinge between |y| = y0 and y1 (the cut-out a
    separate aileron sits in), as a convex hull (trimesh)."""
    import trimesh

    pts = [[float(d["x_le"](y) + hinge * d["chord"](y)) + dx, sgn * y, z]
           for y in (y0, y1) for dx in (0.0, 0.5) for z in (-0.3, 0.3)]
    return np.asarray(trimesh.convex.convex_hull(np.array(pts)).triangles)


def test_fused_aircraft_with_aileron_cut_outs_and_separate_ailerons(tmp_path):
    """A fused aircraft (wing with cut-outs aft of 75 % chord from 1.0 to 1.6 m, fuselage,
    tailplane, fin; boolean difference and union by manifold3d) and two separate ailerons
    behind a 0.6 % c gap: the cut-out is not the end of the wing, the sections there run to
    the aileron's trailing edge."""
    import trimesh

    d = design(washout_deg=0.0)
    (_, fus, tail, fin), _, _ = aircraft(washout_deg=0.0)

    def tm(t):
        m = trimesh.Trimesh(**trimesh.triangles.to_kwargs(np.asarray(t, float)))
        m.merge_vertices()
        return m

    wing = trimesh.boolean.difference(
        [tm(wing_triangles(d, 60, 30, full_span=True)), tm(_slot(d, 1.0, 1.6, 0.75)),
         tm(_slot(d, 1.0, 1.6, 0.75, -1.0))], engine="manifold")
    shell = fused([np.asarray(wing.triangles), fus, tail, fin])
    ail = panel(d, 1.004, 1.596, 0.756, 1.0, n_span=10, n=20)
    p = write_stl(tmp_path / "cutouts.stl", [shell, ail, port_of(ail)])
    w = read_wing(p, units="m", n_stations=15)
    ex = expected_stations(d, w.stations.y)
    _worst("fused aircraft with aileron cut-outs: chord to the aileron's TE (m)", ex["chord"],
           w.stations.chord, rel=0.01)
    check(TAPER, "fused aircraft with aileron cut-outs: gross area (m^2)", d["area"],
          w.planform.area, rel=0.01)
    check(CAPSULE, "fused aircraft with aileron cut-outs: fuselage side y (m)", 0.2,
          w.fuselage_side_y_m, rel=0.02)
    (cs,) = w.control_surfaces
    check("aileron of the generator", "fused + aileron: aileron from y (m)", 1.004, cs.y_from_m,
          rel=0.005)
    check("aileron of the generator", "fused + aileron: aileron to y (m)", 1.596, cs.y_to_m,
          rel=0.005)
    check("aileron of the generator", "fused + aileron: hinge x/c", 0.756,
          float(np.mean(cs.hinge_x_over_c)), abs=0.01)
    kinds = sorted(b.kind for b in w.bodies)
    assert kinds == ["aircraft (one fused shell)", "control surface", "control surface"], kinds


def test_wing_body_shell_spanning_over_twice_its_fuselage_length(tmp_path):
    """A wing of 8 m span fused to a 3.4 m fuselage (a glider's proportions): the cuts across
    the span each give one loop, as for a plain wing, yet it is a whole aircraft."""
    d = design(semispan=4.0, root_chord=0.5)
    shell = fused([wing_triangles(d, 60, 20, full_span=True), fuselage(length=3.4)])
    w = read_wing(write_stl(tmp_path / "glider.stl", shell), units="m", n_stations=12)
    ex = expected_stations(d, w.stations.y)
    _worst("wing-body shell of 8 m span: chord (m)", ex["chord"], w.stations.chord, rel=0.01)
    check(TAPER, "wing-body shell of 8 m span: gross span (m)", d["span"], w.planform.span,
          rel=0.005)
    check(TAPER, "wing-body shell of 8 m span: gross area (m^2)", d["area"], w.planform.area,
          rel=0.01)
    check(CAPSULE, "wing-body shell of 8 m span: fuselage side y (m)", 0.2,
          w.fuselage_side_y_m, rel=0.02)
    assert [b.kind for b in w.bodies] == ["aircraft (one fused shell)"]
