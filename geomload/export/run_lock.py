"""One run at a time per output folder, and no interrupt in the middle of a folder rename.

- :func:`held_signals`: SIGINT/SIGTERM/SIGHUP are held back during a short critical section
  (renaming or removing a run folder), so an interrupt leaves no hidden folder behind.
- :class:`RunLock`: an exclusive, non-blocking flock on ``.<name>.geomload-lock`` beside the
  output folder; a second run into the same folder gets a one-line error. The lock file is
  removed on release.
"""

from __future__ import annotations

import contextlib
import os
import signal
import threading
from pathlib import Path

from geomload.errors import OutputError
from geomload.export.atomic import _cause, shown

LOCK_TAG = ".geomload-lock"
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



class RunLock:
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


__all__ = ["held_signals", "RunLock", "LOCK_TAG"]
