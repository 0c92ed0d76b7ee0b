"""Error bars on the headline loads (the library code is geomload.aero.convergence); this shim
keeps the batch package's names and its call form ``estimate_errors(case, result, cache)``."""

from __future__ import annotations

from geomload.aero import convergence as _conv
from geomload.aero.convergence import (FLOOR_REL, KEYS, MIN_N_CHORD, MIN_N_SPAN,  # noqa: F401
                                       ORDER_MAX, ORDER_MIN, REFINE, _roots, envelope_errors,
                                       richardson)
from geomload.batch import _api


def estimate_errors(case, result, cache=None) -> dict:
    """geomload.aero.convergence.estimate_errors with the run pipeline's compute."""
    return _conv.estimate_errors(case, result, _api.compute, cache)


__all__ = ["estimate_errors", "envelope_errors", "richardson"]
