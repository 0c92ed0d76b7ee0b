"""Positions given in the CAD frame and unit (frame = "cad") against the same positions given in
the wing frame, on a wing exported as CAD shops do: the port half, in a right-handed Y-up frame,
in millimetres, moved off the CAD origin.

The CAD model is built here from the design (tests/wingfactory.py: NACA 4-digit sections, NACA
Report 460 / 824, on a straight-tapered planform), so the CAD coordinates of a point are known
from the construction: CAD = 1000 (A @ p_port) + t, p_port the port mirror image of the design
point. Truths: (1) the same physical point gives the same loads whichever frame it is written
in (a geometric identity: the loads depend on the point, not on how it is written), to 1e-9;
(2) the wing frame read from the CAD model puts the point where the design has it, within the
frame-detection accuracy (root leading edge by the farthest-point rule of NACA Report 824's
equations, `wingfactory.measured_definition`); (3) unit factor 1 mm = 1e-3 m (SI).
"""

from __future__ import annotations

import numpy as np
import pytest

from geomload.config import read_case_file
from geomload.config.checks import check_against_wing
from geomload.config.positions import resolve_positions
from geomload.errors import CaseError
from geomload.pipeline import compute
from geomload.records import no_progress
from geomload.run_geometry import case_wing
from helpers.validation import check
from helpers.wingcopies import Y_UP_RIGHT, in_frame, port_of
from helpers.wingfactory import design, measured_definition, wing_triangles, write_stl

SAME_POINT = "geometric identity: one point written in the CAD frame or in the wing frame"
NACA = "NACA Report 460 / 824 equations, farthest-point chord line (wingfactory)"
SHIFT_MM = np.array([2500.0, 400.0, -3000.0])  # the wing's place in the CAD model
POD = np.array([0.12, 0.9, -0.03])  # design frame (m): a pod under the wing at mid-span
TANK = (0.25, 0.7)  # design y (m) of the tank's ends
SPAR = np.array([[0.10, 0.05, 0.01], [0.20, 1.6, 0.09]])  # design (x, y, z) of two spar points
REF = np.array([0.09, 0.0, 0.0])  # moment reference (design frame, m)
CACHE: dict = {}

CASE = """title = "QM-36 Pellin frame check"
[geometry]
file = "port_yup_mm.stl"
units = "mm"
stations = 10
[aircraft]
gross_mass = "22 kg"
[wing_mass]
mass = 3.0
[[point_mass]]
name = "pod"
mass = "1.9 lb"
{pod}
[[fuel_tank]]
name = "tank"
mass = 2.0
{tank}
[spar]
{spar}
[moment_reference]
{ref}
[[load_case]]
name = "pull-up"
speed = "30 m/s"
altitude = "0 m"
load_factor = 3.0
[lattice]
n_span = 12
n_chord = 4
"""


def cad_mm(p):
    """CAD coordinates (mm) of design points p (m): the port half in the Y-up frame, moved."""
    q = np.atleast_2d(np.asarray(p, float)) * np.array([1.0, -1.0, 1.0])
    return in_frame(q, Y_UP_RIGHT) * 1000.0 + SHIFT_MM


def toml_xyz(p) -> str:
    return "\n".join(f"{c} = {float(v)!r}" for c, v in zip("xyz", p))


def toml_rows(rows) -> str:
    return "[" + ", ".join("[" + ", ".join(repr(float(v)) for v in r) + "]" for r in rows) + "]"


@pytest.fixture(scope="module")
def model(tmp_path_factory):
    d = design()
    folder = tmp_path_factory.mktemp("frames")
    write_stl(folder / "port_yup_mm.stl", in_frame(port_of(wing_triangles(d, 60, 24)),
                                                   Y_UP_RIGHT) * 1000.0 + SHIFT_MM)
    return folder, d


def write_case(folder, name, pod, tank, spar, ref):
    p = folder / name
    p.write_text(CASE.format(pod=pod, tank=tank, spar=spar, ref=ref), encoding="utf-8")
    return p


def run(path):
    """Read, convert the positions once the wing is read, compute (as `geomload run` does)."""
    case = read_case_file(path)
    _, wing = case_wing(case, no_progress, CACHE)
    resolved, notes = resolve_positions(case, wing)
    return compute(resolved, cache=CACHE), resolved, notes


