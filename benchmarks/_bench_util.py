"""Shared helpers of the benchmark scripts: timed child processes, their peak memory, paired
(interleaved) repeats, the case files built from the bundled sample, and a cache folder.

Statistic. Other sessions share the cores (on a virtual machine, often with a large CPU steal),
so noise only ever adds time. Every figure therefore takes the BEST (minimum) wall time of a few
runs, and each measured command is interleaved with its floor (floor, command, floor, command...)
so both see the same background load. The median is printed beside the best for information.

Children run the worktree's code: ``PYTHONPATH`` is prefixed with the repository root, so
``python -m geomload.cli`` measures this checkout, not an installed copy.
"""

from __future__ import annotations

import os
import pathlib
import statistics
import subprocess
import sys
import tempfile
import time

ROOT = pathlib.Path(__file__).resolve().parent.parent
SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"
SAMPLE_STL = ROOT / "sample_geometry" / "pellin_half_wing_mm.stl"
SAMPLE_ENVELOPE_CASES = 40  # load cases the sample's [envelope] adds to its 2 explicit ones


def repeats(default: int) -> int:
    """Repeat count: GEOMLOAD_BENCH_REPEAT overrides every script's default (1 = quick look)."""
    v = os.environ.get("GEOMLOAD_BENCH_REPEAT", "")
    return max(1, int(v)) if v.strip().isdigit() else default


def compile_package() -> None:
    """Write the checkout's bytecode (__pycache__) before any timing: an installed copy has it
    (pip compiles at install), while a checkout run with PYTHONDONTWRITEBYTECODE=1 (or a fresh
    clone) would compile every geomload module in every measured process (0.3-0.5 s)."""
    import compileall

    if not _COMPILED:
        compileall.compile_dir(str(ROOT / "geomload"), quiet=1)
        _COMPILED.append(True)


_COMPILED: list = []


def child_env() -> dict:
    compile_package()  # once per benchmark process, before its first measured child
    env = os.environ.copy()
    env["PYTHONPATH"] = str(ROOT) + (os.pathsep + env["PYTHONPATH"] if env.get("PYTHONPATH") else "")
    return env


def geomload(*args) -> list:
    """The command line of this checkout's `geomload` (the console script's module)."""
    return [sys.executable, "-m", "geomload.cli", *map(str, args)]


def python(*args) -> list:
    return [sys.executable, *map(str, args)]


# A small launcher process starts every measured command and reports the command's own wall
# time, CPU time and peak RSS. Linux carries the hiwater RSS of the process image that exec
# replaces into the new program's ru_maxrss (and Python starts children by vfork, sharing the
# parent's memory until exec), so a child started straight from a big benchmark process would
# report at least that process's peak; the launcher is a bare interpreter of ~10 MB.
_LAUNCHER = r"""
import json, os, subprocess, sys, time
out, cmd = sys.argv[1], json.loads(sys.argv[2])
t0 = time.perf_counter()
p = subprocess.Popen(cmd, stdin=subprocess.DEVNULL)
_, status, ru = os.wait4(p.pid, 0)
wall = time.perf_counter() - t0
with open(out, "w") as f:
    json.dump({"wall": wall, "cpu": ru.ru_utime + ru.ru_stime, "rss_kib": ru.ru_maxrss,
               "code": os.waitstatus_to_exitcode(status)}, f)
"""


def run_child(cmd, capture_stdout: bool = False, usage_out: list | None = None):
    """Run cmd once. Returns (wall_s, peak_rss_MB, stdout text or '').

    Wall time, CPU time and peak resident set are measured around the command alone by a small
    launcher process (see _LAUNCHER): `ru_maxrss` of `os.wait4` for that child only (Linux:
    KiB). usage_out, if given, receives the child's CPU time (user + system, s, all threads),
    which other processes on the machine disturb far less than the wall time.
    """
    import json

    with tempfile.TemporaryFile() as err, tempfile.TemporaryFile() as out, \
            tempfile.TemporaryDirectory() as d:
        res = os.path.join(d, "usage.json")
        subprocess.run([sys.executable, "-S", "-c", _LAUNCHER, res, json.dumps(list(map(str, cmd)))],
                       stdout=out if capture_stdout else subprocess.DEVNULL, stderr=err,
                       stdin=subprocess.DEVNULL, env=child_env(), check=False)
        try:
            with open(res) as f:
                r = json.load(f)
        except (OSError, ValueError):
            r = {"code": -1}
        if r["code"] != 0:
            err.seek(0)
            tail = err.read().decode(errors="replace").strip().splitlines()[-3:]
            raise RuntimeError(f"{' '.join(map(str, cmd[-6:]))}: exit {r['code']}: "
                               + " | ".join(tail))
        if usage_out is not None:
            usage_out.append(r["cpu"])
        text = ""
        if capture_stdout:
            out.seek(0)
            text = out.read().decode(errors="replace")
    return r["wall"], r["rss_kib"] / 1024.0, text


