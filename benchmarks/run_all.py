"""Run every benchmark of the project and print one table: figure, target, measured, floor, met.

Each benchmarks/bench_*.py exposes main() -> {figure: (target, measured, measured / target[,
floor])} and prints its own details. The optional fourth item names the floor the figure was
measured against in the same run (e.g. "import numpy 0.21 s"; "absolute" for a wall time or
memory of this machine class). Figures named *_ratio are ratios to that floor and compare across
machines. Every timing is the best of interleaved repeats (see benchmarks/_bench_util.py).

Run: python benchmarks/run_all.py [NAME ...]     NAME: a script's short name (cli, cases,
large_stl, lattice, import) to run only those. GEOMLOAD_BENCH_REPEAT=N sets every repeat count
(1 = a quick look). See DEVELOPERS.md and docs/performance.md.

Every target, as last measured (round 4 after integration, 2026-12-03 04:05-04:20 UTC, 2 cores,
quiet machine: load 1.1-1.7; GEOMLOAD_BENCH_REPEAT=3 except where noted; the sample has the
tail, the control-surface cases (rolling at the first instant and in steady roll, flaps down),
[structure] and error bars; the causes of each miss in docs/performance.md):

figure                                        target   measured  floor (same run)               met
sample_run_vs_numpy_import_ratio                   8       42.5  import numpy 0.113 s           no
sample_no_render_vs_numpy_import_ratio             5       36.5  import numpy 0.113 s           no
sample_run_vs_numpy_import_cpu_ratio               -       35.9  import numpy cpu 0.195 s       -
sample_no_render_vs_numpy_import_cpu_ratio         -       26.1  import numpy cpu 0.195 s       -
cases_1000_vs_42_ratio                           1.3       4.93  42-case run 6.03 s (n=2)       no
cases_work_per_added_case_ms                     1.5       24.7  42-case run 6.03 s             no
cases_1000_vs_42_cpu_ratio                         -       4.42  42-case run cpu 7.62 s         -
stl_4M_run_no_render_s                             5       15.9  absolute, at load 3-5 (10.9 s CPU)  no
stl_4M_run_peak_rss_MB                           700        526  absolute; file 200 MB          yes
stl_4M_read_cut_vs_fromfile_ratio                 10       14.6  fromfile 0.095 s, at load 3-5  no
import_2M_total_s                                  2       0.81  absolute; fromfile 0.039 s     yes
import_vs_fromfile_ratio (2M, page-cached)        10       20.6  fromfile 0.039 s               no
lattice_120x25_run_vs_floor_ratio                1.6       4.47  round 3 (paired CPU -30 %, docs)  no
help_wall_s                                     0.15      0.103  python -c pass 0.035 s         yes
batch_12_variants_2_workers_vs_one_run_ratio       8       7.03  one run 4.45 s (median wall; CPU 10.96)  yes
unsymmetric_vs_symmetric_run_ratio               1.5       1.28  symmetric run 4.16 s           yes
fe_decks_and_sizing_fraction_of_sample_run      0.15     0.0662  sample run (earlier round)     yes
vlm_2000_panels_assembly_lu_20rhs_s              0.6       2.52  absolute (earlier round)       no
ratio_to_bare_lu                                   4       2.37  LU 2000 1.065 s                yes
peak_memory_4000_panels_MB                      1500        294  absolute (earlier round)       yes

Paired before/after this round (same minutes, medians of the pairs, CPU, at load 2-7): the
sample with pictures 14.06 -> 11.81 s (-15 %), --no-render 11.28 -> 8.58 s (-23 %),
1000 cases 43.6 -> 39.1 s (-10 %), the 120 x 25 lattice 72.8 -> 51.0 s (-30 %, with
ControlModel.build).
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
