"""The one place the batch package touches the run pipeline (case loading, compute, export).

When the pipeline's names or signatures change, only this module needs adapting:

- `load_case(path)`: parse and validate a case file (geomload.case).
- `compute(case, progress=None, cache=None)`: the in-memory run; `cache` (a dict) is handed to
  the pipeline when its `compute` accepts a ``cache`` argument (sharing the geometry read and cut
  and the factorised aero models between calls in one process), and dropped otherwise.
- `write_run(result, folder, inputs, render)`: every output of one run into `folder`.
- `OutputDir`: the atomic output folder.
"""

from __future__ import annotations

import functools
import inspect


def load_case(path):
    """Parse a case file; returns the pipeline's Case record (raises CaseError, one line)."""
    try:
        from geomload.config.parse import read_case_file as fn
    except ImportError:
        from geomload.case import load_case as fn
    return fn(path)


@functools.lru_cache(maxsize=1)
def compute_takes_cache() -> bool:
    """True when geomload.pipeline.compute accepts a ``cache`` keyword."""
    from geomload.pipeline import compute as _compute

    try:
        params = inspect.signature(_compute).parameters
    except (TypeError, ValueError):
        return False
    return "cache" in params or any(p.kind is p.VAR_KEYWORD for p in params.values())


def compute(case, progress=None, cache=None):
    """Run every load case of `case` in memory; returns a RunResult.

    cache: a dict shared between calls in one process (same geometry, same lattice and Mach);
    passed on only when the pipeline supports it.
    """
    from geomload.pipeline import compute as _compute

    if cache is not None and compute_takes_cache():
        return _compute(case, progress=progress, cache=cache)
    return _compute(case, progress)


def write_run(result, folder, inputs=(), render=False, run_time_s=None) -> list:
    """Write every output of `result` into `folder`; returns the paths written (relative)."""
    from geomload.export import write_all

    written = write_all(result, folder, inputs=inputs, render=render,
                        options={"render": render, "batch": True}, run_time_s=run_time_s)
    return [str(p) for p in written["files"]]


def output_dir(path, force=False, inputs=()):
    """The pipeline's atomic output folder (geomload.export.atomic.OutputDir), not yet opened."""
    from geomload.export.atomic import OutputDir

    return OutputDir(path, force=force, inputs=inputs)


def envelope_table(envelope) -> dict:
    """Plain arrays of the envelope (geomload.export.envelope_access.table)."""
    from geomload.export.envelope_access import table

    return table(envelope)


def with_lattice(case, n_span: int, n_chord: int):
    """A copy of `case` on another lattice (same spacing)."""
    import dataclasses

    return dataclasses.replace(case, lattice=dataclasses.replace(case.lattice, n_span=int(n_span),
                                                                 n_chord=int(n_chord)))
