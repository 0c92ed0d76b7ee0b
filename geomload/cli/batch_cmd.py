"""The click commands `batch` and `compare` (the library they call is geomload.batch).

Both print; the library functions they call return data. Exit codes as the rest of the CLI:
0 ok, 1 bad input / unreachable cluster / some variant failed, 2 usage, 3 internal error.
"""

from __future__ import annotations

import sys

import click

from geomload.cli.common import EXIT_INPUT, guarded as _guarded  # the CLI's one error and
# signal handling: exit codes 1/2/3 and 128 + signal, one line on stderr, no traceback
from geomload.textsafe import printable


@click.command("batch")
@click.argument("case_files", nargs=-1, required=True, type=click.Path(dir_okay=False))
@click.option("--vary", "vary", multiple=True, metavar="KEY=V1,V2,...",
              help="Run every value of a case-file key given by its dotted path, e.g. "
                   "aircraft.gross_mass_kg=20,22,24 or load_case[1].load_factor=2.5,3. Repeat "
                   "for a grid. A relative geometry.file is relative to the case file's folder.")
@click.option("--out", "out_dir", type=click.Path(file_okay=True), required=True,
              help="Batch folder (refused if it exists, unless --force and geomload made it).")
@click.option("--workers", type=click.IntRange(min=1), default=None,
              help="Local worker processes (default: the CPUs available; 1 runs in this process).")
@click.option("--cluster", "cluster", default=None, metavar="ADDRESS",
              help="Send the variants to a running Dask scheduler, e.g. tcp://10.0.0.5:8786 "
                   "(case and geometry files must be visible to its workers at the same paths).")
@click.option("--cluster-timeout", type=click.FloatRange(min=0.1), default=10.0, show_default=True,
              help="Seconds allowed to reach the --cluster scheduler.")
@click.option("--force", is_flag=True, help="Replace an existing batch folder made by geomload.")
@click.option("--render/--no-render", "render", default=False,
              help="Also make each run's 3D pictures (off by default: several seconds a variant).")
@_guarded
def batch(case_files, vary, out_dir, workers, cluster, cluster_timeout, force, render):
    """Run a grid of variants of CASE_FILE (--vary), or a list of case files, into --out."""
    from geomload import CAUTION
    from geomload.batch.assemble import run_batch
    from geomload.progress import make_progress

    bar = make_progress()
    try:
        res = run_batch(case_files, vary, out_dir, workers=workers, cluster=cluster,
                        render=render, force=force, progress=bar,
                        cluster_timeout=cluster_timeout)
    finally:
        bar.close()
    seen: dict = {}  # one line per distinct warning, naming the variants that gave it
    for o in res.outcomes:
        for w in o.warnings:
            if not w.startswith("note: "):
                seen.setdefault(w, []).append(o.name)
    for w, names in seen.items():
        who = names[0] if len(names) == 1 else f"{len(names)} variants ({names[0]}, ...)"
        click.echo(f"geomload: warning: {printable(who)}: {printable(w)}", err=True)
    for o in res.failed:
        click.echo(f"geomload: error: variant {printable(o.name)} failed: {printable(o.error)}",
                   err=True)
    width = max(len(printable(o.name)) for o in res.outcomes)
    cols = (("root_shear_max_N", "shear max", 1), ("root_bending_max_Nm", "bending max", 1),
            ("root_bending_min_Nm", "bending min", 1), ("root_torsion_min_Nm", "torsion min", 2))
    click.echo(f"{'variant':<{width}}  " + " ".join(f"{h:>19}" for _k, h, _p in cols)
               + "  (root, limit, N and N m; +- discretization error estimate)")
    for o in res.outcomes:
        if o.ok:
            click.echo(f"{printable(o.name):<{width}}  "
                       + " ".join(f"{_pm(o.root, k, p):>19}" for k, _h, p in cols))
        else:
            click.echo(f"{printable(o.name):<{width}}  failed")
    click.echo(CAUTION)
    n_ok = len(res.outcomes) - len(res.failed)
    d = printable(res.out_dir)
    click.echo(f"{n_ok} of {len(res.outcomes)} variants ran; wrote {d}/batch.csv and "
               f"{d}/index.html")
    if res.failed:
        sys.exit(EXIT_INPUT)


def _pm(root: dict, key: str, digits: int) -> str:
    """'value +-error' of a root load (the error estimate omitted when the run has none)."""
    from geomload.batch.runner import ERR_KEYS

    v, e = root[key], root.get(ERR_KEYS[key][0], float("nan"))
    return f"{v:.{digits}f}" + (f" +-{e:.{digits}f}" if e == e else "")


@click.command("compare")
@click.argument("runs", nargs=-1, required=True, type=click.Path(file_okay=False))
@click.option("--out", "out_dir", type=click.Path(file_okay=True), required=True,
              help="Comparison folder (refused if it exists, unless --force and geomload made it).")
@click.option("--force", is_flag=True, help="Replace an existing comparison folder made by geomload.")
@_guarded
def compare(runs, out_dir, force):
    """Compare the load envelopes of finished run folders (the first is the reference)."""
    from geomload import CAUTION
    from geomload.batch.compare import compare_runs

    res = compare_runs(runs, out_dir, force=force)
    for line in res.summary_lines:
        click.echo(printable(line))
    click.echo(CAUTION)
    d = printable(res.out_dir)
    click.echo(f"wrote {d}/compare.csv and {d}/compare.html")
