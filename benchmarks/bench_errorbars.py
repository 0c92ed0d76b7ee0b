"""Cost of the error bars on the headline loads (two coarser lattices, shared cache) against a
sample run.

- the sample's `geomload run` end to end (no 3-D renders) with its error estimate, and the
  estimate's own time (RunResult.timings["error estimate"], best of the repeats); the figure is
  the estimate / (run without it), target at most 0.40.
"""

from __future__ import annotations

import pathlib
import sys
import tempfile
import time

ROOT = pathlib.Path(__file__).resolve().parent.parent
SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))


def main() -> dict:
    from _bench_util import repeats

    from geomload.pipeline import run_case_file

    runs, estimates = [], []
    with tempfile.TemporaryDirectory() as d:
        for k in range(repeats(3)):
            t0 = time.perf_counter()
            result, _files = run_case_file(str(SAMPLE), str(pathlib.Path(d) / f"r{k}"),
                                           render=False)
            runs.append(time.perf_counter() - t0)
            estimates.append(result.timings["error estimate"])
    k = min(range(len(runs)), key=runs.__getitem__)
    ratio = estimates[k] / (runs[k] - estimates[k])
    print(f"sample run (no renders) with error bars: {runs[k]:.2f} s; of which the estimate "
          f"{estimates[k]:.2f} s; it adds {100 * ratio:.0f} % to the run (target 40 %)")
    return {"error_estimate_fraction_of_sample_run": (0.40, ratio, ratio / 0.40)}


if __name__ == "__main__":
    main()
