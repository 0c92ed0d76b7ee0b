"""Command layer: parse options, call the library, print, map errors to exit codes.

Exit codes: 0 ok, 1 bad input (file, option or case key), 2 usage error, 3 internal error,
130 interrupted. No heavy import happens at module level, so `geomload --help` is fast.
"""

from __future__ import annotations

import functools
import json
import sys

import click

from geomload import __version__
from geomload.errors import GeomloadError

EXIT_OK, EXIT_INPUT, EXIT_USAGE, EXIT_INTERNAL, EXIT_INTERRUPTED = 0, 1, 2, 3, 130
REPORT_HINT = "this is a bug in geomload; please report it with the command line and input files"


def _echo_err(msg: str) -> None:
    click.echo(msg, err=True)


def _guarded(fn):
    """Turn library errors into one line on stderr and an exit code, never a traceback."""

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        try:
            return fn(*args, **kwargs)
        except GeomloadError as exc:
            _echo_err(f"geomload: error: {exc}")
            sys.exit(getattr(exc, "exit_code", EXIT_INPUT))
        except KeyboardInterrupt:
            _echo_err("geomload: interrupted; no output was written")
            sys.exit(EXIT_INTERRUPTED)
        except (click.exceptions.Exit, click.ClickException, click.Abort):
            raise
        except MemoryError:
            _echo_err("geomload: error: out of memory (try fewer stations or panels)")
            sys.exit(EXIT_INPUT)
        except Exception as exc:  # noqa: BLE001 - the last line of defence
            if _debug_requested():
                raise
            _echo_err(f"geomload: internal error: {type(exc).__name__}: {exc} ({REPORT_HINT}; "
                      "set GEOMLOAD_DEBUG=1 for a traceback)")
            sys.exit(EXIT_INTERNAL)

    return wrapper


def _debug_requested() -> bool:
    import os

    return os.environ.get("GEOMLOAD_DEBUG", "") not in ("", "0")


def _progress():
    from geomload.progress import make_progress

    return make_progress()


def import_options(fn):
    """Options shared by every command that reads a CAD wing."""
    opts = [
        click.option("--units", type=click.Choice(["m", "cm", "mm", "in", "ft"]), default=None,
                     help="Length unit of a unit-less mesh file (STL, OBJ, PLY...). Default m. "
                          "STEP/IGES carry their own units."),
        click.option("--span-axis", default=None, metavar="AXIS",
                     help="CAD axis along the span, e.g. y, +z, -x (default: detected)."),
        click.option("--up-axis", default=None, metavar="AXIS",
                     help="CAD axis pointing up (default: detected)."),
        click.option("--stations", "n_stations", type=int, default=20, show_default=True,
                     help="Number of cutting stations along the semi-span."),
        click.option("--spacing", type=click.Choice(["cosine", "uniform"]), default="cosine",
                     show_default=True, help="Station spacing along the span."),
        click.option("--body", type=int, default=None, metavar="N",
                     help="Which body of a multi-body file is the wing (numbered from 1; default: the "
                          "largest by area)."),
    ]
    for opt in reversed(opts):
        fn = opt(fn)
    return fn


def _load(geometry, units, span_axis, up_axis, n_stations, spacing, body):
    from geomload.geometry import load_wing

    if n_stations is not None and n_stations < 3:
        raise GeomloadError(f"--stations: need at least 3 stations, got {n_stations}")
    return load_wing(geometry, units=units, body=body, span_axis=span_axis, up_axis=up_axis,
                     n_stations=n_stations, spacing=spacing, progress=_progress())


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="geomload")
def cli():
    """geomload - from a CAD wing to preliminary spanwise structural loads.

    Typical use: `geomload inspect wing.stl` to check the stations, `geomload new-case wing.stl
    > case.toml` to start a case file, then `geomload run case.toml --out results`.

    CAUTION: all loads are preliminary estimates, not a substitute for certified structural
    analysis; the applicable airworthiness rules and licensed/authorised engineers decide.
    """


# ---------------------------------------------------------------------------------------- inspect
@cli.command()
@click.argument("geometry", type=click.Path(dir_okay=True))
@import_options
@click.option("--csv", "csv_path", type=click.Path(dir_okay=False), default=None,
              help="Write the station table as CSV.")
