"""A 12-variant sweep of the sample on 2 local workers against one sample run.

Both are command lines timed end to end without the 3-D pictures (`run --no-render`; a batch
makes none unless `--render`), so both include interpreter start and imports, and both estimate
the error bars of the root loads (two coarser lattices). Target: the sweep costs at most 8 times
one run (variants of one geometry share its read and cut and every factorised lattice, the
coarser ones of the error bars included; each local worker writes its run folders in place).

Measured as pairs, interleaved (run, sweep, run, sweep, ...), so both see the same background
load; the figure is the ratio of the MEDIAN wall times, with the best and the CPU times (user +
system of the command and its worker processes, from os.wait4) printed beside it. On a machine
shared with other work the CPU ratio is the steadier one; on 2 idle cores the sweep's wall time
approaches half its CPU time.
"""

from __future__ import annotations

import os
import pathlib
import statistics
import sys
import tempfile

HERE = pathlib.Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

import _bench_util as u  # noqa: E402

TARGET_RATIO = 8.0
SWEEP = ["--vary", "aircraft.gross_mass_kg=20,21,22,23,24,25",
         "--vary", "spar.chord_fraction=0.25,0.3"]


def main() -> dict:
    n = u.repeats(3)
    t = u.Timings()
    loads = [os.getloadavg()[0]]
    with tempfile.TemporaryDirectory() as d:
        tmp = pathlib.Path(d)
        for k in range(n):
            pairs = [("one run", u.geomload("run", u.SAMPLE, "--out", tmp / f"one{k}",
                                           "--no-render")),
                     ("sweep", u.geomload("batch", u.SAMPLE, *SWEEP, "--out", tmp / f"sweep{k}",
                                         "--workers", "2"))]
            u.interleaved(pairs, 1, t)
            loads.append(os.getloadavg()[0])
    one, sweep = t.median("one run"), t.median("sweep")
    ratio = sweep / one
    cpu_ratio = statistics.median(t.cpu["sweep"]) / statistics.median(t.cpu["one run"])
    print(u.machine_line() + f"; load average during the pairs {min(loads):.2f}-{max(loads):.2f}")
    for name, label in (("one run", "one sample run (--no-render)"),
                        ("sweep", "12-variant sweep, 2 workers")):
        print(t.line(name, label) + f"  median cpu {statistics.median(t.cpu[name]):.3f} s")
    print(f"sweep / one run: median wall {ratio:.2f} (best {t.best('sweep') / t.best('one run'):.2f}),"
          f" median CPU {cpu_ratio:.2f}; target <= {TARGET_RATIO:g}")
    return {"batch_12_variants_2_workers_vs_one_run_ratio": (TARGET_RATIO, ratio,
                                                             ratio / TARGET_RATIO, "one run"),
            "batch_12_variants_cpu_vs_one_run_ratio": (None, cpu_ratio, None, "one run")}


if __name__ == "__main__":
    main()
