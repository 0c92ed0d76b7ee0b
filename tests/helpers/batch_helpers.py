"""Helpers of the batch tests: a small copy of the sample case, a real Dask cluster on the
loopback address (subprocesses, bounded in time, always stopped), CSV comparison."""

from __future__ import annotations
from helpers.paths import ROOT

import contextlib
import json
import os
import subprocess
import sys
import time
from pathlib import Path

SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"
START_TIMEOUT_S = 90.0  # scheduler and workers up on a loaded 2-core machine (a hang guard only)


def small_case(folder: Path) -> Path:
    """The sample case with a coarse lattice and few stations and symmetric cases only (quick),
    geometry.file relative
    to the ORIGINAL sample folder written as a path relative to `folder`."""
    text = SAMPLE.read_text()
    # without the control surfaces and tail (their cases are tested in test_unsymmetric_run)
    text = text[:text.index("[[control_surface]]")] + text[text.index("[[load_case]]"):]
    rel = os.path.relpath(SAMPLE.parent / "pellin_half_wing_mm.stl", folder)
    text = text.replace('file = "pellin_half_wing_mm.stl"', f'file = "{rel}"')
    text = text.replace("stations = 24", "stations = 12")
    # a plain number (m/s) so the variant names read "speed-30.0"
    text = text.replace('speed = "30 m/s"', "speed = 30.0")
    text = text.replace("n_span = 40", "n_span = 12").replace("n_chord = 10", "n_chord = 4")
    p = folder / "small.toml"
    p.write_text(text)
    return p


def cli(*args, cwd=None, timeout=300):
    """Run `python -m geomload ARGS`; returns the CompletedProcess."""
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "geomload", *map(str, args)],
                          capture_output=True, text=True, cwd=cwd, env=env, timeout=timeout)


def csv_files(folder: Path) -> dict:
    """relative path -> bytes of every CSV under `folder`."""
    return {p.relative_to(folder).as_posix(): p.read_bytes() for p in sorted(folder.rglob("*.csv"))}


@contextlib.contextmanager
def dask_cluster(tmp: Path, n_workers: int = 2):
    """A real `dask scheduler` and `n_workers` `dask worker`s on 127.0.0.1 (ephemeral port);
    yields the scheduler address; every process is stopped on exit."""
    env = dict(os.environ, PYTHONPATH=str(ROOT), DASK_DISTRIBUTED__WORKER__DAEMON="False")
    sched_file = tmp / "scheduler.json"
    procs = []
    logs = []

    def start(args, name):
        log = open(tmp / f"{name}.log", "w")
        logs.append(log)
        procs.append(subprocess.Popen([sys.executable, "-m", *args], stdout=log,
                                      stderr=subprocess.STDOUT, env=env, cwd=str(tmp)))

    try:
        start(["distributed.cli.dask_scheduler", "--host", "127.0.0.1", "--port", "0",
               "--no-dashboard", "--scheduler-file", str(sched_file)], "scheduler")
        deadline = time.monotonic() + START_TIMEOUT_S
        while not sched_file.is_file() or not sched_file.read_text().strip():
            if time.monotonic() > deadline or procs[0].poll() is not None:
                raise RuntimeError("dask scheduler did not start: "
                                   + (tmp / "scheduler.log").read_text()[-2000:])
            time.sleep(0.2)
        address = json.loads(sched_file.read_text())["address"]
        for k in range(n_workers):
            start(["distributed.cli.dask_worker", address, "--nthreads", "1", "--nworkers", "1",
                   "--no-dashboard", "--name", f"w{k}", "--local-directory", str(tmp / f"w{k}")],
                  f"worker{k}")
        from distributed import Client

        with Client(address, timeout="30s", set_as_default=False) as c:
            c.wait_for_workers(n_workers, timeout=START_TIMEOUT_S)
        yield address
    finally:
        for p in procs[::-1]:
            p.terminate()
        for p in procs[::-1]:
            try:
                p.wait(timeout=20)
            except subprocess.TimeoutExpired:
                p.kill()
                p.wait(timeout=20)
        for log in logs:
            log.close()