@pytest.fixture(scope="module")
def both(model):
    folder, _ = model
    pod, tank, spar, ref = cad_mm(POD)[0], cad_mm([[0, y, 0] for y in TANK]), cad_mm(SPAR), \
        cad_mm(REF)[0]
    cad = write_case(folder, "cad.toml",
                     'frame = "cad"\n' + toml_xyz(pod),
                     'frame = "cad"\n' + f"inboard_end = {toml_rows(tank[:1])[1:-1]}\n"
                     f"outboard_end = {toml_rows(tank[1:])[1:-1]}",
                     'frame = "cad"\n' + f"points = {toml_rows(spar)}",
                     'frame = "cad"\n' + toml_xyz(ref))
    r_cad, case_cad, notes = run(cad)
    # the same points in the wing frame, by the frame read from the CAD model
    wing = r_cad.wing
    to_w = lambda q: wing.frame.to_wing(np.atleast_2d(q) * 1e-3)  # noqa: E731
    w_pod, w_tank, w_spar, w_ref = to_w(pod)[0], to_w(tank), to_w(spar), to_w(ref)[0]
    plain = write_case(folder, "wing.toml", toml_xyz(w_pod),
                       f"y_from = {float(w_tank[0, 1])!r}\ny_to = {float(w_tank[1, 1])!r}",
                       f"points = {toml_rows(w_spar)}", toml_xyz(w_ref))
    r_wing, case_wing_frame, _ = run(plain)
    return r_cad, r_wing, case_cad, case_wing_frame, notes


def test_cad_frame_positions_give_the_same_loads(both):
    r_cad, r_wing, *_ = both
    a, b = r_cad.cases[0].loads, r_wing.cases[0].loads
    for q in ("shear_N", "bending_Nm", "torsion_Nm"):
        scale = float(np.max(np.abs(getattr(b, q))))
        worst = float(np.max(np.abs(getattr(a, q) - getattr(b, q))))
        check(SAME_POINT, f"{q}: worst difference / largest value", 0.0, worst / scale, abs=1e-9)
    check(SAME_POINT, "Cm about the moment reference", r_wing.cases[0].aero.Cm,
          r_cad.cases[0].aero.Cm, rel=1e-9, abs=1e-12)


def test_cad_point_lands_where_the_design_has_it(both, model):
    _, _, case_cad, _, notes = both
    _, d = model
    root = measured_definition(d, [0.0])  # the wing frame's origin and x axis: the root chord
    a = np.radians(root["twist"][0])
    rel = POD - np.array([root["x_le"][0], 0.0, root["z_le"][0]])
    expected = np.array([rel[0] * np.cos(a) - rel[2] * np.sin(a), rel[1],
                         rel[0] * np.sin(a) + rel[2] * np.cos(a)])
    got = case_cad.point_masses[0].position
    for k, c in enumerate("xyz"):
        # 1 mm: the farthest-point leading edge of a 60-point loft, float32 STL in mm
        check(NACA, f"pod {c} in the wing frame from its CAD mm coordinates (m)", expected[k],
              got[k], abs=1e-3)
    assert case_cad.point_masses[0].mass == pytest.approx(1.9 * 0.45359237, rel=1e-15)
    t = case_cad.fuel_tanks[0]
    check(NACA, "tank inboard end y (m)", TANK[0], t.y_from_m, abs=1e-3)
    check(NACA, "tank outboard end y (m)", TANK[1], t.y_to_m, abs=1e-3)
    assert case_cad.cad_positions == ()
    assert any("point_mass[1]" in n.text and "CAD unit mm" in n.text for n in notes)


@pytest.mark.parametrize("pod, key, fragment", [
    # 2500 mm out along the span: beyond the 1.8 m semi-span
    (lambda: cad_mm([0.1, 2.5, 0.0])[0], "point_mass[1]", "beyond the tip"),
    # metres written where the CAD unit is mm: the point sits at the CAD origin, far off the wing
    (lambda: np.array([0.35, 0.0, -0.9]), "point_mass[1]", "beyond the tip"),
    # across the root plane of this half wing (where its mirror image would be)
    (lambda: cad_mm([0.1, -0.3, 0.0])[0], "point_mass[1]", "inboard of the root plane"),
    # a metre behind the trailing edge
    (lambda: cad_mm([1.3, 0.9, 0.0])[0], "point_mass[1]", "more than 2 chords"),
])
def test_cad_point_outside_the_wing_is_refused(model, tmp_path, pod, key, fragment):
    folder, _ = model
    p = write_case(folder, f"bad_{tmp_path.name}.toml", 'frame = "cad"\n' + toml_xyz(pod()),
                   "y_from = 0.25\ny_to = 0.7", "chord_fraction = 0.3", "x = 0.09")
    with pytest.raises(CaseError) as err:
        run(p)
    msg = str(err.value)
    assert msg.startswith(str(p)) and f"{key} (frame = \"cad\", CAD unit mm):" in msg, msg
    assert fragment in msg and "\n" not in msg, msg


