"""The TOML case file: parsing, SI conversion and key-named validation errors.

Unit factors: international knot = 1852 m / 3600 s and international foot = 0.3048 m (both
exact by definition, NIST SP 811). EAS/TAS: v_tas = v_eas sqrt(rho0 / rho) (standard
definition of equivalent airspeed), checked with the registry atmosphere package `ambiance`
(U.S. Standard Atmosphere 1976) as the reference density.
"""

import math
import re

import numpy as np
import pytest
from ambiance import Atmosphere

from geomload.case import airspeeds, check_against_span, load_case, template
from geomload.errors import CaseError

BASE = """\
title = "QM-36 Pellin test case"
[geometry]
file = "wing.stl"
[aircraft]
gross_mass_kg = 36.0
cl_max = 1.3
[wing_mass]
total_kg = 4.0
[[point_mass]]
name = "boom"
mass_kg = 1.5
y_m = 0.6
x_m = 0.1
[[fuel_tank]]
name = "battery"
mass_kg = 3.0
y_from_m = 0.1
y_to_m = 0.9
[[load_case]]
name = "pull-up"
speed = 60.0
speed_unit = "kt"
speed_type = "TAS"
altitude = 5000
altitude_unit = "ft"
load_factor = 3.8
"""


def write(tmp_path, text, name="case.toml"):
    (tmp_path / "wing.stl").write_text("solid x\nendsolid x\n")
    p = tmp_path / name
    p.write_text(text)
    return p


def error(tmp_path, text):
    with pytest.raises(CaseError) as exc:
        load_case(write(tmp_path, text))
    msg = str(exc.value)
    assert "\n" not in msg and "case.toml" in msg  # one line, names the file
    return msg


def test_base_case_loads_in_si(tmp_path):
    c = load_case(write(tmp_path, BASE))
    lc = c.load_cases[0]
    assert lc.speed_m_s == pytest.approx(60.0 * 1852 / 3600, rel=1e-15)  # kt, exact factor
    assert lc.altitude_m == pytest.approx(5000 * 0.3048, rel=1e-15)  # ft, exact factor
    assert lc.speed_type == "TAS" and lc.lift_share == 1.0
    assert c.geometry.file == str((tmp_path / "wing.stl").resolve())  # relative to the case file
    assert c.point_masses[0].position.tolist() == [0.1, 0.6, 0.0]
    # default factor of safety 1.5 (14 CFR 23.303, from memory; VALIDATION.md 10)
    assert c.fuel_mass_kg == 3.0 and c.ultimate_factor == 1.5


def test_eas_and_tas_conversion(tmp_path):
    c = load_case(write(tmp_path, BASE))
    rho = float(Atmosphere(c.load_cases[0].altitude_m).density[0])
    v_eas, v_tas = airspeeds(c.load_cases[0], lambda h: (float(Atmosphere(h).density[0]), 340.0))
    assert v_tas == c.load_cases[0].speed_m_s  # the case gives TAS
    # v_eas = v_tas sqrt(rho / rho0), rho0 = 1.225 kg/m^3 (definition of EAS; rho from ambiance)
    # (rho0 tabulated to five digits, 1.2250: agreement to 1e-7)
    assert v_eas == pytest.approx(v_tas * math.sqrt(rho / 1.225), rel=1e-7)


def test_template_parses_and_loads(tmp_path):
    text = template("wing.stl")
    c = load_case(write(tmp_path, text))
    assert c.load_cases[0].name == "pull-up" and c.envelope is None
    # uncommenting the optional point mass, fuel tank, reference and envelope blocks still loads
    keep = ("table", "cg_chord_fraction", "units", "span_axis", "up_axis", 'mass = "22',
            "fuel_fraction")
    lines = []
    for line in text.splitlines():
        m = re.match(r"# ((\[|[a-z_]+ = ).*)", line)
        lines.append(m.group(1) if m and not any(line.startswith("# " + k) for k in keep) else line)
    full = load_case(write(tmp_path, "\n".join(lines) + "\n", "full.toml"))
    assert full.envelope.category == "custom" and full.envelope.n_neg == -2.0
    assert full.point_masses[0].name == "servo" and full.fuel_tanks[0].mass_kg == 2.0
    assert full.moment_reference.tolist() == [0.08, 0.0, 0.0]
    assert full.point_masses[0].position.tolist() == pytest.approx([0.12, 0.8, 0.0], rel=1e-15)
    assert full.spar.rib_y_m == (0.0, 0.3, 0.6)
    # the control, flaps, tail and c.g. blocks in the same way of writing units
    ctl = full.controls
    assert [c.name for c in ctl.surfaces] == ["aileron", "flap"]
    # 1 mm = 1e-3 m exactly (SI): "1150 mm" reads as the float of 1.15
    assert (ctl.surfaces[0].y_from_m, ctl.surfaces[0].delta_min_deg) == (1.15, -18.0)
    assert ctl.flaps.deflection_deg == 20.0 and ctl.rolling.category == "normal"
    assert ctl.tail.area_m2 == 0.16 and ctl.cg_x_m == (0.1, 0.14)
    assert full.warnings == ()


