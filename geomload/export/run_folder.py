"""Run folders: staged in a hidden sibling, moved into place whole, never replacing a user's folder.

Rules (what geomload will never do to your files):
- A run folder carries a marker, ``geomload-run.json`` (geomload version, case file, time, and
  every file of the run with its size). ``--force`` replaces an existing folder only when its
  marker is valid and the folder holds nothing else (no extra, changed or linked file); any other
  non-empty folder is refused with one line saying why, whatever the flags.
- Refused as --out: an empty name, the root, the home folder, the current folder or one above
  it, a symbolic link, and any folder that is or holds an input (compared after resolving
  symlinks of the folder and of each parent, and by device/inode).
- One run at a time per --out: a lock file ``.<name>.geomload-lock`` beside it (fcntl.flock);
  a second run gets a one-line error. The lock file is removed when the run ends.
- The finished staging folder is renamed into place. An old run (with --force) is first renamed
  aside, checked again, and deleted only after the new one is in place; on failure it is put
  back. A folder that appears at --out during the run is never replaced: renaming a folder onto
  a non-empty folder fails on POSIX, and the run then stops with an error.
- SIGINT/SIGTERM/SIGHUP are held back while the folders are renamed or removed, so an
  interrupt leaves no hidden ``.partial``/``.old`` folder behind.
"""

from __future__ import annotations

import contextlib
import dataclasses
import datetime as _dt
import errno
import os
import shutil
import stat
import tempfile
import time
from pathlib import Path

from geomload.errors import OutputError
from geomload.export import atomic, write_all
from geomload.export.atomic import _STAGING, _UMASK, _cause, _real, _resolved, shown
from geomload.export.run_lock import LOCK_TAG, RunLock, held_signals
from geomload.export.run_marker import (MARKER, MARKER_KIND, read_marker,  # noqa: F401
                                        replaceable_reason, write_marker)
from geomload.messages import Message, no_progress

STAGING_TAG, OLD_TAG = ".partial-", ".old-"


# ------------------------------------------------------------------------------ output folder
def _forbidden(final: Path, inputs) -> str:
    """'' or why `final` may never be an output folder."""
    real = _real(final)
    home = _real(Path.home())
    cwd = _real(os.getcwd())
    if real == Path(real.anchor):
        return "is the root folder"
    if real == home:
        return "is your home folder"
    if real == cwd or real in cwd.parents:
        return "is the current folder or holds it"
    for inp in inputs:
        q = _real(inp)
        if real == q:
            return f"is the input file {shown(inp)}, not a folder"
        if real in q.parents:
            return f"contains the input file {shown(inp)} (replacing it would delete it)"
    try:
        st = os.stat(final)
    except OSError:
        return ""
    ids = set()
    for inp in inputs:
        for a in [Path(_resolved(inp)), *Path(_resolved(inp)).parents]:
            with contextlib.suppress(OSError):
                s = os.stat(a)
                ids.add((s.st_dev, s.st_ino))
    if (st.st_dev, st.st_ino) in ids:
        return "contains an input file (reached through another name)"
    return ""


def _remove_stale_staging(final: Path) -> list:
    """Remove `.<name>.partial-*` folders of earlier runs into `final` that were killed outright
    (SIGKILL, power cut). Called while holding the lock, so no live run owns them. Folders moved
    aside during a replacement (`.<name>.old-*`) hold a finished earlier run and are left alone."""
    gone = []
    prefix = f".{final.name}{STAGING_TAG}"
    try:
        entries = list(os.scandir(final.parent))
    except OSError:
        return gone
    for e in entries:
        if e.name.startswith(prefix) and e.is_dir(follow_symlinks=False):
            with held_signals():
                shutil.rmtree(e.path, ignore_errors=True)
            gone.append(e.path)
    return gone


