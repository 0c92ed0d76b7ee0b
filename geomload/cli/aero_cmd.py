"""`geomload aero`: the vortex lattice on a CAD wing at one angle of attack."""

from __future__ import annotations

import json
import math

import click

from geomload.errors import AeroError
from geomload.export.atomic import check_target
from geomload.textsafe import printable

from .common import echo_err, geometry_options, guarded, print_messages, read_geometry, wing_messages


@click.command()
@click.argument("geometry", type=click.Path(dir_okay=True))
@geometry_options
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
@guarded
def aero(geometry, units, span_axis, up_axis, side, n_stations, spacing, body, alpha, mach,
         panels_span,
         panels_chord, cl_max, check_convergence, csv_path, as_json):
    """Solve the vortex lattice on a CAD wing at one angle of attack."""
    from geomload.report_text import aero_json, aero_text  # numpy: loaded when a command runs

    if csv_path is not None:  # the target is refused before any work
        check_target(csv_path, [geometry])
    if not math.isfinite(alpha):  # before the geometry is read: a typo costs nothing
        raise AeroError(f"--alpha: must be a finite number of degrees, got {alpha}")
    if panels_span < 1 or panels_chord < 1:
        raise AeroError(f"--panels-span/--panels-chord: must be positive, got "
                        f"{panels_span}/{panels_chord}")
    wing = read_geometry(geometry, units, span_axis, up_axis, n_stations, spacing, body, side)
    mesh, stations, planform = wing.mesh, wing.stations, wing.planform
    from geomload.aero.models import analyse_at_alpha

    r = analyse_at_alpha(stations, alpha, mach, panels_span, panels_chord, cl_max,
                         check_convergence)
    out = (aero_json(r["solution"], r["stall"], r["convergence"], r["lattice"]) if as_json
           else aero_text(r["solution"], r["stall"], r["convergence"], r["lattice"], planform))
    click.echo(json.dumps(out, indent=2) if as_json else out)
    print_messages(wing_messages(wing) + list(r["messages"]))
    if csv_path is not None:
        from geomload.export.tables import write_aero_csv

        write_aero_csv(csv_path, r["solution"], mesh.source)
        echo_err(f"geomload: wrote {printable(csv_path)}")
