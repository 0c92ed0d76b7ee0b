"""The batch folder: every variant's run folder, batch.csv, plots against each varied key and a
self-contained index.html; staged aside and moved into place whole (OutputDir).

Layout::

    batch.csv  index.html  plots/root_loads_vs_<key>.png
    runs/<variant>/case.toml  runs/<variant>/<the run's own files: envelope.csv, report.html ...>
"""

from __future__ import annotations

import dataclasses
import html
import math
import os
from dataclasses import dataclass
from pathlib import Path

from geomload import CAUTION, __version__
from geomload.batch import _api
from geomload.batch.html_page import page, png_img
from geomload.batch.runner import (ERR_KEYS, NOT_MONOTONE, ROOT_KEYS, connect, default_workers,
                                   run_variants)
from geomload.batch.variants import make_variants, value_text
from geomload.errors import OutputError

MARKER = "# geomload"  # first characters of batch.csv / compare.csv: a folder geomload made
ROOT_LABELS = {"root_shear_max_N": "root shear max (N)", "root_shear_min_N": "root shear min (N)",
               "root_bending_max_Nm": "root bending max (N m)",
               "root_bending_min_Nm": "root bending min (N m)",
               "root_torsion_max_Nm": "root torsion max (N m)",
               "root_torsion_min_Nm": "root torsion min (N m)"}


@dataclass(frozen=True)
class BatchResult:
    """out_dir: the batch folder; variants: the Variant records; outcomes: one Outcome each
    (files dropped once written); files: paths written, relative to out_dir."""

    out_dir: str
    variants: list
    outcomes: list
    files: list

    @property
    def failed(self) -> list:
        return [o for o in self.outcomes if not o.ok]


def check_replaceable(path, marker_file: str, force: bool) -> None:
    """With --force, replace only a folder geomload made (its `marker_file` starts with '#
    geomload'); OutputDir refuses any other non-empty folder."""
    p = Path(path)
    if not force or not p.is_dir() or not any(p.iterdir()):
        return
    m = p / marker_file
    try:
        ok = m.is_file() and m.read_text(encoding="utf-8", errors="replace").startswith(MARKER)
    except OSError:
        ok = False
    if not ok:
        raise OutputError(f"{p}: folder exists, is not empty and has no {marker_file} made by "
                          "geomload; refusing to replace it (choose another --out)")


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, float):
        return f"{v:.10g}" if math.isfinite(v) else ""
    s = " ".join(value_text(v).split())
    return s.replace(",", ";").replace('"', "'").replace("#", "_")


def batch_table(variants, outcomes, keys, with_source: bool) -> tuple:
    """(column names, rows of cell text) of batch.csv."""
    cols = ["variant"] + (["case_file"] if with_source else []) + list(keys) + ["status"]
    loads = [c for k in ROOT_KEYS for c in (k, ERR_KEYS[k][0])]  # each value, then its error bar
    cols += loads + [NOT_MONOTONE, "root_bending_governing_case", "run_folder", "error"]
    rows = []
    for v, o in zip(variants, outcomes):
        vals = dict(v.overrides)
        r = [v.name] + ([v.source] if with_source else [])
        r += [value_text(vals[k]) if k in vals else None for k in keys]
        r += ["ok" if o.ok else "failed"] + [o.root.get(k) for k in loads + [NOT_MONOTONE]]
        r += [o.root.get("root_bending_governing_case"), f"runs/{v.name}" if o.ok else "",
              o.error]
        rows.append([_cell(x) for x in r])
    return cols, rows


def batch_csv_text(variants, outcomes, keys, with_source: bool) -> str:
    cols, rows = batch_table(variants, outcomes, keys, with_source)
    head = [f"geomload {__version__} batch: one row per variant", CAUTION,
            "root_* : limit loads at the root (y = 0) from each run's envelope of all its cases; "
            "units N and N m; shear positive up, bending positive tip-up, torsion positive "
            "nose-up about the spar axis",
            "root_*_err_* : discretization error estimate of the load beside it (absolute, same "
            "units; Richardson extrapolation over the run's lattice and two coarser ones, as the "
            "run's summary.json envelope.error_estimate, one bound for the maximum and minimum of "
            "a quantity); error_not_monotone: the quantities whose convergence is not monotone "
            "in some case (their bound is the larger lattice difference, not an extrapolation)",
            "root_bending_governing_case: the case of the larger of the root bending maximum and "
            "|minimum|; run_folder: relative to this file; varied keys: case-file dotted paths"]
    lines = [f"# {' '.join(h.split())}" for h in head] + [",".join(cols)]
    lines += [",".join(r) for r in rows]
    return "\n".join(lines) + "\n"


