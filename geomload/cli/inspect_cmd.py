"""`geomload inspect`: read a CAD wing, detect its frame, print its stations and planform."""

from __future__ import annotations

import json

import click

from geomload.textsafe import printable

from .common import (echo_err, geometry_messages, geometry_options, guarded, load_geometry,
                     print_messages)


@click.command()
@click.argument("geometry", type=click.Path(dir_okay=True))
@geometry_options
@click.option("--csv", "csv_path", type=click.Path(dir_okay=False), default=None,
              help="Write the station table as CSV.")
@click.option("--json", "as_json", is_flag=True, help="Print the planform summary and stations as JSON.")
@click.option("--png", "png_path", type=click.Path(dir_okay=False), default=None,
              help="Render the mesh with the cut stations overlaid (offscreen).")
@guarded
def inspect(geometry, units, span_axis, up_axis, n_stations, spacing, body, csv_path, as_json,
            png_path):
    """Read a CAD wing, detect its frame and print its stations and planform."""
    from geomload.export.atomic import check_target
    from geomload.report_text import inspect_json, inspect_text

    for out in (csv_path, png_path):  # each target is refused before any work
        if out is not None:
            check_target(out, [geometry])
    mesh, frame, stations, planform = load_geometry(geometry, units, span_axis, up_axis,
                                                    n_stations, spacing, body)
    if as_json:
        click.echo(json.dumps(inspect_json(mesh, frame, stations, planform), indent=2))
    else:
        click.echo(inspect_text(mesh, frame, stations, planform))
    print_messages(geometry_messages(mesh, frame, stations))
    if csv_path is not None:
        from geomload.export.tables import write_stations_csv

        write_stations_csv(csv_path, stations, frame, mesh.source, mesh.units)
        echo_err(f"geomload: wrote {printable(csv_path)}")
    if png_path is not None:
        from geomload.export.render import render_stations_png

        render_stations_png(mesh, frame, stations, png_path)
        echo_err(f"geomload: wrote {printable(png_path)}")
