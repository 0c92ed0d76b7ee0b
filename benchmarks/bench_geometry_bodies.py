"""Benchmark: what the body check (classification and merging) adds to `inspect`'s geometry work
on a 2-million-triangle binary STL wing, and the 4-million-triangle read + cut against a bare
`numpy.fromfile` of the file.

Figures (printed, never asserted):
- bodies overhead: `geometry.read_wing` (reader, body check, frame, 20 stations, planform: the
  geometry work of `inspect`) divided by the same work without the body check (read_mesh ->
  detect_frame_indexed -> cut_stations -> summarize); target at most 1.20. Measured in pairs,
  interleaved (floor, read_wing, read_wing, floor, ...: the order alternates so neither side
  always runs on a warmer cache), in the same process; the figure is the median of the pairs'
  ratios, printed with the median wall and CPU (process) times of each side. Other sessions
  share the cores, so the pairing, not the absolute time, is what makes the ratio fair.
- 4 M read + cut: read_wing on a 4-million-triangle file divided by `numpy.fromfile` of its
  bytes (page-cached); target at most 10.
Run: python benchmarks/bench_geometry_bodies.py [--bodies-only]
(GEOMLOAD_BENCH_REPEAT sets the number of pairs, default 7.)
"""

from __future__ import annotations

import os
import statistics
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


def _timed(fn):
    """(wall s, CPU s of this process) of one call."""
    c0, t0 = time.process_time(), time.perf_counter()
    fn()
    return time.perf_counter() - t0, time.process_time() - c0


def paired(floor, fn, n):
    """Interleaved pairs (the order alternates): median ratio of the pairs' wall times, and
    (median wall, median CPU) of each side, after one untimed warm-up of each."""
    floor()
    fn()
    fl, me = [], []
    for k in range(n):
        if k % 2:
            me.append(_timed(fn))
            fl.append(_timed(floor))
        else:
            fl.append(_timed(floor))
            me.append(_timed(fn))
    ratio = statistics.median(m[0] / f[0] for f, m in zip(fl, me))
    cpu_ratio = statistics.median(m[1] / f[1] for f, m in zip(fl, me))
    med = lambda xs, i: statistics.median(x[i] for x in xs)  # noqa: E731
    return ratio, cpu_ratio, (med(fl, 0), med(fl, 1)), (med(me, 0), med(me, 1))


def main(bodies_only=False):
    from _bench_util import repeats

    rows = {}
    with tempfile.TemporaryDirectory() as tmp:
        p2 = os.path.join(tmp, "wing_2M.stl")
        make_stl(p2, 2_000_000)
        ratio, cpu_ratio, (fw, fc), (mw, mc) = paired(
            lambda: _without_body_check(p2), lambda: read_wing(p2, units="mm", n_stations=20),
            repeats(7))
        rows["bodies overhead on 2 M triangles (read_wing / without the body check)"] = (
            TARGET_BODIES, ratio,
            f"median of {repeats(7)} interleaved pairs; median wall {mw:.2f} s vs floor "
            f"{fw:.2f} s; median CPU {mc:.2f} s vs {fc:.2f} s, CPU ratio {cpu_ratio:.3f}")
        os.remove(p2)
        if bodies_only:
            return _print(rows)
        p4 = os.path.join(tmp, "wing_4M.stl")
        make_stl(p4, 4_000_000)
        np.fromfile(p4, np.uint8)
        floor = _best(lambda: np.fromfile(p4, np.uint8))
        t4 = _best(lambda: read_wing(p4, units="mm", n_stations=20), k=2)
        rows["4 M triangles read + frame + 20 cuts / numpy.fromfile"] = (
            TARGET_4M, t4 / floor, f"{t4:.2f} s vs floor {floor:.3f} s")
    return _print(rows)


def _print(rows):
    for name, (target, ratio, text) in rows.items():
        print(f"{name}: {ratio:.3f}x (target <= {target:g}x; "
              f"{'met' if ratio <= target else 'NOT met'}; {text})")
    return rows


if __name__ == "__main__":
    main(bodies_only="--bodies-only" in sys.argv[1:])
