"""Block-wise passes over large soups against general-purpose references: the binary STL read
(float32 vertices times the unit factor, and the bounding box) against numpy's whole-array
arithmetic, and the display surface's nearest panel centre against scipy's k-d tree."""

import numpy as np
import pytest

from helpers import validation
from geomload.export.display_surface import nearest_centre
from geomload.geometry.readers import bounds, read_mesh
from geomload.geometry.readers.stl import STL_RECORD


def _write_stl(path, verts32):
    rec = np.zeros(verts32.shape[0], STL_RECORD)
    rec["v"] = verts32
    with open(path, "wb") as f:
        f.write(b"\0" * 80)
        f.write(np.uint32(verts32.shape[0]).tobytes())
        rec.tofile(f)


@pytest.mark.parametrize("m", [1, 4099, 70_001])  # under one block, several, and a ragged last block
def test_binary_stl_blocks_match_whole_array_numpy(tmp_path, m):
    rng = np.random.default_rng(m)
    v = (rng.normal(size=(m, 3, 3)) * [300.0, 1800.0, 40.0]).astype(np.float32)
    v[:, 2] += rng.normal(size=(m, 3)).astype(np.float32)  # no degenerate triangles
    path = tmp_path / "w.stl"
    _write_stl(path, v)
    mesh = read_mesh(path, units="mm")
    ref = v.astype(np.float64) * 1e-3  # numpy: each float32 widened, times the factor, rounded once
    diff = float(np.abs(mesh.triangles - ref).max())
    # reference: numpy's own float32 -> float64 conversion and product (whole array at once)
    validation.check("numpy whole-array float32*1e-3", f"max |read - numpy| ({m} triangles), m",
                     0.0, diff, abs=0.0)
    lo, hi = bounds(mesh.triangles)
    flat = ref.reshape(-1, 3)
    # reference: numpy min/max over all vertices per axis
    validation.check("numpy ndarray.min/max per axis", f"bounding box error ({m} triangles), m", 0.0,
                     float(max(np.abs(lo - flat.min(0)).max(), np.abs(hi - flat.max(0)).max())),
                     abs=0.0)


def test_nearest_centre_matches_kd_tree():
    from scipy.spatial import cKDTree

    rng = np.random.default_rng(7)
    ns, nc = 30, 12  # a swept, tapered lattice's panel centres in plan view
    y = np.linspace(0.03, 1.77, ns)[:, None] * np.ones(nc)
    x = np.linspace(0.01, 0.29, nc)[None, :] * (1 - 0.5 * y / 1.8) + 0.12 * y
    cen = np.column_stack([x.ravel(), y.ravel()])
    q = np.column_stack([rng.uniform(-0.05, 0.55, 40_000), rng.uniform(-0.05, 1.85, 40_000)])
    q[:5000] = cen[rng.integers(0, cen.shape[0], 5000)]  # queries on centres
    got = nearest_centre(cen, q)
    d_got = np.hypot(*(q - cen[got]).T)
    d_ref, _ = cKDTree(cen).query(q)
    # reference: scipy.spatial.cKDTree exact nearest-neighbour distances
    validation.check("scipy.spatial.cKDTree.query", "max nearest-centre distance difference, m",
                     0.0, float(np.abs(d_got - d_ref).max()), abs=1e-12)


def test_nearest_centre_ties_go_to_lowest_index():
    # an integer grid of centres and half-integer queries: many exactly equidistant centres
    cen = np.array([[i, j] for i in range(24) for j in range(24)], float)
    rng = np.random.default_rng(3)
    q = rng.integers(-2, 50, (20_000, 2)) / 2.0
    got = nearest_centre(cen, q)
    d2 = ((q[:, None, :] - cen[None]) ** 2).sum(-1)
    ref = np.argmin(d2, axis=1)  # numpy argmin: the first of equal minima
    # reference: numpy.argmin over every squared distance (first index among ties)
    validation.check("numpy.argmin over all pairs", "queries with another centre than the first "
                     "nearest", 0, int((got != ref).sum()), abs=0)


def test_two_thread_read_matches_whole_array_numpy(tmp_path, monkeypatch):
    """A large binary STL read by two threads (each half of the file through its own buffer)
    gives numpy's whole-array product and bounds, value for value."""
    import geomload.forked
    from geomload.geometry import readers

    monkeypatch.setattr(readers, "PARALLEL_READ_MIN", 1000)  # the threshold, not the reader
    monkeypatch.setattr(geomload.forked, "parallel_pays", lambda jobs=1: True)
    m = 70_001
    rng = np.random.default_rng(11)
    v = (rng.normal(size=(m, 3, 3)) * [300.0, 1800.0, 40.0]).astype(np.float32)
    v[5, 1, 2] = -9000.0  # the extremes in the second half and the first
    v[m - 3, 2, 0] = 7000.0
    path = tmp_path / "w.stl"
    _write_stl(path, v)
    mesh = read_mesh(path, units="mm")
    ref = v.astype(np.float64) * 1e-3
    # reference: numpy's own float32 -> float64 conversion and product (whole array at once)
    validation.check("numpy whole-array float32*1e-3", "max |two-thread read - numpy|, m", 0.0,
                     float(np.abs(mesh.triangles - ref).max()), abs=0.0)
    _, lo, hi = readers._to_metres(readers.stl.BinaryStl(str(path), m), 1e-3)
    flat = ref.reshape(-1, 3)
    # reference: numpy min/max over all vertices per axis
    validation.check("numpy ndarray.min/max per axis", "two-thread bounding box error, m", 0.0,
                     float(max(np.abs(lo - flat.min(0)).max(), np.abs(hi - flat.max(0)).max())),
                     abs=0.0)


