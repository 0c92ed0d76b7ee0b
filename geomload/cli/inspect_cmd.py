"""`geomload inspect`: read a CAD wing, detect its frame, print its stations and planform, and
where the wing frame sits in the CAD model (origin in CAD coordinates and unit, axes), so that a
case file can give positions in either frame."""

from __future__ import annotations

import json

import click

from geomload.export.atomic import check_target
from geomload.run_geometry import planform_summary
from geomload.textsafe import printable

from .common import (echo_err, geometry_options, guarded, print_messages, read_geometry,
                     wing_messages)


@click.command()
@click.argument("geometry", type=click.Path(dir_okay=True))
@geometry_options
@click.option("--csv", "csv_path", type=click.Path(dir_okay=False), default=None,
              help="Write the station table as CSV.")
@click.option("--json", "as_json", is_flag=True, help="Print the planform summary and stations as JSON.")
@click.option("--png", "png_path", type=click.Path(dir_okay=False), default=None,
              help="Render the mesh with the cut stations overlaid (offscreen).")
@guarded
def inspect(geometry, units, span_axis, up_axis, side, n_stations, spacing, body, csv_path,
            as_json, png_path):
    """Read a CAD wing, detect its frame and print its stations and planform."""
    from geomload.report_text import inspect_json, inspect_text  # numpy: loaded when run

    for out in (csv_path, png_path):  # each target is refused before any work
        if out is not None:
            check_target(out, [geometry])
    wing = read_geometry(geometry, units, span_axis, up_axis, n_stations, spacing, body, side)
    mesh, frame, stations, planform = wing.mesh, wing.frame, wing.stations, wing.planform
    messages = wing_messages(wing)
    from geomload.config.frame_text import frame_origin, frame_origin_lines
    from geomload.geometry.wing_summary import found_in_file, found_lines, frame_side_text

    if as_json:
        out = inspect_json(mesh, frame, stations, planform)
        out["planform_gross_exposed"] = planform_summary(wing)
        out["frame"].update(frame_origin(wing))  # for case-file positions in either frame
        out["found"] = found_in_file(wing)
        out["warnings"] = [m.text for m in messages if m.kind == "warning"]
        out["notes"] = [m.text for m in messages if m.kind == "note"]
        click.echo(json.dumps(out, indent=2))
    else:
        click.echo(_with_found(inspect_text(mesh, frame, stations, planform),
                               frame_side_text(wing), found_lines(wing)))
        click.echo("\n".join(frame_origin_lines(wing)))
    print_messages(messages)
    if csv_path is not None:
        from geomload.export.tables import write_stations_csv

        write_stations_csv(csv_path, stations, frame, mesh.source, mesh.units)
        echo_err(f"geomload: wrote {printable(csv_path)}")
    if png_path is not None:
        from geomload.export.render import render_stations_png

        render_stations_png(mesh, frame, stations, png_path)
        echo_err(f"geomload: wrote {printable(png_path)}")


def _with_found(text, side_text, lines):
    """The station report with the frame line's half/full phrase replaced by what the file
    really held (a whole aircraft, mirror-image halves) and the found-bodies block after it."""
    out = []
    for line in text.split("\n"):
        if line.startswith("Frame: ") and side_text is not None:
            for phrase in ("half wing (one side)", "full wing (both sides)"):
                line = line.replace(phrase, side_text)
        out.append(line)
        if line.startswith("Frame: ") and lines:
            out += lines
    return "\n".join(out)