def test_unconverted_cad_position_is_refused(model):
    folder, _ = model
    p = write_case(folder, "unresolved.toml", 'frame = "cad"\n' + toml_xyz(cad_mm(POD)[0]),
                   "y_from = 0.25\ny_to = 0.7", "chord_fraction = 0.3", "x = 0.09")
    case = read_case_file(p)
    with pytest.raises(CaseError, match=r"point_mass\[1\]: given in the CAD frame but not "
                                        r"converted"):
        check_against_wing(case, 1.8)


@pytest.mark.parametrize("pod, key, fragment", [
    ('frame = "cad"\nx_m = 1.0\ny = 2.0\nz = 3.0', "point_mass[1].x_m", "wing-frame key"),
    ('frame = "cad"\nx = 1.0\ny = 2.0', "point_mass[1].z", "missing"),
    ('frame = "CAD-mm"\nx = 1.0\ny = 2.0\nz = 0.0', "point_mass[1].frame", "'wing', 'cad'"),
])
def test_cad_entry_errors_name_the_key(model, pod, key, fragment):
    folder, _ = model
    p = write_case(folder, "entry.toml", pod, "y_from = 0.25\ny_to = 0.7",
                   "chord_fraction = 0.3", "x = 0.09")
    with pytest.raises(CaseError) as err:
        read_case_file(p)
    msg = str(err.value)
    assert f"{key}:" in msg and fragment in msg and "\n" not in msg, msg


def test_port_point_of_a_full_wing_is_its_starboard_mirror(tmp_path):
    # a full wing in metres, Z up (the design frame): a pod measured on the port wing is the
    # mirror image of the starboard one (mirror symmetry of the model: a geometric identity)
    write_stl(tmp_path / "full.stl", wing_triangles(design(), 60, 24, full_span=True))
    text = CASE.replace('"port_yup_mm.stl"\nunits = "mm"', '"full.stl"\nunits = "m"')
    got, notes = {}, {}
    for side, y in (("starboard", 0.9), ("port", -0.9)):
        p = tmp_path / f"{side}.toml"
        p.write_text(text.format(pod='frame = "cad"\n' + toml_xyz([0.12, y, -0.03]),
                                 tank="y_from = 0.25\ny_to = 0.7", spar="chord_fraction = 0.3",
                                 ref="x = 0.09"), encoding="utf-8")
        case = read_case_file(p)
        _, wing = case_wing(case, no_progress, CACHE)
        resolved, msgs = resolve_positions(case, wing)
        got[side], notes[side] = resolved.point_masses[0].position, [m.text for m in msgs]
    for k, c in enumerate("xyz"):
        check(SAME_POINT, f"full wing: port pod {c} against the starboard one (m)",
              got["starboard"][k], got["port"][k], abs=1e-6)
    assert "mirror image" in notes["port"][0] and "mirror image" not in notes["starboard"][0]


def test_cad_coordinates_written_with_their_unit(model, both):
    # the pod's CAD coordinates in inches instead of CAD millimetres: 1 in = 25.4 mm exactly
    # (NIST SP 811, App. B); the text's unit wins over the CAD unit
    folder, _ = model
    pod = cad_mm(POD)[0]
    text = 'frame = "cad"\n' + "\n".join(f'{c} = "{float(v) / 25.4!r} in"' for c, v in
                                         zip("xyz", pod))
    p = write_case(folder, "inches.toml", text, "y_from = 0.25\ny_to = 0.7",
                   "chord_fraction = 0.3", "x = 0.09")
    case = read_case_file(p)
    resolved, _ = resolve_positions(case, case_wing(case, no_progress, CACHE)[1])
    mm = both[2].point_masses[0].position
    for k, c in enumerate("xyz"):
        check("NIST SP 811 App. B: 1 in = 0.0254 m", f"pod {c} from CAD inches against CAD mm (m)",
              mm[k], resolved.point_masses[0].position[k], abs=1e-12)


def test_cad_tank_from_the_root_plane(model):
    # a tank whose inboard end is on the root face: wing-frame y_from = 0 (design, exact)
    folder, _ = model
    ends = cad_mm([[0.1, 0.0, 0.0], [0.1, 0.5, 0.0]])
    p = write_case(folder, "root_tank.toml", toml_xyz(POD),
                   'frame = "cad"\n' + f"inboard_end = {toml_rows(ends[:1])[1:-1]}\n"
                   f"outboard_end = {toml_rows(ends[1:])[1:-1]}", "chord_fraction = 0.3",
                   "x = 0.09")
    case = read_case_file(p)
    tank = resolve_positions(case, case_wing(case, no_progress, CACHE)[1])[0].fuel_tanks[0]
    check(NACA, "tank from the root face: y_from (m)", 0.0, tank.y_from_m, abs=1e-6)
    check(NACA, "tank from the root face: y_to (m)", 0.5, tank.y_to_m, abs=1e-3)
