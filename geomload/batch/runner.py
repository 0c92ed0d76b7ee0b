"""Running the variants of a batch: in this process, on a local process pool, or on a running
dask.distributed scheduler; then assembling the batch folder atomically.

Work is shared, never repeated: variants are grouped by their [geometry] table (same file, units,
axes, stations); a group goes to one worker as one task, and every worker process keeps one
cache for the batch, handed to the pipeline's `compute`, so a geometry is read and cut once per
worker and a lattice is factorised once per Mach (see `_api.compute`), the two coarser lattices
of every variant's error bars included. A group is split only to keep every worker busy (fewer
groups than workers).

Output: this process and its local workers write each run folder in place into the batch's
staging folder (``.<variant>.part``, renamed whole when complete; scratch files in RAM-backed
/dev/shm where there is one); a cluster worker, which may not see this machine's disk, builds it
in its own temporary folder and sends it back as bytes.

Same numbers however run: each variant runs with the linear-algebra libraries on one thread
(threadpoolctl), so the LU factorisations do the same floating-point operations in this process,
in a pool worker and on a cluster worker, and every table is written by the same code from the
same numbers: the CSVs are byte-identical (given the same software and CPU).

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
from geomload.errors import GeomloadError, InputError, OutputError

CONNECT_TIMEOUT_S = 10.0  # a reachable scheduler answers in well under a second; bounds a dead one
ROOT_KEYS = ("root_shear_max_N", "root_shear_min_N", "root_bending_max_Nm", "root_bending_min_Nm",
             "root_torsion_max_Nm", "root_torsion_min_Nm")
# the discretization error estimate beside each root load: the key of the run's summary.json
# (envelope.error_estimate, the same bound for the maximum and the minimum of a quantity)
ERR_KEYS = {"root_shear_max_N": ("root_shear_max_err_N", "root_shear_N"),
            "root_shear_min_N": ("root_shear_min_err_N", "root_shear_N"),
            "root_bending_max_Nm": ("root_bending_max_err_Nm", "root_bending_Nm"),
            "root_bending_min_Nm": ("root_bending_min_err_Nm", "root_bending_Nm"),
            "root_torsion_max_Nm": ("root_torsion_max_err_Nm", "root_torsion_Nm"),
            "root_torsion_min_Nm": ("root_torsion_min_err_Nm", "root_torsion_Nm")}
NOT_MONOTONE = "error_not_monotone"  # the summary.json keys whose convergence is not monotone
SCRATCH_DIR = "/dev/shm"  # RAM-backed on Linux: scratch files there are never flushed to a disk
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
    relative to the run folder -> bytes, for a run folder built on a remote worker (empty when
    the worker wrote it in place); warnings: the run's warnings (one line each); seconds: wall
    time on the worker; paths: every file of the run folder, relative to it.
    """

    name: str
    ok: bool
    error: str = ""
    root: dict = field(default_factory=dict)
    files: dict = field(default_factory=dict)
    warnings: tuple = ()
    seconds: float = 0.0
    paths: tuple = ()


# --------------------------------------------------------------------------- one variant
def _batch_cache(token: str) -> dict:
    """The cache of this process for batch `token` (a new batch drops the previous one)."""
    with _CACHE_LOCK:
        if _PROCESS_CACHE["token"] != token:
            _PROCESS_CACHE["token"], _PROCESS_CACHE["cache"] = token, {}
        return _PROCESS_CACHE["cache"]


def root_values(result) -> dict:
    """The envelope's limit loads at the root of a RunResult (first station, y = 0), and, when
    the run has error bars, their discretization error estimates (ERR_KEYS, N and N m; nan when
    the run has none) and NOT_MONOTONE (the flagged summary.json keys, '; '-separated)."""
    e = _api.envelope_table(result.envelope)
    out = {}
    for q, u in (("shear", "N"), ("bending", "Nm"), ("torsion", "Nm")):
        for side in ("max", "min"):
            out[f"root_{q}_{side}_{u}"] = float(e[f"{q}_{side}"][0])
    bmax, bmin = out["root_bending_max_Nm"], out["root_bending_min_Nm"]
    side = "max" if abs(bmax) >= abs(bmin) else "min"
    out["root_bending_governing_case"] = str(e[f"bending_{side}_case"][0])
    bars = getattr(result, "error_bars", None)
    env = None if bars is None else bars.envelope
    values = {} if env is None else env.values()
    for key, (err_key, summary_key) in ERR_KEYS.items():
        out[err_key] = float(values.get(summary_key, float("nan")))
    out[NOT_MONOTONE] = "" if env is None else "; ".join(env.not_monotone)
    return out


def _scratch_dir() -> str | None:
    """A RAM-backed folder for a variant's scratch files when this system has one (its fsyncs
    cost nothing and the files are dropped anyway), else None (the system's temporary folder)."""
    shm = Path(SCRATCH_DIR)
    return str(shm) if shm.is_dir() and os.access(shm, os.W_OK | os.X_OK) else None


def _copy_files(src: Path, dst: Path, paths, shown_as: Path) -> None:
    """Copy the files `paths` (relative) from `src` to `dst` (new), as plain writes: the batch
    flushes its whole folder to disk once before it is moved into place (assemble.flush_to_disk),
    rather than one fsync per file. OutputError (one line) on a full disk or another OSError."""
    import shutil

    try:
        for rel in paths:
            (dst / rel).parent.mkdir(parents=True, exist_ok=True)
            shutil.copyfile(src / rel, dst / rel)
    except OSError as exc:
        raise OutputError(f"{shown_as}: cannot write the variant's run folder "
                          f"({exc.strerror or exc})") from None


