"""The control-surface, flaps, tail and c.g. keys written the same way as the rest of the case
file (a plain number in SI, degrees for an angle, or a text with its unit), the older keys ending
in their unit still read, and every error naming the key as the file writes it.

Unit factors, exact by definition: 1 in = 0.0254 m, 1 ft = 0.3048 m, so 1 ft^2 = 0.09290304 m^2
(NIST SP 811, Appendix B; the 1959 international yard and pound agreement); 1 rad = 180/pi deg
(SI Brochure, 9th ed., Table 8: the degree, pi/180 rad).
"""

from __future__ import annotations

import math
import re
import tomllib

import pytest
from helpers.paths import ROOT
from helpers.validation import check

from geomload.config import read_case_file, toml_value
from geomload.config.controls_parse import check_controls_against_wing
from geomload.errors import CaseError

SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"
NIST = "NIST SP 811 App. B (1959 yard and pound, exact)"
SI_BROCHURE = "SI Brochure 9th ed., Table 8: 1 deg = pi/180 rad (exact)"
# the sample's control keys ending in their unit -> the same value written with its unit
NEW_STYLE = (
    ("y_from_m = 1.15", 'y_from = "1150 mm"'), ("y_to_m = 1.70", 'y_to = "1.7 m"'),
    ("delta_min_deg = -18.0", 'delta_min = "-18 deg"'), ("delta_max_deg = 18.0", "delta_max = 18"),
    ("y_from_m = 0.15", "y_from = 0.15"), ("y_to_m = 1.10", 'y_to = "110 cm"'),
    ("delta_min_deg = 0.0", 'delta_min = "0 deg"'), ("delta_max_deg = 25.0", 'delta_max = "25 deg"'),
    ("deflection_deg = 20.0", 'deflection = "20 deg"'), ("area_m2 = 0.16", 'area = "1600 cm2"'),
    ("x_ac_m = 1.25", 'x_ac = "1250 mm"'), ("x_m = [0.10, 0.14]", 'x = ["100 mm", 0.14]'),
)


def _sample_text():
    text = SAMPLE.read_text(encoding="utf-8")
    geo = tomllib.loads(text)["geometry"]["file"]
    return text.replace(f'"{geo}"', toml_value(str((SAMPLE.parent / geo).resolve())), 1)


def _new_style():
    text = _sample_text()
    for old, new in NEW_STYLE:
        assert old in text, old
        text = text.replace(old, new, 1)
    return text


