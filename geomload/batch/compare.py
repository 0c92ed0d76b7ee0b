"""Comparing finished runs: envelopes overlaid, differences at the root and along the span, and
the cases whose governing role changed.

Common span grid: the envelope stations of the FIRST run (the reference) from the root to the
shortest semi-span among the runs; every other run's envelope is interpolated linearly onto it
(numpy.interp; piecewise-linear between its own stations, as its loads are tabulated). A
governing case at a grid point is that of the run's nearest own station at or inboard of it.

Outputs (one folder, staged and moved into place whole): compare.csv (per run and grid station:
the envelope values and their difference from the reference), compare_roles.csv (per run and
quantity: root governing case and the cases that gained or lost a governing role anywhere along
the span), compare.png (overlay), compare.html (self-contained).
"""

from __future__ import annotations

import html
import json
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from geomload import CAUTION, __version__
from geomload.batch.html_page import page, png_img
from geomload.errors import InputError

QUANTITIES = (("shear", "N"), ("bending", "Nm"), ("torsion", "Nm"))
SIDES = ("max", "min")
Y_MATCH_M = 1e-9  # a grid point this close to a station takes that station's governing case


@dataclass(frozen=True)
class RunEnvelope:
    """One run's envelope: label, folder, y (m), values[(q, side)] (N or N m), cases[(q, side)]."""

    label: str
    folder: str
    title: str
    y: np.ndarray
    values: dict
    cases: dict


@dataclass(frozen=True)
class CompareResult:
    out_dir: str
    runs: list
    grid_y: np.ndarray
    roles: list
    summary_lines: list
    files: list


def read_run(folder, label: str) -> RunEnvelope:
    """Read a run folder's envelope.csv (and title from summary.json). InputError if absent."""
    from geomload.export.tables import read_csv_table

    f = Path(folder)
    env = f / "envelope.csv"
    if not env.is_file():
        raise InputError(f"{f}: not a geomload run folder (no envelope.csv)")
    try:
        t = read_csv_table(env)
        y = np.asarray(t["y_m"], float)
        values = {(q, s): np.asarray(t[f"{q}_{s}_{u}"], float) for q, u in QUANTITIES for s in SIDES}
        cases = {(q, s): [str(c) for c in t[f"{q}_{s}_case"]] for q, _ in QUANTITIES for s in SIDES}
    except (KeyError, ValueError, IndexError, OSError) as exc:
        raise InputError(f"{env}: cannot read the envelope ({type(exc).__name__}: {exc})") from None
    if y.size < 2 or np.any(np.diff(y) <= 0):
        raise InputError(f"{env}: y_m must increase from the root to the tip")
    title = ""
    try:
        title = str(json.loads((f / "summary.json").read_text(encoding="utf-8")).get("title", ""))
    except (OSError, ValueError, AttributeError):
        pass
    return RunEnvelope(label, str(f.resolve()), title, y, values, cases)


def common_grid(runs) -> np.ndarray:
    """The reference run's stations from the root to the shortest semi-span (m)."""
    tip = min(float(r.y[-1]) for r in runs)
    y = runs[0].y
    g = y[y <= tip + Y_MATCH_M]
    if g[-1] < tip - Y_MATCH_M:
        g = np.append(g, tip)
    return g


def on_grid(run: RunEnvelope, grid: np.ndarray) -> tuple:
    """(values, cases) of `run` at the grid points."""
    idx = np.clip(np.searchsorted(run.y, grid + Y_MATCH_M, side="right") - 1, 0, run.y.size - 1)
    vals = {k: np.interp(grid, run.y, v) for k, v in run.values.items()}
    cases = {k: [c[i] for i in idx] for k, c in run.cases.items()}
    return vals, cases


def roles(ref: RunEnvelope, run: RunEnvelope) -> list:
    """Per quantity and side: root governing case of both, and the cases that govern somewhere
    along the span in `run` but not in `ref` (gained) and the other way round (lost)."""
    out = []
    for q, _ in QUANTITIES:
        for s in SIDES:
            a, b = ref.cases[(q, s)], run.cases[(q, s)]
            gained = sorted(set(b) - set(a))
            lost = sorted(set(a) - set(b))
            out.append({"run": run.label, "quantity": f"{q}_{s}", "root_case_reference": a[0],
                        "root_case_run": b[0], "root_changed": a[0] != b[0],
                        "gained": gained, "lost": lost})
    return out