class Timings:
    """Wall times (s) and peak RSS (MB) of named commands, run interleaved."""

    def __init__(self):
        self.wall, self.rss, self.cpu = {}, {}, {}

    def add(self, name, wall, rss, cpu=None):
        self.wall.setdefault(name, []).append(wall)
        self.rss.setdefault(name, []).append(rss)
        if cpu is not None:
            self.cpu.setdefault(name, []).append(cpu)

    def best_cpu(self, name) -> float:
        return min(self.cpu[name]) if self.cpu.get(name) else float("nan")

    def best(self, name) -> float:
        return min(self.wall[name])

    def median(self, name) -> float:
        return statistics.median(self.wall[name])

    def peak(self, name) -> float:
        return max(self.rss[name])

    def line(self, name, label=None) -> str:
        w = self.wall[name]
        cpu = f"  cpu {self.best_cpu(name):7.3f} s" if self.cpu.get(name) else ""
        return (f"  {label or name:40s} best {min(w):7.3f} s  median {statistics.median(w):7.3f} s"
                f"  (n={len(w)}){cpu}  peak RSS {max(self.rss[name]):6.1f} MB")


def interleaved(commands: dict, n: int, timings: Timings | None = None,
                budget_s: float | None = None) -> Timings:
    """Run every command of {name: argv} (or a list of (name, argv); a name may repeat) once
    per round, up to n rounds, in the given order.

    budget_s: stop after the round during which this much wall time has passed (at least one
    round always runs), so slow figures of today's code do not make the whole run crawl while
    the same script repeats them fully once they are fast.
    """
    t = timings or Timings()
    t0 = time.perf_counter()
    for _ in range(n):
        for name, cmd in (commands.items() if isinstance(commands, dict) else commands):
            cpu = []
            wall, rss, _ = run_child(cmd, usage_out=cpu)
            t.add(name, wall, rss, cpu[0])
        if budget_s is not None and time.perf_counter() - t0 > budget_s:
            break
    return t


def cache_dir() -> pathlib.Path:
    """A folder kept between runs for generated inputs (large meshes)."""
    d = pathlib.Path(tempfile.gettempdir()) / "geomload-bench-cache"
    d.mkdir(exist_ok=True)
    return d


def machine_line() -> str:
    """The machine's line at the head of a benchmark's output (every benchmark prints it
    first, so the checkout's bytecode is written here, before any timing)."""
    compile_package()
    try:
        load = "%.2f" % os.getloadavg()[0]
    except OSError:
        load = "?"
    return f"cpus {os.cpu_count()}, load average (1 min) {load}, python {sys.version.split()[0]}"


# ------------------------------------------------------------------------------- case files
def _split_sample(text: str):
    """(head before the first [[load_case]], the [[load_case]] blocks, tail from [envelope])."""
    i, j = text.index("[[load_case]]"), text.index("[envelope]")
    return text[:i], text[i:j], text[j:]


def case_text(stl: pathlib.Path | None = None, n_total: int | None = None,
              lattice: tuple | None = None, envelope: bool = True) -> str:
    """The sample case file's text with the geometry at an absolute path (stl, default the
    sample's), optionally n_total load cases in all (the sample's 2 explicit cases, n_total - 2 -
    40 generated ones, and the [envelope]'s 40), and optionally [lattice] n_span, n_chord."""
    text = SAMPLE.read_text()
    stl = pathlib.Path(stl or SAMPLE_STL).resolve()
    old = 'file = "pellin_half_wing_mm.stl"'
    if old not in text:
        raise RuntimeError(f"{SAMPLE}: geometry.file line changed; update benchmarks/_bench_util.py")
    text = text.replace(old, f'file = "{stl.as_posix()}"')
    head, cases, tail = _split_sample(text)
    if not envelope:
        tail = tail[tail.index("[lattice]"):]
    if n_total is not None:
        extra = n_total - 2 - (SAMPLE_ENVELOPE_CASES if envelope else 0)
        if extra < 0:
            raise ValueError(f"n_total {n_total} is below the sample's own cases")
        cases = cases.rstrip() + "\n\n" + generated_cases(extra)
    if lattice is not None:
        ns, nc = lattice
        k = tail.index("[lattice]")
        end = tail.index("[analysis]")
        tail = tail[:k] + f"[lattice]\nn_span = {ns}\nn_chord = {nc}\n\n" + tail[end:]
    return head + cases + "\n" + tail


def generated_cases(n: int) -> str:
    """n [[load_case]] blocks with distinct names, varied speed (25-50 m/s EAS), altitude
    (0-1500 m: the sample envelope's Mach bins) and load factor (-1.5..3.5, kept attainable at the
    lowest speeds), some at 60 % fuel."""
    blocks = []
    for i in range(n):
        v = 25.0 + 25.0 * ((i * 7) % 101) / 100.0
        h = 1500.0 * ((i * 13) % 31) / 30.0
        lo, hi = (-0.8, 2.0) if v < 32.0 else (-1.5, 3.5)
        nz = lo + (hi - lo) * ((i * 17) % 53) / 52.0
        fuel = "\nfuel_fraction = 0.6" if i % 5 == 4 else ""
        blocks.append(f'[[load_case]]\nname = "gen {i + 1:05d}"\nspeed = "{v:.3f} m/s"\n'
                      f'speed_type = "EAS"\naltitude = "{h:.1f} m"\n'
                      f'load_factor = {nz:.4f}{fuel}\n')
    return "\n".join(blocks)


def write_case(folder: pathlib.Path, name: str, **kw) -> pathlib.Path:
    path = pathlib.Path(folder) / name
    path.write_text(case_text(**kw))
    return path
