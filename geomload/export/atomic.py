"""Atomic output: files renamed into place, run folders staged and moved in only on success.

Why: a run that fails part-way (bad case, crash, Ctrl-C) must leave no half-written file and no
half-filled folder, and an input (CAD file, case file) must never be overwritten or deleted.

- `atomic_path(path)` yields a temporary path in the same folder; on success it is `os.replace`d
  onto `path` (an atomic rename on POSIX and Windows when both are on one file system).
- `write_text_atomic`, `write_bytes_atomic` are the one-call forms.
- `OutputDir` stages a whole run in a hidden sibling folder and moves it into place on `commit()`
  (or on leaving its `with` block without an exception); on failure the staging folder is removed.
"""

from __future__ import annotations

import contextlib
import os
import re
import shutil
import tempfile
from pathlib import Path

from geomload.errors import OutputError


def _umask() -> int:
    old = os.umask(0o022)
    os.umask(old)
    return old


_UMASK = _umask()  # mkstemp/mkdtemp create private entries; outputs get the usual permissions


def _resolved(p) -> Path:
    return Path(os.path.abspath(os.path.expanduser(str(p))))


@contextlib.contextmanager
def atomic_path(path, inputs=()):
    """Yield a temporary path beside `path`; rename it onto `path` if the block succeeds.

    The temporary name keeps the file's extension (writers such as VTK pick the format from it).
    `inputs`: paths that must never be written; naming one raises OutputError.
    """
    final = _resolved(path)
    check_not_input(final, inputs)
    final.parent.mkdir(parents=True, exist_ok=True)
    suffix = "".join(final.suffixes[-1:])
    fd, tmp = tempfile.mkstemp(prefix=f".{final.stem}.", suffix=".tmp" + suffix, dir=final.parent)
    os.close(fd)
    try:
        yield Path(tmp)
        os.chmod(tmp, 0o666 & ~_UMASK)
        os.replace(tmp, final)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise


def write_bytes_atomic(path, data: bytes, inputs=()) -> Path:
    """Write `data` to `path` atomically (temporary file in the same folder, then rename)."""
    with atomic_path(path, inputs) as tmp:
        with open(tmp, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
    return _resolved(path)


def write_text_atomic(path, text: str, inputs=()) -> Path:
    """Write UTF-8 `text` to `path` atomically (newline '\\n' on every platform)."""
    return write_bytes_atomic(path, text.encode("utf-8"), inputs)


def check_not_input(path, inputs) -> None:
    """Raise OutputError if `path` is one of `inputs` or a folder holding one of them."""
    p = _resolved(path)
    for inp in inputs or ():
        if inp is None:
            continue
        q = _resolved(inp)
        if p == q or (p.exists() and q.exists() and os.path.samefile(p, q)):
            raise OutputError(f"{p}: refusing to overwrite the input file {q}")
        if p in q.parents:
            raise OutputError(f"{p}: output folder contains the input file {q}; choose another --out")


_UNSAFE = re.compile(r"[^A-Za-z0-9_.+-]+")


def safe_name(name: str, taken=None) -> str:
    """A file-name-safe version of a user string (case name), unique within `taken` (a set)."""
    base = _UNSAFE.sub("_", str(name)).strip("._") or "case"
    base = base[:80]
    out, k = base, 2
    if taken is not None:
        while out.lower() in taken:
            out, k = f"{base}_{k}", k + 1
        taken.add(out.lower())
    return out


class OutputDir:
    """A run folder filled atomically.

    Parameters
    ----------
    path : the final folder. An existing non-empty folder is refused unless `force`; with
        `force` the old folder is replaced only once the new run has succeeded.
    force : allow replacing an existing folder.
    inputs : input paths (CAD file, case file) that no output may overwrite; the final folder
        may not contain them either (replacing it would delete them).

    Use::

        with OutputDir(out, force=True, inputs=[case_path, cad_path]) as od:
            write_something(od.path("stations.csv"))
        # here the folder is in place; on an exception nothing was written to `out`.
    """

    def __init__(self, path, force: bool = False, inputs=()):
        self.final = _resolved(path)
        self.force = bool(force)
        self.inputs = [i for i in (inputs or ()) if i is not None]
        self.staging: Path | None = None
        self.committed = False

    # -- life cycle
    def open(self) -> "OutputDir":
        f = self.final
        if f.exists() and not f.is_dir():
            raise OutputError(f"{f}: exists and is not a folder")
        check_not_input(f, self.inputs)
        if f.is_dir() and any(f.iterdir()) and not self.force:
            raise OutputError(f"{f}: folder exists and is not empty (use --force to replace it)")
        for anc in f.parents:
            if anc.exists():
                if not anc.is_dir():
                    raise OutputError(f"{f}: cannot create output folder: {anc} is a file, "
                                      "not a folder")
                break
        try:
            f.parent.mkdir(parents=True, exist_ok=True)
            self.staging = Path(tempfile.mkdtemp(prefix=f".{f.name}.partial-", dir=f.parent))
        except OSError as exc:
            raise OutputError(f"{f}: cannot create output folder ({exc.strerror or exc})") from None
        return self

    def path(self, rel) -> Path:
        """Where to write the output `rel` (a path relative to the run folder) while staging."""
        if self.staging is None:
            raise OutputError(f"{self.final}: output folder is not open")
        rel = Path(rel)
        if rel.is_absolute() or ".." in rel.parts:
            raise OutputError(f"{rel}: output path must be relative to the run folder")
        check_not_input(self.final / rel, self.inputs)
        p = self.staging / rel
        p.parent.mkdir(parents=True, exist_ok=True)
        return p

    def commit(self) -> Path:
        """Move the staged folder into place (replacing an old one when `force`)."""
        if self.staging is None:
            raise OutputError(f"{self.final}: output folder is not open")
        f, old = self.final, None
        try:
            if f.exists():
                old = Path(tempfile.mkdtemp(prefix=f".{f.name}.old-", dir=f.parent))
                os.replace(f, old / f.name)
            os.chmod(self.staging, 0o777 & ~_UMASK)
            os.replace(self.staging, f)
        except OSError as exc:
            if old is not None and not f.exists() and (old / f.name).exists():
                os.replace(old / f.name, f)  # put the previous run back
            self.abort()
            raise OutputError(f"{f}: cannot move the run into place ({exc.strerror or exc})") from None
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)
        self.staging, self.committed = None, True
        return f

    def abort(self) -> None:
        """Remove the staging folder and everything in it."""
        if self.staging is not None:
            shutil.rmtree(self.staging, ignore_errors=True)
            self.staging = None

    def __enter__(self) -> "OutputDir":
        return self.open()

    def __exit__(self, exc_type, exc, tb) -> bool:
        if exc_type is None:
            self.commit()
        else:
            self.abort()
        return False
