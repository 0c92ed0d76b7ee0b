"""Cost of the structural hand-off outputs against a sample run.

- every case's FE beam deck and nodal-loads CSV (fe/) plus the sizing table and plot, written
  after an in-memory run of the bundled sample; as a fraction of the sample's end-to-end
  `geomload run` wall time (target at most 0.15). matplotlib is imported before the timing,
  as the run's own plots have loaded it by then.
"""

from __future__ import annotations

import pathlib
import subprocess
import sys
import tempfile
import time

ROOT = pathlib.Path(__file__).resolve().parent.parent
SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"
sys.path.insert(0, str(ROOT))


def _fe_outputs(run, folder: pathlib.Path) -> float:
    from geomload.export import fe, sizing
    from geomload.geometry.read import UNITS

    t0 = time.perf_counter()
    unit = run.mesh.units if run.mesh.units in UNITS else "m"
    fe.write_fe_decks(folder, [c.loads for c in run.cases], run.frame, UNITS[unit], unit)
    sizing.write_sizing(folder, sizing.size_from_run(run))
    return time.perf_counter() - t0


def main() -> dict:
    from geomload.case import load_case
    from geomload.pipeline import compute

    with tempfile.TemporaryDirectory() as d:
        tmp = pathlib.Path(d)
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-m", "geomload.cli", "run", str(SAMPLE), "--out",
                        str(tmp / "s"), "--force"], check=True, cwd=ROOT,
                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        t_run = time.perf_counter() - t0
        run = compute(load_case(str(SAMPLE)))
        import matplotlib.figure  # noqa: F401 - the run's own plots have loaded it already
        t_fe = min(_fe_outputs(run, tmp / f"fe{k}") for k in range(3))
    ratio = t_fe / t_run
    print(f"sample run end to end: {t_run:.2f} s; {len(run.cases)} FE decks + nodal CSVs + "
          f"sizing table and plot: {t_fe:.3f} s; fraction {ratio:.3f} (target 0.15)")
    return {"fe_decks_and_sizing_fraction_of_sample_run": (0.15, ratio, ratio / 0.15)}


if __name__ == "__main__":
    main()
