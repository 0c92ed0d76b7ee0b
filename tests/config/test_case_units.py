"""Case-file values written with their unit ("52 kt", "1500 ft", "1320 lb", "350 mm") and the
renamed keys (old spellings still read: keys ending in their unit as they were, the others with
a warning naming the new key).

Unit factors, exact by definition (NIST SP 811, Appendix B; the 1959 international yard and
pound agreement): knot = 1852 m / 3600 s, foot = 0.3048 m, inch = 0.0254 m, pound = 0.45359237
kg, statute mile = 1609.344 m, km/h = 1000 m / 3600 s.
"""

from helpers.paths import ROOT
import numpy as np
import pytest

from geomload.config import read_case_file
from geomload.errors import CaseError
from helpers.validation import check

HEAD = """\
[geometry]
file = "wing.stl"
[aircraft]
{gross}
{aircraft}
[[load_case]]
name = "pull-up"
{speed}
speed_type = "TAS"
{altitude}
load_factor = 3.8
"""


def read(tmp_path, aircraft="section_cl_max = 1.3", speed='speed = "52 kt"',
         altitude='altitude = "1500 ft"', extra="", gross="gross_mass_kg = 36.0"):
    (tmp_path / "wing.stl").write_text("solid x\nendsolid x\n")
    p = tmp_path / "case.toml"
    p.write_text(HEAD.format(aircraft=aircraft, speed=speed, altitude=altitude, gross=gross) + extra)
    return read_case_file(p)


@pytest.mark.parametrize("text,expected", [
    ("52 kt", 52 * 1852 / 3600), ("90 km/h", 25.0), ("56 mph", 56 * 1609.344 / 3600),
    ("25 m/s", 25.0), ("25m/s", 25.0)])
def test_speed_with_its_unit(tmp_path, text, expected):
    c = read(tmp_path, speed=f'speed = "{text}"')
    check("NIST SP 811 (exact unit definitions)", f"speed {text} (m/s)", expected,
          c.load_cases[0].speed_m_s, rel=1e-12)
    assert c.warnings == ()


def test_altitudes_with_their_unit(tmp_path):
    c = read(tmp_path, extra='[envelope]\ncategory = "normal"\nwing_cn_max_pos = 1.3\n'
                             'wing_cn_max_neg = 0.8\naltitudes = ["0 m", "5000 ft"]\n'
                             'gust_cruise = "50 ft/s"\n')
    check("NIST SP 811: foot = 0.3048 m", "altitude 1500 ft (m)", 457.2,
          c.load_cases[0].altitude_m, rel=1e-12)
    assert c.envelope.altitudes_m == pytest.approx((0.0, 1524.0), rel=1e-12)
    assert c.envelope.gust_cruise_m_s == pytest.approx(15.24, rel=1e-12)
    assert c.envelope.cl_max_pos == 1.3 and c.envelope.cl_max_neg == 0.8


def test_old_keys_still_read_with_a_warning(tmp_path):
    c = read(tmp_path, aircraft="cl_max = 1.3\ncd0 = 0.01", speed='speed = 52\nspeed_unit = "kt"',
             altitude='altitude = 1500\naltitude_unit = "ft"',
             extra='[envelope]\ncategory = "normal"\ncl_max_pos = 1.3\ncl_max_neg = 0.8\n')
    assert c.aircraft.cl_max == 1.3 and c.aircraft.cd0 == 0.01
    assert c.load_cases[0].speed_m_s == pytest.approx(52 * 1852 / 3600, rel=1e-12)
    assert c.load_cases[0].altitude_m == pytest.approx(457.2, rel=1e-12)
    w = " | ".join(c.warnings)
    for new in ("aircraft.section_cl_max", "aircraft.section_cd0", "envelope.wing_cn_max_pos",
                "envelope.wing_cn_max_neg"):
        assert new in w, new
    assert 'speed = "52 kt"' in w and "speed_unit still works" in w