@click.option("--json", "as_json", is_flag=True, help="Print the planform summary and stations as JSON.")
@click.option("--png", "png_path", type=click.Path(dir_okay=False), default=None,
              help="Render the mesh with the cut stations overlaid (offscreen).")
@_guarded
def inspect(geometry, units, span_axis, up_axis, n_stations, spacing, body, csv_path, as_json,
            png_path):
    """Read a CAD wing, detect its frame and print its stations and planform."""
    from geomload.export.atomic import check_not_input
    from geomload.report_text import inspect_json, inspect_text

    for out in (csv_path, png_path):
        if out:
            check_not_input(out, [geometry])
    mesh, frame, stations, planform = _load(geometry, units, span_axis, up_axis, n_stations,
                                            spacing, body)
    if as_json:
        click.echo(json.dumps(inspect_json(mesh, frame, stations, planform), indent=2))
    else:
        click.echo(inspect_text(mesh, frame, stations, planform))
    for note in list(mesh.notes) + list(frame.notes) + list(stations.notes):
        _echo_err(f"geomload: {note}" if note.startswith("warning: ") else f"geomload: note: {note}")
    if csv_path:
        from geomload.export.tables import write_stations_csv

        write_stations_csv(csv_path, stations, frame, mesh.source, mesh.units)
        _echo_err(f"geomload: wrote {csv_path}")
    if png_path:
        from geomload.export.render import render_stations_png

        render_stations_png(mesh, frame, stations, png_path)
        _echo_err(f"geomload: wrote {png_path}")


# ------------------------------------------------------------------------------------------- aero
@cli.command()
@click.argument("geometry", type=click.Path(dir_okay=True))
@import_options
@click.option("--alpha", type=float, required=True, help="Angle of attack, degrees.")
@click.option("--mach", type=float, default=0.0, show_default=True, help="Free-stream Mach number.")
@click.option("--panels-span", type=int, default=40, show_default=True,
              help="Spanwise panels on the semi-span.")
@click.option("--panels-chord", type=int, default=10, show_default=True, help="Chordwise panels.")
@click.option("--cl-max", type=float, default=None,
              help="Section cl_max for the stall-onset estimate (default 1.4, with a warning).")
@click.option("--check-convergence", is_flag=True,
              help="Solve at three lattice densities and report Richardson-extrapolated values.")
@click.option("--csv", "csv_path", type=click.Path(dir_okay=False), default=None,
              help="Write the spanwise table as CSV.")
@click.option("--json", "as_json", is_flag=True, help="Print the results as JSON.")
@_guarded
def aero(geometry, units, span_axis, up_axis, n_stations, spacing, body, alpha, mach, panels_span,
         panels_chord, cl_max, check_convergence, csv_path, as_json):
    """Solve the vortex lattice on a CAD wing at one angle of attack."""
    import math

    from geomload.errors import AeroError
    from geomload.export.atomic import check_not_input
    from geomload.report_text import aero_json, aero_text

    if not math.isfinite(alpha):
        raise AeroError(f"--alpha: must be a finite number of degrees, got {alpha}")
    if panels_span < 1 or panels_chord < 1:
        raise AeroError(f"--panels-span/--panels-chord: must be positive, got "
                        f"{panels_span}/{panels_chord}")
    if csv_path:
        check_not_input(csv_path, [geometry])
    mesh, frame, stations, planform = _load(geometry, units, span_axis, up_axis, n_stations,
                                            spacing, body)
    from geomload.aero.lattice import build_lattice
    from geomload.aero.solve import DEFAULT_CL_MAX, AeroModel, check_convergence as _conv

    lattice = build_lattice(stations, n_span=panels_span, n_chord=panels_chord)
    model = AeroModel(lattice, mach=mach)
    sol = model.solve(alpha)
    warnings = list(model.warnings)
    if cl_max is None:
        cl_max = DEFAULT_CL_MAX
        warnings.append(f"section cl_max not given; stall onset uses a default cl_max = {cl_max:g}")
    stall = dict(model.stall(cl_max), cl_max=cl_max)
    warnings.extend(stall.pop("warnings", []))
    conv = _conv(stations, alpha, mach, n_span=panels_span, n_chord=panels_chord) \
        if check_convergence else None
    if as_json:
        click.echo(json.dumps(aero_json(sol, stall, conv, lattice), indent=2))
    else:
        click.echo(aero_text(sol, stall, conv, lattice))
    for w in warnings:
        _echo_err(f"geomload: warning: {w}")
    if csv_path:
        from geomload.export.tables import write_aero_csv

        write_aero_csv(csv_path, sol, mesh.source)
        _echo_err(f"geomload: wrote {csv_path}")