def _numeric(vals) -> bool:
    return all(isinstance(x, (int, float)) and not isinstance(x, bool) for x in vals)


def plot_against(variants, outcomes, key, path) -> Path:
    """Root loads of every successful variant against the varied `key` (None: the variant);
    variants that share the values of the other varied keys are joined by a line."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    ok = [(v, o) for v, o in zip(variants, outcomes) if o.ok]
    xs = [dict(v.overrides).get(key) if key else v.name for v, _ in ok]
    numeric = key is not None and _numeric(xs)
    texts = [value_text(x) for x in xs]
    labels = list(dict.fromkeys(texts))
    pos = [float(x) if numeric else labels.index(t) for x, t in zip(xs, texts)]
    groups: dict = {}
    for k, (v, _o) in enumerate(ok):
        rest = tuple((kk, value_text(vv)) for kk, vv in v.overrides if kk != key)
        groups.setdefault(rest, []).append(k)
    fig = Figure(figsize=(9.0, 7.0))
    FigureCanvasAgg(fig)
    quantities = (("shear", "N", "N"), ("bending", "N m", "Nm"), ("torsion", "N m", "Nm"))
    for qi, (q, unit, col_unit) in enumerate(quantities):
        ax = fig.add_subplot(3, 1, qi + 1)
        for gi, (rest, members) in enumerate(groups.items()):
            members = sorted(members, key=lambda m: pos[m])
            color = f"C{gi % 10}"
            name = ", ".join(f"{kk.split('.')[-1]} {vv}" for kk, vv in rest) or "all"
            for side, style in (("max", "-^"), ("min", "--v")):
                col = f"root_{q}_{side}_{col_unit}"
                err = [ok[m][1].root.get(ERR_KEYS[col][0], math.nan) for m in members]
                ax.errorbar([pos[m] for m in members], [ok[m][1].root[col] for m in members],
                            yerr=None if all(map(math.isnan, err)) else err, fmt=style,
                            color=color, capsize=2, label=f"{side}: {name}" if gi < 6 else None)
        ax.set_ylabel(f"root {q} ({unit})")
        ax.grid(True, alpha=0.3)
        if qi == 0:
            ax.legend(fontsize=6, loc="best", ncol=2)
        if not numeric:
            ax.set_xticks(range(len(labels)))
            ax.set_xticklabels(labels if qi == 2 else [""] * len(labels), rotation=30, ha="right",
                               fontsize=7)
    fig.axes[-1].set_xlabel(key or "variant")
    fig.suptitle(f"Root limit loads against {key or 'variant'} (max solid, min dashed; bars: "
                 "discretization error estimate)",
                 fontsize=10)
    fig.text(0.01, 0.005, CAUTION, fontsize=5, wrap=True)
    fig.tight_layout(rect=(0, 0.03, 1, 0.97))
    fig.savefig(path, dpi=90, format="png")
    return Path(path)


def index_html(variants, outcomes, keys, plots: dict, with_source: bool) -> str:
    """A self-contained page (plots inlined) linking every run's report."""
    esc = html.escape
    cols, rows = batch_table(variants, outcomes, keys, with_source)
    head = "".join(f"<th>{esc(c)}</th>" for c in cols)
    body_rows = []
    for v, o, r in zip(variants, outcomes, rows):
        cells = []
        for c, x in zip(cols, r):
            if c == "run_folder" and o.ok:
                x = f'<a href="runs/{esc(v.name)}/report.html">{esc(x)}</a>'
            else:
                x = esc(x)
            cells.append(f"<td>{x}</td>")
        body_rows.append(f"<tr{'' if o.ok else ' class=failed'}>{''.join(cells)}</tr>")
    imgs = "".join(f"<h2>Against {esc(k)}</h2>" + png_img(f"root loads against {k}", data)
                   for k, data in plots.items())
    n_ok = sum(o.ok for o in outcomes)
    body = (f'<p>Root limit loads from each run\'s envelope (N, N m), each with its '
            f'discretization error estimate (*_err_*). The full table is '
            f'<a href="batch.csv">batch.csv</a>; each run folder has its own report.</p>\n'
            f'<table><tr>{head}</tr>{"".join(body_rows)}</table>{imgs}')
    return page("geomload batch", f"geomload batch: {n_ok} of {len(outcomes)} variants ran", body)


