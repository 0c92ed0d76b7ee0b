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