@pytest.mark.parametrize("big", [False, True])  # float64 keys, and int64 above 2**53 cells
def test_cell_keys_match_integer_formula(big):
    from geomload.geometry.display_soup import _cell_keys

    rng = np.random.default_rng(5)
    v = rng.uniform(-1.0, 2.0, size=(20_011, 3))  # a ragged last block
    lo = v.min(0)
    inv_h = 37.0
    q = ((v - lo) * inv_h).astype(np.int64)  # numpy's truncating cast of the same products
    dims = q.max(0) + 2
    if big:
        dims = dims * np.array([1, 3_000_000, 3_000_000])
    ref = (q[:, 0] * dims[1] + q[:, 1]) * dims[2] + q[:, 2]
    # reference: the cell number in numpy int64 arithmetic, (q0 d1 + q1) d2 + q2
    validation.check("numpy int64 arithmetic", f"cell keys differing ({'int64' if big else 'float64'} path)",
                     0, int((_cell_keys(v, lo, inv_h, dims) != ref).sum()), abs=0)


@pytest.mark.parametrize("order", ["C", "F"])  # (x, y) as one complex column, and column by column
def test_cell_sums_match_bincount(order):
    from geomload.geometry.display_soup import _cell_sums

    rng = np.random.default_rng(9)
    v = np.asarray(rng.normal(size=(150_001, 3)) * [1.0, 1e-3, 1e5], order=order)
    inv = rng.integers(0, 997, v.shape[0]).astype(np.int32)
    got = _cell_sums(v, inv, 997)
    ref = np.column_stack([np.bincount(inv, weights=v[:, k], minlength=997) for k in range(3)])
    # reference: numpy.bincount with weights (each bin summed in input order)
    validation.check("numpy.bincount(weights=...)", f"per-cell sums differing bits ({order} order)",
                     0, int((got != ref).sum()), abs=0)


@pytest.mark.parametrize("sign", [1.0, -1.0])
def test_root_cap_normal_by_rows_matches_plain_numpy(sign):
    """The cap normal and area from a band of rows (the cap-facing pre-selection) against the
    plain formula on every triangle near the root plane: numpy cross products and norms."""
    from geomload.geometry.frameutil import CAP_NORMAL_DEG, root_cap_normal

    rng = np.random.default_rng(21)
    k = 40_000
    base = rng.uniform(0.0, 1.0, size=(k, 1, 3)) * [0.3, 0.0, 0.04]
    d = rng.normal(size=(k, 3, 3)) * 0.004
    tilt = np.radians(rng.uniform(0.0, 20.0, k))  # facets from flat to 20 deg off the cap plane
    d[:, :, 1] = (d[:, :, 0] * np.tan(tilt)[:, None]) * sign
    tris = (base + d) * [1.0, sign, 1.0]
    tris[::3, :, 1] += sign * rng.uniform(0.0, 0.02, (tris[::3].shape[0], 1))  # some off the plane
    soup = np.concatenate([rng.normal(size=(5000, 3, 3)), tris])
    rows = np.arange(5000, soup.shape[0])
    y_hat = np.array([0.0, sign, 0.0])
    tol = 0.01
    got = root_cap_normal(soup, y_hat, tol, with_area=True, rows=rows)
    # reference: every near triangle through numpy's cross product and norm
    yv = tris[:, :, 1] * sign
    near = (yv.max(1) - yv.min()) < tol
    n = np.cross(tris[near, 1] - tris[near, 0], tris[near, 2] - tris[near, 0])
    n = n * np.sign(n @ y_hat)[:, None]
    a = np.linalg.norm(n, axis=1)
    good = (n @ y_hat) > np.cos(np.radians(CAP_NORMAL_DEG)) * a
    ref_n = n[good].sum(0) / np.linalg.norm(n[good].sum(0))
    validation.check("numpy.cross / numpy.linalg.norm over all near triangles",
                     "cap normal difference", 0.0, float(np.abs(got[0] - ref_n).max()), abs=0.0)
    validation.check("numpy.cross / numpy.linalg.norm over all near triangles",
                     "cap area difference, m^2", 0.0, abs(got[1] - 0.5 * float(a[good].sum())),
                     abs=0.0)


def test_display_surface_built_beside_the_read_only_when_asked(tmp_path, monkeypatch):
    # a command that only measures the wing (inspect) does no display-surface work; a run asks
    # for it and, when a second CPU built it, gets the clustering of the very mesh read
    # (reference: the same clustering applied afterwards, as the export does without it)
    from geomload.geometry import read_wing
    from geomload.geometry.display_soup import DISPLAY_TRIANGLES, decimate_soup
    from helpers.wingfactory import design, wing_triangles, write_stl

    tris = wing_triangles(design(), n_chord=300, n_span=100)
    assert tris.shape[0] > DISPLAY_TRIANGLES
    path = write_stl(tmp_path / "fine.stl", tris)
    from geomload import forked

    # the thread starts only when the load average says a CPU is free; here it is told so,
    # whatever else the machine runs (the thread itself is real)
    monkeypatch.setattr(forked, "parallel_pays", lambda jobs=1: True)
    measured = read_wing(path, units="m")
    assert measured.display_soup is None
    wing = read_wing(path, units="m", display=True)
    assert wing.display_soup is not None
    target, pts, tri = wing.display_soup
    ref_pts, ref_tri = decimate_soup(wing.mesh.triangles, target)
    assert target == DISPLAY_TRIANGLES
    assert np.array_equal(pts, ref_pts) and np.array_equal(tri, ref_tri)
