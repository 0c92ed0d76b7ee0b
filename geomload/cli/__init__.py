"""Command layer: parse options, call the library, print, map errors to exit codes.

One module per command (inspect_cmd, aero_cmd, new_case, run_cmd, view_cmd, batch_cmd for
batch and compare); shared options, error handling and console text in :mod:`geomload.cli.common`. Exit codes: 0 ok, 1 bad input
(file, option or case key), 2 usage error, 3 internal error, 128 + signal when stopped by a
signal (130 SIGINT / Ctrl-C, 143 SIGTERM, 129 SIGHUP). No heavy import happens at module level,
so `geomload --help` is fast.
"""

from __future__ import annotations

import sys

import click

from geomload import __version__

from .aero_cmd import aero
from .batch_cmd import batch, compare
from .common import EXIT_USAGE, install_signal_handlers
from .inspect_cmd import inspect
from .new_case import new_case
from .run_cmd import run
from .view_cmd import view


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="geomload")
def cli():
    """geomload - from a CAD wing to preliminary spanwise structural loads.

    Typical use: `geomload inspect wing.stl` to check the stations, `geomload new-case wing.stl
    > case.toml` to start a case file, then `geomload run case.toml --out results`.

    CAUTION: all loads are preliminary estimates, not a substitute for certified structural
    analysis; the applicable airworthiness rules and licensed/authorised engineers decide.
    """


for _command in (inspect, aero, new_case, run, view, batch, compare):
    cli.add_command(_command)


def main(argv=None):
    """Console-script entry point."""
    install_signal_handlers()
    try:
        cli.main(args=argv, prog_name="geomload", standalone_mode=True)
    except SystemExit as exc:  # click exits 2 on usage errors already
        code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else EXIT_USAGE)
        sys.exit(code)


__all__ = ["cli", "main"]
