"""The envelope of loads: station-wise extremes of every section result over the flight cases.

(The flight envelope, the V-n diagram, is :mod:`geomload.loads.vn`; its rules are
:mod:`geomload.loads.rules_part23`. Both are re-exported here for the earlier import path.)
"""

from __future__ import annotations

from typing import Sequence

import numpy as np

from geomload.config.schema import CATEGORIES, FlightEnvelopeSpec, LoadCase  # noqa: F401
from geomload.errors import InputError

from .beam import ultimate  # noqa: F401  (the earlier import)
from .records import (QUANTITIES, DesignSpeeds, Envelope, FlightPoint, GustPoint,  # noqa: F401
                      LoadsEnvelope, SpanLoads, VnDiagram)
from .rules_part23 import (design_speeds, gust_alleviation, gust_load_factor,  # noqa: F401
                           limit_load_factors, minimum_design_speeds, negative_factor_at_dive,
                           rule_gust_velocities, stall_speed)
from .vn import critical_points, points_to_load_cases, vn_diagram  # noqa: F401

EnvelopeSpec = FlightEnvelopeSpec  # the earlier name

# Two cases whose values at a station differ by less than this fraction of the quantity's
# largest magnitude are a tie for the name of the governing case: well above the round-off of
# the lattice solve and the beam's sums (1e-15 to 1e-12 relative), well below any difference
# the loads tables print (ten significant digits) or an analyst could act on.
TIE_RTOL = 1e-9


def governing_rows(table: np.ndarray) -> np.ndarray:
    """For each column of `table` (cases x stations), the row of the first case whose value lies
    within round-off of the column's maximum (TIE_RTOL x the table's largest magnitude): the
    governing case, the same whatever the round-off of a tie."""
    tol = TIE_RTOL * float(np.abs(table).max(initial=0.0))
    return np.argmax(table >= table.max(axis=0) - tol, axis=0)  # argmax of bools: first True


def envelope_of(span_loads: Sequence[SpanLoads]) -> LoadsEnvelope:
    """Station-wise maximum and minimum of every quantity over the cases, with the case that
    governs each; ultimate extremes from each case's own ultimate_factor. All cases must share
    the station grid. The value is the exact extreme; the case named is the first in the list
    whose value lies within round-off of it (TIE_RTOL x the quantity's largest magnitude over
    every case and station), so two cases equal in exact arithmetic (a left and a right roll,
    the same point reached twice) name the same case whatever the round-off of one run."""
    span_loads = list(span_loads)
    if not span_loads:
        raise InputError("envelope_of: no load cases")
    y = span_loads[0].y
    for s in span_loads[1:]:
        if s.y is y:  # the run's cases share the grid's array (finite: checked by SpanLoads)
            continue
        if s.y.shape != y.shape or not np.allclose(s.y, y, rtol=0, atol=1e-9 * max(1.0, abs(y).max())):
            raise InputError(f"envelope_of: case {s.case!r} has a different station grid")
    names = tuple(s.case for s in span_loads)
    cols = np.arange(y.size)
    res = {k: {} for k in ("maximum", "minimum", "max_case", "min_case", "ultimate_max",
                           "ultimate_min", "ultimate_max_case", "ultimate_min_case")}
    for q in QUANTITIES:
        lim = np.array([getattr(s, q) for s in span_loads])
        ult = np.array([s.ultimate_factor * getattr(s, q) for s in span_loads])  # ultimate()
        for arr, mx, mn, cmx, cmn in ((lim, "maximum", "minimum", "max_case", "min_case"),
                                      (ult, "ultimate_max", "ultimate_min", "ultimate_max_case",
                                       "ultimate_min_case")):
            res[mx][q], res[mn][q] = arr.max(axis=0), arr.min(axis=0)
            res[cmx][q] = tuple(names[i] for i in governing_rows(arr))
            res[cmn][q] = tuple(names[i] for i in governing_rows(-arr))
    rows = span_loads[0].output_rows
    return LoadsEnvelope(y=y.copy(), cases=names, output_rows=rows, **res)



def critical_rows(envelope: LoadsEnvelope) -> list:
    """Rows per quantity (shear, bending, torsion) and side (max, min): the root value
    (limit and ultimate) and its case, the peak value over the span, where, and its case."""
    rows = []
    for q in QUANTITIES[:3]:
        base, unit = q.rsplit("_", 1)
        for side, lim, cases, ult in (("max", envelope.maximum, envelope.max_case,
                                       envelope.ultimate_max),
                                      ("min", envelope.minimum, envelope.min_case,
                                       envelope.ultimate_min)):
            v = lim[q]
            k = int(np.argmax(v) if side == "max" else np.argmin(v))
            rows.append({"quantity": f"{base} {side}", "unit": unit.replace("Nm", "N m"),
                         "root_limit": float(v[0]), "root_ultimate": float(ult[q][0]),
                         "root_case": cases[q][0], "peak_limit": float(v[k]),
                         "peak_y_m": float(envelope.y[k]), "peak_case": cases[q][k]})
    return rows
