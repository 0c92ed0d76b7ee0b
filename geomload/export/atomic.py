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

The target checks live in `geomload.export.atomic_checks` and the staged-folder path in
`geomload.export.atomic_staged` (their names are re-exported here). Run folders (`OutputDir`)
live in geomload.export.run_folder.
"""

from __future__ import annotations

import contextlib
import os
from pathlib import Path

from geomload import textsafe
from geomload.errors import OutputError
from geomload.export.atomic_checks import (  # noqa: F401 - re-exported
    _STAGING, _TEMP_FLAGS, _TEMP_SEQUENCE, _UMASK, ResolvedInputs, _abs, _cause, _check_target,
    _ident, _new_temp, _not_input, _real, _real_str, _resolved, _under, check_not_input,
    check_target, shown, write_error)
from geomload.export.atomic_staged import (  # noqa: F401 - re-exported
    _DIR_FLAGS, _STAGED_DIRS, _staged_fd, _staged_parent, fsync_ours, syncfs,
    syncfs_reports_errors)


@contextlib.contextmanager
def _atomic_fd(path, inputs=(), final=None):
    """Yield (open file descriptor, temporary path) of a new file beside `path`; close it and
    rename it onto `path` if the block succeeds (see `atomic_path`). final: _abs(path), when the
    caller has it."""
    final = _abs(path) if final is None else final
    if _STAGED_DIRS:
        fast = _staged_parent(final)
        if fast is not None:
            with _staged_fd(final, inputs, *fast) as out:
                yield out
            return
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


_SYNC_AT_END: dict = {}  # folder (str) -> [(file, (st_dev, st_ino))] written below it whose
#                         fsync waits (sync_at_end)


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
    many files instead of once per file. On Linux 5.8 or later, on a local file system whose
    syncfs(2) reports its write-back errors (`atomic_staged.syncfs_reports_errors`), the pass is
    one syncfs of the folder's file system, which reports any write-back error since the block
    began (an fsync per file costs about ten times more for a few thousand files); elsewhere
    one fsync per file, of the very file written only (a name that holds anything else, a FIFO
    say, is left alone and never blocks the pass). A failed pass (EIO, a full disk found at
    write-back) raises an OutputError naming the file (or, for syncfs, the folder), and the
    run folder is not committed. Inside the
    block the files are written through folder descriptors (see `_staged_fd`). In any other
    folder the block changes nothing (each file is flushed before its rename, as always).
    """
    f = str(_resolved(folder))
    if f in _SYNC_AT_END or not _staged(f):
        yield
        return
    files = _SYNC_AT_END[f] = []
    root = None
    with contextlib.suppress(OSError):
        root = os.open(f, _DIR_FLAGS)
    if root is not None:
        _STAGED_DIRS[f] = {f: root}
    try:
        yield
        if root is not None and syncfs_reports_errors(root):
            syncfs(root, f)
            files = []  # flushed, every one
    finally:
        _SYNC_AT_END.pop(f, None)
        for fd in _STAGED_DIRS.pop(f, {}).values():
            with contextlib.suppress(OSError):
                os.close(fd)
    for path, ident in files:  # only reached when the block succeeded
        try:
            fsync_ours(path, ident)
        except FileNotFoundError:
            continue  # its write failed and said so (the rename raised): nothing of ours there
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
        st = os.fstat(fh.fileno())
        pending.append((str(final), (st.st_dev, st.st_ino)))


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
                st = os.fstat(fd)
                pending.append((final, (st.st_dev, st.st_ino)))
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
