"""The checks of an output file's target, shared by the atomic writers (`geomload.export.atomic`)
and their staged-folder path (`geomload.export.atomic_staged`): the name as the user gave it and
as resolved, the refusal of a link, a device, a FIFO, a socket, a folder or an input as a target,
the one-line error of a failed write, and the exclusive, no-follow temporary file beside it.
"""

from __future__ import annotations

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
