"""Nodal loads of the spar beam: one case's span loads lumped onto the stations, exactly.

Station i carries the spar point P_i; geomload's resultant of everything outboard of station i
about P_i is (F_i, M_i) (loads/beam.py; a point load at exactly y_i counts as outboard of y_i).
Node i receives the integral of every load in [y_i, y_{i+1}) -- the element outboard of it and
the point loads in it -- and that load's moment about P_i:

    f_i = F_i - F_{i+1},   m_i = M_i - M_{i+1} - (P_{i+1} - P_i) x F_{i+1},   F_n = M_n = 0.

Then the internal loads just inboard of node i, sum_{k>=i} f_k and
sum_{k>=i} [m_k + (P_k - P_i) x f_k], equal F_i and M_i exactly at every node (not only at the
root), and the root reaction is -(F_0, M_0).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from geomload.errors import InputError
from geomload.loads.beam import _cross, spar_frame

SAME_NODE_M = 1e-9                 # floor of the span used for merging (m)
MERGE_FRACTION = 1e-3              # stations closer than this x span share one node: the
                                   # solver's expanded beam elements fail at extreme aspect
                                   # ratios (a 2 um element beside a 20 mm section)


@dataclass(frozen=True)
class NodalLoads:
    """Statically equivalent nodal loads of one case on the spar line (wing frame, SI).

    case; y_m (n,); points_m (n, 3) spar points; force_N (n, 3); moment_Nm (n, 3) about the
    node; axis_s, axis_b, axis_n (n, 3) local spar frame at the nodes (loads/beam.py);
    station_index (n,) the SpanLoads row of each node.
    """

    case: str
    y_m: np.ndarray
    points_m: np.ndarray
    force_N: np.ndarray
    moment_Nm: np.ndarray
    axis_s: np.ndarray
    axis_b: np.ndarray
    axis_n: np.ndarray
    station_index: np.ndarray = None


def nodal_loads(loads, rows=None) -> NodalLoads:
    """Lump one SpanLoads onto its stations (see the module docstring).

    rows : boolean mask of the stations that get a node (default ``loads.rows``: the
    structure's rib stations when given, else every station). The root station always gets a
    node (the clamp). The scheme is exact for any subset: each node takes everything between
    it and the next node outboard, the last node everything outboard of it.

    Uses ``loads.force_N``, ``loads.moment_Nm`` (outboard resultants about the spar points)
    and ``loads.spar_points_m``, as written by the beam integration. Stations at the same y
    closer than MERGE_FRACTION x span (both sides of a point-load step) share the inboard one's node;
    the loads moved there carry their transfer moment, so the statics stay exact.
    """
    for name in ("force_N", "moment_Nm", "spar_points_m"):
        if getattr(loads, name) is None:
            raise InputError(f"FE deck of case '{loads.case}': the loads carry no {name} "
                             "(made by the beam integration)")
    if rows is None:
        rows = getattr(loads, "rows", None)
    n_all = np.asarray(loads.y).size
    sel = np.ones(n_all, bool) if rows is None else np.array(rows, bool)
    if sel.shape != (n_all,):
        raise InputError(f"FE deck of case '{loads.case}': rows must be ({n_all},) booleans")
    sel[0] = True  # the root is always a node (the clamp)
    idx = np.flatnonzero(sel)
    every = idx.size == n_all  # every station a node: the arrays as they are (same values)
    pick = (lambda a: a) if every else (lambda a: a[idx])  # noqa: E731
    F = pick(np.asarray(loads.force_N, float))
    M = pick(np.asarray(loads.moment_Nm, float))
    P = pick(np.asarray(loads.spar_points_m, float))
    n = P.shape[0]
    if n < 2 or F.shape != (n, 3) or M.shape != (n, 3) or not np.all(np.isfinite(F)) \
            or not np.all(np.isfinite(M)):
        raise InputError(f"FE deck of case '{loads.case}': need >= 2 stations with finite loads")
    Fn = np.vstack([F[1:], np.zeros((1, 3))])
    Mn = np.vstack([M[1:], np.zeros((1, 3))])
    Pn = np.vstack([P[1:], P[-1:]])
    f = F - Fn
    m = M - Mn - _cross(Pn - P, Fn)
    # stations closer than MERGE_FRACTION x span share the inboard one's node; a moved load
    # takes its transfer moment along, so the statics stay exact
    y = pick(np.asarray(loads.y, float))
    gap = MERGE_FRACTION * max(float(y[-1] - y[0]), SAME_NODE_M)
    keep = np.ones(n, bool)
    if not np.all(np.diff(y) > gap):  # some stations merge (else every station is a node)
        last = y[0]
        for i in range(1, n):
            keep[i] = y[i] - last > gap
            if keep[i]:
                last = y[i]
    group = np.cumsum(keep) - 1
    k = int(group[-1]) + 1
    fs, ms = np.zeros((k, 3)), np.zeros((k, 3))
    if k == n:  # one station per node: the same sums as numpy.add.at, without its slow path
        # (every station its own anchor: P[keep][group] is P itself, the same values)
        fs += f
        ms += m + _cross(P - P, f)
        last = lambda a: a  # noqa: E731 - a[keep] with every station kept: the same values
    else:
        anchor = P[keep][group]
        np.add.at(fs, group, f)
        np.add.at(ms, group, m + _cross(P - anchor, f))
        last = lambda a: a[keep]  # noqa: E731
    ax = {a: last(pick(np.asarray(getattr(loads, a), float))) if getattr(loads, a) is not None
          else None
          for a in ("axis_s", "axis_b", "axis_n")}
    if any(v is None for v in ax.values()):
        ax["axis_s"], ax["axis_b"], ax["axis_n"] = spar_frame(y[keep], P[keep, 0], P[keep, 2])
    return NodalLoads(case=str(loads.case), y_m=last(y), points_m=last(P), force_N=fs,
                      moment_Nm=ms, station_index=last(idx), **ax)


def internal_loads(nl: NodalLoads) -> dict:
    """Internal loads recovered node by node from the nodal loads alone (tip to root statics).

    At node i: force F_i = sum_{k>=i} f_k and moment M_i = sum_{k>=i} [m_k + (P_k - P_i) x f_k]
    (wing frame, about P_i; the value just inboard of the node), and their components in the
    local spar frame: shear_N = F.n, bending_Nm = M.b, torsion_Nm = M.s, inplane_shear_N = F.b,
    inplane_bending_Nm = -M.n (the sign convention of loads/beam.py).
    """
    P, f, m = nl.points_m, nl.force_N, nl.moment_Nm
    n = P.shape[0]
    F, M = np.zeros((n, 3)), np.zeros((n, 3))
    F[-1], M[-1] = f[-1], m[-1]
    for i in range(n - 2, -1, -1):
        F[i] = F[i + 1] + f[i]
        M[i] = M[i + 1] + m[i] + np.cross(P[i + 1] - P[i], F[i + 1])
    dot = lambda a, e: np.einsum("ij,ij->i", a, e)  # noqa: E731
    return {"y_m": nl.y_m, "force_N": F, "moment_Nm": M, "shear_N": dot(F, nl.axis_n),
            "bending_Nm": dot(M, nl.axis_b), "torsion_Nm": dot(M, nl.axis_s),
            "inplane_shear_N": dot(F, nl.axis_b), "inplane_bending_Nm": -dot(M, nl.axis_n)}


# ------------------------------------------------------------------------------ CAD frame
def to_cad(nl: NodalLoads, frame=None, unit_scale_m: float = 1.0):
    """(points in CAD unit, forces N, moments N*unit), CAD axes. unit_scale_m: metres per unit."""
    s = float(unit_scale_m)
    if not np.isfinite(s) or s <= 0:
        raise InputError(f"FE deck: CAD unit scale must be > 0 m per unit, got {unit_scale_m!r}")
    R = np.eye(3) if frame is None else np.asarray(frame.rotation, float)
    pts = nl.points_m if frame is None else frame.to_cad(nl.points_m)
    return pts / s, nl.force_N @ R, (nl.moment_Nm @ R) / s


__all__ = ["NodalLoads", "nodal_loads", "internal_loads", "to_cad", "MERGE_FRACTION"]
