"""Cost of writing a many-case run's outputs (the export stage alone), paired against another
checkout of geomload.

The run is computed once in each process; then every output is written `--reps` times into a
run folder (`pipeline.write_run`, staged and committed as `geomload run` does, `--no-render`)
with the plots drawn in this process (no child processes), and the CPU and wall time of each
write are printed, with the per-writer CPU of the last one. With --vs DIR the same is done by
a process importing geomload from DIR, alternately (A B A B ...), and the medians of the
ratios A/B are printed.

    python benchmarks/bench_export.py                       # the 1000-case file, this tree
    python benchmarks/bench_export.py --vs /path/to/other/checkout --pairs 3
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)

WRITERS = [("geomload.export", "_write_tables"), ("geomload.export.tables", "write_summary_json"),
           ("geomload.export.fe", "write_fe_decks"), ("geomload.export.sizing", "write_sizing"),
           ("geomload.export.vtk", "write_all_vtk"), ("geomload.export.plots", "plot_images"),
           ("geomload.export.report", "write_report")]


def _child(case_file: str, reps: int, out: str) -> dict:
    """In a process that imports geomload from sys.path: compute, then write `reps` times."""
    import functools
    import importlib

    from geomload import forked
    from geomload.config.parse import read_case_file
    from geomload.pipeline import compute, write_run

    forked.parallel_pays = lambda jobs=1: False  # everything in this process: its CPU is all
    cpu: dict = {}
    for mod, name in WRITERS:
        m = importlib.import_module(mod)
        f = getattr(m, name)

        def timed(*a, _f=f, _k=name, **k):
            c0 = time.process_time()
            try:
                return _f(*a, **k)
            finally:
                cpu[_k] = cpu.get(_k, 0.0) + time.process_time() - c0

        setattr(m, name, functools.wraps(f)(timed))
    run = compute(read_case_file(case_file), error_bars=True)
    walls, cpus = [], []
    for _ in range(reps):
        cpu.clear()
        w0, c0 = time.perf_counter(), time.process_time()
        write_run(run, out, force=True, render=False)
        walls.append(time.perf_counter() - w0)
        cpus.append(time.process_time() - c0)
    return {"wall": walls, "cpu": cpus, "writers": dict(cpu), "cases": len(run.cases)}


def _run_tree(tree: str, case_file: str, reps: int, out: str) -> dict:
    env = {**os.environ, "PYTHONPATH": tree}
    code = (f"import sys, json; sys.path.insert(0, {HERE!r}); import bench_export as b; "
            f"print('RESULT', json.dumps(b._child({case_file!r}, {reps}, {out!r})))")
    p = subprocess.run([sys.executable, "-c", code], env=env, cwd=tree, capture_output=True,
                       text=True, check=True)
    line = [ln for ln in p.stdout.splitlines() if ln.startswith("RESULT ")][-1]
    return json.loads(line[len("RESULT "):])


def main(argv=None) -> dict:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cases", type=int, default=1000)
    ap.add_argument("--case-file", default=None, help="a case file (default: a generated one)")
    ap.add_argument("--reps", type=int, default=3, help="writes per process (median taken)")
    ap.add_argument("--vs", default=None, help="another checkout of geomload (B)")
    ap.add_argument("--pairs", type=int, default=1)
    ap.add_argument("--tree", default=ROOT, help="the checkout measured (A; default this one)")
    a = ap.parse_args(argv)
    with tempfile.TemporaryDirectory() as d:
        case_file = a.case_file
        if case_file is None:
            sys.path.insert(0, HERE)
            import _bench_util as u

            case_file = str(u.write_case(d, "cases.toml", n_total=a.cases))
        rows = []
        for _ in range(a.pairs):
            A = _run_tree(a.tree, case_file, a.reps, os.path.join(d, "A"))
            B = _run_tree(a.vs, case_file, a.reps, os.path.join(d, "B")) if a.vs else None
            rows.append((A, B))
            load = os.getloadavg()[0]
            msg = (f"A: {A['cases']} cases, export wall {statistics.median(A['wall']):.3f} s, "
                   f"CPU {statistics.median(A['cpu']):.3f} s")
            if B:
                msg += (f" | B: wall {statistics.median(B['wall']):.3f} s, CPU "
                        f"{statistics.median(B['cpu']):.3f} s | load {load:.2f}")
            print(msg, flush=True)
        print("per writer, CPU s of the last write (A" + (" / B)" if a.vs else ")"))
        for k in rows[-1][0]["writers"]:
            va = statistics.median(r[0]["writers"].get(k, 0.0) for r in rows)
            vb = (statistics.median(r[1]["writers"].get(k, 0.0) for r in rows) if a.vs else None)
            print(f"  {k:22s} {va:7.3f}" + (f" / {vb:7.3f}" if vb is not None else ""))
        out = {}
        if a.vs:
            rw = [statistics.median(A["wall"]) / statistics.median(B["wall"]) for A, B in rows]
            rc = [statistics.median(A["cpu"]) / statistics.median(B["cpu"]) for A, B in rows]
            print(f"A/B export wall median {statistics.median(rw):.3f}, CPU median "
                  f"{statistics.median(rc):.3f} ({len(rows)} pairs)")
            out = {"export_wall_ratio": statistics.median(rw),
                   "export_cpu_ratio": statistics.median(rc)}
    return out


if __name__ == "__main__":
    main()