def _labels(folders) -> list:
    names = [Path(f).resolve().name for f in folders]
    return [n if names.count(n) == 1 else f"{i + 1}-{n}" for i, n in enumerate(names)]


def _cell(v) -> str:
    if isinstance(v, (float, np.floating)):
        return f"{float(v):.10g}"
    return " ".join(str(v).split()).replace(",", ";").replace('"', "'").replace("#", "_") or "-"


def _csv(head, cols, rows) -> str:
    lines = [f"# {' '.join(h.split())}" for h in head] + [",".join(cols)]
    lines += [",".join(_cell(x) for x in r) for r in rows]
    return "\n".join(lines) + "\n"


def compare_tables(runs, grid) -> tuple:
    """Text of compare.csv and compare_roles.csv, and the roles records."""
    ref_vals, _ = on_grid(runs[0], grid)
    cols = ["run", "y_m"]
    for q, u in QUANTITIES:
        for s in SIDES:
            cols += [f"{q}_{s}_{u}", f"delta_{q}_{s}_{u}", f"{q}_{s}_case"]
    rows = []
    for r in runs:
        vals, cases = on_grid(r, grid)
        for i, y in enumerate(grid):
            row = [r.label, float(y)]
            for q, _u in QUANTITIES:
                for s in SIDES:
                    v = float(vals[(q, s)][i])
                    row += [v, v - float(ref_vals[(q, s)][i]), cases[(q, s)][i]]
            rows.append(row)
    head = [f"geomload {__version__} comparison of run envelopes (limit loads, one semi-span)",
            CAUTION,
            f"reference: {runs[0].label} ({runs[0].folder}); delta_* = run minus reference",
            f"common span grid: the reference's envelope stations from y = 0 to the shortest "
            f"semi-span, {grid[-1]:.6g} m ({grid.size} points); other runs interpolated linearly "
            "between their own stations; *_case: the run's governing case at its station at or "
            "inboard of the point",
            "units: y m, shear N, moments N m; shear positive up, bending positive tip-up, "
            "torsion positive nose-up about the spar axis; the y_m = 0 rows are the root"]
    role_rows, recs = [], []
    for r in runs[1:]:
        for rec in roles(runs[0], r):
            recs.append(rec)
            role_rows.append([rec["run"], rec["quantity"], rec["root_case_reference"],
                              rec["root_case_run"], "yes" if rec["root_changed"] else "no",
                              "; ".join(rec["gained"]) or "-", "; ".join(rec["lost"]) or "-"])
    role_head = [f"geomload {__version__} governing cases compared with the reference "
                 f"{runs[0].label}", CAUTION,
                 "gained / lost: cases that govern the quantity at some envelope station of the "
                 "run but at none of the reference (gained), or the other way round (lost)"]
    role_cols = ["run", "quantity", "root_case_reference", "root_case_run", "root_changed",
                 "gained_cases", "lost_cases"]
    return _csv(head, cols, rows), _csv(role_head, role_cols, role_rows), recs


