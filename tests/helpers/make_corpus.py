"""Build the bad-input corpus: small geometry and case files that geomload must refuse cleanly.

Run `python tests/helpers/make_corpus.py [FOLDER]` (default: tests/bad_inputs/files). The
output is deterministic, so the committed files can be checked against a fresh build
(tests/run/test_bad_inputs.py does). The wing is a coarse NACA 2412 half wing of the invented
Quillmoor Aerial Works QM-36 Pellin survey UAV (1.8 m semi-span), lofted from the NACA 4-digit
equations (NACA Report 824) by geomload.geometry.airfoil.loft_wing.

Each file is described beside its writer; the expected error of every case is in cases.toml.
"""

from __future__ import annotations

import os
import struct
import sys
from pathlib import Path

import numpy as np

if __name__ == "__main__":  # run as a script: tests/ (for helpers) and the checkout on the path
    _tests = Path(__file__).resolve().parent.parent
    sys.path[:0] = [str(_tests), str(_tests.parent)]

from helpers.paths import BAD_INPUTS  # noqa: E402

SEMISPAN = 1.8


# ---------------------------------------------------------------------------------- writers
def stl_binary(tris, count=None) -> bytes:
    """Binary STL bytes: 80-byte header, uint32 count (optionally a lie), 50-byte records."""
    tris = np.asarray(tris, dtype="<f4").reshape(-1, 3, 3)
    rec = np.zeros(tris.shape[0], dtype=[("n", "<f4", (3,)), ("v", "<f4", (3, 3)), ("a", "<u2")])
    rec["v"] = tris
    head = b"geomload bad-input corpus".ljust(80, b" ")
    return head + struct.pack("<I", tris.shape[0] if count is None else count) + rec.tobytes()


def stl_ascii(tris, fmt="%.6g") -> str:
    out = ["solid corpus"]
    for t in np.asarray(tris, float).reshape(-1, 3, 3):
        out += ["  facet normal 0 0 0", "    outer loop"]
        out += ["      vertex " + " ".join(fmt % c for c in p) for p in t]
        out += ["    endloop", "  endfacet"]
    out.append("endsolid corpus")
    return "\n".join(out) + "\n"


def wing_tris(cap_tip=True, n_chord=16, n_span=8):
    """Coarse NACA 2412 half wing (metres): 1.8 m semi-span, 0.36 m root chord, taper 0.5."""
    from geomload.geometry.airfoil import loft_wing
    from helpers.wingfactory import design

    d = design(semispan=SEMISPAN)
    ys = SEMISPAN * np.sin(np.linspace(0, np.pi / 2, n_span))
    return loft_wing(ys, d["chord"](ys), d["x_le"](ys), d["z_le"](ys), d["twist"](ys),
                     d["t"](ys), d["code"], n_chord, True, cap_tip=cap_tip)


def box_tris(lo, hi):
    """12 outward triangles of an axis-aligned box (m)."""
    lo, hi = np.asarray(lo, float), np.asarray(hi, float)
    c = np.array([[hi[i] if (k >> i) & 1 else lo[i] for i in range(3)] for k in range(8)])
    quads = [(0, 2, 3, 1), (4, 5, 7, 6), (0, 1, 5, 4), (2, 6, 7, 3), (0, 4, 6, 2), (1, 3, 7, 5)]
    return np.array([[c[a], c[b], c[cc]] for a, b, cc, _ in quads] +
                    [[c[a], c[cc], c[d]] for a, _, cc, d in quads])


def sphere_tris(r=0.5, n=10):
    th = np.linspace(0, np.pi, n + 1)
    ph = np.linspace(0, 2 * np.pi, 2 * n + 1)
    p = lambda i, j: r * np.array([np.sin(th[i]) * np.cos(ph[j]), np.sin(th[i]) * np.sin(ph[j]),  # noqa: E731
                                   np.cos(th[i])])
    out = []
    for i in range(n):
        for j in range(2 * n):
            a, b, c, d = p(i, j), p(i + 1, j), p(i + 1, j + 1), p(i, j + 1)
            if i > 0:
                out.append([a, b, d])
            if i < n - 1:
                out.append([b, c, d])
    return np.array(out)


def glb_two_bodies(wing, other) -> bytes:
    """A glTF binary scene with two meshes (the wing and a second body), metres."""
    import trimesh

    scene = trimesh.Scene()
    for name, t in (("wing", wing), ("pod", other)):
        v = np.asarray(t, float).reshape(-1, 3)
        scene.add_geometry(trimesh.Trimesh(v, np.arange(v.shape[0]).reshape(-1, 3), process=False),
                           geom_name=name, node_name=name)
    return scene.export(file_type="glb")


