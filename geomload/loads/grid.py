"""The load grid: where along the semi-span loads are integrated and reported, and moving the
lattice's strip loads onto it.

Grid: the lattice's strip edges from root to tip, plus the point-mass and tank-end positions
(each adds a point at the load and one just outboard, so a shear step shows as a step), plus
the structure's own rib stations when given (then only those rows are reported). Strip loads
per span are interpolated to the grid (zero lift at the tip) and corrected additively so each
integral equals the lattice's total exactly.
"""

from __future__ import annotations

import numpy as np

from geomload.errors import CaseError
from geomload.aero.records import Lattice

from .beam import spar_line
from .records import LoadGrid

STEP_GAP_REL = 1e-6  # x semi-span: the gap between the two points either side of a load step
QUARTER_CHORD = 0.25  # the lattice's bound vortices (its lift line) lie on the quarter chord


def lattice_edges(lattice: Lattice) -> tuple:
    """(y, le, te): the lattice's strip edges on the starboard semi-span, root to tip (m)."""
    c = lattice.corners
    le, te = c[:, 0, :], c[:, -1, :]
    y = le[:, 1]
    if y[0] > y[-1]:
        le, te, y = le[::-1], te[::-1], y[::-1]
    keep = y >= -1e-12  # a full-span lattice: the starboard half
    return np.clip(y[keep], 0.0, None), le[keep], te[keep]


def load_grid(lattice: Lattice, jumps=(), chord_fraction=0.25, spar_polyline=(), ribs=(),
              ends=()) -> LoadGrid:
    """The LoadGrid of a lattice (m).

    jumps: spanwise positions of point loads and inboard tank ends; each adds two grid points
    (at the position and STEP_GAP_REL x semi-span outboard of it). ends: outboard ends of
    distributed items (tanks); each adds the position and a point the same gap inboard of it, so
    a distribution can step at both its ends without reaching past them. ribs: the structure's stations (m);
    they are added to the grid and become its only reported rows (both points of a step that
    falls on a rib). The spar axis is the chord_fraction point of every section, or the polyline
    ((y, x, z), ...) when given.
    """
    y, le, te = lattice_edges(lattice)
    tip = float(y[-1])
    eps = STEP_GAP_REL * tip
    steps = [(yj, yj + eps) for yj in jumps if 0.0 < yj < tip - 2 * eps]
    steps += [(yj - eps, yj) for yj in ends if 2 * eps < yj < tip - eps]
    extra = [v for pair in steps for v in pair]
    ribs = np.asarray(ribs, float)
    if ribs.size and (ribs.min() < -eps or ribs.max() > tip + eps):
        bad = ribs[(ribs < -eps) | (ribs > tip + eps)][0]
        raise CaseError(f"spar.rib_y_m: {bad:g} m is outside the span 0..{tip:.4g} m")
    ribs = np.clip(ribs, 0.0, tip)
    if extra or ribs.size:
        yn = np.unique(np.concatenate([y, extra, ribs]))
        yn = yn[np.concatenate([[True], np.diff(yn) > 0.5 * eps])]
        le = np.column_stack([np.interp(yn, y, le[:, k]) for k in range(3)])
        te = np.column_stack([np.interp(yn, y, te[:, k]) for k in range(3)])
        le[:, 1] = te[:, 1] = yn
        y = yn
    chord = np.hypot(te[:, 0] - le[:, 0], te[:, 2] - le[:, 2])
    sx, sz = spar_line(y, le[:, 0], te[:, 0], le[:, 2], te[:, 2], chord_fraction, spar_polyline)
    rows = None
    if ribs.size:
        rows = np.zeros(y.size, bool)
        for r in ribs:
            k = int(np.argmin(np.abs(y - r)))
            rows[k] = True
            # a step on the rib: report both of its points (the values either side of it)
            for a, b in steps:
                if min(abs(a - y[k]), abs(b - y[k])) <= 0.5 * eps:
                    rows[np.argmin(np.abs(y - a))] = rows[np.argmin(np.abs(y - b))] = True
    return LoadGrid(y=y, le=le, te=te, chord=chord, spar_x=sx, spar_z=sz,
                    load_x=le[:, 0] + QUARTER_CHORD * (te[:, 0] - le[:, 0]),
                    load_z=le[:, 2] + QUARTER_CHORD * (te[:, 2] - le[:, 2]), output_rows=rows)


def strip_to_grid(y_edges, y_strip, values, width, total=None, tip_zero=True):
    """Strip-centre values -> grid values, piecewise linear, with the integral corrected to the
    strip total. The correction is additive, in proportion to |value|, so a distribution whose net
    total is about zero (an n = 0 case: lift up inboard, down outboard) keeps its shape; for a
    one-signed distribution it is the same as scaling."""
    y_edges = np.asarray(y_edges)
    return _to_grid(y_edges, y_edges[1:] - y_edges[:-1], y_strip, values, width, total,
                    tip_zero)


def _to_grid(y_edges, h, y_strip, values, width, total=None, tip_zero=True):
    """strip_to_grid with the grid's segment lengths h = diff(y_edges) given (a case moves
    three series onto one grid)."""
    v = np.interp(y_edges, y_strip, values)
    if y_strip.size >= 2 and y_edges[0] < y_strip[0]:
        slope = (values[1] - values[0]) / (y_strip[1] - y_strip[0])
        v[0] = values[0] + slope * (y_edges[0] - y_strip[0])
    if tip_zero:
        v[-1] = 0.0
    strip_total = float(np.asarray(values * width).sum()) if total is None else float(total)
    grid_total = float((0.5 * (v[1:] + v[:-1]) * h).sum())
    a = np.abs(v)
    a_total = float((0.5 * (a[1:] + a[:-1]) * h).sum())
    if a_total > 0.0:
        v = v + (strip_total - grid_total) * a / a_total
    return v


def _to_grid_rows(y_edges, h, y_strip, series, width) -> list:
    """_to_grid (tip zero, the strip total) of several strip series on one grid: the same
    arithmetic per series with the sums taken as the rows of one array (a row's sum is the
    sum of that series alone). A list of the rows of `_to_grid_array`."""
    return list(_to_grid_array(y_edges, h, y_strip, series, width))


def _to_grid_array(y_edges, h, y_strip, series, width) -> np.ndarray:
    """`_to_grid_rows` as one (k, n) array, for k strip series (a sequence of k arrays or a
    (k, strips) array): each row the same arithmetic as `_to_grid` of that series alone."""
    k, n = len(series), y_edges.size
    v = np.empty((k, n))
    extrapolate = y_strip.size >= 2 and y_edges[0] < y_strip[0]
    for i, values in enumerate(series):
        v[i] = np.interp(y_edges, y_strip, values)
        if extrapolate:
            slope = (values[1] - values[0]) / (y_strip[1] - y_strip[0])
            v[i, 0] = values[0] + slope * (y_edges[0] - y_strip[0])
    v[:, -1] = 0.0
    strip_total = (np.stack(series) * width).sum(axis=1)
    grid_total = (0.5 * (v[:, 1:] + v[:, :-1]) * h).sum(axis=1)
    a = np.abs(v)
    a_total = (0.5 * (a[:, 1:] + a[:, :-1]) * h).sum(axis=1)
    pos = a_total > 0.0  # a row with no magnitude keeps its interpolated values
    out = v.copy()
    excess = (strip_total[pos] - grid_total[pos])[:, None]
    out[pos] = v[pos] + excess * a[pos] / a_total[pos][:, None]
    return out