def run_variant(name: str, toml_text: str, final_case_path: str, render: bool = False,
                cache=None, error_bars: bool = True, dest: str | None = None) -> Outcome:
    """Run one variant case file (given as text).

    The case file is written to a private temporary folder. `final_case_path` is the path the
    case file will have in the batch folder (recorded in the run's summary and report).
    dest: the folder (on this machine) that receives the run folder ``dest/<name>``: it is
    built in a RAM-backed scratch folder (SCRATCH_DIR; written straight into `dest` where there
    is none), copied beside its place as a hidden ``.<name>.part`` folder and renamed into place
    whole; Outcome.paths lists it. Without `dest` (a remote worker) the run folder is built in
    the scratch folder and returned as bytes (Outcome.files).
    error_bars: estimate the discretization error of the root loads as `run` does (two coarser
    lattices; through `cache` their geometry and factorisations are shared with the other
    variants of the same wing in this process).
    Errors come back as one line in Outcome.error, never raised.
    """
    import shutil

    from threadpoolctl import threadpool_limits

    t0 = time.perf_counter()
    part = None
    scratch = _scratch_dir()
    in_place = dest is not None and scratch is None  # no RAM disk: export straight into dest
    with tempfile.TemporaryDirectory(prefix="geomload-variant-", dir=scratch) as tmp:
        case_file = Path(tmp) / "case.toml"
        case_file.write_text(toml_text, encoding="utf-8")
        try:
            case = _api.load_case(case_file)
            with threadpool_limits(limits=1):
                result = _api.compute(case, cache=cache, error_bars=error_bars)
            result = dataclasses.replace(result, case_path=str(final_case_path))
            run_dir = Path(dest) / f".{name}.part" if in_place else Path(tmp) / "run"
            part = run_dir if in_place else None
            with _EXPORT_LOCK, threadpool_limits(limits=1):
                _api.write_run(result, run_dir, inputs=[str(case_file)], render=render,
                               run_time_s=time.perf_counter() - t0)
            paths = tuple(p.relative_to(run_dir).as_posix() for p in sorted(run_dir.rglob("*"))
                          if p.is_file())
            files = {}
            if dest is None:
                files = {rel: (run_dir / rel).read_bytes() for rel in paths}
            else:
                if not in_place:
                    part = Path(dest) / f".{name}.part"
                    _copy_files(run_dir, part, paths, Path(dest) / name)
                try:
                    os.rename(part, Path(dest) / name)
                except OSError as exc:
                    raise OutputError(f"{Path(dest) / name}: cannot move the variant's run "
                                      f"folder into place ({exc.strerror or exc})") from None
                part = None
            return Outcome(name=name, ok=True, root=root_values(result), files=files, paths=paths,
                           warnings=tuple(result.warnings), seconds=time.perf_counter() - t0)
        except GeomloadError as exc:
            msg = str(exc).replace(str(case_file), f"variant {name}")
        except MemoryError:
            msg = "out of memory (try fewer stations or panels)"
        except Exception as exc:  # noqa: BLE001 - one variant must not stop the others
            msg = f"internal error: {type(exc).__name__}: {exc}".replace(str(case_file),
                                                                           f"variant {name}")
        finally:
            if part is not None:  # our own unfinished folder in the batch's staging folder
                shutil.rmtree(part, ignore_errors=True)
        return Outcome(name=name, ok=False, error=" ".join(msg.split()),
                       seconds=time.perf_counter() - t0)


def run_chunk(token: str, items: list, render: bool = False, error_bars: bool = True,
              dest: str | None = None) -> list:
    """Worker entry: run the variants `items` [(name, toml_text, final_case_path), ...] in order,
    sharing this process's cache for batch `token` (dest: see run_variant). Returns a list of
    Outcome."""
    cache = _batch_cache(token)
    return [run_variant(n, t, f, render, cache, error_bars, dest) for n, t, f in items]


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
                 progress=None, error_bars: bool = True, dest=None) -> list:
    """Run every variant; returns Outcomes in the order of `variants`.

    workers: local processes (1: in this process); client: a connected dask Client (then
    `workers` is ignored and the scheduler's workers are used). progress(stage, done, total).
    error_bars: each variant estimates the discretization error of its root loads, as `run`.
    dest: a local folder that receives each run folder as ``dest/<variant>`` (written in place
    by this process or its local workers, in parallel, without a copy); None, and always on a
    cluster (its workers may not see this machine's disk): the run folders come back as bytes.
    """
    progress = progress or (lambda *a: None)
    n = len(variants)
    items = [(v.name, v.toml_text, str(f)) for v, f in zip(variants, final_case_paths)]
    dest = None if (dest is None or client is not None) else str(dest)
    token = uuid.uuid4().hex
    out: list = [None] * n
    done = 0
    progress("variants", 0, n)
    if client is None and workers <= 1:
        cache = _batch_cache(token)
        for i, it in enumerate(items):
            out[i] = run_variant(*it, render=render, cache=cache, error_bars=error_bars,
                                 dest=dest)
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

        futs = {client.submit(run_chunk, token, [items[i] for i in idx], render, error_bars,
                              pure=False,
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
        futs = {pool.submit(run_chunk, token, [items[i] for i in idx], render, error_bars, dest): idx
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
