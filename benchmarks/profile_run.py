"""Where the time of one `geomload run` goes: a stage table and the top functions (cProfile).

Not a benchmark (run_all.py does not run it): a tool that tells the speed work where to look.

    python benchmarks/profile_run.py sample            # the sample, with pictures
    python benchmarks/profile_run.py sample --no-render
    python benchmarks/profile_run.py cases 1000        # the bench_cases.py 1000-case file
    python benchmarks/profile_run.py lattice           # the sample at a 120 x 25 lattice
    python benchmarks/profile_run.py stl4m             # the cached 4-million-triangle wing
    python benchmarks/profile_run.py imports           # -X importtime by top-level package

The plots and 3-D renders run in child processes when a CPU is free (`geomload.forked`), where
the profile does not see them: the profiled run draws them in its own process (`--children`
leaves the choice to the run).

Prints (1) the stages: cumulative time of the pipeline's main functions as a share of the
profiled run (stages nest: "solve_case" contains "_trim"); (2) the top functions by own time
(file:function, calls, share); (3) with --importtime, import cost by top-level package. cProfile
adds overhead to Python-heavy code (roughly 1.3-2x on per-call work), so read shares, not
absolute times; the benchmarks give the true wall figures. Add --out FILE.prof to keep the raw
profile (e.g. for snakeviz or pstats).
"""

from __future__ import annotations

import argparse
import cProfile
import os
import pstats
import re
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)

import _bench_util as u  # noqa: E402

# (label, path suffix, function name): the pipeline's stages, in run order
STAGES = [
    ("read_case_file (parse TOML)", "geomload/config/parse.py", "read_case_file"),
    ("compute (geometry+aero+loads)", "geomload/pipeline.py", "compute"),
    ("  load_wing (read, frame, cut)", "geomload/geometry/__init__.py", "load_wing"),
    ("    read_mesh", "geomload/geometry/readers/__init__.py", "read_mesh"),
    ("    detect_frame_indexed", "geomload/geometry/frame.py", "detect_frame_indexed"),
    ("    cut_stations", "geomload/geometry/stations.py", "cut_stations"),
    ("  build_lattice", "geomload/aero/lattice.py", "build_lattice"),
    ("  AeroModel.__init__ (assembly+solve)", "geomload/aero/solve.py", "__init__"),
    ("  critical_points (envelope)", "geomload/loads/vn.py", "critical_points"),
    ("  vn_diagram", "geomload/loads/vn.py", "vn_diagram"),
    ("  solve_case (all cases)", "geomload/loads/cases.py", "solve_case"),
    ("    trim_case", "geomload/aero/trim.py", "trim_case"),
    ("      AeroModel.solve", "geomload/aero/solve.py", "solve"),
    ("      AeroModel.alpha_for_cl", "geomload/aero/solve.py", "alpha_for_cl"),
    ("    case_loads (grid, beam)", "geomload/loads/flight_case.py", "case_loads"),
    ("      beam.integrate", "geomload/loads/beam.py", "integrate"),
    ("      equilibrium_residual", "geomload/loads/beam.py", "equilibrium_residual"),
    ("      inertia_loads", "geomload/loads/masses.py", "inertia_loads"),
    ("  error_bars (coarser lattices)", "geomload/aero/convergence.py", "error_bars"),
    ("    coarse_roots (their runs)", "geomload/aero/convergence.py", "coarse_roots"),
    ("  envelope_of", "geomload/loads/envelope.py", "envelope_of"),
    ("  software_versions (metadata)", "geomload/export/run_marker.py", "software_versions"),
    ("write_all (every output)", "geomload/export/__init__.py", "write_all"),
    ("  write_loads_csv (per case)", "geomload/export/tables.py", "write_loads_csv"),
    ("  write_summary_json", "geomload/export/tables.py", "write_summary_json"),
    ("  write_structural_handoff (fe/)", "geomload/export/fe.py", "write_structural_handoff"),
    ("    beam_deck", "geomload/export/fe_deck.py", "beam_deck"),
    ("  surface_data", "geomload/export/display_surface.py", "surface_data"),
    ("  write_all_vtk", "geomload/export/vtk.py", "write_all_vtk"),
    ("  plot_images (in this process)", "geomload/export/plots.py", "plot_images"),
    ("    savefig", "matplotlib/figure.py", "savefig"),
    ("  render_images (in this process)", "geomload/export/render.py", "render_images"),
    ("  write_report", "geomload/export/report.py", "write_report"),
    ("  atomic writes (checks, fsync)", "geomload/export/atomic.py", "write_bytes_atomic"),
    ("  one fsync pass (sync_at_end)", "geomload/export/atomic.py", "sync_at_end"),
    ("OutputDir.commit", "geomload/export/run_folder.py", "commit"),
    ("every import (incl. module code)", "<frozen importlib._bootstrap>", "_find_and_load"),
]


def _case_args(kind: str, arg: str | None, d: str) -> list:
    if kind == "sample":
        return [str(u.SAMPLE)]
    if kind == "cases":
        return [str(u.write_case(d, "cases.toml", n_total=int(arg or 1000)))]
    if kind == "lattice":
        ns, nc = (int(v) for v in (arg or "120x25").split("x"))
        return [str(u.write_case(d, "lattice.toml", lattice=(ns, nc)))]
    if kind == "stl4m":
        import bench_large_stl

        return [str(u.write_case(d, "fine.toml", stl=bench_large_stl.fine_wing_stl()))]
    raise SystemExit(f"profile_run.py: unknown kind {kind!r}")


