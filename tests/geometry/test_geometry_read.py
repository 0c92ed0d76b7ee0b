"""Reading CAD files: units, formats, bodies and bad input (issue 2 "Bad input" list).

Expected values come from the files' own definitions (binary STL record layout: 80-byte
header, uint32 count, 50-byte records - common practice, no source) and exact unit factors
(1 in = 25.4 mm, 1 ft = 0.3048 m by definition).
"""

import os

import numpy as np
import pytest

from geomload.errors import GeometryError, InputError
from geomload.geometry.read import STL_RECORD, read_mesh
from helpers.wingfactory import naca_wing_mesh


def _write_stl(path, tris, count=None):
    rec = np.zeros(len(tris), STL_RECORD)
    rec["v"] = tris
    with open(path, "wb") as f:
        f.write(b"x" * 80)
        f.write(np.uint32(len(tris) if count is None else count).tobytes())
        rec.tofile(f)


def _ascii_stl(path, tris, extra=""):
    with open(path, "w") as f:
        f.write("solid w\n")
        for t in tris:
            f.write(" facet normal 0 0 1\n  outer loop\n")
            for v in t:
                f.write("   vertex %.9g %.9g %.9g\n" % tuple(v))
            f.write("  endloop\n endfacet\n")
        f.write(extra + "endsolid w\n")


@pytest.fixture(scope="module")
def small_wing():
    mesh, _ = naca_wing_mesh(n_chord=20, n_span=6)
    return mesh.triangles


def test_binary_and_ascii_stl_same_triangles(tmp_path, small_wing):
    b, a = tmp_path / "w.stl", tmp_path / "wa.stl"
    _write_stl(b, small_wing)
    _ascii_stl(a, small_wing)
    mb, ma = read_mesh(b), read_mesh(a)
    # float32 storage in binary STL: ~1e-7 relative
    assert mb.triangles.dtype == np.float64 and mb.triangles.shape == small_wing.shape
    assert np.allclose(mb.triangles, small_wing, atol=1e-6)
    assert np.allclose(ma.triangles, small_wing, atol=1e-6)


@pytest.mark.parametrize("unit,factor", [("mm", 1e-3), ("cm", 1e-2), ("in", 0.0254), ("ft", 0.3048)])
def test_units_scale_to_metres(tmp_path, small_wing, unit, factor):
    p = tmp_path / "w.stl"
    _write_stl(p, small_wing / factor)
    m = read_mesh(p, units=unit)
    assert m.units == unit
    assert np.allclose(m.triangles, small_wing, rtol=1e-6, atol=1e-6)


def test_wrong_unit_warns(tmp_path, small_wing):
    p = tmp_path / "w.stl"
    _write_stl(p, small_wing * 1000)  # mm file read as metres: 1.8 km span
    m = read_mesh(p)
    assert any("wrong unit" in n for n in m.notes)
    m = read_mesh(p, units="mm")
    assert not any("wrong unit" in n for n in m.notes)


@pytest.mark.parametrize("ext", ["obj", "ply", "off", "glb"])
def test_trimesh_formats(tmp_path, small_wing, ext):
    import trimesh

    mesh = trimesh.Trimesh(small_wing.reshape(-1, 3), np.arange(small_wing.shape[0] * 3).reshape(-1, 3))
    p = tmp_path / f"w.{ext}"
    mesh.export(p)
    m = read_mesh(p)
    assert m.n_triangles == small_wing.shape[0]
    # same surface area as the registry library trimesh computes (to float32 storage precision)
    a0 = mesh.area
    a1 = 0.5 * np.linalg.norm(np.cross(m.triangles[:, 1] - m.triangles[:, 0], m.triangles[:, 2] - m.triangles[:, 0]), axis=1).sum()
    assert abs(a1 / a0 - 1) < 1e-5


def test_several_bodies_keep_largest_or_chosen(tmp_path, small_wing):
    import trimesh

    wing = trimesh.Trimesh(small_wing.reshape(-1, 3), np.arange(small_wing.shape[0] * 3).reshape(-1, 3))
    box = trimesh.creation.box((0.05, 0.05, 0.05))
    scene = trimesh.Scene({"wing": wing, "pod": box})
    p = tmp_path / "two.glb"
    scene.export(p)
    m = read_mesh(p)
    assert m.n_triangles == small_wing.shape[0]
    assert any("left out" in n and "2 bodies" in n for n in m.notes)
    other = [read_mesh(p, body=k).n_triangles for k in (1, 2)]
    assert sorted(other) == sorted([small_wing.shape[0], 12])  # a box is 12 triangles (6 quads)
    with pytest.raises(InputError, match="two.glb"):
        read_mesh(p, body=3)


def _msg(exc_info, path):
    msg = str(exc_info.value)
    assert str(path) in msg and "\n" not in msg
    return msg


def test_bad_inputs_name_the_file(tmp_path, small_wing):
    cases = []
    cases.append((tmp_path / "missing.stl", InputError, "not found"))
    d = tmp_path / "adir.stl"
    d.mkdir()
    cases.append((d, InputError, "directory"))
    e = tmp_path / "empty.stl"
    e.write_bytes(b"")
    cases.append((e, InputError, "empty"))
    t = tmp_path / "trunc.stl"
    _write_stl(t, small_wing)
    t.write_bytes(t.read_bytes()[:-17])
    cases.append((t, GeometryError, "does not match file size"))
    g = tmp_path / "garbage.stl"
    _ascii_stl(g, small_wing[:2], extra="hello world\n")
    cases.append((g, GeometryError, "line"))
    g2 = tmp_path / "badvertex.stl"
    g2.write_text("solid x\nfacet normal 0 0 1\nouter loop\nvertex 1 2 abc\n")
    cases.append((g2, GeometryError, "bad vertex"))
    n = tmp_path / "nan.stl"
    bad = small_wing.copy()
    bad[3, 1, 2] = np.nan
    _write_stl(n, bad)
    cases.append((n, GeometryError, "NaN"))
    i = tmp_path / "inf.stl"
    bad[3, 1, 2] = np.inf
    _write_stl(i, bad)
    cases.append((i, GeometryError, "infinite"))
    z = tmp_path / "none.stl"
    _write_stl(z, small_wing[:0])
    cases.append((z, GeometryError, "no triangles"))
    za = tmp_path / "flat.stl"
    _write_stl(za, np.zeros((4, 3, 3)))
    cases.append((za, GeometryError, "zero-area"))
    u = tmp_path / "wing.xyz"
    u.write_text("1 2 3\n")
    cases.append((u, InputError, "unknown geometry extension"))
    for path, exc, words in cases:
        with pytest.raises(exc) as info:
            read_mesh(path)
        assert words in _msg(info, path), (path, str(info.value))


@pytest.mark.skipif(os.geteuid() == 0, reason="root can read any file")
def test_unreadable_file(tmp_path, small_wing):
    p = tmp_path / "locked.stl"
    _write_stl(p, small_wing)
    p.chmod(0)
    with pytest.raises(InputError) as info:
        read_mesh(p)
    assert "permission" in _msg(info, p)


def test_bad_units_option(tmp_path, small_wing):
    p = tmp_path / "w.stl"
    _write_stl(p, small_wing)
    with pytest.raises(InputError, match="units"):
        read_mesh(p, units="furlong")