def test_template_alternatives_in_the_cad_frame_load(tmp_path):
    """The template's indented alternatives (CAD-frame point mass and tank ends, spar points
    and ribs) switched on instead of the wing-frame keys they replace: the case reads, the CAD
    positions wait for the wing."""
    text, table, lines = template("wing.stl"), "", []
    replaced = {"point_mass": ("x", "y", "z"), "fuel_tank": ("y_from", "y_to"),
                "spar": ("chord_fraction",)}
    for line in text.splitlines():
        head = re.match(r"#? ?\[\[?([a-z_]+)", line)
        table = head.group(1) if head else table
        alt = re.match(r"#   ([a-z_]+ = .*?)(\s+#.*)?$", line)
        main = re.match(r"(# )?(([a-z_]+) = .*)", line)
        if alt and table in replaced:
            lines.append(alt.group(1))
        elif main and main.group(3) in replaced.get(table, ()):
            continue
        elif table in ("point_mass", "fuel_tank") and line.startswith("# ") and (
                main or line.startswith("# [")):
            lines.append(line[2:])
        else:
            lines.append(line)
    c = load_case(write(tmp_path, "\n".join(lines) + "\n"))
    assert [p.key for p in c.cad_positions] == ["point_mass[1]", "fuel_tank[1]"]
    assert c.cad_positions[0].values == ((512.0, -830.5, 40.2),)
    assert c.spar.line == ((0.0, 0.09, 0.0), (1.5, 0.12, 0.08))


def test_template_escapes_the_geometry_path():
    assert 'file = "C:\\\\cad\\\\wing \\"v2\\".stl"' in template('C:\\cad\\wing "v2".stl')


def test_unknown_key_suggests_the_closest(tmp_path):
    msg = error(tmp_path, BASE.replace("gross_mass_kg", "gross_mas_kg"))
    # a misspelt required key is reported as unknown with the suggestion, not as "missing"
    assert "aircraft.gross_mas_kg: unknown key (did you mean 'gross_mass_kg'?)" in msg
    msg = error(tmp_path, BASE.replace("load_factor", "load_factr"))
    assert "load_case[1].load_factr: unknown key (did you mean 'load_factor'?)" in msg
    msg = error(tmp_path, BASE.replace('name = "battery"', 'name = "battery"\ncg_chord_fractoin = 0.3'))
    assert "fuel_tank[1].cg_chord_fractoin: unknown key (did you mean 'cg_chord_fraction'?)" in msg
    msg = error(tmp_path, BASE.replace("[geometry]", "[geomtry]"))
    assert "geomtry: unknown key (did you mean 'geometry'?)" in msg
    msg = error(tmp_path, BASE + "[analysis]\nultimate_factr = 1.5\n")
    assert "analysis.ultimate_factr: unknown key (did you mean 'ultimate_factor'?)" in msg


def test_missing_wrong_type_and_unit(tmp_path):
    assert "load_case[1].load_factor: missing" in error(tmp_path, BASE.replace("load_factor = 3.8", ""))
    assert "aircraft: missing" in error(tmp_path, BASE.replace("[aircraft]\ngross_mass_kg = 36.0\ncl_max = 1.3\n", ""))
    assert "must be a number" in error(tmp_path, BASE.replace("gross_mass_kg = 36.0", 'gross_mass_kg = "36"'))
    msg = error(tmp_path, BASE.replace('speed_unit = "kt"', 'speed_unit = "knots"'))
    assert "load_case[1].speed_unit: 'knots' is not one of 'm/s', 'kt'" in msg
    assert "altitude_unit" in error(tmp_path, BASE.replace('altitude_unit = "ft"', 'altitude_unit = "km"'))
    assert "speed_type" in error(tmp_path, BASE.replace('speed_type = "TAS"', 'speed_type = "CAS"'))


def test_bad_masses(tmp_path):
    assert "wing_mass.total_kg: must be > 0, got -4" in error(tmp_path, BASE.replace("total_kg = 4.0", "total_kg = -4.0"))
    assert "point_mass[1].mass_kg: must be > 0, got 0" in error(tmp_path, BASE.replace("mass_kg = 1.5", "mass_kg = 0"))
    assert "point_mass[1].y_m: must be > 0" in error(tmp_path, BASE.replace("y_m = 0.6", "y_m = -0.6"))
    assert "fuel_tank[1].y_to_m" in error(tmp_path, BASE.replace("y_to_m = 0.9", "y_to_m = 0.05"))
    # 4 + 2 x 30 + 3 kg of wing, point and fuel masses cannot fly at 36 kg
    assert "aircraft.gross_mass_kg" in error(tmp_path, BASE.replace("mass_kg = 1.5", "mass_kg = 30.0"))
    assert "above aircraft.gross_mass_kg" in error(tmp_path, BASE + "mass_kg = 40.0\n")


