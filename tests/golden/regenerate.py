"""Regenerate the golden console texts of `aero` and `run` on the sample wing.

    cd <repo> && PYTHONPATH=$PWD python tests/golden/regenerate.py

Review the diff before committing: a changed number here is a changed result.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parent.parent
SAMPLE = REPO / "sample_geometry"
OUT_TOKEN = "<OUT>"
# the two commands whose console text is kept: (golden file, arguments after `geomload`)
COMMANDS = {
    "aero_sample.txt": ["aero", "pellin_half_wing_mm.stl", "--units", "mm", "--alpha", "4",
                        "--stations", "20"],
    "run_sample.txt": ["run", "pellin_case.toml", "--out", OUT_TOKEN, "--no-render"],
}


def console_text(args, workdir) -> str:
    """stdout, then stderr, of one CLI call run in sample_geometry/ (the output folder, which
    changes per call, is shown as <OUT>)."""
    out = str(Path(workdir) / "run")
    argv = [out if a == OUT_TOKEN else a for a in args]
    env = {**os.environ, "PYTHONPATH": str(REPO), "COLUMNS": "120", "NO_COLOR": "1"}
    p = subprocess.run([sys.executable, "-m", "geomload.cli", *argv], cwd=SAMPLE, env=env,
                       capture_output=True, text=True, timeout=300)
    if p.returncode != 0:
        raise RuntimeError(f"geomload {' '.join(argv)} exited {p.returncode}:\n{p.stderr}")
    text = "=== stdout\n" + p.stdout + "=== stderr\n" + p.stderr
    return text.replace(out, OUT_TOKEN)


def main() -> None:
    for name, args in COMMANDS.items():
        with tempfile.TemporaryDirectory() as tmp:
            (HERE / name).write_text(console_text(args, tmp), encoding="utf-8")
        print(f"wrote {HERE / name}")


if __name__ == "__main__":
    main()
