"""Vortex-lattice performance.

- 2,000 panels (assembly + LU + 20 right-hand sides) against a bare LAPACK LU of a random matrix
  of the same size (target 4x), and peak memory of a 4,000-panel solve (target 1500 MB).
- A whole `run --no-render` of the sample case with a 120 x 25 lattice (3000 panels on the
  semi-span) against the floor "the same run with the sample's 40 x 10 lattice + a bare
  `scipy.linalg.lu_factor` of a random dense 3000 x 3000 matrix": target <= 1.6 x. (The sample's
  42 cases fall into 3 Mach bins, so a run factorises 3 lattice models: the floor counts one LU.)

Run: python benchmarks/bench_lattice.py. Timings are the best of interleaved runs (wall clock)
so that other load on the machine distorts them less.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests"))
sys.path.insert(0, os.path.join(HERE, ".."))

TARGET_TIME_S = 0.6
TARGET_RATIO = 4.0
TARGET_MEM_MB = 1500.0
TARGET_RUN_RATIO = 1.6
FINE, COARSE = (120, 25), (40, 10)


def _wing():
    from helpers.aero_wings import trapezoid

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


def time_fine_run(repeat=2, budget_s=60.0):
    """Best wall times (s) of `run --no-render` of the sample case at the FINE and COARSE
    lattices and of a bare LU of a random dense matrix of the FINE panel count, interleaved
    (coarse run, LU, fine run per round); peak RSS (MB) of the fine run."""
    import _bench_util as u
    from scipy.linalg import lu_factor

    n = FINE[0] * FINE[1]
    a = np.random.default_rng(0).random((n, n))
    t = u.Timings()
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory() as d:
        fine = u.write_case(d, "fine.toml", lattice=FINE)
        coarse = u.write_case(d, "coarse.toml", lattice=COARSE)
        out = os.path.join(d, "out")
        for _ in range(repeat):
            cpu = []
            wall, rss, _ = u.run_child(u.geomload("run", coarse, "--out", out, "--force",
                                                  "--no-render"), usage_out=cpu)
            t.add("coarse", wall, rss, cpu[0])
            tl, cl = time.perf_counter(), time.process_time()
            lu_factor(a, check_finite=False)
            t.add("lu", time.perf_counter() - tl, 0.0, time.process_time() - cl)
            cpu = []
            wall, rss, _ = u.run_child(u.geomload("run", fine, "--out", out, "--force",
                                                  "--no-render"), usage_out=cpu)
            t.add("fine", wall, rss, cpu[0])
            if time.perf_counter() - t0 > budget_s:
                break
    print(t.line("coarse", f"run --no-render, {COARSE[0]} x {COARSE[1]} lattice"))
    print(t.line("lu", f"bare lu_factor {n} x {n}"))
    print(t.line("fine", f"run --no-render, {FINE[0]} x {FINE[1]} lattice"))
    cpu = (t.best_cpu("fine"), t.best_cpu("coarse"), t.best_cpu("lu"))
    return t.best("fine"), t.best("coarse"), t.best("lu"), t.peak("fine"), cpu


def main() -> dict:
    """Run the benchmark; returns {figure: (target, measured, measured / target, floor)}."""
    sys.path.insert(0, HERE)
    import _bench_util as u

    print(u.machine_line())
    t_vlm, t_lu = time_pair(repeat=u.repeats(5))
    mem = peak_memory_mb()
    ratio = t_vlm / t_lu
    t_fine, t_coarse, t_lu3k, rss_fine, (c_fine, c_coarse, c_lu) = time_fine_run(
        repeat=u.repeats(2))
    cpu_ratio = c_fine / (c_coarse + c_lu)
    floor = t_coarse + t_lu3k
    run_ratio = t_fine / floor
    print(f"  2000 panels assembly + LU + 20 rhs {t_vlm:.3f} s = {ratio:.2f} x bare LU {t_lu:.3f} s "
          f"(target <= {TARGET_RATIO:g}); 4000-panel solve peak {mem:.0f} MB")
    print(f"  {FINE[0]} x {FINE[1]} run {t_fine:.2f} s (peak RSS {rss_fine:.0f} MB) = "
          f"{run_ratio:.2f} x ({COARSE[0]} x {COARSE[1]} run {t_coarse:.2f} s + LU {t_lu3k:.3f} s)"
          f" (target <= {TARGET_RUN_RATIO:g}); by CPU time (all threads) {cpu_ratio:.2f} x")
    res = {
        "vlm_2000_panels_assembly_lu_20rhs_s": (TARGET_TIME_S, t_vlm, t_vlm / TARGET_TIME_S,
                                                "absolute"),
        "bare_lu_2000_s": (None, t_lu, None, "floor"),
        "ratio_to_bare_lu": (TARGET_RATIO, ratio, ratio / TARGET_RATIO,
                             f"LU 2000 {t_lu:.3f} s"),
        "peak_memory_4000_panels_MB": (TARGET_MEM_MB, mem, mem / TARGET_MEM_MB, "absolute"),
        "lattice_120x25_run_vs_floor_ratio": (
            TARGET_RUN_RATIO, run_ratio, run_ratio / TARGET_RUN_RATIO,
            f"40x10 run {t_coarse:.2f} s + LU 3000 {t_lu3k:.3f} s"),
        "lattice_120x25_run_vs_floor_cpu_ratio": (
            None, cpu_ratio, None, f"cpu: 40x10 run {c_coarse:.2f} s + LU 3000 {c_lu:.3f} s"),
        "lattice_120x25_run_peak_rss_MB": (None, rss_fine, None, "absolute"),
    }
    return res


if __name__ == "__main__":
    try:
        load = os.getloadavg()[0]
    except OSError:
        load = float("nan")
    results = main()
    print(f"cpus: {os.cpu_count()}, load average (1 min) before run: {load:.2f}")
    for name, (target, measured, r, _floor) in results.items():
        tgt = "-" if target is None else f"{target:g}"
        rr = "" if r is None else f"  ({r:.2f} of target)"
        print(f"{name:40s} target {tgt:>6s}  measured {measured:8.3f}{rr}")
