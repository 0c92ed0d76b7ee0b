"""The one place the batch package touches the run pipeline (case loading, compute, export).

When the pipeline's names or signatures change, only this module needs adapting:

- `load_case(path)`: parse and validate a case file (geomload.case).
- `compute(case, progress=None, cache=None, error_bars=False)`: the in-memory run; `cache` (a
  dict) is handed to the pipeline when its `compute` accepts a ``cache`` argument (sharing the
  geometry read and cut and the factorised aero models between calls in one process), and
  dropped otherwise; `error_bars` asks for the discretization error estimates of the root loads
  (as `run` gives them; the coarser lattices go through the same cache).
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


@functools.lru_cache(maxsize=4)
def compute_takes(keyword: str) -> bool:
    """True when geomload.pipeline.compute accepts `keyword`."""
    from geomload.pipeline import compute as _compute

    try:
        params = inspect.signature(_compute).parameters
    except (TypeError, ValueError):
        return False
    return keyword in params or any(p.kind is p.VAR_KEYWORD for p in params.values())


def compute_takes_cache() -> bool:
    """True when geomload.pipeline.compute accepts a ``cache`` keyword."""
    return compute_takes("cache")


def compute(case, progress=None, cache=None, error_bars=False, detail=True):
    """Run every load case of `case` in memory; returns a RunResult (detail False: a
    pipeline.RootsRun, the cases' root loads only, for the error estimate's coarser lattices).

    cache: a dict shared between calls in one process (same geometry, same lattice and Mach);
    passed on only when the pipeline supports it. error_bars: also estimate the discretization
    error of the root loads (RunResult.error_bars); an error (GeomloadError) when the pipeline
    cannot, rather than a run that silently lacks them.
    """
    from geomload.errors import GeomloadError
    from geomload.pipeline import compute as _compute

    kw = {}
    if cache is not None and compute_takes("cache"):
        kw["cache"] = cache
    if error_bars:
        if not compute_takes("error_bars"):
            raise GeomloadError("this geomload's pipeline cannot estimate error bars")
        kw["error_bars"] = True
    if not detail:  # the error estimate's coarse runs: the cases' root loads are all it reads
        from geomload.pipeline import ROOTS

        kw["detail"] = ROOTS
    return _compute(case, progress, **kw) if kw else _compute(case, progress)


def write_run(result, folder, inputs=(), render=False, run_time_s=None) -> list:
    """Write every output of `result` into `folder`; returns the paths written (relative)."""
    from geomload.export import write_all

    written = write_all(result, folder, inputs=inputs, render=render,
                        options={"render": render, "batch": True}, run_time_s=run_time_s)
    return [str(p) for p in written["files"]]


def output_dir(path, force=False, inputs=()):
    """The pipeline's atomic output folder (geomload.export.run_folder.OutputDir), not yet opened."""
    from geomload.export.run_folder import OutputDir

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
