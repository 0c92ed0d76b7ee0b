"""Control surfaces taken from the CAD's control-surface bodies (``geometry_body = N`` in a
[[control_surface]] entry) against the same surface described by hand, and their bad inputs.

Truth: the generated wing of tests/aircraftfactory.py (NACA 4-digit sections, NACA Report 460 /
824 equations, on a straight-tapered planform) with a separate aileron body whose leading edge
lies at x/c = hinge + gap of the design chord, from y = 1.0 + end gap to 1.6 - end gap.
"""

from __future__ import annotations
from helpers.nothinglost import refused_run
from helpers.paths import ROOT

import dataclasses
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from helpers.aircraftfactory import wing_with_aileron
from geomload.aero.controls import ControlSurface
from geomload.aero.lattice import build_lattice
from geomload.aero.roll import ControlModel
from geomload.aero.solve import AeroModel
from geomload.config import read_case_file
from geomload.config.controls_parse import ControlsSpec, GeometrySurface, \
    resolve_geometry_controls
from geomload.errors import CaseError
from geomload.geometry import read_wing
from geomload.pipeline import compute
from helpers.validation import check
from helpers.wingfactory import write_stl

NACA = "generated wing with an aileron body (NACA Report 460 / 824 sections, aircraftfactory)"
HINGE, GAP, Y_AIL, END_GAP = 0.75, 0.006, (1.0, 1.6), 0.004
AILERON_BODY = 5  # four wing panels, then the aileron (aircraftfactory.wing_with_aileron)

CASE = """title = "Quillmoor QM-12 Tern test wing"
[geometry]
file = "{stl}"
units = "m"
stations = 15
[aircraft]
gross_mass_kg = 18.0
[envelope]
category = "custom"
n_pos = 3.8
n_neg = -1.5
wing_cn_max_pos = 1.3
wing_cn_max_neg = 0.7
v_cruise = "30 m/s"
v_dive = "42 m/s"
altitudes = ["0 m"]
[lattice]
n_span = 16
n_chord = 8
[[control_surface]]
name = "aileron"
kind = "aileron"
{surface}
delta_min_deg = -20.0
delta_max_deg = 20.0
[rolling]
category = "normal"
aileron = "aileron"
methods = ["lattice"]
"""


@pytest.fixture(scope="module")
def stl(tmp_path_factory):
    bodies, _ = wing_with_aileron(hinge=HINGE, gap=GAP, y_ail=Y_AIL, end_gap=END_GAP)
    return write_stl(tmp_path_factory.mktemp("cadail") / "tern_wing.stl", bodies)


@pytest.fixture(scope="module")
def wing(stl):
    return read_wing(stl, units="m", n_stations=15)


def _case(tmp_path, stl, surface, name="case.toml"):
    p = tmp_path / name
    p.write_text(CASE.format(stl=Path(stl).as_posix(), surface=surface))
    return p


def test_the_recorded_hinge_and_span_match_the_generator(wing):
    (rec,) = wing.control_surfaces
    assert rec.body == AILERON_BODY
    # the hinge is the aileron body's leading edge: x/c = hinge + gap at every station
    h = np.asarray(rec.hinge_x_over_c)
    k = int(np.argmax(np.abs(h - (HINGE + GAP))))
    check(NACA, "recorded hinge x/c, worst station (-)", HINGE + GAP, float(h[k]), abs=0.01)
    check(NACA, "aileron inner end y (m)", Y_AIL[0] + END_GAP, rec.y_from_m, abs=1e-3)
    check(NACA, "aileron outer end y (m)", Y_AIL[1] - END_GAP, rec.y_to_m, abs=1e-3)


