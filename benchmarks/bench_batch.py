"""A 12-variant sweep of the sample on 2 local workers against one sample run.

Both are wall times of the command line, without the 3-D pictures (--no-render), so both include
interpreter start and imports. Target: the sweep costs at most 8 times one run (variants of one
geometry share its read and cut and, when the pipeline supports it, the factorised lattice).
"""

from __future__ import annotations

import os
import pathlib
import subprocess
import sys
import tempfile
import time

ROOT = pathlib.Path(__file__).resolve().parent.parent
SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"
TARGET_RATIO = 8.0
SWEEP = ["--vary", "aircraft.gross_mass_kg=20,21,22,23,24,25",
         "--vary", "spar.chord_fraction=0.25,0.3"]


def _wall(cmd) -> float:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    t0 = time.perf_counter()
    p = subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True, env=env)
    dt = time.perf_counter() - t0
    if p.returncode != 0:
        raise RuntimeError(f"{' '.join(map(str, cmd))}: exit {p.returncode}: {p.stderr[-500:]}")
    return dt


def main() -> dict:
    py = sys.executable
    with tempfile.TemporaryDirectory() as d:
        tmp = pathlib.Path(d)
        t_one = _wall([py, "-m", "geomload.cli", "run", str(SAMPLE), "--out", str(tmp / "one"),
                       "--no-render"])
        t_sweep = _wall([py, "-m", "geomload.batch.cli_batch", "batch", str(SAMPLE), *SWEEP,
                         "--out", str(tmp / "sweep"), "--workers", "2", "--no-render"])
    ratio = t_sweep / t_one
    print(f"one sample run: {t_one:.2f} s; 12-variant sweep on 2 workers: {t_sweep:.2f} s "
          f"(ratio {ratio:.2f}, target <= {TARGET_RATIO:g})")
    return {"batch_12_variants_2_workers_vs_one_run_ratio": (TARGET_RATIO, ratio,
                                                             ratio / TARGET_RATIO)}


if __name__ == "__main__":
    main()
