"""`geomload run`: every load case of a case file, written to an output folder."""

from __future__ import annotations

import click

from geomload.textsafe import printable

from .common import guarded, print_grouped, progress_bar


@click.command()
@click.argument("case_file", type=click.Path(dir_okay=True))
@click.option("--out", "out_dir", type=click.Path(file_okay=True), required=True,
              help="Output folder (refused if it exists, unless --force).")
@click.option("--force", is_flag=True, help="Replace an existing output folder.")
@click.option("--no-render", is_flag=True, help="Skip the 3D pictures (faster; report keeps plots).")
@guarded
def run(case_file, out_dir, force, no_render):
    """Run every load case of CASE_FILE and write loads, VTK and an HTML report to --out."""
    from geomload.pipeline import run_case_file  # the whole library: loaded when a run starts
    from geomload.report_text import run_table

    result, written = run_case_file(case_file, out_dir, force=force, render=not no_render,
                                    progress=progress_bar())
    print_grouped(result.messages)
    click.echo(run_table(result))
    click.echo(f"Wrote {len(written)} files to {printable(out_dir)}")