def test_cad_aileron_gives_the_same_loads_as_the_hand_described_one(tmp_path, stl, wing):
    """A [[control_surface]] with geometry_body = 5 runs exactly as one described by hand with
    the recorded span range and hinge (definition: the same surface; 1e-9)."""
    (rec,) = wing.control_surfaces
    h = float(np.mean(rec.hinge_x_over_c))
    by_hand = (f"y_from_m = {rec.y_from_m!r}\ny_to_m = {rec.y_to_m!r}\n"
               f"hinge_fraction = {h!r}")
    cad = compute(read_case_file(_case(tmp_path, stl, f"geometry_body = {AILERON_BODY}")))
    hand = compute(read_case_file(_case(tmp_path, stl, by_hand, "hand.toml")))
    (surf,) = cad.case.controls.surfaces if not cad.case.controls.from_geometry else \
        resolve_geometry_controls(cad.case.controls, wing)[0].surfaces
    assert surf.hinge_table == ()  # the stations' hinges agree within 0.5 % c: one hinge
    rolls = {c.name: c for c in cad.cases if c.kind.startswith("rolling")}
    ref = {c.name: c for c in hand.cases if c.kind.startswith("rolling")}
    assert set(rolls) == set(ref) and len(rolls) == 12  # 3 speeds x 2 senses x 2 roll states
    assert {c.kind for c in rolls.values()} == {"rolling", "rolling_initial"}
    for name, c in rolls.items():
        for (side, a), (_, b) in zip(c.sides, ref[name].sides):
            for q in ("shear_N", "bending_Nm", "torsion_Nm"):
                x, y = getattr(a, q), getattr(b, q)
                assert np.max(np.abs(x - y)) <= 1e-9 * np.max(np.abs(y)), (name, side, q)
        assert c.control.Cl_delta_per_rad == pytest.approx(ref[name].control.Cl_delta_per_rad,
                                                           rel=1e-9)


def test_undescribed_cad_control_surface_warns(wing):
    # no control sections at all: the CAD aileron is analysed undeflected, said as a warning
    spec, warns = resolve_geometry_controls(None, wing)
    assert spec is None and len(warns) == 1
    assert warns[0].startswith("control_surface: body 5 ") and "undeflected" in warns[0]
    assert "geometry_body = 5" in warns[0]


def test_case_with_geometry_controls_resolves_and_warns(tmp_path, stl, wing):
    from geomload.pipeline_controls import case_with_geometry_controls

    case = read_case_file(_case(tmp_path, stl, f"geometry_body = {AILERON_BODY}"))
    assert case.controls.surfaces == () and case.controls.from_geometry[0].body == 5
    new, warns = case_with_geometry_controls(case, wing)
    (s,) = new.controls.surfaces
    assert warns == [] and new.controls.from_geometry == ()
    assert (s.name, s.kind, s.mode, s.side) == ("aileron", "aileron", "antisymmetric", "both")
    assert s.y_from_m == wing.control_surfaces[0].y_from_m
    # a hand-described flap elsewhere leaves the CAD aileron undescribed when it is not named
    hand = read_case_file(_case(tmp_path, stl, "y_from_m = 0.2\ny_to_m = 0.9\n"
                                "hinge_fraction = 0.7", "flapish.toml"))
    _, warns = case_with_geometry_controls(hand, wing)
    assert len(warns) == 1 and "body 5" in warns[0]


PARSE_BAD = {
    "span given as well": ("geometry_body = 5\ny_from_m = 1.0", "control_surface[1].y_from_m"),
    "hinge given as well": ("geometry_body = 5\nhinge_fraction = 0.7",
                            "control_surface[1].hinge_fraction"),
    "body number zero": ("geometry_body = 0", "control_surface[1].geometry_body"),
    "body number not an integer": ('geometry_body = "five"', "control_surface[1].geometry_body"),
}


@pytest.mark.parametrize("label", sorted(PARSE_BAD))
def test_bad_geometry_body_keys_name_the_key(label, tmp_path, stl):
    surface, key = PARSE_BAD[label]
    case = _case(tmp_path, stl, surface)
    with pytest.raises(CaseError) as e:
        read_case_file(case)
    msg = str(e.value)
    assert "\n" not in msg and f"{case}: {key}: " in msg, msg


