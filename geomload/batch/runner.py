"""Running the variants of a batch: in this process, on a local process pool, or on a running
dask.distributed scheduler; then assembling the batch folder atomically.

Work is shared, never repeated: variants are grouped by their [geometry] table (same file, units,
axes, stations); a group goes to one worker as one task, and every worker process keeps one
cache for the batch, handed to the pipeline's `compute`, so a geometry is read and cut once per
worker and a lattice is factorised once per Mach (see `_api.compute`). A group is split only to
keep every worker busy (fewer groups than workers).

Same numbers however run: each variant runs with the linear-algebra libraries on one thread
(threadpoolctl), so the LU factorisations do the same floating-point operations in this process,
in a pool worker and on a cluster worker; every output file is produced on the worker and sent
back as bytes, so the run folders are byte-identical too (given the same software and CPU).

On a cluster the case file and geometry paths must be visible to the workers at the same paths
(a shared file system), which is how dask.distributed is normally deployed.
"""

from __future__ import annotations

import dataclasses
import os
import tempfile
import threading
import time
import uuid
from dataclasses import dataclass, field
from pathlib import Path

from geomload.batch import _api
from geomload.errors import GeomloadError, InputError

CONNECT_TIMEOUT_S = 10.0  # a reachable scheduler answers in well under a second; bounds a dead one
ROOT_KEYS = ("root_shear_max_N", "root_shear_min_N", "root_bending_max_Nm", "root_bending_min_Nm",
             "root_torsion_max_Nm", "root_torsion_min_Nm")
_EXPORT_LOCK = threading.Lock()  # one export at a time per process (plots and renders)
_PROCESS_CACHE = {"token": None, "cache": None}
_CACHE_LOCK = threading.Lock()


class ClusterError(InputError):
    """The Dask scheduler given by --cluster cannot be reached or used."""


@dataclass(frozen=True)
class Outcome:
    """What one variant produced.

    name: the variant; ok: True when it ran; error: its one-line error otherwise; root: the
    envelope's limit loads at the root (ROOT_KEYS, N and N m) and "root_bending_governing_case"
    (the case of the larger of the root bending maximum and |minimum|); files: output path
    relative to the run folder -> bytes; warnings: the run's warnings (one line each);
    seconds: wall time on the worker.
    """

    name: str
    ok: bool
    error: str = ""
    root: dict = field(default_factory=dict)
    files: dict = field(default_factory=dict)
    warnings: tuple = ()
    seconds: float = 0.0


# --------------------------------------------------------------------------- one variant
def _batch_cache(token: str) -> dict:
    """The cache of this process for batch `token` (a new batch drops the previous one)."""
    with _CACHE_LOCK:
        if _PROCESS_CACHE["token"] != token:
            _PROCESS_CACHE["token"], _PROCESS_CACHE["cache"] = token, {}
        return _PROCESS_CACHE["cache"]


def root_values(result) -> dict:
    """The envelope's limit loads at the root of a RunResult (first station, y = 0)."""
    e = _api.envelope_table(result.envelope)
    out = {}
    for q, u in (("shear", "N"), ("bending", "Nm"), ("torsion", "Nm")):
        for side in ("max", "min"):
            out[f"root_{q}_{side}_{u}"] = float(e[f"{q}_{side}"][0])
    bmax, bmin = out["root_bending_max_Nm"], out["root_bending_min_Nm"]
    side = "max" if abs(bmax) >= abs(bmin) else "min"
    out["root_bending_governing_case"] = str(e[f"bending_{side}_case"][0])
    return out


