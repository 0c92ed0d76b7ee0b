"""Files written inside a staged run folder being filled (an `atomic.sync_at_end` block): through
descriptors of its folders and a rename that never replaces a name already taken; and whether
the block's flush can be one syncfs(2) of the folder's file system.
"""

from __future__ import annotations

import contextlib
import errno
import os
import stat
from pathlib import Path

from geomload.errors import OutputError
from geomload.export.atomic_checks import (_TEMP_FLAGS, _TEMP_SEQUENCE, _UMASK, ResolvedInputs,
                                           _check_target, _under, shown, write_error)


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
    """The C library (ctypes) when it has renameat2, syncfs and fstatfs (Linux), else None. Each
    function's argument and result types are declared (no guessing by ctypes)."""
    if not _LIBC:
        lib = None
        try:
            import ctypes

            lib = ctypes.CDLL(None, use_errno=True)  # TypeError on Windows (no default library)
            if not all(hasattr(lib, f) for f in ("renameat2", "syncfs", "fstatfs")):
                lib = None
            else:
                c = ctypes
                lib.renameat2.argtypes = [c.c_int, c.c_char_p, c.c_int, c.c_char_p, c.c_uint]
                lib.renameat2.restype = c.c_int
                lib.syncfs.argtypes = [c.c_int]
                lib.syncfs.restype = c.c_int
                lib.fstatfs.argtypes = [c.c_int, c.c_void_p]
                lib.fstatfs.restype = c.c_int
        except (OSError, ImportError, AttributeError, TypeError):
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
        moved = lib is not None and lib.renameat2(dfd, os.fsencode(tname), dfd, os.fsencode(name),
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


_SYNCFS_OK: list = []
# File systems whose syncfs(2) returns the write-back errors of their own files (errseq on the
# superblock, Linux 5.8 and later; statfs(2) f_type magic numbers from linux/magic.h): local
# block file systems, and tmpfs, which has no write-back to fail. Stacked and network file
# systems (overlayfs, FUSE, NFS, ...) may not pass their lower layer's errors up to syncfs:
# there the flush is one fsync per file, whose errors every file system reports.
_SYNCFS_TYPES = frozenset({
    0xEF53,      # ext2, ext3, ext4
    0x58465342,  # xfs
    0x9123683E,  # btrfs
    0xF2F52010,  # f2fs
    0x01021994,  # tmpfs
})


def _kernel_reports_syncfs_errors() -> bool:
    """True where syncfs(2) exists and returns write-back errors (Linux 5.8 and later: before,
    it returned 0 whatever happened)."""
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


def fs_type(fd: int):
    """The statfs(2) f_type of the file system holding the open descriptor `fd`, or None where
    it cannot be read."""
    lib = _libc()
    if lib is None:
        return None
    import ctypes

    buf = ctypes.create_string_buffer(512)  # struct statfs: 120 bytes on 64-bit Linux
    if lib.fstatfs(fd, buf) != 0:
        return None
    return ctypes.c_long.from_buffer(buf).value & 0xFFFFFFFF  # f_type: the first member


def syncfs_reports_errors(fd: int) -> bool:
    """True when one syncfs(2) of the file system holding `fd` reports every write-back error of
    the files written there since `fd` was opened: Linux 5.8 or later and a file system of
    `_SYNCFS_TYPES`. Elsewhere a flush is one fsync per file."""
    return _kernel_reports_syncfs_errors() and fs_type(fd) in _SYNCFS_TYPES


def syncfs(fd: int, folder: str) -> None:
    """syncfs(2) of the file system holding `fd` (open on `folder`); a failure raises an
    OutputError naming the folder (call only where `syncfs_reports_errors(fd)`)."""
    import ctypes

    if _libc().syncfs(fd) != 0:
        e = ctypes.get_errno()
        raise OutputError(f"{shown(folder)}: cannot write the run's files to disk "
                          f"({os.strerror(e)})")


def fsync_ours(path: str, ident=None) -> None:
    """fsync the file at `path`, opened without following a link and without blocking (a FIFO
    or device put there by someone else never hangs the flush); only a regular file, and, with
    ident=(st_dev, st_ino), only the very file that was written (anything else at that name is
    not ours and is left alone). An OSError is the caller's to report."""
    fd = os.open(path, os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_NONBLOCK", 0)
                 | getattr(os, "O_CLOEXEC", 0))
    try:
        st = os.fstat(fd)
        if not stat.S_ISREG(st.st_mode):
            return
        if ident is not None and (st.st_dev, st.st_ino) != tuple(ident):
            return
        os.fsync(fd)
    finally:
        os.close(fd)


def flush_folder(folder) -> None:
    """Every file and folder below `folder` to disk: one syncfs(2) where that reports every
    write-back error (`syncfs_reports_errors`), else one fsync per file and folder (regular
    files only, links not followed). A failure raises an OutputError naming the folder or file."""
    folder = str(folder)
    try:
        fd = os.open(folder, _DIR_FLAGS)
    except OSError as exc:
        raise write_error(folder, exc) from None
    try:
        if syncfs_reports_errors(fd):
            syncfs(fd, folder)
            return
    finally:
        os.close(fd)
    for here, _dirs, names in os.walk(folder):  # os.walk does not follow links to folders
        for name in names:
            path = os.path.join(here, name)
            try:
                fsync_ours(path)
            except OSError as exc:
                raise write_error(path, exc) from None
        try:
            dfd = os.open(here, _DIR_FLAGS)
            try:
                os.fsync(dfd)
            finally:
                os.close(dfd)
        except OSError as exc:
            raise write_error(here, exc) from None
