"""Run every benchmark of the project and print one table: figure, target, measured, floor, met.

Each benchmarks/bench_*.py exposes main() -> {figure: (target, measured, measured / target[,
floor])} and prints its own details. The optional fourth item names the floor the figure was
measured against in the same run (e.g. "import numpy 0.21 s"; "absolute" for a wall time or
memory of this machine class). Figures named *_ratio are ratios to that floor and compare across
machines. Every timing is the best of interleaved repeats (see benchmarks/_bench_util.py).

Run: python benchmarks/run_all.py [NAME ...]     NAME: a script's short name (cli, cases,
large_stl, lattice, import) to run only those. GEOMLOAD_BENCH_REPEAT=N sets every repeat count
(1 = a quick look). See DEVELOPERS.md and docs/performance.md.

Every target, as last measured (round 7 after integration, 2026-12-03 12:27-12:48 UTC, 2 cores,
no other session: load 0.2-1.7; GEOMLOAD_BENCH_REPEAT=3; the sample has the tail, the
control-surface cases, [structure] and error bars; the causes of each miss and the paired
before/after runs in docs/performance.md):

figure                                        target   measured  floor (same run)               met
sample_run_vs_numpy_import_ratio                   8       37.6  import numpy 0.123 s           no
sample_no_render_vs_numpy_import_ratio             5       26.2  import numpy 0.123 s           no
sample_run_vs_numpy_import_cpu_ratio               -       34.2  import numpy cpu 0.212 s       -
sample_no_render_vs_numpy_import_cpu_ratio         -       23.3  import numpy cpu 0.212 s       -
cases_1000_vs_42_ratio                           1.3       2.25  42-case run 5.11 s             no
cases_work_per_added_case_ms                     1.5       6.67  42-case run 5.11 s             no
cases_1000_vs_42_cpu_ratio                         -       2.71  42-case run cpu 5.81 s         -
stl_4M_run_no_render_s                             5       6.27  absolute (paired median 5.09)  no
stl_4M_run_peak_rss_MB                           700        588  absolute; file 200 MB          yes
stl_4M_read_cut_vs_fromfile_ratio                 10       13.9  fromfile 0.061 s               no
import_2M_total_s                                  2      0.673  absolute; fromfile 0.030 s     yes
import_vs_fromfile_ratio (2M, page-cached)        10       22.5  fromfile 0.030 s               no
lattice_120x25_run_vs_floor_ratio                1.6       2.91  40x10 run 4.46 s + LU 0.373 s  no
help_wall_s                                     0.15      0.114  python -c pass 0.038 s         yes
batch_12_variants_2_workers_vs_one_run_ratio       8       5.27  one run (median wall)          yes
unsymmetric_vs_symmetric_run_ratio               1.5       1.12  symmetric run 3.30 s           yes
error_estimate_fraction_of_sample_run            0.4      0.156  -                              yes
fe_decks_and_sizing_fraction_of_sample_run      0.15     0.0893  sample run                     yes
vlm_2000_panels_assembly_lu_20rhs_s              0.6      0.405  absolute                       yes
ratio_to_bare_lu                                   4       2.18  LU 2000 0.186 s                yes
peak_memory_4000_panels_MB                      1500       1000  absolute                       yes
"""

from __future__ import annotations

import importlib.util
import os
import pathlib
import sys
import time


def _load(path: pathlib.Path):
    spec = importlib.util.spec_from_file_location(path.stem, path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _fmt(v):
    if v is None:
        return "-"
    if isinstance(v, float):
        return f"{v:.3g}"
    return str(v)


def rows_of(figures: dict) -> list:
    """Table rows (figure, target, measured, floor, met) of one script's figures."""
    rows = []
    for name, value in figures.items():
        target, measured = value[0], value[1]
        floor = value[3] if len(value) > 3 else "-"
        met = "-" if target is None else ("yes" if measured <= target else "NO")
        rows.append((name, _fmt(target), _fmt(measured), str(floor), met))
    return rows


def print_table(rows: list) -> None:
    w = max([len(r[0]) for r in rows] + [6])
    wf = max([len(r[3]) for r in rows] + [5])
    print(f"{'figure':<{w}}  {'target':>8}  {'measured':>9}  {'floor':<{wf}}  met")
    for name, target, measured, floor, met in rows:
        print(f"{name:<{w}}  {target:>8}  {measured:>9}  {floor:<{wf}}  {met}")


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    here = pathlib.Path(__file__).resolve().parent
    sys.path.insert(0, str(here))
    scripts = sorted(here.glob("bench_*.py"))
    if argv:
        unknown = [a for a in argv if not (here / f"bench_{a}.py").is_file()]
        if unknown:
            names = ", ".join(p.stem[len("bench_"):] for p in scripts)
            print(f"run_all.py: unknown benchmark(s) {', '.join(unknown)} (have: {names})",
                  file=sys.stderr)
            return 2
        scripts = [here / f"bench_{a}.py" for a in argv]
    try:
        load = "%.2f" % os.getloadavg()[0]
    except OSError:
        load = "?"
    print(f"cpus {os.cpu_count()}, load average (1 min) at start {load}")
    rows, t_all = [], time.perf_counter()
    for path in scripts:
        print(f"== {path.name}", flush=True)
        t0 = time.perf_counter()
        try:
            figures = _load(path).main() or {}
        except Exception as exc:  # a broken benchmark is reported, the others still run
            rows.append((path.stem, "-", "-", f"FAILED: {type(exc).__name__}: {exc}", "NO"))
            continue
        print(f"   ({time.perf_counter() - t0:.0f} s)", flush=True)
        rows.extend(rows_of(figures))
    print()
    print_table(rows)
    print(f"(whole run {time.perf_counter() - t_all:.0f} s; timings are the best of interleaved "
          "repeats)")
    try:
        load_end = os.getloadavg()
    except OSError:
        load_end = None
    if load_end is not None and max(load_end) > (os.cpu_count() or 1):
        print(f"WARNING: load average {', '.join(f'{v:.1f}' for v in load_end)} (1, 5, 15 min) on "
              f"{os.cpu_count()} cpus: other work inflated the wall times, long runs more than "
              "their short floors; judge by the *_cpu_* rows or rerun on a quiet machine")
    return 0


if __name__ == "__main__":
    sys.exit(main())
