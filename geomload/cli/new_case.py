"""`geomload new-case`: a commented case-file template for a CAD wing, printed or written; it
states where the wing frame sits in the CAD model when the geometry reads as a wing."""

from __future__ import annotations

import os

import click

from geomload.errors import InputError

from .common import echo_err, guarded
from .new_case_paths import case_relative_path, likely_units, write_new_file


@click.command("new-case")
@click.argument("geometry", type=click.Path(dir_okay=False))
@click.option("--units", type=click.Choice(["m", "cm", "mm", "in", "ft"]), default=None,
              help="Length unit of a unit-less mesh (STL, OBJ, PLY, OFF), written as "
                   "`geometry.units`. Default: the likely unit, written with a warning to check it.")
@click.option("-o", "--output", "output", type=click.Path(dir_okay=False), default=None,
              help="Write the case file here (refused if it exists) instead of printing it; the "
                   "geometry path is written relative to this file's folder.")
@guarded
def new_case(geometry, units, output):
    """Print (or write with -o) a commented case-file template for GEOMETRY.

    The geometry path in it is relative to the case file: to the -o file's folder, to the file
    standard output is redirected to, or else to the current folder (the command says which).
    """
    from geomload.config.template import case_template  # numpy (the TOML writer's values)

    if not os.path.isfile(geometry):
        raise InputError(f"{geometry}: no such geometry file"
                         + (" (it is a folder)" if os.path.isdir(geometry) else ""))
    guessed = None
    if units is None:
        units, guessed = likely_units(geometry)
    rel, where = case_relative_path(geometry, output)
    text = case_template(rel, units=units, frame_lines=_frame_lines(geometry, units))
    if guessed:
        echo_err(f"geomload: warning: units = \"{units}\" guessed ({guessed}); check it, or give "
                 "--units")
    if output:
        write_new_file(output, text, inputs=[geometry])
        echo_err(f"geomload: wrote {output}; geometry path {rel!r} is {where}")
    else:
        click.echo(text, nl=False)
        echo_err(f"geomload: note: geometry path {rel!r} is {where}")



def _frame_lines(geometry, units):
    """Where the wing frame sits in the CAD model (origin in CAD coordinates and unit, axes),
    for the template; None when the geometry cannot be read as a wing (the template then points
    to `geomload inspect`, and `run` reports the real problem)."""
    from geomload import geometry as geometry_stage
    from geomload.config.frame_text import frame_origin_lines
    from geomload.errors import GeomloadError

    try:
        wing = geometry_stage.read_wing(geometry, units=units, require_units=False)
    except GeomloadError:
        return None
    return frame_origin_lines(wing)