STEP_NO_SOLID = """ISO-10303-21;
HEADER;
FILE_DESCRIPTION(('geomload corpus: a STEP file with a point and no solid'),'2;1');
FILE_NAME('no_solid.step','2024-01-01T00:00:00',('Quillmoor Aerial Works'),(''),'','','');
FILE_SCHEMA(('AUTOMOTIVE_DESIGN { 1 0 10303 214 1 1 1 1 }'));
ENDSEC;
DATA;
#1=CARTESIAN_POINT('',(0.,0.,0.));
ENDSEC;
END-ISO-10303-21;
"""


# --------------------------------------------------------------------------------- case files
BASE_CASE = """# bad-input corpus: the valid base case (coarse QM-36 Pellin half wing)
title = "corpus base"

[geometry]
file = "wing.stl"
units = "m"
stations = 8

[aircraft]
gross_mass_kg = 22.0
cl_max = 1.35

[wing_mass]
total_kg = 3.4

[[point_mass]]
name = "servo"
mass_kg = 0.12
y_m = 1.25
x_m = 0.20

[[load_case]]
name = "pull-up"
speed = 30.0
altitude = 0.0
load_factor = 2.5

[lattice]
n_span = 8
n_chord = 4
"""

ENVELOPE = """
[envelope]
category = "custom"
n_pos = 4.0
n_neg = -2.0
cl_max_pos = 1.35
cl_max_neg = 0.70
v_cruise = 36.0
v_dive = 50.0
"""


def _edit(text, old, new):
    if old not in text:
        raise ValueError(f"corpus edit: {old!r} not in the base case")
    return text.replace(old, new, 1)


def _inside_points(wing, ys):
    """Points inside the wing at spans ys (m): the centroid of each lofted section's vertices,
    interpolated linearly in y between sections (the loft is linear between them and an
    airfoil section is convex enough)."""
    v = wing.reshape(-1, 3)
    yk = np.unique(np.round(v[:, 1], 9))
    cen = np.array([v[np.abs(v[:, 1] - y) < 1e-8].mean(axis=0) for y in yk])
    return np.column_stack([np.interp(ys, yk, cen[:, 0]), ys, np.interp(ys, yk, cen[:, 2])])


def inp_nodes(pts) -> bytes:
    """A node-and-truss mesh in the open *NODE/*ELEMENT syntax (bars between successive nodes)."""
    lines = ["*NODE"] + [f"{i + 1}, {x:.9g}, {y:.9g}, {z:.9g}" for i, (x, y, z) in enumerate(pts)]
    lines += ["*ELEMENT, TYPE=T3D2, ELSET=BARS"] + [f"{i + 1}, {i + 1}, {i + 2}"
                                                     for i in range(len(pts) - 1)]
    return ("\n".join(lines) + "\n").encode()


