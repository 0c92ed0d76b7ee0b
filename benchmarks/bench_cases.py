"""Cost of load cases: 1000 load cases against the sample's 42, both `run --no-render`.

Figures (targets on the 2-core reference machine):
- t(1000 cases) / t(42 cases) <= 1.3;
- work per added case, (t1000 - t42) / 958, <= 1.5 ms.

Both case files are the sample case (geometry at its absolute path, its [envelope] kept, which
adds 40 cases to its 2 explicit ones); the 1000-case file adds 958 generated [[load_case]]
blocks with distinct names, speeds 25-50 m/s EAS, altitudes 0-1500 m (the envelope's Mach
bins, so both runs factorise the same lattice models) and load factors -1.5..3.5, every fifth
at 60 % fuel. The floor of both figures is the 42-case run measured in the same rounds.
Best of the interleaved repeats (wall). Run: python benchmarks/bench_cases.py
"""

from __future__ import annotations

import os
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import _bench_util as u  # noqa: E402

TARGET_RATIO, TARGET_MS_PER_CASE = 1.3, 1.5
N_SMALL, N_LARGE = 42, 1000


def main() -> dict:
    """Run the benchmark; returns {figure: (target, measured, measured / target, floor)}."""
    print(u.machine_line())
    with tempfile.TemporaryDirectory() as d:
        small = u.write_case(d, f"cases_{N_SMALL}.toml", n_total=N_SMALL)
        large = u.write_case(d, f"cases_{N_LARGE}.toml", n_total=N_LARGE)
        out = os.path.join(d, "out")
        cmds = {n: u.geomload("run", c, "--out", out, "--force", "--no-render")
                for n, c in ((N_SMALL, small), (N_LARGE, large))}
        t = u.interleaved(cmds, u.repeats(2), budget_s=60.0)
    t_small, t_large = t.best(N_SMALL), t.best(N_LARGE)
    ratio = t_large / t_small
    per_case_ms = 1000.0 * (t_large - t_small) / (N_LARGE - N_SMALL)
    print(t.line(N_SMALL, f"run --no-render, {N_SMALL} cases"))
    print(t.line(N_LARGE, f"run --no-render, {N_LARGE} cases"))
    print(f"  ratio {ratio:.2f} (target <= {TARGET_RATIO:g}); work per added case "
          f"{per_case_ms:.2f} ms (target <= {TARGET_MS_PER_CASE:g} ms)")
    c_small, c_large = t.best_cpu(N_SMALL), t.best_cpu(N_LARGE)
    cpu_ratio = c_large / c_small
    cpu_ms = 1000.0 * (c_large - c_small) / (N_LARGE - N_SMALL)
    print(f"  by CPU time (user + system of the child, less disturbed by other load): ratio "
          f"{cpu_ratio:.2f}, per added case {cpu_ms:.2f} ms")
    floor = f"{N_SMALL}-case run {t_small:.2f} s"
    return {
        "cases_1000_vs_42_ratio": (TARGET_RATIO, ratio, ratio / TARGET_RATIO, floor),
        "cases_work_per_added_case_ms": (TARGET_MS_PER_CASE, per_case_ms,
                                         per_case_ms / TARGET_MS_PER_CASE, floor),
        "cases_1000_vs_42_cpu_ratio": (None, cpu_ratio, None,
                                       f"{N_SMALL}-case run cpu {c_small:.2f} s"),
        "cases_cpu_per_added_case_ms": (None, cpu_ms, None,
                                        f"{N_SMALL}-case run cpu {c_small:.2f} s"),
    }


if __name__ == "__main__":
    main()
