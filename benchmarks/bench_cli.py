"""End-to-end figures of the command line on the bundled sample.

- `geomload --help` wall time (target 0.5 s; floor: a bare `python -c pass`).
- the sample case end to end: import, cut, solve, all cases, all exports (target 5 s wall;
  floor: the single-case run below).
- an envelope of ~30 cases at one Mach against a single-case run of the same wing (target 2x).
"""

from __future__ import annotations

import pathlib
import subprocess
import sys
import tempfile
import time

ROOT = pathlib.Path(__file__).resolve().parent.parent
SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"


def _wall(cmd, repeat=3):
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        best = min(best, time.perf_counter() - t0)
    return best


def _geomload():
    return [sys.executable, "-m", "geomload.cli"]


def _single_case_file(tmp: pathlib.Path, n_cases: int) -> pathlib.Path:
    """A copy of the sample case with its envelope off and n explicit cases at one Mach."""
    text = SAMPLE.read_text()
    head = text[:text.index("[[load_case]]")]
    tail = text[text.index("[lattice]"):]
    head = head.replace('file = "pellin_half_wing_mm.stl"',
                        f'file = "{(SAMPLE.parent / "pellin_half_wing_mm.stl").as_posix()}"')
    blocks = []
    for i in range(n_cases):
        n = -1.5 + 5.0 * i / max(n_cases - 1, 1)  # load factors from -1.5 to 3.5 at 34 m/s EAS
        blocks.append(f'[[load_case]]\nname = "case {i + 1}"\nspeed = 34.0\nspeed_unit = "m/s"\n'
                      f'speed_type = "EAS"\naltitude = 0.0\nload_factor = {n:.4f}\n')
    path = tmp / f"bench_{n_cases}.toml"
    path.write_text(head + "\n".join(blocks) + "\n" + tail)
    return path


def main() -> dict:
    floor_py = _wall([sys.executable, "-c", "pass"])
    t_help = _wall(_geomload() + ["--help"])
    print(f"python -c pass: {floor_py:.3f} s; geomload --help: {t_help:.3f} s")
    with tempfile.TemporaryDirectory() as d:
        tmp = pathlib.Path(d)
        t_sample = _wall(_geomload() + ["run", str(SAMPLE), "--out", str(tmp / "s"), "--force"], 1)
        one = _single_case_file(tmp, 1)
        many = _single_case_file(tmp, 30)
        t_one = _wall(_geomload() + ["run", str(one), "--out", str(tmp / "o"), "--force",
                                     "--no-render"], 2)
        t_many = _wall(_geomload() + ["run", str(many), "--out", str(tmp / "m"), "--force",
                                      "--no-render"], 2)
    print(f"sample end to end: {t_sample:.2f} s; single case: {t_one:.2f} s; "
          f"30 cases at one Mach: {t_many:.2f} s (ratio {t_many / t_one:.2f})")
    ratio = t_many / t_one
    return {
        "help_wall_s": (0.5, t_help, t_help / 0.5),
        "help_vs_bare_python_ratio": (None, t_help / floor_py, None),
        "sample_run_end_to_end_s": (5.0, t_sample, t_sample / 5.0),
        "envelope_30_vs_1_case_ratio": (2.0, ratio, ratio / 2.0),
    }


if __name__ == "__main__":
    main()
