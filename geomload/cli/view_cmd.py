"""`geomload view`: a finished run in a 3D window (or an offscreen screenshot)."""

from __future__ import annotations

from pathlib import Path

import click

from geomload.export.atomic import check_target
from geomload.textsafe import printable

from .common import guarded


@click.command()
@click.argument("run_dir", type=click.Path(file_okay=False))
@click.option("--case", "case_name", default=None, help="Case to colour by (default: critical).")
@click.option("--screenshot", type=click.Path(dir_okay=False), default=None,
              help="Render offscreen to this PNG instead of opening a window.")
@guarded
def view(run_dir, case_name, screenshot):
    """Open the CAD surface, lattice and spar axis of a finished run in a 3D window."""
    if screenshot is not None:  # refused before any work; the run's files are inputs
        check_target(screenshot, [p for p in Path(run_dir).glob("*") if p.is_file()])
    from geomload.export.render import view as _view  # numpy, VTK: loaded when asked for

    _view(run_dir, case=case_name, screenshot=screenshot)
    if screenshot is not None:
        click.echo(f"Wrote {printable(screenshot)}")
