"""Vortex-lattice performance: 2,000 panels (assembly + LU + 20 right-hand sides) against a
bare LAPACK LU of a random matrix of the same size, and peak memory at 4,000 panels.

Run: python benchmarks/bench_lattice.py. Timings are the best of 5 interleaved runs (wall clock)
so that other load on the machine distorts them less.
"""

from __future__ import annotations

import os
import subprocess
import sys
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests"))
sys.path.insert(0, os.path.join(HERE, ".."))

TARGET_TIME_S = 0.6
TARGET_RATIO = 4.0
TARGET_MEM_MB = 1500.0


def _wing():
    from aero_wings import trapezoid

    return trapezoid(8.0, 0.5, 20.0, camber="2412", twist_tip_deg=-2.0, dihedral_deg=4.0)


def _timed(fn, repeat=3):
    best = float("inf")
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    return best


def time_pair(n_span=200, n_chord=10, n_rhs=20, repeat=5):
    """Best-of-`repeat` wall times (s) of (a) AeroModel (assembly + LU) + solve_many of n_rhs
    angles on a 2,000-panel half wing with images and (b) a bare scipy LU of a random matrix of
    the same size. The two are interleaved so both see the same background load."""
    from scipy.linalg import lu_factor

    from geomload.aero.lattice import build_lattice
    from geomload.aero.solve import AeroModel

    lat = build_lattice(_wing(), n_span=n_span, n_chord=n_chord)
    alphas = np.linspace(-5.0, 14.0, n_rhs)
    a = np.random.default_rng(0).random((lat.colloc.shape[0],) * 2)
    t_vlm = t_lu = float("inf")
    for _ in range(repeat):
        t_vlm = min(t_vlm, _timed(lambda: AeroModel(lat).solve_many(alphas), 1))
        t_lu = min(t_lu, _timed(lambda: lu_factor(a), 1))
    return t_vlm, t_lu


_MEM_CHILD = """
import resource, sys
sys.path[:0] = {paths!r}
from geomload.aero.lattice import build_lattice
from geomload.aero.solve import AeroModel
from bench_lattice import _wing
lat = build_lattice(_wing(), n_span={ns}, n_chord={nc})
sol = AeroModel(lat).solve(4.0)
print(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0)
"""


def peak_memory_mb(n_span=400, n_chord=10):
    """Peak resident memory (MB) of a fresh process that solves a 4,000-panel lattice."""
    code = _MEM_CHILD.format(paths=[HERE, os.path.join(HERE, "..", "tests"),
                                    os.path.join(HERE, "..")], ns=n_span, nc=n_chord)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True)
    return float(out.stdout.strip().splitlines()[-1])


def main() -> dict:
    """Run the benchmark; returns {figure: (target, measured, measured / target)}."""
    t_vlm, t_lu = time_pair()
    mem = peak_memory_mb()
    ratio = t_vlm / t_lu
    res = {
        "vlm_2000_panels_assembly_lu_20rhs_s": (TARGET_TIME_S, t_vlm, t_vlm / TARGET_TIME_S),
        "bare_lu_2000_s": (None, t_lu, None),
        "ratio_to_bare_lu": (TARGET_RATIO, ratio, ratio / TARGET_RATIO),
        "peak_memory_4000_panels_MB": (TARGET_MEM_MB, mem, mem / TARGET_MEM_MB),
    }
    return res


if __name__ == "__main__":
    try:
        load = os.getloadavg()[0]
    except OSError:
        load = float("nan")
    results = main()
    print(f"cpus: {os.cpu_count()}, load average (1 min) before run: {load:.2f}")
    for name, (target, measured, r) in results.items():
        tgt = "-" if target is None else f"{target:g}"
        rr = "" if r is None else f"  ({r:.2f} of target)"
        print(f"{name:40s} target {tgt:>6s}  measured {measured:8.3f}{rr}")