def _read(tmp_path, text, name="case.toml"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return read_case_file(p)


def test_control_keys_with_their_unit_read_as_the_older_keys(tmp_path):
    old = _read(tmp_path, _sample_text(), "old.toml").controls
    new = _read(tmp_path, _new_style(), "new.toml").controls
    # 1 mm = 1e-3 m, 1 cm = 1e-2 m exactly: a value in mm or cm reads as the same float as
    # the decimal value in metres
    assert new.surfaces == old.surfaces and new.tail == old.tail
    assert new.flaps == old.flaps and new.cg_x_m == old.cg_x_m


def test_control_lengths_areas_and_angles_in_other_units(tmp_path):
    text = (_new_style().replace('area = "1600 cm2"', 'area = "1.72 ft2"')
            .replace('x_ac = "1250 mm"', 'x_ac = "4.1 ft"')
            .replace('x = ["100 mm", 0.14]', 'x = ["3.94 in", "5.5 in"]')
            .replace('y_from = "1150 mm"', 'y_from = "45.3 in"')
            .replace('delta_min = "-18 deg"', 'delta_min = "-0.3 rad"')
            .replace("delta_max = 18", 'delta_max = "0.3 rad"'))
    c = _read(tmp_path, text).controls
    check(NIST, "tail area 1.72 ft^2 (m^2)", 1.72 * 0.09290304, c.tail.area_m2, rel=1e-15)
    check(NIST, "tail x_ac 4.1 ft (m)", 4.1 * 0.3048, c.tail.x_ac_m, rel=1e-15)
    check(NIST, "forward c.g. 3.94 in (m)", 0.100076, c.cg_x_m[0], rel=1e-14)
    check(NIST, "aft c.g. 5.5 in (m)", 0.1397, c.cg_x_m[1], rel=1e-14)
    ail = c.surface("aileron")
    check(NIST, "aileron inboard end 45.3 in (m)", 1.15062, ail.y_from_m, rel=1e-14)
    check(SI_BROCHURE, "aileron limit 0.3 rad (deg)", 0.3 * 180.0 / math.pi, ail.delta_max_deg,
          rel=1e-15)
    check(SI_BROCHURE, "aileron limit -0.3 rad (deg)", -0.3 * 180.0 / math.pi, ail.delta_min_deg,
          rel=1e-15)


def test_areas_take_every_way_of_writing_the_square():
    from geomload.config.quantities import parse_quantity

    for text in ("2 ft2", "2 ft^2", "2 ft\u00b2", "2FT2", "2ft^2"):
        check(NIST, f"area {text!r} (m^2)", 2 * 0.09290304, parse_quantity(text, "area"),
              rel=1e-15)
    check(NIST, "area 100 in2 (m^2)", 100 * 0.0254 ** 2, parse_quantity("100 in2", "area"),
          rel=1e-15)


def test_the_older_control_keys_read_without_a_warning(tmp_path):
    c = _read(tmp_path, _sample_text())
    assert c.warnings == ()
    assert c.key("control_surface[1].y_to") == "control_surface[1].y_to_m"
    assert c.key("tail.area") == "tail.area_m2" and c.key("cg.x") == "cg.x_m"
    assert _read(tmp_path, _new_style(), "new.toml").key("tail.area") == "tail.area"


@pytest.mark.parametrize("edit, msg", [
    (('area = "1600 cm2"', 'area = "16 kg"'),
     "tail.area: unit 'kg' is not one of m2, cm2, mm2, in2, ft2 (an area)"),
    (('x_ac = "1250 mm"', 'x_ac = "140 mm"'), "tail.x_ac: tail arm 0 m from the aft c.g."),
    (('x = ["100 mm", 0.14]', "x = [0.2, 0.1]"), "cg.x: must be [forward, aft]"),
    (('x = ["100 mm", 0.14]', 'x = ["100 mm", "fast"]'),
     "cg.x: wing-frame x positions: write a number and a unit"),
    (('deflection = "20 deg"', 'deflection = "0.6 rad"'),
     "flaps.deflection: 34.3775 deg is outside the surface limits 0..25 deg"),
    (('deflection = "20 deg"', 'deflection = "20 mm"'),
     "flaps.deflection: unit 'mm' is not one of deg, rad (an angle)"),
    (("delta_max = 18", "delta_max = 18\ndelta_max_deg = 18.0"),
     "control_surface[1].delta_max_deg: give either delta_max_deg or delta_max, not both"),
    (('y_to = "1.7 m"', 'y_tto = "1.7 m"'),
     "control_surface[1].y_tto: unknown key (did you mean 'y_to'?)"),
    (('delta_min = "-18 deg"', 'delta_min = "25 deg"'),
     "control_surface.aileron.delta_max: limits 25..18 deg must be finite with min <= max"),
])
def test_new_spelling_errors_name_the_key_as_written(tmp_path, edit, msg):
    text = _new_style()
    assert edit[0] in text, edit[0]
    with pytest.raises(CaseError) as exc:
        _read(tmp_path, text.replace(edit[0], edit[1], 1))
    assert msg in str(exc.value) and "\n" not in str(exc.value), str(exc.value)


@pytest.mark.parametrize("edit, msg", [
    (("area_m2 = 0.16", 'area_m2 = "0.16 m2"'),
     'tail.area_m2: its name fixes the unit (m2): give a number, or write the value with its '
     'unit as area = "0.16 m2"'),
    (("x_m = [0.10, 0.14]", 'x_m = ["100 mm", 0.14]'), "cg.x_m: its name fixes the unit (m)"),
    (("x_ac_m = 1.25", "x_ac_m = 0.14"), "tail.x_ac_m: tail arm 0 m from the aft c.g."),
    (("x_m = [0.10, 0.14]", "x_m = [0.14, 0.10]"), "cg.x_m: must be [forward, aft]"),
    (("deflection_deg = 20.0", "deflection_deg = 30.0"), "flaps.deflection_deg: 30 deg is outside"),
])
def test_older_spelling_errors_name_the_older_key(tmp_path, edit, msg):
    text = _sample_text()
    assert edit[0] in text, edit[0]
    with pytest.raises(CaseError) as exc:
        _read(tmp_path, text.replace(edit[0], edit[1], 1))
    assert msg in str(exc.value) and "\n" not in str(exc.value), str(exc.value)


@pytest.mark.parametrize("style, surface_key, cg_key", [
    ("old", "control_surface.aileron.y_from_m", "cg.x_m (aft)"),
    ("new", "control_surface.aileron.y_from", "cg.x (aft)"),
])
def test_checks_against_the_wing_name_the_key_as_written(tmp_path, style, surface_key, cg_key):
    """The checks made once the wing is read (span range, c.g. within the MAC) and their
    warnings use the file's spelling."""
    text = _sample_text() if style == "old" else _new_style()
    c = _read(tmp_path, text)
    # the sample wing: semi-span 1.8 m, MAC 0.28 m with its leading edge at x 0.056 m
    with pytest.raises(CaseError, match=rf"^{surface_key}: span range 1.15..1.7 m is not inside"):
        check_controls_against_wing(c.controls, 1.5, 0.28, 0.056)
    # a MAC leading edge at x -0.30 m puts the forward c.g. inside, the aft one 157 % MAC
    with pytest.raises(CaseError, match="^" + re.escape(f"{cg_key}: c.g. at 0.14 m is 157 % MAC")):
        check_controls_against_wing(c.controls, 1.8, 0.28, -0.30)
    wide = text.replace("delta_max_deg = 25.0" if style == "old" else 'delta_max = "25 deg"',
                        "delta_max_deg = 35.0" if style == "old" else 'delta_max = "35 deg"')
    warns = check_controls_against_wing(_read(tmp_path, wide, "wide.toml").controls, 1.8, 0.28,
                                        0.056)
    key = "delta_max_deg" if style == "old" else "delta_max"
    assert len(warns) == 1 and warns[0].startswith(f"control_surface.flap.{key}: deflection up "
                                                   "to 35 deg exceeds 30 deg"), warns


def test_a_surface_from_the_cad_names_geometry_body_and_refuses_a_span_key(tmp_path):
    text = _new_style().replace('y_from = "1150 mm"\ny_to = "1.7 m"\nhinge_fraction = 0.75',
                                "geometry_body = 2", 1)
    c = _read(tmp_path, text)
    assert ("control_surface.aileron.y_from_m", "control_surface.aileron.geometry_body") in \
        c.controls.key_names
    with pytest.raises(CaseError, match=r"control_surface\[1\]\.y_to: not allowed with "
                                        "geometry_body"):
        _read(tmp_path, text.replace("geometry_body = 2", 'geometry_body = 2\ny_to = "1.7 m"'),
              "both.toml")


@pytest.mark.parametrize("style, key", [("old", "tail.x_ac_m"), ("new", "tail.x_ac")])
def test_a_short_tail_arm_is_refused_before_any_case_runs(tmp_path, style, key):
    """The trim needs the tail at least 0.1 MAC aft of the c.g. (the trim's own limit): a
    shorter arm from the aft c.g. is refused once the MAC is known, naming the key as written."""
    text = _sample_text() if style == "old" else _new_style()
    text = text.replace("x_ac_m = 1.25" if style == "old" else 'x_ac = "1250 mm"',
                        "x_ac_m = 0.16" if style == "old" else 'x_ac = "160 mm"')
    c = _read(tmp_path, text)
    with pytest.raises(CaseError, match="^" + re.escape(f"{key}: tail arm 0.02 m from the aft "
                                                        "c.g. must be at least 0.1 MAC (0.028 m)")):
        check_controls_against_wing(c.controls, 1.8, 0.28, 0.056)
    check_controls_against_wing(c.controls, 1.8, 0.19, 0.056)  # 0.02 m >= 0.1 x 0.19 m: accepted


def test_the_whole_sample_in_the_one_way_of_writing_units_reads_the_same(tmp_path):
    """Every key of the sample that ends in its unit, written instead as the key for its
    quantity with the value's unit: the records are the same floats (1 m, 1 kg, 1 deg, 1 m2
    are the unit factors), no warning, and no key ending in a unit is left."""
    from test_case_units import NEW_STYLE as MASS_STYLE

    from geomload.config.quantities import SUFFIXED

    text = _sample_text()
    for old, new in MASS_STYLE + NEW_STYLE:
        assert old in text, old
        text = text.replace(old, new, 1)
    a, b = _read(tmp_path, _sample_text(), "old.toml"), _read(tmp_path, text, "new.toml")
    for f in ("aircraft", "wing_mass", "fuel_tanks", "spar", "envelope", "load_cases",
              "structure", "lattice", "ultimate_factor", "warnings"):
        assert getattr(a, f) == getattr(b, f), f
    assert [(p.name, p.mass, p.position.tolist()) for p in a.point_masses] == \
        [(p.name, p.mass, p.position.tolist()) for p in b.point_masses]
    assert a.controls.surfaces == b.controls.surfaces and a.controls.tail == b.controls.tail
    assert a.controls.flaps == b.controls.flaps and a.controls.cg_x_m == b.controls.cg_x_m
    data = tomllib.loads(text)
    left = [f"{tab}.{old}" for (tab, old) in SUFFIXED for t in
            (data.get(tab) if isinstance(data.get(tab), list) else [data.get(tab) or {}])
            if old in t]
    assert left == [] and b.warnings == ()