# --------------------------------------------------------------------------------------- new-case
@cli.command("new-case")
@click.argument("geometry", type=click.Path(dir_okay=False))
@_guarded
def new_case(geometry):
    """Print a commented case-file template for GEOMETRY (redirect it to a .toml file)."""
    import os

    from geomload.case import template
    from geomload.errors import InputError

    if not os.path.isfile(geometry):
        raise InputError(f"{geometry}: no such geometry file"
                         + (" (it is a folder)" if os.path.isdir(geometry) else ""))
    text = template(geometry)
    guess = _guess_units(geometry)
    if guess:
        text = text.replace('# units = "mm"  ', f'units = "{guess}"  ', 1)
        _echo_err(f"geomload: note: units = \"{guess}\" guessed from the size of the mesh; check it")
    click.echo(text, nl=False)


def _guess_units(geometry):
    """The length unit that makes a unit-less mesh a plausible wing (0.2 m to 100 m across), or
    None when metres already are, or the file carries its own units, or it cannot be read."""
    from geomload.geometry.read import read_mesh

    try:
        mesh = read_mesh(geometry)
    except Exception:  # noqa: BLE001 - a guess only; `inspect`/`run` report the real problem
        return None
    if mesh.units not in ("m",):
        return None
    t = mesh.triangles.reshape(-1, 3)
    extent = float((t.max(axis=0) - t.min(axis=0)).max())
    if 0.2 <= extent <= 100.0:
        return None
    for unit, scale in (("mm", 1e-3), ("cm", 1e-2), ("in", 0.0254), ("ft", 0.3048)):
        if 0.2 <= extent * scale <= 100.0:
            return unit
    return None


# -------------------------------------------------------------------------------------------- run
@cli.command()
@click.argument("case_file", type=click.Path(dir_okay=True))
@click.option("--out", "out_dir", type=click.Path(file_okay=True), required=True,
              help="Output folder (refused if it exists, unless --force).")
@click.option("--force", is_flag=True, help="Replace an existing output folder.")
@click.option("--no-render", is_flag=True, help="Skip the 3D pictures (faster; report keeps plots).")
@_guarded
def run(case_file, out_dir, force, no_render):
    """Run every load case of CASE_FILE and write loads, VTK and an HTML report to --out."""
    from geomload.pipeline import run_case_file
    from geomload.report_text import run_table

    result, written = run_case_file(case_file, out_dir, force=force, render=not no_render,
                                    progress=_progress())
    for w in result.warnings:
        _echo_err(f"geomload: {w}" if w.startswith("note: ") else f"geomload: warning: {w}")
    click.echo(run_table(result))
    click.echo(f"Wrote {len(written)} files to {out_dir}")


# ------------------------------------------------------------------------------------------- view
@cli.command()
@click.argument("run_dir", type=click.Path(file_okay=False))
@click.option("--case", "case_name", default=None, help="Case to colour by (default: critical).")
@click.option("--screenshot", type=click.Path(dir_okay=False), default=None,
              help="Render offscreen to this PNG instead of opening a window.")
@_guarded
def view(run_dir, case_name, screenshot):
    """Open the CAD surface, lattice and load axis of a finished run in a 3D window."""
    from geomload.export.render import view as _view

    _view(run_dir, case=case_name, screenshot=screenshot)
    if screenshot:
        click.echo(f"Wrote {screenshot}")


def main(argv=None):
    """Console-script entry point."""
    try:
        cli.main(args=argv, prog_name="geomload", standalone_mode=True)
    except SystemExit as exc:  # click exits 2 on usage errors already
        code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else EXIT_USAGE)
        sys.exit(code)


if __name__ == "__main__":  # pragma: no cover
    main()