def test_point_mass_outside_the_span(tmp_path):
    c = load_case(write(tmp_path, BASE))
    check_against_span(c, 1.8)  # inside: no error
    with pytest.raises(CaseError, match=r"point_mass\[1\]\.y_m: 0.6 m is outside the span"):
        check_against_span(c, 0.5)
    with pytest.raises(CaseError, match=r"fuel_tank\[1\]\.y_to_m: 0.9 m is outside the span"):
        check_against_span(c, 0.8)  # the point mass at 0.6 m fits, the tank to 0.9 m does not


def test_altitude_beyond_20_km(tmp_path):
    # 70,000 ft = 21,336 m is above the 20 km the ISA model covers
    msg = error(tmp_path, BASE.replace("altitude = 5000", "altitude = 70000"))
    assert "load_case[1].altitude: 21336 m is outside 0..20000 m" in msg


def test_invalid_toml_names_the_line(tmp_path):
    msg = error(tmp_path, BASE.replace('name = "boom"', 'name = "boom'))
    assert "invalid TOML" in msg and "line 10" in msg


def test_empty_and_missing_files(tmp_path):
    assert "case file is empty" in error(tmp_path, "  \n\n")
    with pytest.raises(CaseError, match="cannot read case file"):
        load_case(tmp_path / "nope.toml")
    msg = error(tmp_path, BASE.replace('file = "wing.stl"', 'file = "other.stl"'))
    assert "geometry.file: geometry file not found" in msg


def test_envelope_section(tmp_path):
    env = """[envelope]
category = "custom"
n_pos = 4.0
n_neg = -2.0
cl_max_pos = 1.3
cl_max_neg = 0.8
speed_unit = "kt"
v_cruise = 55.0
v_dive = 75.0
altitudes = [0, 5000]
altitude_unit = "ft"
min_mass_kg = 30.0
"""
    c = load_case(write(tmp_path, BASE + env))
    assert c.envelope.v_dive == pytest.approx(75 * 1852 / 3600)  # kt, exact factor (NIST SP 811)
    assert c.envelope.altitudes_m == pytest.approx((0.0, 1524.0))  # 5000 ft x 0.3048 m/ft exact
    assert "envelope.category: 'commuter' is not one of" in error(
        tmp_path, BASE + env.replace('"custom"', '"commuter"'))
    assert "envelope.cl_max_neg: must be > 0" in error(tmp_path, BASE + env.replace("cl_max_neg = 0.8", "cl_max_neg = 0"))
    assert "envelope.v_maneuver: speeds out of order" in error(tmp_path, BASE + env + "v_maneuver = 80.0\n")
    assert "envelope.v_cruise: speeds out of order" in error(tmp_path, BASE + env.replace("v_dive = 75.0", "v_dive = 50.0"))
    assert "envelope.min_mass_kg: 40 kg is above aircraft.gross_mass_kg" in error(
        tmp_path, BASE + env.replace("min_mass_kg = 30.0", "min_mass_kg = 40.0"))
    assert "envelope.n_pos: required" in error(tmp_path, BASE + env.replace("n_pos = 4.0\n", ""))
    assert "envelope.n_pos: only for category 'custom'" in error(
        tmp_path, BASE + env.replace('"custom"', '"normal"'))


def test_spar_line_and_table_mass(tmp_path):
    text = BASE.replace("[wing_mass]\ntotal_kg = 4.0\n",
                        '[wing_mass]\ndistribution = "table"\ntable = [[0.0, 1.2], [1.5, 0.4]]\n')
    text += "[spar]\nline = [[0.0, 0.08, 0.0], [1.5, 0.12, 0.05]]\n"
    c = load_case(write(tmp_path, text))
    # the table is kg/m per side, linear between rows: both sides carry twice its trapezoid
    # integral, 2 x (1.2 + 0.4) / 2 x 1.5 m = 2.4 kg (exact for a linear table)
    assert c.wing_mass.total_kg == pytest.approx(2 * 0.5 * (1.2 + 0.4) * 1.5)
    assert c.spar.chord_fraction is None and np.array(c.spar.line).shape == (2, 3)
    assert "omit it" in error(tmp_path, text.replace('distribution = "table"', 'distribution = "table"\ntotal_kg = 3.0'))
    assert "give either chord_fraction or line" in error(tmp_path, text + "chord_fraction = 0.3\n")