def flush_to_disk(folder) -> None:
    """Everything written under `folder` reaches the disk before the batch folder is moved into
    place: one syncfs(2) of its file system where that reports every write-back error (Linux
    5.8 or later on a local file system, `atomic_staged.syncfs_reports_errors`), else one fsync
    per file and folder below it (a sweep writes thousands; a flush per file as it is written
    would force a journal commit each). The guarantee is the same: no renamed-in folder with
    files still only in memory after a power loss. A failure (EIO, a full disk found at
    write-back) raises an OutputError naming the folder or file; the batch folder is then not
    committed."""
    from geomload.export.atomic_staged import flush_folder

    flush_folder(folder)


def write_batch_folder(od, variants, outcomes, keys, with_source: bool) -> list:
    """Write the run folders, batch.csv, plots and index.html into the open OutputDir `od`."""
    from geomload.export.atomic import safe_name, write_bytes_atomic

    files = []

    def put(rel, data: bytes):  # no fsync per file: flush_to_disk before the commit
        write_bytes_atomic(od.path(rel), data, fsync=False)

    for v, o in zip(variants, outcomes):
        rel = Path("runs") / v.name
        put(rel / "case.toml", v.toml_text.encode("utf-8"))
        files.append(rel / "case.toml")
        for name, data in o.files.items():  # built on a remote worker: sent back as bytes
            put(rel / name, data)
        files += [rel / name for name in (o.paths or o.files)]
    put("batch.csv", batch_csv_text(variants, outcomes, keys, with_source).encode("utf-8"))
    files.append(Path("batch.csv"))
    plots = {}
    if any(o.ok for o in outcomes):
        for k in (list(keys) or [None]):
            name = "variant" if k is None else k
            p = od.path(Path("plots") / f"root_loads_vs_{safe_name(name)}.png")
            plot_against(variants, outcomes, k, p)
            plots[name] = p.read_bytes()
            files.append(p.relative_to(od.staging))
    put("index.html", index_html(variants, outcomes, keys, plots, with_source).encode("utf-8"))
    files.append(Path("index.html"))
    return [str(f) for f in files]


def run_batch(case_paths, vary=(), out_dir=None, workers=None, cluster=None, render=False,
              force=False, progress=None, cluster_timeout=None) -> BatchResult:
    """The whole `geomload batch`: variants, checks, runs, batch folder.

    Parameters
    ----------
    case_paths : case files (one with `vary`, or several).
    vary : 'KEY=V1,V2,...' strings (dotted case-file key paths).
    out_dir : the batch folder (refused if it exists and is not empty, unless `force` and it is a
        batch folder geomload made).
    workers : local worker processes (default: the CPUs available; 1 runs in this process).
    cluster : address of a running dask.distributed scheduler (e.g. 'tcp://10.0.0.5:8786').
    render : also make each run's 3-D pictures.
    progress : records.Progress callback, called as progress("variants", done, total).
    cluster_timeout : seconds allowed to reach the scheduler (default CONNECT_TIMEOUT_S).

    Returns a BatchResult; raises a GeomloadError (one line, nothing written) on bad input, an
    unreachable cluster, or when every variant fails (BatchError naming the first failure).
    """
    variants = make_variants(case_paths, vary)
    keys = list(dict.fromkeys(k for v in variants for k, _ in v.overrides))
    with_source = len(list(case_paths)) > 1
    inputs = list(dict.fromkeys([v.source for v in variants]
                                + [v.data.get("geometry", {}).get("file") for v in variants]))
    check_replaceable(out_dir, "batch.csv", force)
    od = _api.output_dir(out_dir, force=force, inputs=[i for i in inputs if i])
    from geomload.batch.runner import CONNECT_TIMEOUT_S

    client = connect(cluster, cluster_timeout or CONNECT_TIMEOUT_S) if cluster else None
    try:
        od.open()
        try:
            finals = [od.final / "runs" / v.name / "case.toml" for v in variants]
            n_work = workers if workers else default_workers()
            outcomes = run_variants(variants, finals, workers=min(n_work, len(variants)),
                                    client=client, render=render, progress=progress,
                                    dest=od.path("runs"))
            if not any(o.ok for o in outcomes):
                first = outcomes[0]
                raise BatchError(f"every variant failed; {first.name}: {first.error}")
            files = write_batch_folder(od, variants, outcomes, keys, with_source)
            flush_to_disk(od.staging)
            od.commit()
        except BaseException:
            od.abort()
            raise
    finally:
        if client is not None:
            client.close()
    slim = [dataclasses.replace(o, files={}) for o in outcomes]
    return BatchResult(out_dir=str(od.final), variants=variants, outcomes=slim, files=files)


class BatchError(OutputError):
    """No variant of a batch ran (nothing is written)."""