def test_body_that_is_not_a_control_surface_one_line_exit_1_nothing_written(tmp_path, stl):
    # known only once the CAD is read: the run refuses it before writing anything
    case = _case(tmp_path, stl, "geometry_body = 2")
    out = tmp_path / "out"
    lines = [refused_run(case, out)]  # exit 1, one line, no traceback
    assert "control_surface[1].geometry_body: body 2 is not a control surface" in lines[0]
    assert str(case) in lines[0] and "bodies found: 5" in lines[0], lines[0]
    assert not out.exists()


def test_parse_refuses_a_body_named_twice(tmp_path, stl):
    text = CASE.format(stl=Path(stl).as_posix(), surface="geometry_body = 5")
    text = text.replace("[rolling]", '[[control_surface]]\nname = "ail2"\nkind = "aileron"\n'
                                     "geometry_body = 5\n[rolling]")
    p = tmp_path / "twice.toml"
    p.write_text(text)
    with pytest.raises(CaseError, match=r"control_surface\[2\]\.geometry_body: body 5 is "
                                        r"already 'aileron'"):
        read_case_file(p)


def test_cad_surface_beyond_linear_theory_warns_once(tmp_path, stl):
    # a deflection limit above 30 deg can change a number (linear theory overpredicts): one
    # warning naming the surface's key, also for a surface taken from the CAD
    text = CASE.format(stl=Path(stl).as_posix(), surface=f"geometry_body = {AILERON_BODY}")
    text = text.replace("delta_min_deg = -20.0\ndelta_max_deg = 20.0",
                        "delta_min_deg = -35.0\ndelta_max_deg = 35.0")
    text = text.replace('methods = ["lattice"]', 'methods = ["lattice"]\nroll_states = ["initial"]')
    p = tmp_path / "wide.toml"
    p.write_text(text)
    result = compute(read_case_file(p))
    hits = [m.text for m in result.messages
            if m.text.startswith("control_surface.aileron.delta_max_deg")]
    assert len(hits) == 1 and "35 deg exceeds 30 deg" in hits[0], hits
    assert {c.kind for c in result.cases if c.port_loads is not None} == {"rolling_initial"}


def test_a_hinge_that_varies_along_the_span_becomes_a_hinge_table(wing):
    """A CAD surface whose hinge fraction spreads more than 0.5 % c (e.g. a constant-chord
    aileron on a tapered wing) keeps its hinge per station; its rolling power lies between
    those of the constant hinges at the two ends of the spread (a larger control-surface chord
    gives more, thin-airfoil theory: Glauert's tau grows as the hinge moves forward)."""
    (rec,) = wing.control_surfaces
    h = np.linspace(0.70, 0.80, len(rec.stations))
    varied = dataclasses.replace(wing, control_surfaces=(dataclasses.replace(
        rec, hinge_x_over_c=h),))
    spec = ControlsSpec(from_geometry=(GeometrySurface(0, "ail", "aileron", 5,
                                                       mode="antisymmetric"),))
    (surf,) = resolve_geometry_controls(spec, varied)[0].surfaces
    ys = wing.stations.y[list(rec.stations)]
    assert surf.hinge_table == tuple(zip(ys.tolist(), h.tolist()))
    assert surf.hinge_fraction == pytest.approx(0.75)

    def cl_delta(s):
        lat = build_lattice(wing.stations, n_span=16, n_chord=8, full_span=True, controls=[s])
        return ControlModel(AeroModel(lat), [s]).roll_derivatives("ail")[0]

    ends = [ControlSurface("ail", "aileron", surf.y_from_m, surf.y_to_m, f,
                           mode="antisymmetric") for f in (0.80, 0.70)]
    lo, mid, hi = cl_delta(ends[0]), cl_delta(surf), cl_delta(ends[1])
    assert 0 < lo < mid < hi
