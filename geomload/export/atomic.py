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
- `ResolvedInputs(inputs)` resolves the inputs once (absolute name, real name, device/inode) for
  the many writes of one run; `check_not_input` accepts it in place of a plain list.
- `sync_at_end(folder)`: inside a staged run folder, every file written in the block is flushed
  to disk (fsync) in one pass when the block ends, instead of one fsync per file. The staging
  folder is moved into place only after that pass, so outputs still appear whole or not at all.

Run folders (`OutputDir`) live in geomload.export.run_folder; the names are re-exported here.
"""

from __future__ import annotations

import contextlib
import errno
import itertools
import os
import stat
from pathlib import Path

from geomload import textsafe
from geomload.errors import OutputError


def _umask() -> int:
    old = os.umask(0o022)
    os.umask(old)
    return old


_UMASK = _umask()  # mkstemp/mkdtemp create private entries; outputs get the usual permissions

_STAGING: dict = {}  # staging folder (str) -> final run folder (str), for messages only


def _abs(p) -> str:
    """Absolute, '~' expanded, not symlink-resolved (the name the user gave), as a string."""
    return os.path.abspath(os.path.expanduser(str(p)))


def _real_str(p) -> str:
    """Absolute with every symlink resolved (as far as the path exists), as a string."""
    return os.path.realpath(os.path.expanduser(str(p)))


def _resolved(p) -> Path:
    """Absolute, '~' expanded, not symlink-resolved (the name the user gave)."""
    return Path(_abs(p))


def _real(p) -> Path:
    """Absolute with every symlink resolved (as far as the path exists)."""
    return Path(_real_str(p))


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


def _ident(p: str):
    """(device, inode) of the file `p` names (symlinks followed), or None."""
    try:
        st = os.stat(p)
    except (OSError, ValueError):
        return None
    return st.st_dev, st.st_ino


def _under(child: str, folder: str) -> bool:
    """True if the normalised path `child` lies strictly inside the normalised path `folder`."""
    pre = folder if folder.endswith(os.sep) else folder + os.sep
    return child != folder and child.startswith(pre)


class ResolvedInputs(tuple):
    """The input paths of a run (a tuple of the given paths, empty names dropped), each resolved
    once: its absolute name, its real name (symlinks resolved) and its (device, inode).

    `check_not_input` compares a target with these instead of resolving every input again at
    every file written (a run writes thousands). Build one per run, just before its writes.
    """

    def __new__(cls, inputs=()):
        if isinstance(inputs, ResolvedInputs):
            return inputs
        items = tuple(i for i in (inputs or ()) if i is not None and str(i) != "")
        self = super().__new__(cls, items)
        self.entries = tuple((_abs(i), _real_str(i), _ident(_abs(i))) for i in items)
        return self


def check_not_input(path, inputs) -> None:
    """Raise OutputError if `path` is one of `inputs` or a folder holding one of them.

    Compared after resolving symlinks (of the path and of every parent) and by device/inode,
    so a hard link, a symlinked parent or a bind mount cannot hide an input. `inputs` is a list
    of paths or a `ResolvedInputs` (resolved once for many checks).
    """
    entries = ResolvedInputs(inputs).entries
    if entries:
        _not_input(_abs(path), _real_str(path), entries)


def _not_input(p: str, pr: str, entries) -> None:
    """`check_not_input` of the absolute path p whose real path is pr."""
    ident = _ident(p)
    for q, qr, qid in entries:
        if p == q or pr == qr or (ident is not None and ident == qid):
            raise OutputError(f"{shown(p)}: refusing to overwrite the input file {shown(q)}")
        if _under(qr, pr) or _under(q, p):
            raise OutputError(f"{shown(p)}: output folder contains the input file {shown(q)}; "
                              "choose another --out")


def check_target(path, inputs=()) -> Path:
    """Refuse a target that is a symlink, a device, a FIFO, a socket or a folder, or an input.
    Returns the absolute target path."""
    return Path(_check_target(path, inputs))


def _check_target(path, inputs, final=None) -> str:
    """`check_target` on strings (the absolute target path as a string). final: _abs(path)
    when the caller has it (a second check of the same target)."""
    final = _abs(path) if final is None else final
    if str(path).strip() == "":
        raise OutputError("output file name is empty")
    entries = ResolvedInputs(inputs).entries
    if entries:  # check_not_input(final, inputs), final being absolute already
        _not_input(final, _real_str(final), entries)
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


_TEMP_FLAGS = (os.O_RDWR | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0)
               | getattr(os, "O_CLOEXEC", 0))
_TEMP_SEQUENCE = itertools.count()


def _new_temp(parent: str, prefix: str, suffix: str) -> tuple:
    """(fd, path) of a new private file (mode 0600) in `parent`, named prefix + process id and a
    count + suffix: what tempfile.mkstemp gives, created the same way (O_EXCL: never an
    existing file, and no link followed), without its random-name machinery (a fifth of a
    small file's write). A name taken (another process's file) is skipped."""
    for _ in range(10000):
        tmp = os.path.join(parent, f"{prefix}{os.getpid()}-{next(_TEMP_SEQUENCE)}{suffix}")
        try:
            return os.open(tmp, _TEMP_FLAGS, 0o600), tmp
        except FileExistsError:
            continue
    raise FileExistsError(errno.EEXIST, "no free temporary file name", parent)


@contextlib.contextmanager
def _atomic_fd(path, inputs=(), final=None):
    """Yield (open file descriptor, temporary path) of a new file beside `path`; close it and
    rename it onto `path` if the block succeeds (see `atomic_path`). final: _abs(path), when the
    caller has it."""
    inputs = ResolvedInputs(inputs)  # resolved once for both checks
    final = _check_target(path, inputs, final)
    pf = Path(final)
    try:
        parent = os.path.dirname(final)
        if not os.path.isdir(parent):
            os.makedirs(parent, exist_ok=True)
        fd, tmp = _new_temp(parent, f".{pf.stem[:60]}.", ".tmp" + pf.suffix[-12:])
    except OSError as exc:
        raise write_error(final, exc) from None
    try:
        try:
            yield fd, tmp
        finally:
            os.close(fd)
        _check_target(final, inputs, final)  # again: something may have appeared there meanwhile
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


@contextlib.contextmanager
def atomic_path(path, inputs=()):
    """Yield a temporary path beside `path`; rename it onto `path` if the block succeeds.

    The temporary name keeps the file's extension (writers may pick the format from it).
    Refused targets: see `check_target`. Any OSError (in the block or the rename) becomes an
    OutputError naming the folder and the cause; the temporary file is always removed.
    """
    with _atomic_fd(path, inputs) as (_fd, tmp):  # the writer opens the file by its name
        yield Path(tmp)


_SYNC_AT_END: dict = {}  # folder (str) -> files written below it whose fsync waits (sync_at_end)


def _staged(folder: str) -> bool:
    """True if `folder` is a staging folder of an open run folder, or lies inside one."""
    return any(folder == st or _under(folder, st) for st in _STAGING)


def _pending(final: str):
    """The list collecting `final` for one fsync pass (see `sync_at_end`), or None."""
    for folder, files in _SYNC_AT_END.items():
        if _under(final, folder):
            return files
    return None


@contextlib.contextmanager
def sync_at_end(folder):
    """Flush every file written below `folder` in the block to disk in one pass at its end.

    Only inside a staged run folder (`run_folder.OutputDir.staging`, or a folder inside it): no
    output is visible under its final name until the staging folder is moved into place, which
    happens after this pass, so a file only needs to be on disk by then, not at its own rename.
    One pass is cheaper than an fsync per file: the file system commits its journal once for
    many files instead of once per file. A failed fsync (EIO, a full disk found at write-back)
    raises the OutputError naming that file, and the run folder is not committed. In any other
    folder the block changes nothing (each file is flushed before its rename, as always).
    """
    f = str(_resolved(folder))
    if f in _SYNC_AT_END or not _staged(f):
        yield
        return
    files = _SYNC_AT_END[f] = []
    try:
        yield
    finally:
        _SYNC_AT_END.pop(f, None)
    for path in files:  # only reached when the block succeeded
        try:
            fd = os.open(path, os.O_RDONLY)
            try:
                os.fsync(fd)
            finally:
                os.close(fd)
        except OSError as exc:
            raise write_error(path, exc) from None


def flush_to_disk(fh, final) -> None:
    """fsync the open file `fh` that will be renamed onto `final`, or, inside a `sync_at_end`
    block, note `final` for that block's fsync pass."""
    fh.flush()
    pending = _pending(_abs(final)) if _SYNC_AT_END else None
    if pending is None:
        os.fsync(fh.fileno())
    else:
        pending.append(str(final))


def write_bytes_atomic(path, data: bytes, inputs=(), fsync: bool = True) -> Path:
    """Write `data` to `path` atomically (temporary file in the same folder, then rename).
    Every byte is checked written (a short write raises); fsync before the rename (inside a
    `sync_at_end` block: in that block's pass, before the run folder is committed)."""
    final = _abs(path)
    with _atomic_fd(path, inputs, final) as (fd, tmp):
        # written through the descriptor the temporary file was made with: no second open
        # (truncating an emptied file makes some file systems write it back early)
        view, done = memoryview(data), 0
        while done < len(view):
            n = os.write(fd, view[done:])
            if n <= 0:
                raise OSError(28, f"short write ({done} of {len(data)} bytes)")
            done += n
        if fsync:
            pending = _pending(final) if _SYNC_AT_END else None
            if pending is None:
                os.fsync(fd)
            else:
                pending.append(final)
    return Path(final)


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
