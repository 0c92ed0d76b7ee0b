"""Benchmark: what the body check (classification and merging) adds to `inspect`'s geometry work
on a 2-million-triangle binary STL wing, and the 4-million-triangle read + cut against a bare
`numpy.fromfile` of the file.

Figures (printed, never asserted):
- bodies overhead: `geometry.read_wing` (reader, body check, frame, 20 stations, planform)
  divided by the same work without the body check (read_mesh -> detect_frame_indexed ->
  cut_stations -> summarize); target at most 1.20.
- 4 M read + cut: read_wing on a 4-million-triangle file divided by `numpy.fromfile` of its
  bytes (page-cached); target at most 10.
Run: python benchmarks/bench_geometry_bodies.py
"""

from __future__ import annotations

import os
import sys
import tempfile
import time

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

from bench_import import make_stl  # noqa: E402
from geomload.geometry import read_wing  # noqa: E402
from geomload.geometry.frame import detect_frame_indexed  # noqa: E402
from geomload.geometry.planform import summarize  # noqa: E402
from geomload.geometry.readers import read_mesh  # noqa: E402
from geomload.geometry.stations import cut_stations  # noqa: E402

TARGET_BODIES, TARGET_4M = 1.20, 10.0


def _best(fn, k=3):
    best = np.inf
    for _ in range(k):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def _without_body_check(path):
    mesh = read_mesh(path, units="mm")
    frame, index = detect_frame_indexed(mesh)
    st = cut_stations(mesh, frame, n=20, index=index)
    summarize(st, frame.y_root)


def main():
    rows = {}
    with tempfile.TemporaryDirectory() as tmp:
        p2 = os.path.join(tmp, "wing_2M.stl")
        make_stl(p2, 2_000_000)
        base = _best(lambda: _without_body_check(p2))
        full = _best(lambda: read_wing(p2, units="mm", n_stations=20))
        rows["bodies overhead on 2 M triangles (read_wing / without the body check)"] = (
            TARGET_BODIES, full / base, f"{full:.2f} s vs {base:.2f} s")
        os.remove(p2)
        p4 = os.path.join(tmp, "wing_4M.stl")
        make_stl(p4, 4_000_000)
        np.fromfile(p4, np.uint8)
        floor = _best(lambda: np.fromfile(p4, np.uint8))
        t4 = _best(lambda: read_wing(p4, units="mm", n_stations=20), k=2)
        rows["4 M triangles read + frame + 20 cuts / numpy.fromfile"] = (
            TARGET_4M, t4 / floor, f"{t4:.2f} s vs floor {floor:.3f} s")
    for name, (target, ratio, text) in rows.items():
        print(f"{name}: {ratio:.2f}x (target <= {target:g}x; {'met' if ratio <= target else 'NOT met'}; {text})")
    return rows


if __name__ == "__main__":
    main()
