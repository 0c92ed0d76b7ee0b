"""Atomic single-file output: a temporary file beside the target, then a rename into place.

Why: a write that fails part-way (full disk, read-only file system, Ctrl-C, a crash) must leave
no half-written file, and a file geomload did not make must never be replaced through a trick
path (a symlink, a device, a FIFO, an input reached through another name).

- `atomic_path(path, inputs)` yields a temporary path in the target's folder; when the block
  succeeds it is renamed onto `path` (atomic on POSIX when both are on one file system).
- `write_text_atomic`, `write_bytes_atomic` are the one-call forms.
- `check_target(path, inputs)` refuses a symlink, a device, a FIFO, a socket or a folder as the
  target, and an input file (compared after resolving symlinks and by device/inode).
- Every OSError while writing (ENOSPC, EROFS, EACCES...) becomes one OutputError line naming the
  folder and the cause; inside a staged run folder the final folder's name is shown, not the
  hidden staging folder's.

Run folders (`OutputDir`) live in geomload.export.run_folder; the names are re-exported here.
"""

from __future__ import annotations

import contextlib
import os
import stat
import tempfile
from pathlib import Path

from geomload import textsafe
from geomload.errors import OutputError


def _umask() -> int:
    old = os.umask(0o022)
    os.umask(old)
    return old


_UMASK = _umask()  # mkstemp/mkdtemp create private entries; outputs get the usual permissions

_STAGING: dict = {}  # staging folder (str) -> final run folder (str), for messages only


def _resolved(p) -> Path:
    """Absolute, '~' expanded, not symlink-resolved (the name the user gave)."""
    return Path(os.path.abspath(os.path.expanduser(str(p))))


def _real(p) -> Path:
    """Absolute with every symlink resolved (as far as the path exists)."""
    return Path(os.path.realpath(os.path.expanduser(str(p))))


def shown(path) -> str:
    """`path` as the user should read it: inside a staging folder, the final run folder's path;
    control characters escaped (the name may come from the user)."""
    p = str(path)
    for st, fin in _STAGING.items():
        if p == st or p.startswith(st + os.sep):
            p = fin + p[len(st):]
            break
    return textsafe.printable(p)


def _cause(exc: OSError) -> str:
    return exc.strerror or str(exc) or type(exc).__name__


def write_error(path, exc: OSError) -> OutputError:
    """The one-line OutputError for an OSError while writing `path`: '<folder>: cannot write
    <name> (<cause>)'."""
    p = Path(shown(path))
    return OutputError(f"{p.parent}: cannot write {p.name} ({_cause(exc)})")


def _same(a, b) -> bool:
    try:
        return os.path.samefile(a, b)
    except OSError:
        return False


def check_not_input(path, inputs) -> None:
    """Raise OutputError if `path` is one of `inputs` or a folder holding one of them.

    Compared after resolving symlinks (of the path and of every parent) and by device/inode,
    so a hard link, a symlinked parent or a bind mount cannot hide an input.
    """
    p, pr = _resolved(path), _real(path)
    for inp in inputs or ():
        if inp is None or str(inp) == "":
            continue
        q, qr = _resolved(inp), _real(inp)
        if p == q or pr == qr or _same(p, q):
            raise OutputError(f"{shown(p)}: refusing to overwrite the input file {shown(q)}")
        if pr in qr.parents or p in q.parents:
            raise OutputError(f"{shown(p)}: output folder contains the input file {shown(q)}; "
                              "choose another --out")


def check_target(path, inputs=()) -> Path:
    """Refuse a target that is a symlink, a device, a FIFO, a socket or a folder, or an input.
    Returns the absolute target path."""
    final = _resolved(path)
    if str(path).strip() == "":
        raise OutputError("output file name is empty")
    check_not_input(final, inputs)
    try:
        st = os.lstat(final)
    except FileNotFoundError:
        return final
    except OSError as exc:
        raise write_error(final, exc) from None
    if stat.S_ISLNK(st.st_mode):
        raise OutputError(f"{shown(final)}: is a symbolic link; geomload does not write through "
                          "links (give the real file name)")
    if stat.S_ISDIR(st.st_mode):
        raise OutputError(f"{shown(final)}: is a folder, not a file")
    if not stat.S_ISREG(st.st_mode):
        kind = ("a FIFO" if stat.S_ISFIFO(st.st_mode) else "a socket" if stat.S_ISSOCK(st.st_mode)
                else "a device")
        raise OutputError(f"{shown(final)}: is {kind}, not a regular file; refusing to write it")
    return final


@contextlib.contextmanager
def atomic_path(path, inputs=()):
    """Yield a temporary path beside `path`; rename it onto `path` if the block succeeds.

    The temporary name keeps the file's extension (writers may pick the format from it).
    Refused targets: see `check_target`. Any OSError (in the block or the rename) becomes an
    OutputError naming the folder and the cause; the temporary file is always removed.
    """
    final = check_target(path, inputs)
    try:
        final.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{final.stem[:60]}.", suffix=".tmp" + final.suffix[-12:],
                                   dir=final.parent)
        os.close(fd)
    except OSError as exc:
        raise write_error(final, exc) from None
    try:
        yield Path(tmp)
        check_target(final, inputs)  # again: something may have appeared there meanwhile
        os.chmod(tmp, 0o666 & ~_UMASK)
        os.rename(tmp, final)
    except OSError as exc:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise write_error(final, exc) from None
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise


def write_bytes_atomic(path, data: bytes, inputs=(), fsync: bool = True) -> Path:
    """Write `data` to `path` atomically (temporary file in the same folder, then rename).
    Every byte is checked written (a short write raises); fsync before the rename."""
    with atomic_path(path, inputs) as tmp:
        with open(tmp, "wb") as fh:
            n = fh.write(data)
            if n != len(data):
                raise OSError(28, f"short write ({n} of {len(data)} bytes)")
            fh.flush()
            if fsync:
                os.fsync(fh.fileno())
    return _resolved(path)


def write_text_atomic(path, text: str, inputs=()) -> Path:
    """Write UTF-8 `text` to `path` atomically (newline '\\n' on every platform)."""
    return write_bytes_atomic(path, text.encode("utf-8"), inputs)


def safe_name(name: str, taken=None) -> str:
    """A file-name-safe ASCII version of a user string (case name), unique within `taken` (a set
    of lower-case names already used). Accents are dropped from their letters; a name with no
    ASCII left becomes 'case'."""
    base = textsafe.ascii_key(name)[:80] or "case"
    out, k = base, 2
    if taken is not None:
        while out.lower() in taken:
            out, k = f"{base}_{k}", k + 1
        taken.add(out.lower())
    return out


def __getattr__(name):  # OutputDir and friends moved to run_folder; old imports keep working
    if name in ("OutputDir", "MARKER", "read_marker"):
        from geomload.export import run_folder

        return getattr(run_folder, name)
    raise AttributeError(name)