def run_variant(name: str, toml_text: str, final_case_path: str, render: bool = False,
                cache=None) -> Outcome:
    """Run one variant case file (given as text) and return its outputs as bytes.

    The case file is written to a private temporary folder and the run folder is built there;
    `final_case_path` is the path the case file will have in the batch folder (recorded in the
    run's summary and report). Errors come back as one line in Outcome.error, never raised.
    """
    from threadpoolctl import threadpool_limits

    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory(prefix="geomload-variant-") as tmp:
        case_file = Path(tmp) / "case.toml"
        case_file.write_text(toml_text, encoding="utf-8")
        try:
            case = _api.load_case(case_file)
            with threadpool_limits(limits=1):
                result = _api.compute(case, cache=cache)
            result = dataclasses.replace(result, case_path=str(final_case_path))
            run_dir = Path(tmp) / "run"
            with _EXPORT_LOCK, threadpool_limits(limits=1):
                _api.write_run(result, run_dir, inputs=[str(case_file)], render=render,
                               run_time_s=time.perf_counter() - t0)
            files = {p.relative_to(run_dir).as_posix(): p.read_bytes()
                     for p in sorted(run_dir.rglob("*")) if p.is_file()}
            return Outcome(name=name, ok=True, root=root_values(result), files=files,
                           warnings=tuple(result.warnings), seconds=time.perf_counter() - t0)
        except GeomloadError as exc:
            msg = str(exc).replace(str(case_file), f"variant {name}")
        except MemoryError:
            msg = "out of memory (try fewer stations or panels)"
        except Exception as exc:  # noqa: BLE001 - one variant must not stop the others
            msg = f"internal error: {type(exc).__name__}: {exc}".replace(str(case_file),
                                                                           f"variant {name}")
        return Outcome(name=name, ok=False, error=" ".join(msg.split()),
                       seconds=time.perf_counter() - t0)


def run_chunk(token: str, items: list, render: bool = False) -> list:
    """Worker entry: run the variants `items` [(name, toml_text, final_case_path), ...] in order,
    sharing this process's cache for batch `token`. Returns a list of Outcome."""
    cache = _batch_cache(token)
    return [run_variant(n, t, f, render, cache) for n, t, f in items]


# -------------------------------------------------------------------------------- planning
def plan_tasks(variants, n_workers: int) -> list:
    """Lists of variant indices, one per task: one per geometry group, the largest groups split
    in halves while there are fewer tasks than workers."""
    groups: dict = {}
    for i, v in enumerate(variants):
        groups.setdefault(v.group, []).append(i)
    tasks = list(groups.values())
    while len(tasks) < n_workers:
        big = max(range(len(tasks)), key=lambda k: len(tasks[k]))
        if len(tasks[big]) < 2:
            break
        t = tasks.pop(big)
        half = (len(t) + 1) // 2
        tasks[big:big] = [t[:half], t[half:]]
    return tasks


async def _identity(address: str, timeout: float):
    """The scheduler's identity reply (a dict), read over one plain comm."""
    import asyncio

    from distributed.comm import connect as comm_connect

    comm = await comm_connect(address, timeout=timeout)
    try:
        await comm.write({"op": "identity", "reply": True})
        return await asyncio.wait_for(comm.read(), timeout)
    finally:
        comm.abort()


def connect(address: str, timeout: float = CONNECT_TIMEOUT_S):
    """A dask.distributed Client on `address`, or ClusterError (one line) within about
    `timeout` seconds: the address is first asked for its identity over a single connection
    (so a dead address, or something that is not a Dask scheduler, costs one bounded attempt)."""
    import asyncio
    import logging

    try:
        from distributed import Client
    except ImportError:
        raise ClusterError("--cluster: dask.distributed is not installed "
                           "(pip install 'dask[distributed]')") from None
    # the scheduler client and the event-loop libraries under it log through the root logger too
    quiet = [logging.getLogger(n) for n in ("distributed", "asyncio", "")]
    levels = [lg.level for lg in quiet]
    for lg in quiet:
        lg.setLevel(logging.CRITICAL)
    what = f"--cluster {address}: cannot reach a Dask scheduler within {timeout:g} s"
    try:
        try:
            reply = asyncio.run(asyncio.wait_for(_identity(address, timeout), timeout + 1.0))
        except BaseException as exc:  # noqa: BLE001 - refused, timed out, garbage, bad address
            if isinstance(exc, KeyboardInterrupt):
                raise
            if isinstance(exc, MemoryError):  # a length prefix read from a non-Dask service
                raise ClusterError(f"--cluster {address}: the address answers but is not a Dask "
                                   "scheduler (unreadable reply)") from None
            raise ClusterError(f"{what} ({type(exc).__name__}: {' '.join(str(exc).split())[:200]})"
                               ) from None
        if not isinstance(reply, dict) or reply.get("type") != "Scheduler":
            raise ClusterError(f"--cluster {address}: the address answers but is not a Dask "
                               "scheduler")
        try:
            client = Client(address, timeout=f"{timeout}s", set_as_default=False)
        except Exception as exc:  # noqa: BLE001
            raise ClusterError(f"{what} ({type(exc).__name__}: {' '.join(str(exc).split())[:200]})"
                               ) from None
    finally:
        for lg, lv in zip(quiet, levels):
            lg.setLevel(lv)
    return client