@pytest.mark.parametrize("aircraft,speed,msg", [
    ("cl_max = 1.3\nsection_cl_max = 1.3", 'speed = "52 kt"', "aircraft.cl_max: give either"),
    ("section_cl_max = 1.3", 'speed = "52 kt"\nspeed_unit = "kt"', "drop speed_unit"),
    ("section_cl_max = 1.3", 'speed = "52 knots"', "load_case[1].speed: unit 'knots'"),
    ("section_cl_max = 1.3", 'speed = "fast"', "write a number and a unit"),
    ("section_cl_max = 1.3", 'speed = "52 ft"', "unit 'ft' is not one of"),
])
def test_unit_text_errors_name_the_key(tmp_path, aircraft, speed, msg):
    with pytest.raises(CaseError) as exc:
        read(tmp_path, aircraft=aircraft, speed=speed)
    assert msg in str(exc.value) and "\n" not in str(exc.value)


def test_batch_variant_of_a_value_with_its_unit_keeps_the_unit():
    from geomload.batch.variants import _typed

    assert _typed("load_case[1].speed", "40", "30 kt", 40) == "40 kt"
    assert _typed("title", "x", "QM-36", "x") == "x"


MASSES = """\
[wing_mass]
mass = {wing}
[[point_mass]]
name = "pod"
mass = {pod}
x = {x}
y = {y}
z = {z}
[[fuel_tank]]
name = "tank"
mass = {tank}
y_from = {y_from}
y_to = {y_to}
[spar]
points = [[{sx}, 0.0, 0.0], [0.1, {sy}, 0.0]]
rib_y = [0.0, {rib}]
[moment_reference]
x = {rx}
"""
TEXT = dict(wing='"6.6 lb"', pod='"1320 lb"', x='"4 in"', y='"350 mm"', z='"-2 in"',
            tank='"2.5 kg"', y_from='"0.5 ft"', y_to='"3 ft"', sx='"80 mm"', sy='"5 ft"',
            rib='"4.5 ft"', rx='"3.5 in"')


def test_masses_and_lengths_with_their_unit(tmp_path):
    # exact by definition (NIST SP 811, App. B; 1959 international yard and pound agreement):
    # 1 lb = 0.45359237 kg, 1 in = 0.0254 m, 1 ft = 0.3048 m, 1 mm = 1e-3 m
    c = read(tmp_path, gross='gross_mass = "3000 lb"', extra=MASSES.format(**TEXT))
    src = "NIST SP 811 App. B (1959 yard and pound, exact)"
    check(src, "gross mass 3000 lb (kg)", 3000 * 0.45359237, c.aircraft.gross_mass_kg, rel=1e-15)
    check(src, "point mass 1320 lb (kg)", 598.7419284, c.point_masses[0].mass, rel=1e-15)
    check(src, "wing mass 6.6 lb (kg)", 6.6 * 0.45359237, c.wing_mass.total_kg, rel=1e-15)
    assert c.point_masses[0].position == pytest.approx([0.1016, 0.35, -0.0508], rel=1e-15)
    check(src, "tank end 3 ft (m)", 0.9144, c.fuel_tanks[0].y_to_m, rel=1e-15)
    assert c.fuel_tanks[0].y_from_m == pytest.approx(0.1524, rel=1e-15)
    assert np.array(c.spar.line) == pytest.approx(np.array([[0.0, 0.08, 0.0], [1.524, 0.1, 0.0]]),
                                                  rel=1e-15)  # (y, x, z) rows
    assert c.spar.rib_y_m == pytest.approx((0.0, 1.3716), rel=1e-15)
    check(src, "moment reference x 3.5 in (m)", 0.0889, c.moment_reference[0], rel=1e-15)
    assert c.warnings == ()