def _cum(stats: pstats.Stats, suffix: str, name: str):
    """(calls, cumulative s) of every function matching path suffix and name, outermost only."""
    calls, cum = 0, 0.0
    for (fn, _line, func), (cc, nc, _tt, ct, _callers) in stats.stats.items():
        if func == name and fn.replace(os.sep, "/").endswith(suffix):
            calls += nc
            cum += ct
    return calls, cum


def _short(fn: str) -> str:
    fn = fn.replace(os.sep, "/")
    for mark in ("/site-packages/", str(u.ROOT).replace(os.sep, "/") + "/"):
        if mark in fn:
            return fn.split(mark, 1)[1]
    return fn


def profile(argv: list, out: str | None, top: int, cpu: bool = False,
            children: bool = False) -> None:
    from geomload import cli

    if not children:  # plots and renders in this process, where the profile sees them
        from geomload import forked

        forked.parallel_pays = lambda jobs=1: False

    prof = cProfile.Profile(time.process_time) if cpu else cProfile.Profile()
    t0 = time.perf_counter()
    prof.enable()
    try:
        cli.main(argv)
    except SystemExit as exc:
        if exc.code not in (0, None):
            raise
    finally:
        prof.disable()
    wall = time.perf_counter() - t0
    if out:
        prof.dump_stats(out)
    print(f"profiled `geomload {' '.join(argv[:1])} ... {' '.join(argv[3:])}`: wall {wall:.2f} s "
          f"under cProfile")
    report(pstats.Stats(prof), top, "CPU" if cpu else "wall")


def report(st: pstats.Stats, top: int, kind: str = "") -> None:
    """Print the stage table and the top functions by own time of a profile."""
    total = max(st.total_tt, 1e-9)
    print(f"{kind or 'profiled'} time: {total:.2f} s in all")
    print(f"\n{'stage':38s} {'calls':>7s} {'cum s':>8s} {'share':>7s}")
    for label, suffix, name in STAGES:
        calls, cum = _cum(st, suffix, name)
        if calls:
            print(f"{label:38s} {calls:7d} {cum:8.3f} {100 * cum / total:6.1f}%")
    print(f"\ntop {top} functions by own time (file:function, calls, own s, share, cum s)")
    rows = sorted(st.stats.items(), key=lambda kv: -kv[1][2])[:top]
    for (fn, line, func), (cc, nc, tt, ct, _c) in rows:
        print(f"  {_short(fn)}:{line}:{func:28s} {nc:8d} {tt:7.3f} {100 * tt / total:5.1f}% "
              f"{ct:7.3f}")


_IMPORT_LINE = re.compile(r"import time:\s+(\d+)\s+\|\s+(\d+)\s+\|(\s*)(\S+)")


def import_costs(argv: list) -> None:
    """Import time by top-level package in a fresh process (python -X importtime)."""
    cmd = [sys.executable, "-X", "importtime", "-m", "geomload.cli", *argv]
    t0 = time.perf_counter()
    p = subprocess.run(cmd, capture_output=True, text=True, env=u.child_env())
    wall = time.perf_counter() - t0
    by_root: dict = {}
    for line in p.stderr.splitlines():
        m = _IMPORT_LINE.match(line)
        if m and len(m.group(3)) == 1:  # a top-level import (one space of indent)
            root = m.group(4).split(".")[0]
            by_root[root] = by_root.get(root, 0) + int(m.group(2))
    total_us = sum(by_root.values())
    print(f"\n-X importtime of `geomload {' '.join(argv[:1])} ...`: wall {wall:.2f} s, imports "
          f"{total_us / 1e6:.2f} s ({100 * total_us / 1e6 / wall:.0f} % of the wall)")
    for root, us in sorted(by_root.items(), key=lambda kv: -kv[1])[:15]:
        print(f"  {root:24s} {us / 1e6:7.3f} s  {100 * us / 1e6 / wall:5.1f}%")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("kind", choices=["sample", "cases", "lattice", "stl4m", "imports"])
    ap.add_argument("arg", nargs="?", help="cases: N (default 1000); lattice: NSxNC")
    ap.add_argument("--no-render", action="store_true")
    ap.add_argument("--importtime", action="store_true", help="also import cost by package")
    ap.add_argument("--out", default=None, help="write the raw cProfile stats here")
    ap.add_argument("--top", type=int, default=25)
    ap.add_argument("--cpu", action="store_true",
                    help="profile CPU time of the process (all threads) instead of wall time: "
                         "steadier when other work shares the cores; blind to waiting")
    ap.add_argument("--children", action="store_true",
                    help="let the run draw plots and renders in child processes (unprofiled)")
    ap.add_argument("--load", default=None, metavar="FILE.prof",
                    help="print the tables of a saved profile instead of running one")
    a = ap.parse_args(argv)
    if a.load:
        report(pstats.Stats(a.load), a.top)
        return 0
    sys.path.insert(0, str(u.ROOT))  # profile this checkout's geomload
    with tempfile.TemporaryDirectory() as d:
        kind = "sample" if a.kind == "imports" else a.kind
        args = ["run", *_case_args(kind, a.arg, d), "--out", os.path.join(d, "out"), "--force"]
        if a.no_render or kind != "sample":
            args.append("--no-render")
        if a.kind != "imports":
            profile(args, a.out, a.top, a.cpu, a.children)
        if a.importtime or a.kind == "imports":
            import_costs(args)
    return 0


if __name__ == "__main__":
    sys.exit(main())
