"""Export stage: CSV/JSON tables, VTK files, plots, 3-D renders and the HTML report.

Heavy libraries (matplotlib, pyvista, scipy) are imported inside the functions that need them.
Inside a staged run folder every file is flushed to disk in one pass before `write_all` returns
(`atomic.sync_at_end`), so the folder is complete on disk before it is moved into place.

Run folder layout written by `write_all`::

    stations.csv  summary.json  envelope.csv  vn.csv  loads/<case>.csv
    (an unsymmetric case: loads/<case>__starboard.csv and loads/<case>__port.csv)
    with [structure]: fe/<case>.inp fe/<case>_nodal_loads.csv (fe/mesh_* with a mesh)
    sizing.csv sizing.png
    lattice.vtp  spar_axis.vtp  surface.vtp  report.html  geomload-run.json (the run marker,
    written by run_folder.OutputDir on commit)
    plots/planform.png spanwise.png cl_alpha.png loads.png vn.png vn.svg
          surface_dcp.png lattice_overlay.png spar_bending.png
"""

from __future__ import annotations

import dataclasses
import os
from pathlib import Path, PurePath


def write_all(run, folder, inputs=(), render=True, progress=None, options=None,
              run_time_s=None, parallel=None, full_surface=False) -> dict:
    """Write every output of `run` into `folder` (e.g. ``OutputDir(...).staging``).

    Parameters
    ----------
    run : records.RunResult.
    folder : the (staging) run folder; created if missing.
    inputs : paths no output may overwrite (the case file and the CAD file are always added).
    render : False skips the 3-D pictures (the report then says they were not requested).
    progress : records.Progress callback, called as progress("export", done, total).
    options : dict of extra options echoed in the report's inputs section.
    run_time_s : total run time shown in the report (default: the sum of run.timings).
    parallel : draw the plots, and render the 3-D pictures, in child processes while this one
        writes the tables, FE decks and VTK files (None: when a second CPU is free, see
        `forked.parallel_pays`).
    full_surface : surface.vtp with every CAD triangle (default: a decimated display surface
        above vtk.MAX_DISPLAY_TRIANGLES).

    Returns
    -------
    dict, every path relative to folder (so it stays valid once a staging folder is moved):
    "files" (list of paths written), "images" (name -> PNG path, or the Exception that stopped
    that picture), "loads" (case name -> CSV path), "warnings" (one-line warnings of the
    writers, e.g. the structural hand-off's).
    """
    from geomload.export import plots, report, vtk
    from geomload.export.atomic import ResolvedInputs, sync_at_end
    from geomload.forked import parallel_pays

    f = Path(folder)
    f.mkdir(parents=True, exist_ok=True)
    inputs = ResolvedInputs([*inputs, run.case_path, run.mesh.source])  # resolved once per run
    files, loads, warnings = [], {}, []
    has_env, has_vn = run.envelope is not None, run.vn is not None
    total = 3 + len(run.cases) + has_env + has_vn + 3 + 1 + (1 if render else 0) + 1
    step = [0]

    def tick():
        step[0] += 1
        if progress is not None:
            progress("export", step[0], total)

    prefix = _prefix(f)

    def rec(p, tick_too=True, rel=None):
        files.append(_relative(p, f, prefix, rel))
        if tick_too:
            tick()

    if parallel is None:
        parallel = parallel_pays()
    plot_job = job = deck_job = None
    try:
        with sync_at_end(f):  # a staged run folder: one fsync pass at the end, not per file
            # the plots (matplotlib) and the renders (pyvista) in child processes while this
            # one writes the tables, FE decks and VTK files; each child sends back file bytes
            if parallel and getattr(run.case, "structure", None) is not None:
                # the sizing plot draws in this process anyway: import matplotlib before the
                # fork, so the plot child inherits it instead of importing it a second time
                import matplotlib.backends.backend_agg  # noqa: F401
                import matplotlib.figure  # noqa: F401
            plot_job = plots.start_plot_process(run) if parallel else None
            structure = getattr(run.case, "structure", None)
            if parallel and structure is not None:  # many cases: the FE decks in a child too
                from geomload.export.fe import start_deck_process

                deck_job = start_deck_process(run)
            surface = vtk.surface_data(run, full=full_surface)  # once: surface.vtp, pictures
            if render:
                from geomload.export import render as rnd

                job = rnd.RenderProcess.start(run, surface) if parallel else None
            _write_tables(run, f, inputs, rec, loads)
            if structure is not None:  # [structure]: FE beam decks, mapped loads, sizing (fe.py)
                from geomload.export.fe import write_structural_handoff

                handoff = write_structural_handoff(run, f, inputs, **structure.handoff_options(),
                                                   deck_job=deck_job)
                for p in handoff["files"]:
                    rec(p)
                warnings += handoff["warnings"]
            from geomload.export import tables

            rec(tables.write_summary_json(f / "summary.json", run, inputs,
                                          more_warnings=warnings))
            for p in vtk.write_all_vtk(f, run, inputs, surface):
                rec(p)
            shots = (plots.finish_plots(run, plot_job) if plot_job is not None
                     else plots.plot_images(run))
            images = plots.write_plot_images(shots, f / "plots", inputs)
            tick()
            if render:
                shots = job.result() if job is not None else rnd.render_images(run, surface)
                images.update(rnd.write_images(shots, f / "plots", inputs))
                tick()
            for v in images.values():
                if isinstance(v, Path):
                    files.append(v.relative_to(f))
            if has_vn and isinstance(images.get("vn"), Path):
                files.append(images["vn"].with_suffix(".svg").relative_to(f))
            frag = report.view3d_fragment(run, surface) if render else None
            rec(report.write_report(f / "report.html", run, images, options, run_time_s, inputs,
                                    frag))
            tick()
    finally:
        for j in (plot_job, job, deck_job):
            if j is not None:
                j.stop()
    images = {k: (v.relative_to(f) if isinstance(v, Path) else v) for k, v in images.items()}
    return {"files": files, "images": images, "loads": loads, "warnings": warnings}