class OutputDir:
    """A run folder filled atomically.

    Parameters
    ----------
    path : the final folder (as the user gave it). See the module docstring for what is refused.
    force : allow replacing an earlier geomload run (marker valid, nothing else in it).
    inputs : input paths (case file, CAD file) that no output may overwrite or hold.
    case_file : recorded in the marker (default: the first input).

    Use::

        with OutputDir(out, force=True, inputs=[case_path, cad_path]) as od:
            write_something(od.path("stations.csv"))
        # here the folder is in place; on an exception nothing was written to `out`.

    ``open()`` takes the lock and creates the hidden staging folder ``.<name>.partial-*``;
    ``commit()`` writes the marker and moves the folder in; ``abort()`` removes the staging
    folder. Both release the lock.
    """

    def __init__(self, path, force: bool = False, inputs=(), case_file=None):
        self.raw = "" if path is None else str(path)
        self.final = _resolved(self.raw) if self.raw.strip() else None
        self.force = bool(force)
        self.inputs = [i for i in (inputs or ()) if i is not None and str(i) != ""]
        self.case_file = case_file if case_file is not None else (self.inputs[0] if self.inputs else None)
        self.staging: Path | None = None
        self.committed = False
        self._lock = None
        self._made_parents: list = []
        self.removed_stale: list = []  # staging folders of killed earlier runs removed by open()

    # -- checks
    def _check_existing(self) -> None:
        f = self.final
        try:
            st = os.lstat(f)
        except FileNotFoundError:
            return
        except OSError as exc:
            raise OutputError(f"{shown(f)}: cannot use as output folder ({_cause(exc)})") from None
        if stat.S_ISLNK(st.st_mode):
            raise OutputError(f"{shown(f)}: is a symbolic link; give the real folder as --out")
        if not stat.S_ISDIR(st.st_mode):
            raise OutputError(f"{shown(f)}: exists and is not a folder")
        try:
            empty = not any(os.scandir(f))
        except OSError as exc:
            raise OutputError(f"{shown(f)}: cannot read the folder ({_cause(exc)})") from None
        if empty:
            return
        why = replaceable_reason(f)
        if why:
            raise OutputError(f"{shown(f)}: folder exists and {why}")
        if not self.force:
            raise OutputError(f"{shown(f)}: folder exists (an earlier geomload run); use --force "
                              "to replace it")

    # -- life cycle
    def open(self) -> "OutputDir":
        if self.final is None:
            raise OutputError("--out: the output folder name is empty (an unset variable?)")
        f = self.final
        why = _forbidden(f, self.inputs)
        if why:
            raise OutputError(f"{shown(f)}: refused as output folder: it {why}")
        for anc in f.parents:
            if os.path.lexists(anc):
                if not anc.is_dir():
                    raise OutputError(f"{shown(f)}: cannot create output folder: {shown(anc)} is "
                                      "a file, not a folder")
                break
        try:
            missing = [a for a in [*reversed(f.parents)] if not os.path.lexists(a)]
            f.parent.mkdir(parents=True, exist_ok=True)
            self._made_parents = missing
        except OSError as exc:
            raise OutputError(f"{shown(f)}: cannot create output folder ({_cause(exc)})") from None
        self._lock = RunLock(f)
        try:
            self._lock.acquire()
            self.removed_stale = _remove_stale_staging(f)
            self._check_existing()
            with held_signals():
                self.staging = Path(tempfile.mkdtemp(prefix=f".{f.name}{STAGING_TAG}", dir=f.parent))
                _STAGING[str(self.staging)] = str(f)
        except OSError as exc:
            self._cleanup()
            raise OutputError(f"{shown(f)}: cannot create output folder ({_cause(exc)})") from None
        except BaseException:
            self._cleanup()
            raise
        return self

    def path(self, rel) -> Path:
        """Where to write the output `rel` (a path relative to the run folder) while staging."""
        if self.staging is None:
            raise OutputError(f"{shown(self.final)}: output folder is not open")
        rel = Path(rel)
        if rel.is_absolute() or ".." in rel.parts:
            raise OutputError(f"{rel}: output path must be relative to the run folder")
        atomic.check_not_input(self.final / rel, self.inputs)
        p = self.staging / rel
        p.parent.mkdir(parents=True, exist_ok=True)
        return p

    def commit(self) -> Path:
        """Write the marker and move the staged folder into place (replacing an earlier geomload
        run when `force`). Raises OutputError (staging removed, an old run kept) on failure."""
        if self.staging is None:
            raise OutputError(f"{shown(self.final)}: output folder is not open")
        f, aside = self.final, None
        try:
            with held_signals():
                try:
                    write_marker(self.staging, self.case_file)
                    os.chmod(self.staging, 0o777 & ~_UMASK)
                    if os.path.lexists(f):
                        self._check_existing()  # again: the folder may have changed meanwhile
                        if any(os.scandir(f)):
                            spot = Path(tempfile.mkdtemp(prefix=f".{f.name}{OLD_TAG}", dir=f.parent))
                            try:
                                os.rename(f, spot)  # onto the empty aside folder: atomic
                            except OSError:
                                os.rmdir(spot)
                                raise
                            aside = spot
                            why = replaceable_reason(aside)
                            if why:  # swapped between the check and the rename: put it back
                                os.rename(aside, f)
                                aside = None
                                raise OutputError(f"{shown(f)}: folder changed during the run and "
                                                  f"{why}")
                    os.rename(self.staging, f)  # fails if a non-empty folder appeared at f
                except OSError as exc:
                    restored = self._restore(aside)
                    aside = None
                    if exc.errno in (errno.ENOTEMPTY, errno.EEXIST, errno.ENOTDIR, errno.EISDIR):
                        msg = (f"{shown(f)}: something was created there during the run; it was "
                               "not replaced and this run was not written")
                    else:
                        msg = f"{shown(f)}: cannot move the run into place ({_cause(exc)})"
                    raise OutputError(msg + restored) from None
                _STAGING.pop(str(self.staging), None)
                self.staging, self.committed = None, True
                if aside is not None:
                    shutil.rmtree(aside, ignore_errors=True)
                    aside = None
                with contextlib.suppress(OSError):
                    dfd = os.open(f.parent, os.O_RDONLY)
                    try:
                        os.fsync(dfd)
                    finally:
                        os.close(dfd)
        finally:
            if not self.committed:
                self._cleanup()
            else:
                self._release()
        return f

    def _restore(self, aside) -> str:
        """Put an old run renamed aside back at the final name; '' or a note where it is."""
        if aside is None:
            return ""
        try:
            os.rename(aside, self.final)
            return ""
        except OSError:
            stamp = _dt.datetime.now().strftime("%Y%m%d-%H%M%S")
            keep = self.final.with_name(f"{self.final.name}.previous-run-{stamp}")
            try:
                os.rename(aside, keep)
                return f"; the earlier run was kept as {shown(keep)}"
            except OSError:
                return f"; the earlier run was kept as {shown(aside)}"

    def _release(self) -> None:
        if self._lock is not None:
            self._lock.release()
            self._lock = None

    def _cleanup(self) -> None:
        with held_signals():
            if self.staging is not None:
                _STAGING.pop(str(self.staging), None)
                shutil.rmtree(self.staging, ignore_errors=True)
                self.staging = None
            self._release()
            for p in reversed(self._made_parents):  # folders this run created, if still empty
                with contextlib.suppress(OSError):
                    os.rmdir(p)
            self._made_parents = []

    def abort(self) -> None:
        """Remove the staging folder and everything in it; release the lock."""
        self._cleanup()

    def __enter__(self) -> "OutputDir":
        return self.open()

    def __exit__(self, exc_type, exc, tb) -> bool:
        if exc_type is None:
            self.commit()
        else:
            self.abort()
        return False


