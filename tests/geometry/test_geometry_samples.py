"""The bundled QM-36 Pellin samples against their design (pellin_design.json, written from the
NACA equations by sample_geometry/make_samples.py). Tolerances from issue 2.
"""

import json
import os

import numpy as np
import pytest

from geomload.geometry import load_wing
from helpers.validation import check
from helpers.wingfactory import expected_stations, naca_wing_mesh


@pytest.fixture(scope="module")
def design(sample_dir):
    with open(os.path.join(sample_dir, "pellin_design.json")) as f:
        return json.load(f)


@pytest.fixture(scope="module")
def stl_wing(sample_dir):
    return load_wing(os.path.join(sample_dir, "pellin_half_wing_mm.stl"), units="mm", n_stations=15)


DESIGN = "pellin_design.json (exact design of make_samples.py)"
DESIGN_TAPER = DESIGN + ", straight-taper formulas (Raymer ch. 4)"


def _taper_formulas(d):
    """S, AR and MAC from the design's primary values (semi-span, root chord, taper) by the
    straight-taper formulas (Raymer, Aircraft Design, ch. 4): S = s c_r (1 + l),
    AR = (2 s)^2 / S, MAC = 2/3 c_r (1 + l + l^2) / (1 + l). Computed here, not read from the
    derived entries of the design file."""
    s, cr, lam = d["semispan_m"], d["root_chord_m"], d["taper"]
    area = s * cr * (1 + lam)
    return area, (2 * s) ** 2 / area, 2.0 / 3.0 * cr * (1 + lam + lam**2) / (1 + lam)


def test_design_file_derived_values_follow_the_taper_formulas(design):
    # the design file's own derived entries agree with the formulas (straight taper, Raymer ch. 4)
    area, ar, mac = _taper_formulas(design)
    check(DESIGN_TAPER, "design file area S (m^2)", area, design["area_m2"], rel=1e-12)
    check(DESIGN_TAPER, "design file aspect ratio (-)", ar, design["aspect_ratio"], rel=1e-12)
    check(DESIGN_TAPER, "design file MAC (m)", mac, design["mac_m"], rel=1e-12)


def _planform_ok(pf, d, tol=0.005):
    # S, AR within 0.5 % (issue 2); straight-taper formulas (Raymer ch. 4) on the design's
    # semi-span, root chord and taper
    area, ar, mac = _taper_formulas(d)
    check(DESIGN_TAPER, "area S (m^2)", area, pf.area, rel=tol)
    check(DESIGN_TAPER, "aspect ratio (-)", ar, pf.aspect_ratio, rel=tol)
    check(DESIGN_TAPER, "MAC (m)", mac, pf.mac, rel=tol)
    check(DESIGN, "taper ratio (-)", d["taper"], pf.taper, rel=0.01)
    check(DESIGN, "LE sweep (deg)", d["sweep_le_deg"], pf.sweep_le_deg, abs=0.2)
    # c/4 line of dihedral 3 deg LE line with washout about the LE stays within 0.2 deg (design)
    check(DESIGN, "dihedral (deg)", d["dihedral_le_deg"], pf.dihedral_deg, abs=0.2)
    check(DESIGN, "washout (deg)", d["washout_deg"], pf.washout_deg, abs=0.1)


def check_worst(source, quantity, expected, measured, y, rel=0.0, abs=0.0):
    """Record (and assert) the worst station of an array check as one validation row."""
    e, m = np.broadcast_to(np.asarray(expected, float), np.shape(measured)), np.asarray(measured, float)
    k = int(np.argmax(np.abs(m - e) / (rel * np.abs(e) + abs)))
    check(source, f"{quantity}, worst station (y = {y[k]:.3f} m)", e[k], m[k], rel=rel, abs=abs)


def test_mm_stl_half_wing(stl_wing, design):
    mesh, frame, st, pf = stl_wing
    assert mesh.units == "mm" and not frame.full_span
    assert frame.span_axis == "+Y" and frame.up_axis == "+Z"
    _planform_ok(pf, design)
    check(DESIGN, "semi-span of the mm STL read with --units mm (m)", design["semispan_m"],
          st.semispan, abs=1e-6)


def test_mm_stl_equals_metre_model(stl_wing):
    # the same design built in memory in metres (wingfactory uses the same equations)
    _, _, st, pf = stl_wing
    mesh, d = naca_wing_mesh(n_chord=100, n_span=60)
    from geomload.geometry.frame import detect_frame
    from geomload.geometry.sections import cut_stations

    st_m = cut_stations(mesh, detect_frame(mesh), n=15)
    # internal consistency (no outside source): mm file read with --units mm == metre model
    assert np.allclose(st.y, st_m.y, atol=1e-6)
    assert np.allclose(st.chord, st_m.chord, rtol=1e-5)  # float32 mm storage
    assert np.allclose(st.twist_deg, st_m.twist_deg, atol=1e-3)
    ex = expected_stations(d, st.y)
    naca = "NACA Report 824 equations (the sample's design), farthest-point chord line"
    assert np.max(np.abs(st.chord / ex["chord"] - 1)) < 0.005
    check_worst(naca, "chord of the mm STL (m)", ex["chord"], st.chord, st.y, rel=0.005)
    assert np.max(np.abs(st.twist_deg - ex["twist"])) < 0.1
    check_worst(naca, "twist of the mm STL (deg)", ex["twist"], st.twist_deg, st.y, abs=0.1)


def test_full_span_yup_obj(sample_dir, design, stl_wing):
    mesh, frame, st, pf = load_wing(os.path.join(sample_dir, "pellin_full_wing_yup.obj"), n_stations=15)
    # CAD frame (X, Y, Z) = (x, z, -y): starboard along CAD -Z, up along CAD +Y
    assert frame.full_span and frame.span_axis == "-Z" and frame.up_axis == "+Y"
    assert frame.asymmetry < 1e-4
    _planform_ok(pf, design)
    st_h = stl_wing[2]
    # internal consistency (no outside source): the OBJ and the STL of one design agree
    assert np.allclose(np.interp(st_h.y, st.y, st.chord), st_h.chord, rtol=2e-3)


def test_step_reads_its_own_units(sample_dir, design, stl_wing):
    mesh, frame, st, pf = load_wing(os.path.join(sample_dir, "pellin_half_wing.step"), n_stations=15)
    # the STEP file declares millimetres; the reader honours that
    assert mesh.units == "file" and not any("warning" in n for n in mesh.notes)
    _planform_ok(pf, design)
    over = load_wing(os.path.join(sample_dir, "pellin_half_wing.step"), units="cm", n_stations=15)
    # units given: they override the file's millimetres (the coordinates are read as cm), and
    # the reader says so; 1 cm = 10 mm exactly (SI prefixes, BIPM SI Brochure)
    assert over[0].units == "cm" and any("overrides" in n for n in over[0].notes)
    check("SI prefixes (cm = 10 mm)", "span read in cm / span read in mm", 10.0,
          over[3].span / pf.span, rel=1e-6)
    st_h = stl_wing[2]
    # internal consistency (no outside source): the B-rep loft through 7 spline sections,
    # tessellated by the kernel, gives the STL's stations within the issue-2 tolerances
    assert np.max(np.abs(np.interp(st_h.y, st.y, st.chord) / st_h.chord - 1)) < 0.005
    assert np.max(np.abs(np.interp(st_h.y, st.y, st.twist_deg) - st_h.twist_deg)) < 0.1
