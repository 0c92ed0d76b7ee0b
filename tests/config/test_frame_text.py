"""Where the wing frame sits in the CAD model, as `inspect` prints it and `new-case` writes it:
a wing built at a known place and attitude in the CAD frame (p_cad = scale (R p_wing) + T,
analytic construction) must report the origin T in the CAD unit and the axes R."""

from __future__ import annotations

import os
import subprocess
import sys
import tomllib

import numpy as np
import pytest
from helpers.paths import ROOT
from helpers.validation import check
from helpers.wingfactory import design, wing_triangles, write_stl

# wing x -> CAD +Y, wing y (span) -> CAD -X, wing z -> CAD +Z: a right-handed turn about z
R = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
T_MM = np.array([250.0, -40.0, 75.0])  # where the root leading edge lies in the CAD file (mm)
LE_TOL_MM = 0.05  # the root leading edge and root plane of the faceted wing (80 panels round a
# 360 mm chord) lie within a few hundredths of a millimetre of the analytic ones (common
# practice, no source)


@pytest.fixture(scope="module")
def stl(tmp_path_factory):
    # symmetric section, no twist: the root leading edge is the design's origin
    d = design(code="0012", washout_deg=0.0, t_root=0.12, t_tip=0.12)
    t = wing_triangles(d) @ R.T * 1000.0 + T_MM
    return write_stl(tmp_path_factory.mktemp("frame") / "moved_wing.stl", t)


def test_origin_and_axes_in_cad_coordinates(stl):
    from geomload.config.frame_text import frame_origin
    from geomload.geometry import read_wing

    f = frame_origin(read_wing(stl, units="mm"))
    src = "analytic: wing built with p_cad = 1000 R p_wing + T (mm)"
    for i, c in enumerate("xyz"):
        check(src, f"wing-frame origin, CAD {c} (mm)", T_MM[i],
              f["origin_cad_in_cad_unit"][i], abs=LE_TOL_MM)
    assert f["cad_unit"] == "mm"
    assert f["wing_axes_in_cad"] == {"x": "+Y", "y": "-X", "z": "+Z"}


def _cli(*args, cwd=None):
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "geomload", *map(str, args)], cwd=cwd,
                          capture_output=True, text=True, env=env, timeout=300)


def test_inspect_prints_the_origin_and_new_case_writes_it(stl, tmp_path):
    r = _cli("inspect", stl, "--units", "mm")
    assert r.returncode == 0, r.stderr
    lines = r.stdout.splitlines()
    at = next(i for i, ln in enumerate(lines) if ln.startswith("Wing frame in the CAD model"))
    assert "(CAD unit mm)" in lines[at]
    origin = lines[at + 1]
    assert origin.startswith("  origin (root leading edge, on the root / symmetry plane): x = ")
    xyz = [float(p.split("=")[1].split()[0].rstrip(",")) for p in origin.split(": ", 1)[1]
           .split(", ")]
    for i, c in enumerate("xyz"):
        check("analytic: wing built with p_cad = 1000 R p_wing + T (mm)",
              f"inspect: wing-frame origin, CAD {c} (mm)", T_MM[i], xyz[i], abs=LE_TOL_MM)
    assert origin.endswith(" mm")
    assert lines[at + 2:at + 5] == ["  wing x (aft) along CAD +Y",
                                    "  wing y (span, starboard) along CAD -X",
                                    "  wing z (up) along CAD +Z"]
    r = _cli("new-case", stl, "--units", "mm", "-o", tmp_path / "case.toml")
    assert r.returncode == 0, r.stderr
    text = (tmp_path / "case.toml").read_text(encoding="utf-8")
    assert f"#   {origin.strip()}" in text and "#   wing y (span, starboard) along CAD -X" in text
    assert tomllib.loads(text)["geometry"]["units"] == "mm"  # comments only: the same TOML


def test_new_case_without_a_readable_wing_points_to_inspect(tmp_path):
    (tmp_path / "empty.stl").write_text("solid x\nendsolid x\n")
    r = _cli("new-case", tmp_path / "empty.stl", "--units", "m")
    assert r.returncode == 0, r.stderr
    assert "# THIS WING: `geomload inspect GEOMETRY` prints where the wing frame sits" in r.stdout
    tomllib.loads(r.stdout)


def test_a_control_character_in_the_file_name_stays_inside_the_comment():
    from geomload.config.template import case_template

    text = case_template("odd\nname.stl", frame_lines=["  origin: x = 1"])
    assert "# THIS WING (odd\\u000Aname.stl):\n#   origin: x = 1\n" in text
    assert tomllib.loads(text)["geometry"]["file"] == "odd\nname.stl"


def test_inspect_json_frame_table_carries_the_origin_in_both_units(stl):
    import json

    r = _cli("inspect", stl, "--units", "mm", "--json", "--stations", "6")
    assert r.returncode == 0, r.stderr
    f = json.loads(r.stdout)["frame"]
    assert f["cad_unit"] == "mm" and f["wing_axes_in_cad"] == {"x": "+Y", "y": "-X", "z": "+Z"}
    # the same point in metres (origin_cad_m) and in the CAD unit: 1 mm = 1e-3 m (SI, exact)
    assert f["origin_cad_in_cad_unit"] == pytest.approx([1000.0 * v for v in f["origin_cad_m"]],
                                                        rel=1e-8)
    check("analytic: wing built with p_cad = 1000 R p_wing + T (mm)",
          "inspect --json: wing-frame origin, CAD x (mm)", T_MM[0],
          f["origin_cad_in_cad_unit"][0], abs=LE_TOL_MM)