def _prefix(f: Path):
    """str(f) + the separator when f is absolute (else None): the start of every path written
    into the run folder f, as a string."""
    if not f.is_absolute():
        return None
    s = str(f)
    return s if s.endswith(os.sep) else s + os.sep


def _relative(p, f: Path, prefix, rel=None) -> Path:
    """Path(p).relative_to(f) for an absolute p (else Path(p)). A path written into f (a Path
    whose string starts with `prefix`) is cut as a string, and `rel` (the relative path the
    caller built) is returned itself when it is that remainder: no path parsed again for each
    of a run's thousands of files."""
    if prefix is not None and isinstance(p, PurePath):
        s = str(p)
        if s.startswith(prefix) and len(s) > len(prefix):
            tail = s[len(prefix):]
            if rel is not None and str(rel) == tail:
                return rel
            return Path(tail)
    q = Path(p)
    return q.relative_to(f) if q.is_absolute() else q


def _write_tables(run, f, inputs, rec, loads) -> None:
    """stations.csv, loads/<case>.csv (an unsymmetric case: one file per side), envelope.csv,
    vn.csv into the run folder f; rec(path, tick_too) records each file written (summary.json
    is written after the structural hand-off, whose warnings it lists too)."""
    from geomload.export import tables
    from geomload.export.atomic import safe_name

    rec(tables.write_stations_csv(f / "stations.csv", run.stations, run.frame, run.mesh.source,
                                  run.mesh.units, inputs))
    taken: set = set()
    folder = str(f)  # paths joined as strings (safe_name: no separator, never '.' or '..')
    for cr in run.cases:
        if cr.port_loads is None:
            file = f"{safe_name(cr.name, taken)}.csv"
            rel = Path("loads", file)
            rec(tables.write_loads_csv(os.path.join(folder, "loads", file), cr, frame=run.frame,
                                       inputs=inputs), rel=rel)
            loads[cr.name] = rel
            continue
        for k, (side, sl) in enumerate(cr.sides):  # one progress step per case
            name = f"{cr.name}__{side}"
            file = f"{safe_name(name, taken)}.csv"
            rel = Path("loads", file)
            one = dataclasses.replace(cr, name=name, loads=sl, residual=sl.equilibrium.residual)
            rec(tables.write_loads_csv(os.path.join(folder, "loads", file), one, frame=run.frame,
                                       inputs=inputs), tick_too=k == len(cr.sides) - 1, rel=rel)
            loads[name] = rel
    if run.envelope is not None:
        rec(tables.write_envelope_csv(f / "envelope.csv", run.envelope, inputs))
    if run.vn is not None:
        rec(tables.write_vn_csv(f / "vn.csv", run.vn, inputs))