def test_older_spellings_read_the_same(tmp_path):
    # a key ending in its unit takes a number in that unit; a plain number is SI (kg, m)
    new = read(tmp_path, gross="gross_mass = 700.0", extra=MASSES.format(
        wing=3.0, pod=1.5, x=0.1, y=0.35, z=0.0, tank=2.5, y_from=0.15, y_to=0.9, sx=0.08,
        sy=1.5, rib=1.3, rx=0.09))
    old_text = (MASSES.replace("mass = {wing}", "total_kg = {wing}")
                .replace("mass = {pod}", "mass_kg = {pod}")
                .replace("mass = {tank}", "mass_kg = {tank}")
                .replace("x = {x}", "x_m = {x}").replace("y = {y}", "y_m = {y}")
                .replace("z = {z}", "z_m = {z}").replace("y_from = ", "y_from_m = ")
                .replace("y_to = ", "y_to_m = ").replace("rib_y = ", "rib_y_m = ")
                .replace("x = {rx}", "x_m = {rx}")
                .replace("points = [[{sx}, 0.0, 0.0], [0.1, {sy}, 0.0]]",
                         "line = [[0.0, {sx}, 0.0], [{sy}, 0.1, 0.0]]"))
    old = read(tmp_path, gross="gross_mass_kg = 700.0", extra=old_text.format(
        wing=3.0, pod=1.5, x=0.1, y=0.35, z=0.0, tank=2.5, y_from=0.15, y_to=0.9, sx=0.08,
        sy=1.5, rib=1.3, rx=0.09))
    assert old.aircraft == new.aircraft and old.wing_mass == new.wing_mass
    assert old.fuel_tanks == new.fuel_tanks and old.spar == new.spar
    assert old.point_masses[0].position.tolist() == new.point_masses[0].position.tolist()
    assert old.moment_reference.tolist() == new.moment_reference.tolist()
    # only the spar line's older row order is worth a warning: the unit suffixes are exact
    assert len(old.warnings) == 1 and "spar.line" in old.warnings[0]
    assert old.key("point_mass[1].y") == "point_mass[1].y_m"


@pytest.mark.parametrize("edit,msg", [
    (("pod", '"3 m"'), "point_mass[1].mass: unit 'm' is not one of kg, lb (a mass)"),
    (("y", '"35 cm/s"'), "point_mass[1].y: unit 'cm/s' is not one of m, cm, mm, in, ft"),
    (("y_to", '"3 yd"'), "fuel_tank[1].y_to: unit 'yd' is not one of m, cm, mm, in, ft"),
    (("rib", '"1 mi"'), "spar.rib_y: spanwise positions (wing-frame y): unit 'mi' is not one of"),
    (("sy", '"fast"'), "spar.points: [x, y, z] points: write a number and a unit"),
])
def test_a_wrong_unit_names_the_key_and_the_units(tmp_path, edit, msg):
    with pytest.raises(CaseError) as exc:
        read(tmp_path, gross="gross_mass = 700.0", extra=MASSES.format(**{**TEXT, edit[0]:
                                                                             edit[1]}))
    assert msg in str(exc.value) and "\n" not in str(exc.value), str(exc.value)


def test_a_key_ending_in_its_unit_refuses_another_unit(tmp_path):
    with pytest.raises(CaseError) as exc:
        read(tmp_path, gross='gross_mass_kg = "1500 lb"')
    assert ('aircraft.gross_mass_kg: its name fixes the unit (kg): give a number, or write the '
            'value with its unit as gross_mass = "1500 lb"') in str(exc.value)
    with pytest.raises(CaseError, match="give either gross_mass_kg or gross_mass, not both"):
        read(tmp_path, gross="gross_mass_kg = 700.0\ngross_mass = 700.0")


def test_flap_speeds_with_their_unit(tmp_path):
    import tomllib
    from pathlib import Path

    from geomload.config import toml_value

    sample = ROOT / "sample_geometry" / "pellin_case.toml"
    text = sample.read_text(encoding="utf-8")
    geo = tomllib.loads(text)["geometry"]["file"]
    text = text.replace(f'"{geo}"', toml_value(str((sample.parent / geo).resolve())), 1)
    assert "v_sf = 13.5" in text and "v_f = 25.0" in text
    p = tmp_path / "flaps.toml"
    p.write_text(text.replace("v_sf = 13.5", 'v_sf = "48.6 km/h"').replace(
        "v_f = 25.0", 'v_f = "55.923 mph"'), encoding="utf-8")
    flaps = read_case_file(p).controls.flaps
    # km/h = 1000 m / 3600 s, mph = 1609.344 m / 3600 s (NIST SP 811, exact)
    check("NIST SP 811 (exact unit definitions)", "v_sf 48.6 km/h (m/s)", 13.5, flaps.v_sf,
          rel=1e-12)
    check("NIST SP 811 (exact unit definitions)", "v_f 55.923 mph (m/s)",
          55.923 * 1609.344 / 3600, flaps.v_f, rel=1e-12)


