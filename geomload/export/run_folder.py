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
import datetime as _dt
import errno
import json
import os
import shutil
import signal
import stat
import tempfile
import threading
from pathlib import Path

from geomload import __version__
from geomload.errors import OutputError
from geomload.export import atomic
from geomload.export.atomic import _STAGING, _UMASK, _cause, _real, _resolved, shown

MARKER = "geomload-run.json"
MARKER_KIND = "geomload run folder"
STAGING_TAG, OLD_TAG, LOCK_TAG = ".partial-", ".old-", ".geomload-lock"
_HELD = (signal.SIGINT, signal.SIGTERM, signal.SIGHUP)


@contextlib.contextmanager
def held_signals():
    """Hold SIGINT/SIGTERM/SIGHUP for the duration of a short critical section (folder renames
    and removals); a signal that arrives meanwhile is delivered right after. Outside the main
    thread (where Python cannot change handlers) the block runs unprotected."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    got, old = [], {}

    def defer(signum, frame):
        got.append(signum)

    for s in _HELD:
        with contextlib.suppress(ValueError, OSError):
            old[s] = signal.signal(s, defer)
    try:
        yield
    finally:
        for s, h in old.items():
            with contextlib.suppress(ValueError, OSError):
                signal.signal(s, h)
        for s in dict.fromkeys(got):
            h = old.get(s)
            if callable(h):
                h(s, None)
            elif h == signal.SIG_DFL:
                os.kill(os.getpid(), s)


# ------------------------------------------------------------------------------------ marker
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


def _tree(folder: Path) -> tuple[dict, list]:
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
        files, odd = _tree(f)
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


def _write_marker(staging: Path, case_file) -> None:
    files, _ = _tree(staging)
    files.pop(MARKER, None)
    data = {"kind": MARKER_KIND, "geomload_version": __version__,
            "case_file": None if case_file is None else str(_resolved(case_file)),
            "created": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
            "note": "written by geomload; with --force geomload replaces this folder only while it "
                    "holds exactly these files", "files": dict(sorted(files.items()))}
    atomic.write_bytes_atomic(staging / MARKER, (json.dumps(data, indent=1) + "\n").encode())


# ------------------------------------------------------------------------------------- lock
class _Lock:
    """An exclusive, non-blocking flock on `<parent>/.<name>.geomload-lock`, removed on release."""

    def __init__(self, final: Path):
        self.final = final
        self.path = final.parent / f".{final.name}{LOCK_TAG}"
        self.fd = None

    def acquire(self) -> None:
        import fcntl

        for _ in range(20):
            try:
                fd = os.open(self.path, os.O_RDWR | os.O_CREAT | os.O_NOFOLLOW, 0o644)
            except OSError as exc:
                raise OutputError(f"{shown(self.final)}: cannot create the output folder "
                                  f"({_cause(exc)})") from None
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except OSError:
                os.close(fd)
                raise OutputError(f"{shown(self.final)}: another geomload run is writing this "
                                  "folder now; wait for it to finish or choose another --out") from None
            try:  # the file we locked must still be the one at the path (not an unlinked one)
                same = os.fstat(fd).st_ino == os.stat(self.path, follow_symlinks=False).st_ino
            except OSError:
                same = False
            if same:
                self.fd = fd
                return
            os.close(fd)
        raise OutputError(f"{shown(self.final)}: cannot take the output lock {self.path}")

    def release(self) -> None:
        if self.fd is None:
            return
        with contextlib.suppress(OSError):
            os.unlink(self.path)  # still holding the lock: no one else can be using this inode
        with contextlib.suppress(OSError):
            os.close(self.fd)
        self.fd = None


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
        self._lock = _Lock(f)
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
                    _write_marker(self.staging, self.case_file)
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
