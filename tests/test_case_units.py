"""Case-file values written with their unit ("52 kt", "1500 ft") and the renamed keys (old
spellings still read, with a warning naming the new key).

Unit factors, exact by definition (NIST SP 811): knot = 1852 m / 3600 s, foot = 0.3048 m,
statute mile = 1609.344 m, km/h = 1000 m / 3600 s.
"""

import pytest

from geomload.config import read_case_file
from geomload.errors import CaseError
from validation import check

HEAD = """\
[geometry]
file = "wing.stl"
[aircraft]
gross_mass_kg = 36.0
{aircraft}
[[load_case]]
name = "pull-up"
{speed}
speed_type = "TAS"
{altitude}
load_factor = 3.8
"""


def read(tmp_path, aircraft="section_cl_max = 1.3", speed='speed = "52 kt"',
         altitude='altitude = "1500 ft"', extra=""):
    (tmp_path / "wing.stl").write_text("solid x\nendsolid x\n")
    p = tmp_path / "case.toml"
    p.write_text(HEAD.format(aircraft=aircraft, speed=speed, altitude=altitude) + extra)
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