def leftovers(folder) -> list:
    """Hidden staging/old folders, lock files and temporary files geomload left in `folder` (and
    below): a correct run leaves none. For tests and for `geomload` self-checks."""
    out = []
    for root, dirs, names in os.walk(folder):
        for n in dirs + names:
            if n.startswith(".") and (STAGING_TAG in n or OLD_TAG in n or n.endswith(LOCK_TAG)
                                      or ".tmp" in n):
                out.append(os.path.join(root, n))
    return out


# ------------------------------------------------------------------------------ a whole run
def run_inputs(case_path, case) -> list:
    """The inputs of a run that no output may overwrite or hold: the case file, its geometry
    file and the structural mesh of ``[structure]`` (if any)."""
    s = getattr(case, "structure", None)
    return [case_path, case.geometry.file, *([s.mesh] if s is not None and s.mesh else [])]


def open_run_folder(out_dir, inputs, force: bool = False) -> OutputDir:
    """The OutputDir of a run, opened: a bad output folder is refused before the heavy work."""
    od = OutputDir(out_dir, force=force, inputs=inputs)
    od.open()
    return od


def fill_run_folder(od: OutputDir, inputs, result=None, *, compute=None, force: bool = False,
                    render: bool = True, progress=None, t0: float | None = None) -> tuple:
    """Write every output of a run into the opened ``od`` and move it into place, whole or not
    at all: on any exception (a signal included) the staging folder is removed.

    result: the RunResult; compute: instead, a callable returning it, called inside that
    cleanup (the run is computed once its folder was accepted). t0: time.perf_counter() at the
    start of the run (the report's run time). Returns (RunResult with the export timing and the
    writers' warnings added, list of files written relative to the folder).
    """
    progress = progress or no_progress
    t0 = time.perf_counter() if t0 is None else t0
    try:
        if compute is not None:
            result = compute()
        t_exp = time.perf_counter()
        written = write_all(result, od.staging, inputs=inputs, render=render,
                            progress=progress, options={"render": render, "force": force},
                            run_time_s=time.perf_counter() - t0)
        od.commit()
        result = dataclasses.replace(  # a record is never changed: a new one with the timing
            result, timings={**result.timings, "export": time.perf_counter() - t_exp},
            messages=result.messages + tuple(Message("warning", w)
                                             for w in written.get("warnings", ())))
    except BaseException:
        od.abort()
        raise
    finally:
        close = getattr(progress, "close", None)
        if callable(close):
            close()
    return result, written["files"]
