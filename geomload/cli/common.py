"""What every command shares: error-to-exit-code mapping, signal handling, the geometry
options, console text (messages, progress)."""

from __future__ import annotations

import functools
import os
import re
import signal
import sys

import click

from geomload.errors import GeomloadError, Interrupted
from geomload import geometry as geometry_stage
from geomload.progress import make_progress
from geomload.run_geometry import wing_messages  # noqa: F401  (the commands print them)
from geomload.textsafe import printable

EXIT_OK, EXIT_INPUT, EXIT_USAGE, EXIT_INTERNAL = 0, 1, 2, 3
EXIT_SIGNAL_BASE = 128  # a run stopped by signal N exits 128 + N: 130 SIGINT, 143 SIGTERM, 129 SIGHUP
REPORT_HINT = "this is a bug in geomload; please report it with the command line and input files"
HANDLED_SIGNALS = tuple(getattr(signal, n) for n in ("SIGTERM", "SIGHUP") if hasattr(signal, n))


def echo_err(msg: str) -> None:
    click.echo(msg, err=True)


def print_messages(messages) -> None:
    """Print Message records (kind, text) on stderr, one line each."""
    for m in messages:
        echo_err(f"geomload: {m.kind}: {printable(m.text)}")


def _raise_interrupted(signum, frame):  # noqa: ARG001 - signal handler signature
    raise Interrupted(signum)


def install_signal_handlers() -> None:
    """Make SIGTERM and SIGHUP stop a run the way Ctrl-C (SIGINT) does: an exception that
    unwinds through every cleanup (the staging folder is removed), then exit 128 + signal."""
    for sig in HANDLED_SIGNALS:
        try:
            signal.signal(sig, _raise_interrupted)
        except (ValueError, OSError):  # not the main thread, or not allowed here
            pass


def guarded(fn):
    """Turn library errors into one line on stderr and an exit code, never a traceback."""

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        try:
            return fn(*args, **kwargs)
        except GeomloadError as exc:
            echo_err(f"geomload: error: {printable(exc)}")
            sys.exit(getattr(exc, "exit_code", EXIT_INPUT))
        except KeyboardInterrupt as exc:
            echo_err("geomload: interrupted; no output was written")
            sys.exit(EXIT_SIGNAL_BASE + getattr(exc, "signum", signal.SIGINT))
        except (click.exceptions.Exit, click.ClickException, click.Abort):
            raise
        except MemoryError:
            echo_err("geomload: error: out of memory (try fewer stations or panels)")
            sys.exit(EXIT_INPUT)
        except Exception as exc:  # noqa: BLE001 - the last line of defence
            if os.environ.get("GEOMLOAD_DEBUG", "") not in ("", "0"):
                raise
            echo_err(f"geomload: internal error: {type(exc).__name__}: {printable(exc)} "
                     f"({REPORT_HINT}; "
                     "set GEOMLOAD_DEBUG=1 for a traceback)")
            sys.exit(EXIT_INTERNAL)

    return wrapper


def progress_bar():
    """The terminal progress bar of a command (silent when stderr is not a terminal)."""
    return make_progress()


def geometry_options(fn):
    """Options shared by every command that reads a CAD wing."""
    opts = [
        click.option("--units", type=click.Choice(["m", "cm", "mm", "in", "ft"]), default=None,
                     help="Length unit of a unit-less mesh file (STL, OBJ, PLY, OFF); without it "
                          "the mesh is read in m with a warning naming the likely unit. For "
                          "STEP/IGES/GLB it overrides the file's own unit (with a warning)."),
        click.option("--span-axis", default=None, metavar="AXIS",
                     help="CAD axis along the span, e.g. y, +z, -x (default: detected)."),
        click.option("--up-axis", default=None, metavar="AXIS",
                     help="CAD axis pointing up, optionally signed: z, +z, -y (-y: up is the "
                          "CAD's negative y axis; a signed axis decides up versus down). "
                          "Default: detected from the airfoil."),
        click.option("--side", type=click.Choice(["port", "starboard"]), default=None,
                     help="Side a half wing lies on in the file (a port half is mirrored onto "
                          "the starboard wing frame); for a file holding both halves (a fused "
                          "aircraft or mirror-image halves), the half to analyse. Default: "
                          "detected."),
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


def read_geometry(geometry, units, span_axis, up_axis, n_stations, spacing, body, side=None):
    """The `Wing` record of a CAD wing read with the shared options (a unit-less mesh read
    without --units is read in metres with a warning: the commands that print geometry do not
    refuse it; `run` does)."""
    if n_stations is not None and n_stations < 3:
        raise GeomloadError(f"--stations: need at least 3 stations, got {n_stations}")
    return geometry_stage.read_wing(
        geometry, units=units, body=body, span_axis=span_axis, up_axis=up_axis,
        n_stations=n_stations, spacing=spacing, progress=progress_bar(), side=side,
        require_units=False, units_hint="give --units")


def group_messages(messages) -> list:
    """(kind, count, text) with alike messages merged: same kind, same config key (or a varying
    case label) and the same words; the numbers that differ are listed as "a / b", the labels
    as "N cases (a, b, ...)". Order: first appearance."""
    num = re.compile(r"(-?\d+(?:\.\d+)?)")
    key_like = re.compile(r"[A-Za-z_\[\]]+(\.[A-Za-z_0-9\[\]]+)+")
    groups: dict = {}
    for m in messages:
        text, label = str(m.text), None
        hit = re.match(r"^([^\s:]+): ", text)
        if hit and not key_like.fullmatch(hit.group(1)):
            label, text = hit.group(1), text[hit.end():]
        parts = num.split(text)
        skel = tuple(p if i % 2 == 0 else "#" for i, p in enumerate(parts))
        groups.setdefault((m.kind, label is not None, skel), []).append((label, parts))
    out = []
    for (kind, labelled, _), members in groups.items():
        if len(members) == 1:
            label, parts = members[0]
            out.append((kind, 1, (f"{label}: " if label else "") + "".join(parts)))
            continue
        first = members[0][1]
        merged = []
        for i, p in enumerate(first):
            vals = list(dict.fromkeys(mp[i] for _, mp in members))
            merged.append(p if i % 2 == 0 or len(vals) == 1 else
                          " / ".join(vals[:4]) + (" / ..." if len(vals) > 4 else ""))
        head = ""
        if labelled:
            names = [lb for lb, _ in members]
            head = (f"{len(names)} cases ({', '.join(names[:3])}"
                    + (", ..." if len(names) > 3 else "") + "): ")
        out.append((kind, len(members), head + "".join(merged)))
    return out


def print_grouped(messages) -> None:
    """Warnings first, merged and counted; then the notes, plainly (they change no number)."""
    groups = group_messages(messages)
    for kind, n, text in groups:
        if kind != "note":
            count = f" (x{n})" if n > 1 and not text[:1].isdigit() else ""
            echo_err(f"geomload: {kind}{count}: {text}")
    notes = [(n, t) for k, n, t in groups if k == "note"]
    for n, t in notes:
        echo_err(f"  note: {t}")
