"""What `new-case` decides before writing: the geometry's likely unit, the geometry path as seen
from the case file, and a no-clobber write of the new case file."""

from __future__ import annotations

import os
import stat
import sys
import tempfile

from geomload.errors import InputError
from geomload.geometry.units import guess_unit


def likely_units(geometry):
    """(unit, reason) for a unit-less mesh (the geometry stage's `guess_unit` on its extent), or
    (None, None) when the file carries its own unit or cannot be read (`inspect`/`run` then
    report the real problem)."""
    from geomload.geometry.readers import read_mesh  # numpy: loaded when a unit is guessed

    try:
        mesh = read_mesh(geometry)
    except Exception:  # noqa: BLE001 - a guess only
        return None, None
    if not mesh.units_assumed:
        return None, None
    t = mesh.triangles.reshape(-1, 3)
    extent = float((t.max(axis=0) - t.min(axis=0)).max())
    return guess_unit(extent, read_in="m")


def _stdout_file():
    """The path of the regular file standard output is redirected to, or None."""
    try:
        if not stat.S_ISREG(os.fstat(sys.stdout.fileno()).st_mode):
            return None
        p = os.readlink(f"/proc/self/fd/{sys.stdout.fileno()}")
    except (OSError, ValueError, AttributeError):
        return None
    return p if os.path.isabs(p) and os.path.exists(p) else None


def case_relative_path(geometry, output=None):
    """(geometry path relative to the case file's folder, phrase saying relative to what); an
    absolute path given stays absolute (it is right wherever the case file goes)."""
    if os.path.isabs(geometry):
        return os.path.normpath(geometry), "absolute, as given"
    geo = os.path.abspath(geometry)
    if output:
        base, where = os.path.dirname(os.path.abspath(output)), "relative to the case file's folder"
    else:
        target = _stdout_file()
        if target:
            base = os.path.dirname(target)
            where = f"relative to the folder of {target} (where the output is redirected)"
        else:
            base = os.getcwd()
            where = ("relative to the current folder: save the case file here, or edit "
                     "`geometry.file`")
    try:
        return os.path.relpath(geo, base), where
    except ValueError:  # another drive
        return geo, "absolute"


def write_new_file(path, text, inputs=()):
    """Write `text` to a new file `path`: refused if anything exists there or it is an input;
    written to a temporary file beside it and linked into place (never replaces a file)."""
    if os.path.lexists(path):
        raise InputError(f"{path}: already exists; geomload does not replace it (choose another "
                         "name)")
    folder = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(folder):
        raise InputError(f"{path}: folder {folder} does not exist")
    fd, tmp = tempfile.mkstemp(prefix=".geomload-", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as f:
            f.write(text)
        try:
            os.link(tmp, path)  # fails if a file appeared meanwhile: nothing is replaced
        except FileExistsError:
            raise InputError(f"{path}: already exists; geomload does not replace it") from None
        except OSError as exc:
            raise InputError(f"{path}: cannot write ({exc.strerror or exc})") from None
    finally:
        try:
            os.unlink(tmp)
        except OSError:
            pass