NEW_STYLE = (  # the sample's keys ending in their unit, written the one way: value with its unit
    ("gross_mass_kg = 22.0", 'gross_mass = "22 kg"'), ("total_kg = 3.4", 'mass = "3.4 kg"'),
    ("mass_kg = 0.12", 'mass = "0.12 kg"'), ("y_m = 1.25", 'y = "1250 mm"'),
    ("x_m = 0.20", 'x = "200 mm"'), ("z_m = 0.06", 'z = "60 mm"'),
    ("mass_kg = 0.85", 'mass = "0.85 kg"'), ("y_m = 0.55", 'y = "550 mm"'),
    ("x_m = 0.10", 'x = "100 mm"'), ("z_m = -0.05", 'z = "-50 mm"'),
    ("mass_kg = 2.6", 'mass = "2.6 kg"'), ("y_from_m = 0.12", 'y_from = "120 mm"'),
    ("y_to_m = 0.80", 'y_to = "800 mm"'), ("min_mass_kg = 19.4", 'min_mass = "19.4 kg"'),
)


def test_the_sample_written_with_units_in_its_values_reads_the_same(tmp_path):
    import tomllib
    from pathlib import Path

    from geomload.config import toml_value

    sample = ROOT / "sample_geometry" / "pellin_case.toml"
    text = sample.read_text(encoding="utf-8")
    geo = tomllib.loads(text)["geometry"]["file"]
    text = text.replace(f'"{geo}"', toml_value(str((sample.parent / geo).resolve())), 1)
    new = text
    for old, value in NEW_STYLE:
        assert old in new, old
        new = new.replace(old, value, 1)
    (tmp_path / "old.toml").write_text(text, encoding="utf-8")
    (tmp_path / "new.toml").write_text(new, encoding="utf-8")
    a, b = read_case_file(tmp_path / "old.toml"), read_case_file(tmp_path / "new.toml")
    # 1 mm = 1e-3 m exactly by definition; the sample's values convert to the same floats
    assert a.aircraft == b.aircraft and a.wing_mass == b.wing_mass and a.envelope == b.envelope
    assert a.fuel_tanks == b.fuel_tanks and a.warnings == b.warnings == ()
    for p, q in zip(a.point_masses, b.point_masses):
        assert p.name == q.name and p.mass == q.mass
        assert p.position.tolist() == q.position.tolist()


def test_flying_masses_with_their_unit(tmp_path):
    c = read(tmp_path, speed='speed = "52 kt"\nmass = "70 lb"',
             extra='[envelope]\ncategory = "normal"\nwing_cn_max_pos = 1.3\n'
                   'wing_cn_max_neg = 0.8\nmin_mass = "60 lb"\n')
    # 1 lb = 0.45359237 kg exactly (NIST SP 811 App. B; 1959 yard and pound agreement)
    check("NIST SP 811 App. B (1959 yard and pound, exact)", "load case mass 70 lb (kg)",
          70 * 0.45359237, c.load_cases[0].mass_kg, rel=1e-15)
    check("NIST SP 811 App. B (1959 yard and pound, exact)", "envelope min mass 60 lb (kg)",
          60 * 0.45359237, c.envelope.min_mass_kg, rel=1e-15)
    with pytest.raises(CaseError, match=r"load_case\[1\]\.mass: 45\.3592 kg is above "
                                        r"aircraft\.gross_mass_kg \(36 kg\)"):
        read(tmp_path, speed='speed = "52 kt"\nmass = "100 lb"')


STRESS_SRC = "NIST SP 811 App. B.8: 1 psi = 6.894757 E+03 Pa (1 lbf/in^2)"