def cluster_workers(client) -> int:
    """Number of workers the scheduler knows (at least 1)."""
    return max(1, len(client.scheduler_info().get("workers", {})))


def run_variants(variants, final_case_paths, workers: int = 1, client=None, render=False,
                 progress=None) -> list:
    """Run every variant; returns Outcomes in the order of `variants`.

    workers: local processes (1: in this process); client: a connected dask Client (then
    `workers` is ignored and the scheduler's workers are used). progress(stage, done, total).
    """
    progress = progress or (lambda *a: None)
    n = len(variants)
    items = [(v.name, v.toml_text, str(f)) for v, f in zip(variants, final_case_paths)]
    token = uuid.uuid4().hex
    out: list = [None] * n
    done = 0
    progress("variants", 0, n)
    if client is None and workers <= 1:
        cache = _batch_cache(token)
        for i, it in enumerate(items):
            out[i] = run_variant(*it, render=render, cache=cache)
            progress("variants", i + 1, n)
        return out
    n_slots = cluster_workers(client) if client is not None else workers
    tasks = plan_tasks(variants, n_slots)

    def settle(idx, outcomes=None, exc=None):
        nonlocal done
        for k, i in enumerate(idx):
            out[i] = outcomes[k] if exc is None else Outcome(
                name=variants[i].name, ok=False,
                error=" ".join(f"worker failed: {type(exc).__name__}: {exc}".split()))
        done += len(idx)
        progress("variants", done, n)

    if client is not None:
        from distributed import as_completed

        futs = {client.submit(run_chunk, token, [items[i] for i in idx], render, pure=False,
                              key=f"geomload-batch-{token[:8]}-{k}"): idx
                for k, idx in enumerate(tasks)}
        for fut in as_completed(list(futs), loop=client.loop):
            try:
                settle(futs[fut], fut.result())
            except Exception as exc:  # noqa: BLE001 - a lost worker fails its variants only
                settle(futs[fut], exc=exc)
        return out
    import concurrent.futures as cf
    import multiprocessing as mp

    with cf.ProcessPoolExecutor(max_workers=min(workers, len(tasks)),
                                mp_context=mp.get_context(_start_method())) as pool:
        futs = {pool.submit(run_chunk, token, [items[i] for i in idx], render): idx
                for idx in tasks}
        for fut in cf.as_completed(futs):
            try:
                settle(futs[fut], fut.result())
            except Exception as exc:  # noqa: BLE001 - a crashed worker fails its variants only
                settle(futs[fut], exc=exc)
    return out


def _start_method() -> str:
    """'fork' when this process has a single thread on a system that has it (workers start
    without re-importing geomload), else 'spawn' (forking a threaded process can deadlock)."""
    import multiprocessing as mp

    if "fork" in mp.get_all_start_methods() and threading.active_count() == 1:
        return "fork"
    return "spawn"


def default_workers() -> int:
    """Local worker processes by default: the CPUs this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:
        return max(1, os.cpu_count() or 1)
