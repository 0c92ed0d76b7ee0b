"""`geomload new-case`: print a commented case-file template for a CAD wing."""

from __future__ import annotations

import click

from .common import echo_err, guarded

PLAUSIBLE_EXTENT_M = (0.2, 100.0)  # a wing (model to airliner) spans this much, in metres


@click.command("new-case")
@click.argument("geometry", type=click.Path(dir_okay=False))
@guarded
def new_case(geometry):
    """Print a commented case-file template for GEOMETRY (redirect it to a .toml file)."""
    import os

    from geomload.config.template import case_template
    from geomload.errors import InputError

    if not os.path.isfile(geometry):
        raise InputError(f"{geometry}: no such geometry file"
                         + (" (it is a folder)" if os.path.isdir(geometry) else ""))
    guess = guess_units(geometry)
    text = case_template(geometry, units=guess)
    if guess:
        echo_err(f"geomload: note: units = \"{guess}\" guessed from the size of the mesh; check it")
    click.echo(text, nl=False)


def guess_units(geometry):
    """The length unit that makes a unit-less mesh a plausible wing (PLAUSIBLE_EXTENT_M across),
    or None when metres already are, or the file carries its own units, or it cannot be read."""
    from geomload.geometry.read import read_mesh
    from geomload.units import LENGTH_UNITS

    try:
        mesh = read_mesh(geometry)
    except Exception:  # noqa: BLE001 - a guess only; `inspect`/`run` report the real problem
        return None
    if mesh.units not in ("m",):
        return None
    t = mesh.triangles.reshape(-1, 3)
    extent = float((t.max(axis=0) - t.min(axis=0)).max())
    lo, hi = PLAUSIBLE_EXTENT_M
    if lo <= extent <= hi:
        return None
    for unit in ("mm", "cm", "in", "ft"):
        if lo <= extent * LENGTH_UNITS[unit] <= hi:
            return unit
    return None