def plot_overlay(runs, path) -> Path:
    """V, M, T envelopes (max solid, min dashed) of every run against y."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(9.0, 8.0))
    FigureCanvasAgg(fig)
    for k, (q, u) in enumerate(QUANTITIES):
        ax = fig.add_subplot(3, 1, k + 1)
        for j, r in enumerate(runs):
            color = f"C{j % 10}"
            ax.plot(r.y, r.values[(q, "max")], "-", color=color, label=f"{r.label} max")
            ax.plot(r.y, r.values[(q, "min")], "--", color=color, label=f"{r.label} min")
        ax.set_ylabel(f"{q} ({u.replace('Nm', 'N m')})")
        ax.grid(True, alpha=0.3)
        if k == 0:
            ax.legend(fontsize=7, ncol=2)
    fig.axes[-1].set_xlabel("y (m) along the span from the root")
    fig.suptitle("Envelopes of limit loads (max solid, min dashed)", fontsize=10)
    fig.text(0.01, 0.005, CAUTION, fontsize=5, wrap=True)
    fig.tight_layout(rect=(0, 0.03, 1, 0.97))
    fig.savefig(path, dpi=90, format="png")
    return Path(path)


def _html(runs, grid, recs, png: bytes, out_final: Path) -> str:
    esc = html.escape
    ref_vals, _ = on_grid(runs[0], grid)
    head = "".join(f"<th>{esc(f'{q} {s} ({u})')}</th>" for q, u in QUANTITIES for s in SIDES)
    body = []
    for r in runs:
        vals, _c = on_grid(r, grid)
        cells = []
        for q, _u in QUANTITIES:
            for s in SIDES:
                v, d = float(vals[(q, s)][0]), float(vals[(q, s)][0] - ref_vals[(q, s)][0])
                cells.append(f"<td>{v:.4g} ({d:+.4g})</td>")
        link = os.path.relpath(Path(r.folder) / "report.html", out_final)
        body.append(f'<tr><td><a href="{esc(link)}">{esc(r.label)}</a></td>{"".join(cells)}</tr>')
    role_rows = "".join(
        f"<tr><td>{esc(x['run'])}</td><td>{esc(x['quantity'])}</td>"
        f"<td>{esc(x['root_case_reference'])}</td><td>{esc(x['root_case_run'])}</td>"
        f"<td>{esc('; '.join(x['gained']) or '-')}</td><td>{esc('; '.join(x['lost']) or '-')}</td></tr>"
        for x in recs if x["root_changed"] or x["gained"] or x["lost"])
    body = f"""<h2>Root limit loads (difference from the reference)</h2>
<table><tr><th>run</th>{head}</tr>{''.join(body)}</table>
<h2>Governing cases that changed</h2>
<table><tr><th>run</th><th>quantity</th><th>root case, reference</th><th>root case, run</th>
<th>gained</th><th>lost</th></tr>{role_rows or '<tr><td colspan=6>none</td></tr>'}</table>
<h2>Envelopes</h2>{png_img("envelopes overlaid", png)}
<p>Station differences: compare.csv, on the reference's envelope stations from the root to
{grid[-1]:.4g} m (the shortest semi-span), other runs interpolated linearly.</p>"""
    return page("geomload comparison",
                f"Comparison of {len(runs)} runs (reference: {runs[0].label})", body)


def compare_runs(folders, out_dir, force: bool = False) -> CompareResult:
    """Compare run folders (the first is the reference) and write the comparison to `out_dir`.

    Returns a CompareResult (summary_lines: the root differences as text). Raises InputError
    (one line, nothing written) for fewer than two runs or a folder without an envelope.
    """
    from geomload.batch import _api
    from geomload.batch.assemble import check_replaceable
    from geomload.export.atomic import write_bytes_atomic, write_text_atomic

    folders = list(folders)
    if len(folders) < 2:
        raise InputError("compare: give at least two run folders")
    runs = [read_run(f, lab) for f, lab in zip(folders, _labels(folders))]
    grid = common_grid(runs)
    text, role_text, recs = compare_tables(runs, grid)
    check_replaceable(out_dir, "compare.csv", force)
    inputs = [Path(r.folder) / "envelope.csv" for r in runs]
    with _api.output_dir(out_dir, force=force, inputs=inputs) as od:
        write_text_atomic(od.path("compare.csv"), text)
        write_text_atomic(od.path("compare_roles.csv"), role_text)
        png = plot_overlay(runs, od.path("compare.png")).read_bytes()
        write_bytes_atomic(od.path("compare.html"), _html(runs, grid, recs, png, od.final).encode())
        final = od.final
    ref_vals, _ = on_grid(runs[0], grid)
    lines = [f"reference {runs[0].label}; root limit loads and differences (N, N m):"]
    for r in runs:
        vals, _c = on_grid(r, grid)
        parts = [f"{q} {s} {float(vals[(q, s)][0]):.1f} ({float(vals[(q, s)][0] - ref_vals[(q, s)][0]):+.1f})"
                 for q, _u in QUANTITIES for s in SIDES]
        lines.append(f"  {r.label}: " + ", ".join(parts))
    for x in recs:
        if x["root_changed"]:
            lines.append(f"  {x['run']}: root {x['quantity']} now governed by "
                         f"{x['root_case_run']} (was {x['root_case_reference']})")
    return CompareResult(str(final), runs, grid, recs, lines,
                         ["compare.csv", "compare_roles.csv", "compare.png", "compare.html"])
