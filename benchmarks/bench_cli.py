"""End-to-end figures of the command line on the bundled sample, as ratios to floors measured in
the same run.

Figures (targets on the 2-core reference machine):
- the sample end to end with pictures (`run sample_geometry/pellin_case.toml --out DIR --force`):
  <= 8 x the floor `python -c "import numpy"`;
- the same with `--no-render`: <= 5 x that floor;
- `geomload --help`: < 0.15 s wall (an absolute figure of this machine class; the ratio to a
  bare `python -c pass` is printed beside it and compares across machines).

Each command is interleaved with its floor; best of the repeats (wall), median printed too.
Run: python benchmarks/bench_cli.py
"""

from __future__ import annotations

import os
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import _bench_util as u  # noqa: E402

TARGET_HELP_S = 0.15
TARGET_SAMPLE_RATIO, TARGET_NO_RENDER_RATIO = 8.0, 5.0


def main() -> dict:
    """Run the benchmark; returns {figure: (target, measured, measured / target, floor)}."""
    print(u.machine_line())
    t = u.interleaved({"pass": u.python("-c", "pass"), "help": u.geomload("--help")}, u.repeats(7))
    with tempfile.TemporaryDirectory() as d:
        out = os.path.join(d, "out")
        numpy = ("numpy", u.python("-c", "import numpy"))
        cmds = [numpy, ("sample", u.geomload("run", u.SAMPLE, "--out", out, "--force")),
                numpy, ("no_render", u.geomload("run", u.SAMPLE, "--out", out, "--force",
                                                "--no-render"))]
        t = u.interleaved(cmds, u.repeats(3), t, budget_s=60.0)
    t_pass, t_help = t.best("pass"), t.best("help")
    t_np = t.best("numpy")
    t_s, t_nr = t.best("sample"), t.best("no_render")
    for name, label in (("pass", "python -c pass"), ("help", "geomload --help"),
                        ("numpy", 'python -c "import numpy"'), ("sample", "run sample"),
                        ("no_render", "run sample --no-render")):
        print(t.line(name, label))
    r_s, r_nr, r_help = t_s / t_np, t_nr / t_np, t_help / t_pass
    print(f"  sample {r_s:.1f} x numpy import (target <= {TARGET_SAMPLE_RATIO:g}); --no-render "
          f"{r_nr:.1f} x (target <= {TARGET_NO_RENDER_RATIO:g}); --help {t_help:.3f} s "
          f"(target < {TARGET_HELP_S:g} s) = {r_help:.1f} x python -c pass")
    c_np = t.best_cpu("numpy")
    rc_s, rc_nr = t.best_cpu("sample") / c_np, t.best_cpu("no_render") / c_np
    print(f"  by CPU time (user + system, all threads): sample {rc_s:.1f} x, --no-render "
          f"{rc_nr:.1f} x numpy import")
    f_np, f_pass = f"import numpy {t_np:.3f} s", f"python -c pass {t_pass:.3f} s"
    return {
        "sample_run_vs_numpy_import_ratio": (TARGET_SAMPLE_RATIO, r_s, r_s / TARGET_SAMPLE_RATIO,
                                             f_np),
        "sample_no_render_vs_numpy_import_ratio": (TARGET_NO_RENDER_RATIO, r_nr,
                                                   r_nr / TARGET_NO_RENDER_RATIO, f_np),
        "sample_run_vs_numpy_import_cpu_ratio": (None, rc_s, None, f"import numpy cpu {c_np:.3f} s"),
        "sample_no_render_vs_numpy_import_cpu_ratio": (None, rc_nr, None,
                                                       f"import numpy cpu {c_np:.3f} s"),
        "sample_run_s": (None, t_s, None, "absolute"),
        "sample_no_render_s": (None, t_nr, None, "absolute"),
        "help_wall_s": (TARGET_HELP_S, t_help, t_help / TARGET_HELP_S, f"absolute; {f_pass}"),
        "help_vs_bare_python_ratio": (None, r_help, None, f_pass),
        "help_cpu_s": (None, t.best_cpu("help"), None,
                       f"absolute; python -c pass cpu {t.best_cpu('pass'):.3f} s"),
    }


if __name__ == "__main__":
    main()