@pytest.mark.parametrize("sigma, tau, sigma_pa, tau_pa", [
    ('"480 MPa"', '"290 MPa"', 480e6, 290e6),
    ('"70 ksi"', '"42 ksi"', 70e3 * 6.894757e3, 42e3 * 6.894757e3),
    ('"0.48 GPa"', '"290000 kPa"', 480e6, 290e6),
])
def test_structure_allowables_with_their_unit(tmp_path, sigma, tau, sigma_pa, tau_pa):
    c = read(tmp_path, extra=f"[structure]\nsigma_allow = {sigma}\ntau_allow = {tau}\n")
    # NIST SP 811 gives the psi factor to 7 digits: 6.894757 E+03 Pa
    check(STRESS_SRC, f"sigma_allow {sigma} (Pa)", sigma_pa, c.structure.sigma_allow_Pa,
          rel=1e-7)
    check(STRESS_SRC, f"tau_allow {tau} (Pa)", tau_pa, c.structure.tau_allow_Pa, rel=1e-7)
    old = read(tmp_path, extra="[structure]\nsigma_allow_MPa = 480.0\ntau_allow_MPa = 290.0\n")
    assert (old.structure.sigma_allow_Pa, old.structure.tau_allow_Pa) == (480e6, 290e6)
    assert old.warnings == ()


@pytest.mark.parametrize("table, msg", [
    ("sigma_allow = 480.0\ntau_allow = 290.0",
     'structure.sigma_allow: write the value with its unit, e.g. sigma_allow = "480 MPa"'),
    ('sigma_allow_MPa = "480 MPa"\ntau_allow_MPa = 290.0',
     "structure.sigma_allow_MPa: its name fixes the unit (MPa)"),
    ('sigma_allow_MPa = 480.0', "structure.tau_allow_MPa: missing: give both sigma_allow_MPa "
                                "and tau_allow_MPa"),
    ('sigma_allow = "480 MPa"', "structure.tau_allow: missing: give both sigma_allow and "
                                "tau_allow"),
    ('sigma_allow = "-480 MPa"\ntau_allow = "290 MPa"',
     "structure.sigma_allow: must be > 0, got -480 MPa"),
    ('sigma_allow = "480 N"\ntau_allow = "290 MPa"',
     "structure.sigma_allow: unit 'N' is not one of Pa, kPa, MPa, GPa, psi, ksi (a stress)"),
])
def test_structure_allowable_errors_name_the_key_as_written(tmp_path, table, msg):
    with pytest.raises(CaseError) as exc:
        read(tmp_path, extra=f"[structure]\n{table}\n")
    assert msg in str(exc.value) and "\n" not in str(exc.value), str(exc.value)


def test_wing_mass_table_with_units(tmp_path):
    # 1 lb/ft = 0.45359237 kg / 0.3048 m, 1 in = 0.0254 m (NIST SP 811 App. B, exact)
    c = read(tmp_path, extra='[wing_mass]\ndistribution = "table"\n'
                             'table = [[0.0, "0.6 lb/ft"], ["36 in", 0.4]]\n')
    w = c.wing_mass
    check(NIST_LB, "table y 36 in (m)", 0.9144, w.table_y_m[1], rel=1e-15)
    check(NIST_LB, "table 0.6 lb/ft (kg/m)", 0.6 * 0.45359237 / 0.3048, w.table_kg_per_m[0],
          rel=1e-15)
    # both sides of a linear distribution: 2 x trapezoid (analytic)
    check("analytic: trapezoid, both sides", "wing mass from the table (kg)",
          2 * 0.5 * (0.6 * 0.45359237 / 0.3048 + 0.4) * 0.9144, w.total_kg, rel=1e-14)
    with pytest.raises(CaseError, match=r"wing_mass\.table: row 2: unit 'kg' is not one of "
                                        r"kg/m, lb/ft, lb/in \(a mass per length\)"):
        read(tmp_path, extra='[wing_mass]\ndistribution = "table"\n'
                             'table = [[0.0, 0.6], [0.9, "0.4 kg"]]\n')


NIST_LB = "NIST SP 811 App. B (1959 yard and pound, exact)"


@pytest.mark.parametrize("text, kind, decimal", [
    ("1150 mm", "length", 1.15), ("350 mm", "length", 0.35), ("110 cm", "length", 1.1),
    ("1600 cm2", "area", 0.16), ("7 mm", "length", 0.007), ("480 MPa", "stress", 4.8e8),
])
def test_a_metric_prefix_gives_the_float_of_the_decimal_value(text, kind, decimal):
    # SI prefixes are exact powers of ten (SI Brochure 9th ed., Table 7): the value in the
    # prefixed unit is the same number as the decimal value in the base unit
    from geomload.config.quantities import parse_quantity

    assert parse_quantity(text, kind) == decimal
