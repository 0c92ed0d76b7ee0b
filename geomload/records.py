"""The records passed between pipeline stages (geometry -> aero -> loads -> export).

All are frozen dataclasses of numpy arrays, SI units, in the *wing frame* unless stated:
x aft along the root chord, y along the span (starboard positive, y = 0 on the symmetry plane /
root plane), z up. Stages are pure functions of these records; nothing here prints.

This module names every contract in one import and defines none: each stage owns its records
(:mod:`geomload.geometry.records`, :mod:`geomload.aero.records`, :mod:`geomload.loads.records`,
:mod:`geomload.loads.envelope_records`, :mod:`geomload.loads.case_records`); the messages and
the progress callback are :mod:`geomload.messages`. Inside the package a module imports the
stage's own records module, so no stage depends on another through this one. The whole run's
record, RunResult, holds the case file's records too and so sits above the stages, in
:mod:`geomload.run_result` (see docs/architecture.md). Each record checks its fields when built
and is never changed after.
"""

from __future__ import annotations

from geomload.aero.records import AeroSolution, Lattice  # noqa: F401
from geomload.geometry.records import (GeometryWarning, Planform, Stations, Wing,  # noqa: F401
                                       WingFrame, WingMesh)
from geomload.loads.case_records import CASE_KINDS, CaseResult, ControlState  # noqa: F401
from geomload.loads.envelope_records import (DesignSpeeds, FlightPoint,  # noqa: F401
                                             GustPoint, LoadsEnvelope, VnDiagram)
from geomload.loads.records import (AppliedLoads, Equilibrium, LoadGrid,  # noqa: F401
                                    MassDistribution, PointLoad, PointMass, SpanLoads,
                                    TrimState)
from geomload.messages import Message, Progress, no_progress  # noqa: F401


def __getattr__(name):
    """RunResult moved to geomload.run_result (it holds the case file's records); the old
    import path keeps working."""
    if name == "RunResult":
        from geomload.run_result import RunResult

        return RunResult
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
