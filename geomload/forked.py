"""Work done in a forked child process while the parent goes on: pictures while the parent
writes the other outputs, the error estimate's coarser lattices while it computes the run's own.

The child writes no file: it sends back a picklable value ({name: bytes-like value or
Exception} for pictures) and the parent writes the files (so a full disk, an interrupt or an
input check is handled in one place). A crash of the child (a segfault in VTK or OpenGL, a kill)
costs only its part: `result()` then returns the reason for each expected name, and the caller
does the work itself or reports it missing. Used for the 3-D renders
(`export.render.RenderProcess`), the 2-D plots (`export.plots`) and the coarse lattices of the
error estimate (`pipeline`). Lives below every stage, so each may use it.
"""

from __future__ import annotations

import contextlib
import os

BUSY_MARGIN = 0.5  # a CPU counts as free when the 1-minute load leaves at least half of it idle


def parallel_pays(jobs: int = 1) -> bool:
    """True when `jobs` child processes would each find a CPU: at least jobs + 1 CPUs for this
    process and a 1-minute load average below (CPUs - jobs + BUSY_MARGIN). On a busy machine the
    processes would only take turns (measured: no gain at load 10 on 2 CPUs)."""
    try:
        ncpu = len(os.sched_getaffinity(0))
    except AttributeError:
        ncpu = os.cpu_count() or 1
    if ncpu < jobs + 1:
        return False
    try:
        return os.getloadavg()[0] < ncpu - jobs + BUSY_MARGIN
    except OSError:
        return True


def _held_signals() -> tuple:
    import signal

    return tuple(getattr(signal, n) for n in ("SIGINT", "SIGTERM", "SIGHUP") if hasattr(signal, n))


_HELD = _held_signals()  # held back while forking: a signal that arrives inside the fork's
# own callbacks raises the interrupt there, where Python drops it ("Exception ignored"), and the
# run would go on as if never interrupted; held, it is delivered right after the fork


def _child(conn, fn, args) -> None:  # pragma: no cover - runs in the child
    import signal

    try:  # end with the parent: the kernel sends SIGTERM when the parent dies (Linux)
        import ctypes

        ctypes.CDLL(None, use_errno=True).prctl(1, signal.SIGTERM)  # PR_SET_PDEATHSIG
    except Exception:  # noqa: BLE001 - not Linux: the parent still stops the child itself
        pass
    for s in _HELD:
        signal.signal(s, signal.SIG_DFL)
    signal.pthread_sigmask(signal.SIG_UNBLOCK, _HELD)  # held by the parent around the fork
    code = 0
    try:
        conn.send(fn(*args))
    except BaseException:  # noqa: BLE001 - the parent reports the pictures as unavailable
        code = 1
    finally:
        conn.close()
        os._exit(code)


class ForkedJob:
    """`fn(*args)` (returning a dict) in a forked child process.

    Use ``job = ForkedJob.start(fn, args, names, what)`` (None where fork is unavailable), then
    ``job.result()``; ``job.stop()`` in a finally block ends the child if still running.
    `names`: the keys expected back, each given the reason when the child dies without a result;
    `what`: the job's name in that reason ("render", "plot").
    """

    def __init__(self, proc, conn, names=(), what="picture"):
        self.proc, self.conn, self.names, self.what = proc, conn, tuple(names), what

    @classmethod
    def start(cls, fn, args=(), names=(), what="picture"):
        import multiprocessing as mp

        try:
            ctx = mp.get_context("fork")
        except ValueError:
            return None
        import signal

        recv, send = ctx.Pipe(duplex=False)
        proc = ctx.Process(target=_child, args=(send, fn, tuple(args)), daemon=True)
        held = signal.pthread_sigmask(signal.SIG_BLOCK, _HELD)
        try:
            proc.start()
            send.close()
            job = cls(proc, recv, names, what)
        finally:  # a signal held meanwhile is delivered here (the child is daemonic and also
            signal.pthread_sigmask(signal.SIG_SETMASK, held)  # ends with this process)
        return job

    def result(self) -> dict:
        try:
            out = self.conn.recv()
        except (EOFError, OSError):
            self.proc.join(5)
            why = RuntimeError(f"the {self.what} process ended without pictures (exit code "
                               f"{self.proc.exitcode})")
            out = {name: why for name in self.names}
        finally:
            self.conn.close()
        self.proc.join(5)
        return out

    def stop(self) -> None:
        if self.proc.is_alive():
            self.proc.terminate()
            self.proc.join(5)
            if self.proc.is_alive():
                self.proc.kill()
                self.proc.join(5)
        with contextlib.suppress(OSError):
            self.conn.close()