def case_files() -> dict:
    """name -> text of every case file of the corpus (the base case edited one way each)."""
    b = BASE_CASE
    env = b + ENVELOPE
    return {
        "good.toml": b,
        "structure_good.toml": b + '\n[structure]\nmesh = "spar.inp"\nmaterial = "al-7075-t6"\n',
        "structure_mesh_in_mm.toml": b + '\n[structure]\nmesh = "spar_in_mm.inp"\n',
        "structure_mesh_root_only.toml": b + '\n[structure]\nmesh = "spar_root_only.inp"\n',
        "structure_mesh_garbage.toml": b + '\n[structure]\nmesh = "spar_garbage.inp"\n',
        "structure_mesh_missing.toml": b + '\n[structure]\nmesh = "no_such_mesh.msh"\n',
        "structure_unknown_material.toml": b + '\n[structure]\nmaterial = "unobtainium"\n',
        "rib_outside_span.toml": b + "\n[spar]\nrib_y_m = [0.0, 0.9, 2.5]\n",
        "good_envelope.toml": env,
        "empty.toml": "",
        "blank.toml": "   \n# only a comment\n\n",
        "invalid_toml.toml": "[aircraft\ngross_mass_kg = 22\n",
        "unknown_key.toml": _edit(b, "gross_mass_kg = 22.0", "gross_mas_kg = 22.0"),
        "unknown_extra_key.toml": _edit(b, "cl_max = 1.35", "cl_max = 1.35\nclmax_extra = 2"),
        "unknown_table.toml": b + "\n[analysys]\nultimate_factor = 1.5\n",
        "wrong_type.toml": _edit(b, "load_factor = 2.5", 'load_factor = "two and a half"'),
        "wrong_type_stations.toml": _edit(b, "stations = 8", "stations = 8.5"),
        "wrong_unit.toml": _edit(b, "altitude = 0.0", 'altitude = 0.0\naltitude_unit = "km"'),
        "negative_mass.toml": _edit(b, "total_kg = 3.4", "total_kg = -3.4"),
        "zero_gross_mass.toml": _edit(b, "gross_mass_kg = 22.0", "gross_mass_kg = 0.0"),
        "zero_point_mass.toml": _edit(b, "mass_kg = 0.12", "mass_kg = 0.0"),
        "missing_key.toml": _edit(b, "load_factor = 2.5", ""),
        "nan_speed.toml": _edit(b, "speed = 30.0", "speed = nan"),
        # 408 m/s TAS at sea level: Mach 408 / 340.294 = 1.199 (ISA sea-level a, U.S. Std Atm 1976)
        "mach_1_2.toml": _edit(b, "speed = 30.0", 'speed = 408.0\nspeed_type = "TAS"'),
        "altitude_40km.toml": _edit(b, "altitude = 0.0", "altitude = 40000.0"),
        "altitude_ft_too_high.toml": _edit(b, "altitude = 0.0", 'altitude = 70000.0\naltitude_unit = "ft"'),
        "point_mass_outside_span.toml": _edit(b, "y_m = 1.25", "y_m = 2.5"),
        "point_mass_port.toml": _edit(b, "y_m = 1.25", "y_m = -0.5"),
        "missing_geometry.toml": _edit(b, 'file = "wing.stl"', 'file = "no_such_wing.stl"'),
        "geometry_cube.toml": _edit(b, 'file = "wing.stl"', 'file = "cube.stl"'),
        "geometry_empty.toml": _edit(b, 'file = "wing.stl"', 'file = "empty.stl"'),
        "lattice_zero.toml": _edit(b, "n_span = 8", "n_span = 0"),
        "lattice_negative_chord.toml": _edit(b, "n_chord = 4", "n_chord = -2"),
        "duplicate_names.toml": b + "\n[[load_case]]\nname = \"pull-up\"\nspeed = 20.0\nload_factor = 1.0\n",
        "no_cases.toml": _edit(b, "[[load_case]]\nname = \"pull-up\"\nspeed = 30.0\naltitude = 0.0\n"
                                  "load_factor = 2.5\n", ""),
        "ultimate_below_one.toml": b + "\n[analysis]\nultimate_factor = 0.9\n",
        "masses_above_gross.toml": _edit(b, "total_kg = 3.4", "total_kg = 30.0"),
        "case_mass_above_gross.toml": _edit(b, "load_factor = 2.5", "load_factor = 2.5\nmass_kg = 30.0"),
        "fuel_tank_reversed.toml": b + ("\n[[fuel_tank]]\nname = \"tank\"\nmass_kg = 1.0\n"
                                        "y_from_m = 0.8\ny_to_m = 0.2\n"),
        "unknown_category.toml": _edit(env, 'category = "custom"', 'category = "aerobatic"'),
        "clmax_zero.toml": _edit(env, "cl_max_pos = 1.35", "cl_max_pos = 0.0"),
        "clmax_negative.toml": _edit(env, "cl_max_neg = 0.70", "cl_max_neg = -0.70"),
        "va_above_vd.toml": _edit(env, "v_dive = 50.0", "v_dive = 50.0\nv_maneuver = 60.0"),
        "vc_above_vd.toml": _edit(env, "v_cruise = 36.0", "v_cruise = 55.0"),
        "min_mass_above_max.toml": _edit(env, "v_dive = 50.0", "v_dive = 50.0\nmin_mass_kg = 25.0"),
        "custom_without_npos.toml": _edit(env, "n_pos = 4.0\n", ""),
        "rule_category_with_npos.toml": _edit(env, 'category = "custom"', 'category = "normal"'),
        # names from users: Unicode, a maths-text '$', a spreadsheet formula, a negative sign and
        # a terminal escape sequence (clear screen); all must run and show safely
        "hostile_names.toml": b + "".join(
            f"\n[[load_case]]\nname = {n}\nspeed = 28.0\nload_factor = {nz}\n"
            for n, nz in (('"banked turn 60°"', 2.0), ('"Überziehen"', 1.5),
                          ("'$\\alpha$ pull $'", 2.2), ('"=cmd|\' /C calc\'!A0"', 1.2),
                          ('"-1g push"', -1.0), ('"\\u001b[2Jclear"', 1.1))),
        "envelope_altitude_too_high.toml": _edit(env, "v_dive = 50.0", "v_dive = 50.0\naltitudes = [0.0, 25000.0]"),
    }


