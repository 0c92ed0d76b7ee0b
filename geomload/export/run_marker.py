"""The run folder's marker, ``geomload-run.json``: geomload's version, the case file, the time
and every file of the run with its size. It is what lets ``--force`` replace a folder: only a
folder whose marker is valid and which holds nothing else (no extra, changed or linked file).
The software versions recorded with a run are collected here too.
"""

from __future__ import annotations

import datetime as _dt
import json
import os
import stat
from pathlib import Path

from geomload import __version__
from geomload.export import atomic
from geomload.export.atomic import _cause, _resolved

MARKER = "geomload-run.json"
MARKER_KIND = "geomload run folder"
VERSIONED = ("geomload", "numpy", "scipy", "trimesh", "meshio", "pyvista", "matplotlib", "click")


def read_marker(folder) -> dict | None:
    """The marker of a run folder, or None when it has none (or it is not geomload's)."""
    p = Path(folder) / MARKER
    try:
        if not stat.S_ISREG(os.lstat(p).st_mode):
            return None
        data = json.loads(p.read_text(encoding="utf-8"))
    except (OSError, ValueError, UnicodeDecodeError):
        return None
    if not isinstance(data, dict) or data.get("kind") != MARKER_KIND:
        return None
    if not isinstance(data.get("files"), dict):
        return None
    return data


def file_tree(folder: Path) -> tuple[dict, list]:
    """(relative file path -> size, list of symlinks/specials) below `folder`, links not followed."""
    files, odd = {}, []
    for root, dirs, names in os.walk(folder, followlinks=False):
        for n in dirs + names:
            p = os.path.join(root, n)
            st = os.lstat(p)
            rel = os.path.relpath(p, folder).replace(os.sep, "/")
            if stat.S_ISLNK(st.st_mode) or not (stat.S_ISREG(st.st_mode) or stat.S_ISDIR(st.st_mode)):
                odd.append(rel)
            elif stat.S_ISREG(st.st_mode):
                files[rel] = st.st_size
    return files, odd


def replaceable_reason(folder) -> str:
    """'' when `folder` is an earlier geomload run holding only what that run wrote, else why not."""
    f = Path(folder)
    m = read_marker(f)
    if m is None:
        return (f"has no geomload run marker ({MARKER}), so it was not made by geomload; it is "
                "never replaced (choose another --out)")
    try:
        files, odd = file_tree(f)
    except OSError as exc:
        return f"cannot be checked ({_cause(exc)})"
    if odd:
        return f"holds {odd[0]!r}, a link or special file geomload never makes; not replaced"
    files.pop(MARKER, None)
    made = m["files"]
    for rel, size in sorted(files.items()):
        if rel not in made:
            return (f"holds {rel!r}, which the earlier geomload run did not write; move it out "
                    "or choose another --out (nothing was replaced)")
        if made[rel] != size:
            return (f"{rel!r} was changed since the earlier geomload run wrote it; not replaced "
                    "(choose another --out)")
    return ""


def write_marker(staging: Path, case_file) -> None:
    files, _ = file_tree(staging)
    files.pop(MARKER, None)
    data = {"kind": MARKER_KIND, "geomload_version": __version__,
            "case_file": None if case_file is None else str(_resolved(case_file)),
            "created": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
            "note": "written by geomload; with --force geomload replaces this folder only while it "
                    "holds exactly these files", "files": dict(sorted(files.items()))}
    atomic.write_bytes_atomic(staging / MARKER, (json.dumps(data, indent=1) + "\n").encode())



_VERSIONS: dict = {}  # looked up once per process: each lookup scans the installed packages


def software_versions() -> dict:
    """Python's and each library's version in VERSIONED (``"not installed"`` when absent): the
    record of what computed a run (RunResult.versions, the report). Looked up once per process
    (a run computes its coarser error-bar lattices too); each call returns a new dict."""
    if not _VERSIONS:
        import importlib.metadata as md
        import platform

        out = {"python": platform.python_version()}
        for pkg in VERSIONED:
            try:
                out[pkg] = md.version(pkg)
            except md.PackageNotFoundError:
                out[pkg] = "not installed"
        _VERSIONS.update(out)
    return dict(_VERSIONS)


__all__ = ["MARKER", "MARKER_KIND", "read_marker", "replaceable_reason", "write_marker",
           "file_tree", "software_versions"]
