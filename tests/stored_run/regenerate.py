"""Regenerate the stored run of the sample that tests/test_stored_run.py compares against.

Run it only in a commit of its own, when a physics change is meant to change the results, and
say in the commit message which change and why:

    PYTHONPATH=$PWD python tests/stored_run/regenerate.py

It runs ``sample_geometry/pellin_case.toml`` without 3-D renders and copies every CSV of the run
(stations.csv, envelope.csv, vn.csv, loads/*.csv) here, with the repository path replaced by a
placeholder so the copy does not depend on where the repository is checked out.
"""

from __future__ import annotations

import shutil
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent.parent
CASE = ROOT / "sample_geometry" / "pellin_case.toml"
PLACEHOLDER = "<repository>"


def csv_files(run_dir: Path) -> list:
    """The CSV files of a run folder, as paths relative to it, sorted."""
    return sorted(p.relative_to(run_dir) for p in run_dir.rglob("*.csv"))


def normalised_text(path: Path) -> str:
    """The file's text with the repository path replaced by a placeholder."""
    return path.read_text(encoding="utf-8").replace(str(ROOT), PLACEHOLDER)


def run_sample(out_dir: Path) -> Path:
    """Run the sample case into out_dir/run without renders; return the run folder."""
    from geomload.pipeline import run_case_file

    run = out_dir / "run"
    run_case_file(str(CASE), str(run), render=False)
    return run


def main() -> int:
    with tempfile.TemporaryDirectory() as tmp:
        run = run_sample(Path(tmp))
        for old in csv_files(HERE):
            (HERE / old).unlink()
        for rel in csv_files(run):
            dest = HERE / rel
            dest.parent.mkdir(parents=True, exist_ok=True)
            dest.write_text(normalised_text(run / rel), encoding="utf-8")
        print(f"stored {len(csv_files(run))} CSV files in {HERE}")
    shutil.rmtree(HERE / "__pycache__", ignore_errors=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