# ---------------------------------------------------------------------------------------- main
def build(folder) -> list:
    """Write every corpus file into `folder`; returns the file names written."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    wing = wing_tris()
    good = stl_binary(wing)
    n = wing.shape[0]
    files = {}
    files["wing.stl"] = good                                   # the valid coarse wing (metres)
    files["truncated.stl"] = good[: 84 + 50 * (n // 2) + 17]   # cut mid-record
    files["count_lies.stl"] = stl_binary(wing, count=n + 250)  # header claims 250 more triangles
    files["short_header.stl"] = b"\x00\x01binary junk, shorter than a header"
    files["no_triangles.stl"] = stl_binary(np.zeros((0, 3, 3)))
    bad = wing.copy()
    bad[7, 1, 2] = np.nan
    files["nan_vertex.stl"] = stl_binary(bad)
    snan = bytearray(stl_binary(wing))                          # a signalling NaN (float32 0x7f800001)
    snan[84 + 50 * 5 + 12: 84 + 50 * 5 + 16] = struct.pack("<I", 0x7F800001)
    files["snan_vertex.stl"] = bytes(snan)
    lines = stl_ascii(wing[:40]).splitlines()
    lines[3] = "      vertex inf 0.0 0.0"                          # first vertex of facet 1
    files["inf_vertex_ascii.stl"] = ("\n".join(lines) + "\n").encode()
    zero = np.repeat(wing[:, :1, :], 3, axis=1)                # every triangle collapsed to a point
    files["zero_area.stl"] = stl_binary(zero)
    files["empty.stl"] = b""
    files["empty_solid_ascii.stl"] = b"solid nothing\nendsolid nothing\n"
    files["garbage_ascii.stl"] = (stl_ascii(wing[:2]).replace("endloop", "this is not STL\n endloop", 1)).encode()
    lines = stl_ascii(wing[:2]).splitlines()
    lines[4] = "      vertex 0.1 0.2"                               # a vertex with two coordinates
    files["bad_vertex_ascii.stl"] = ("\n".join(lines) + "\n").encode()
    files["cube.stl"] = stl_binary(box_tris((0, 0, 0), (1, 1, 1)))
    files["sphere.stl"] = stl_binary(sphere_tris())
    files["flat_box.stl"] = stl_binary(box_tris((0.0, 0.0, 0.0), (0.1, 0.1, 0.04)))  # a 40 % thick block
    files["wing_in_mm.stl"] = stl_binary(wing * 1000.0)        # a mm export; read as metres by default
    files["tip_open.stl"] = stl_binary(wing_tris(cap_tip=False))
    # a hole: the upper-surface triangles between 40 % and 60 % of the semi-span are missing
    c = wing.mean(axis=1)
    hole = (c[:, 1] > 0.4 * SEMISPAN) & (c[:, 1] < 0.6 * SEMISPAN) & (c[:, 2] > 0.01)
    files["hole_mid.stl"] = stl_binary(wing[~hole])
    # the outboard 70 % of the upper surface missing: too few stations remain
    big = (c[:, 1] > 0.3 * SEMISPAN) & (c[:, 2] > 0.01)
    files["upper_skin_missing.stl"] = stl_binary(wing[~big])
    files["two_bodies.glb"] = glb_two_bodies(wing, box_tris((0.05, 0.2, -0.08), (0.15, 0.3, -0.04)))
    files["no_solid.step"] = STEP_NO_SOLID.encode()
    files["garbage.step"] = b"ISO-10303-21;\nthis is not a STEP exchange file\n"
    files["garbage.obj"] = b"\x89PNG\r\n\x1a\n not an OBJ file at all \xff\xfe\n"
    files["short_vertex.obj"] = b"v 0 0 0\nv 1 0 0\nv 0 1\n"     # last vertex has two coordinates
    files["wing.xyz"] = b"0 0 0\n1 0 0\n0 1 0\n"
    files["binary_garbage.toml"] = b"\xff\xfe\x00\x81 not text"
    # structural meshes for [structure] mesh: nodes inside the wing (slice centroids), the same
    # written in millimetres where the CAD file is in metres, only next to the root, unreadable
    inside = _inside_points(wing, np.linspace(0.05, 0.95, 12) * SEMISPAN)
    files["spar.inp"] = inp_nodes(inside)
    files["spar_in_mm.inp"] = inp_nodes(inside * 1000.0)
    files["spar_root_only.inp"] = inp_nodes(_inside_points(wing, np.linspace(0.001, 0.008, 4)
                                                           * SEMISPAN))
    files["spar_garbage.inp"] = b"*NODE\n1, 0.0, 0.0\nthis is not a mesh\n*ELEMENT, TYPE=T3D2\n1, 1, 9\n"
    for name, text in case_files().items():
        files[name] = text.encode()
    for name, data in files.items():
        (folder / name).write_bytes(data)
    return sorted(files)


if __name__ == "__main__":
    out = sys.argv[1] if len(sys.argv) > 1 else os.path.join(BAD_INPUTS, "files")
    names = build(out)
    print(f"wrote {len(names)} files to {out}")
