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


# -- files inside a staged run folder being filled (a `sync_at_end` block): through folder
# descriptors, never by name. The staging folder is new and private (mkdtemp, mode 0700) and
# every folder below it is opened from it with O_NOFOLLOW, so no symbolic link is followed
# anywhere below it; each file is created new (O_EXCL) and moved onto its name only when that
# name is free (renameat2 RENAME_NOREPLACE): it cannot replace anything, an input included, so
# the per-file checks by resolved name (a realpath per file) are not needed there. Anything
# unusual (a name taken, a link, a file system without RENAME_NOREPLACE) falls back to the
# checked path above, which gives the same refusals and messages as outside the block.
_STAGED_DIRS: dict = {}  # sync_at_end folder (str) -> {folder below it (str): descriptor}
_DIR_FLAGS = (os.O_RDONLY | getattr(os, "O_DIRECTORY", 0) | getattr(os, "O_NOFOLLOW", 0)
              | getattr(os, "O_CLOEXEC", 0))
_RENAME_NOREPLACE = 1  # linux/fs.h
_LIBC: list = []  # [libc or None], loaded on first use


def _libc():
    """The C library (ctypes) when it has renameat2 and syncfs (Linux), else None."""
    if not _LIBC:
        lib = None
        try:
            import ctypes

            lib = ctypes.CDLL(None, use_errno=True)
            if not (hasattr(lib, "renameat2") and hasattr(lib, "syncfs")):
                lib = None
        except (OSError, ImportError, AttributeError):
            lib = None
        _LIBC.append(lib)
    return _LIBC[0]


def _staged_parent(final: str):
    """(folder descriptor, name) for `final` inside an open `sync_at_end` block's folder, its
    parent folders opened (made where missing) from the block's folder without following a
    link; None when `final` is elsewhere or a folder on the way is not a plain folder.
    OutputError when a folder on the way is a symbolic link (the staging folder is the run's
    own: a link there was put by someone else, and is never written through)."""
    parent, name = os.path.split(final)
    for root, fds in _STAGED_DIRS.items():
        if parent in fds:
            return fds[parent], name
        if not _under(parent, root):
            continue
        rel = parent[len(root) + 1:].split(os.sep)
        cur, at = fds[root], root
        for comp in rel:
            at = os.path.join(at, comp)
            if at in fds:
                cur = fds[at]
                continue
            if comp in ("", ".", ".."):
                return None
            try:
                try:
                    d = os.open(comp, _DIR_FLAGS, dir_fd=cur)
                except FileNotFoundError:
                    os.mkdir(comp, 0o777, dir_fd=cur)
                    d = os.open(comp, _DIR_FLAGS, dir_fd=cur)
            except OSError as exc:
                if exc.errno in (errno.ELOOP, errno.ENOTDIR) and _is_link(comp, cur):
                    raise OutputError(f"{shown(at)}: is a symbolic link; geomload does not "
                                      "write through links") from None
                return None  # a file, no permission: the checked path says why
            fds[at] = cur = d
        return cur, name
    return None


def _is_link(name: str, dfd: int) -> bool:
    """True if `name` in the folder open as `dfd` is a symbolic link."""
    try:
        return stat.S_ISLNK(os.stat(name, dir_fd=dfd, follow_symlinks=False).st_mode)
    except OSError:
        return False


@contextlib.contextmanager
def _staged_fd(final: str, inputs, dfd: int, name: str):
    """`_atomic_fd` inside a staged run folder being filled (see the comment above)."""
    p = Path(name)
    try:
        fd, tmp = _new_temp_at(dfd, os.path.dirname(final), f".{p.stem[:60]}.",
                               ".tmp" + p.suffix[-12:])
    except OSError as exc:
        raise write_error(final, exc) from None
    tname = os.path.basename(tmp)
    try:
        try:
            yield fd, tmp
            os.fchmod(fd, 0o666 & ~_UMASK)
        finally:
            os.close(fd)
        lib = _libc()
        moved = lib is not None and lib.renameat2(dfd, tname.encode(), dfd, name.encode(),
                                                  _RENAME_NOREPLACE) == 0
        if not moved:  # the name is taken, or no RENAME_NOREPLACE here: check, then rename
            _check_target(final, ResolvedInputs(inputs), final)
            os.rename(tname, name, src_dir_fd=dfd, dst_dir_fd=dfd)
    except OSError as exc:
        with contextlib.suppress(OSError):
            os.unlink(tname, dir_fd=dfd)
        raise write_error(final, exc) from None
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tname, dir_fd=dfd)
        raise


def _new_temp_at(dfd: int, parent: str, prefix: str, suffix: str) -> tuple:
    """`_new_temp` in the folder open as `dfd` (whose path is `parent`)."""
    for _ in range(10000):
        name = f"{prefix}{os.getpid()}-{next(_TEMP_SEQUENCE)}{suffix}"
        try:
            return os.open(name, _TEMP_FLAGS, 0o600, dir_fd=dfd), os.path.join(parent, name)
        except FileExistsError:
            continue
    raise FileExistsError(errno.EEXIST, "no free temporary file name", parent)


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
    many files instead of once per file. On Linux 5.8 or later the pass is one syncfs(2) of
    the folder's file system, which reports any write-back error since the block began (an
    fsync per file costs about ten times more for a few thousand files); elsewhere one fsync
    per file. A failed pass (EIO, a full disk found at write-back) raises an OutputError naming
    the file (or, for syncfs, the folder), and the run folder is not committed. Inside the
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
        if root is not None and _syncfs_reports_errors():
            if _libc().syncfs(root) != 0:
                import ctypes

                e = ctypes.get_errno()
                raise write_error(os.path.join(f, "*"), OSError(e, os.strerror(e)))
            files = []  # flushed, every one
    finally:
        _SYNC_AT_END.pop(f, None)
        for fd in _STAGED_DIRS.pop(f, {}).values():
            with contextlib.suppress(OSError):
                os.close(fd)
    for path in files:  # only reached when the block succeeded
        try:
            fd = os.open(path, os.O_RDONLY)
            try:
                os.fsync(fd)
            finally:
                os.close(fd)
        except OSError as exc:
            raise write_error(path, exc) from None


_SYNCFS_OK: list = []


def _syncfs_reports_errors() -> bool:
    """True where syncfs(2) exists and returns write-back errors (Linux 5.8 and later: before,
    it returned 0 whatever happened, so the pass fsyncs each file instead)."""
    if not _SYNCFS_OK:
        ok = False
        if _libc() is not None:
            import platform

            try:
                major, minor = (int(x) for x in platform.release().split(".")[:2])
                ok = (major, minor) >= (5, 8)
            except ValueError:
                ok = False
        _SYNCFS_OK.append(ok)
    return _SYNCFS_OK[0]


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
