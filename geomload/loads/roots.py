"""The root resultants of a case alone: shear, bending and torsion at the root station, for a
run that reads nothing else (the error estimate's coarser lattices).

The beam integration (:func:`geomload.loads.beam.integrate`) builds the outboard resultant at
every station with cumulative sums from the tip; the root's is the last of those sums. This
module takes that last sum only, with the same operations in the same order (the tip-to-root
running sum, the same cross products and the same dot products), so the root values are the
integration's own to the bit, without the series of the other stations and without the
records (AppliedLoads, SpanLoads, CaseResult) a full case builds. :class:`RootsBatch` trims the
cases one by one (the trim's scalar iterations as solve_case has them) and puts many cases on
the grid and integrates them at once: the same operations, elementwise over the cases.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from geomload.aero.trim import flight_state, trim_alpha
from geomload.aero.vortex import cross as _cross
from geomload.errors import InputError
from geomload.units import G0

from .beam import (_fill_segment_rows, _segment_moment_rows, _shared_spar_frame,
                   _stacked_lines)
from .case_records import CaseRoots, RootLoads
from .flight_case import _slope, _starboard_strips, point_forces
from .grid import _to_grid_array


BATCH_CASES = 256  # cases integrated together: the arrays of a batch stay a few MB (about
# 30 kB a case at 60 stations), and the per-call overhead is already spread thin


def _tip_to_root_sum(a):
    """sum of a along axis 0 added from the last row to the first: the root row of
    beam._reverse_cumsum (the same additions in the same order)."""
    return np.cumsum(a[::-1], axis=0)[-1]


def root_resultants(y, spar_x, spar_z, lift, drag, side, pitch, load_x, load_z, inertia,
                    inertia_x, inertia_z, points, alpha_deg, inertia_alpha_deg) -> tuple:
    """(shear_N, bending_Nm, torsion_Nm) at the root station y[0]: the root row of
    :func:`geomload.loads.beam.integrate` for the same loads (see there for their meaning;
    points: ((name, position (3,), force (3,)), ...) in the order of its point loads). Floats,
    equal to the integration's root values to the bit.

    y (n,) increasing root to tip (m) and the spar line as the grid has them (checked there).
    """
    y = np.asarray(y, dtype=float)
    n = y.size
    sx, sz = np.asarray(spar_x, float), np.asarray(spar_z, float)
    s, b, nrm, p, rel, dy = _shared_spar_frame(y, sx, sz)
    R, L, l_ab, seg_f = _stacked_lines(y, dy, lift, drag, side, load_x, load_z, inertia,
                                       inertia_x, inertia_z, alpha_deg, inertia_alpha_deg)
    force = _tip_to_root_sum(seg_f)
    tol = 1e-12 * max(1.0, float(y[-1] - y[0]))
    # a point load counts at the root when the root station lies at or inboard of it
    # (integrate's rule: y_i <= y_load + tol)
    at_root = [(pos, f) for _name, pos, f in points if y[0] <= pos[1] + tol]
    m = n - 1
    rows = 7 * m + 1 + len(at_root)
    arms, loads = np.empty((rows, 3)), np.empty((rows, 3))
    _fill_segment_rows(arms, loads, R, L, l_ab, p, rel, seg_f, m)
    arms[7 * m], loads[7 * m] = rel[0], force
    for j, (pos, f) in enumerate(at_root):
        arms[7 * m + 1 + j], loads[7 * m + 1 + j] = pos - p[0], f
    c = _cross(arms, loads)
    seg_m = _segment_moment_rows(c, dy, pitch, m)
    seg_m[:, 3:] = c[6 * m:7 * m]
    sums = _tip_to_root_sum(seg_m)
    moment = (sums[:3] + sums[3:]) - c[7 * m]
    for j, (_pos, f) in enumerate(at_root):
        force += f
        moment += c[7 * m + 1 + j]
    fm = np.stack([force, moment, moment])
    d = np.einsum("ij,ij->i", fm, np.stack([nrm[0], b[0], s[0]]))
    return float(d[0]), float(d[1]), float(d[2])


def root_resultants_many(y, spar_x, spar_z, lift, drag, side, pitch, load_x, load_z, inertia,
                         inertia_x, inertia_z, points, alpha_deg, inertia_alpha_deg) -> np.ndarray:
    """:func:`root_resultants` of K cases on one grid at once: (K, 3) (shear_N, bending_Nm,
    torsion_Nm) per case, each row equal to the bit to that case's root_resultants.

    lift, drag, side, pitch, inertia, inertia_x, inertia_z: (K, n); load_x, load_z: (n,) (the
    grid's load line); points: K sequences of (name, position, force); alpha_deg,
    inertia_alpha_deg: K angles (deg). Every operation is root_resultants' own, elementwise
    over the cases (the running sums are along the stations, case by case); the cosines and
    sines of the angles are taken one case at a time, as there.
    """
    y = np.asarray(y, dtype=float)
    n, k = y.size, len(points)
    sx, sz = np.asarray(spar_x, float), np.asarray(spar_z, float)
    s, b, nrm, p, rel, dy = _shared_spar_frame(y, sx, sz)
    ang = np.empty((4, k))
    for i, (a, t) in enumerate(zip(alpha_deg, inertia_alpha_deg)):
        bi = np.radians(t)
        ang[:, i] = (np.cos(np.radians(a)), np.sin(np.radians(a)), np.sin(bi), np.cos(bi))
    ca, sa, sb, cb = (ang[j][:, None] for j in range(4))
    fx_aero, fz_aero = drag * ca - lift * sa, lift * ca + drag * sa
    h = dy[:, None]
    R, L = np.empty((k, 2, n, 3)), np.empty((k, 2, n, 3))
    R[:, 0, :, 0], R[:, 0, :, 1], R[:, 0, :, 2] = load_x, y, load_z
    R[:, 1, :, 0], R[:, 1, :, 1], R[:, 1, :, 2] = inertia_x, y, inertia_z
    L[:, 0, :, 0], L[:, 0, :, 1], L[:, 0, :, 2] = fx_aero, side, fz_aero
    L[:, 1, :, 0], L[:, 1, :, 1], L[:, 1, :, 2] = inertia * sb, 0.0, -inertia * cb
    l_ab = L[:, :, :-1] + L[:, :, 1:]
    f_seg = 0.5 * h * l_ab
    seg_f = f_seg[:, 0] + f_seg[:, 1]
    force = np.cumsum(seg_f[:, ::-1], axis=1)[:, -1]
    m = n - 1
    arms, loads = np.empty((k, 7 * m + 1, 3)), np.empty((k, 7 * m + 1, 3))
    va, vl = arms[:, :6 * m].reshape(k, 2, 3, m, 3), loads[:, :6 * m].reshape(k, 2, 3, m, 3)
    va[:, :, 0] = R[:, :, :-1] - p[:-1]
    va[:, :, 2] = R[:, :, 1:] - p[:-1]
    va[:, :, 1] = va[:, :, 0] + va[:, :, 2]
    vl[:, :, 0], vl[:, :, 1], vl[:, :, 2] = L[:, :, :-1], l_ab, L[:, :, 1:]
    arms[:, 6 * m:7 * m], loads[:, 6 * m:7 * m] = rel[:-1], seg_f
    arms[:, 7 * m], loads[:, 7 * m] = rel[0], force
    c = _cross(arms, loads)
    vc = c[:, :6 * m].reshape(k, 2, 3, m, 3)
    m_seg = h / 6.0 * (vc[:, :, 0] + vc[:, :, 1] + vc[:, :, 2])
    seg_m = np.empty((k, m, 6))
    seg_m[:, :, :3] = m_seg[:, 0] + m_seg[:, 1]
    couple = np.zeros((k, m, 3))  # beam._couple of each case
    couple[:, :, 1] = 0.5 * dy * (pitch[:, :-1] + pitch[:, 1:])
    seg_m[:, :, :3] += couple
    seg_m[:, :, 3:] = c[:, 6 * m:7 * m]
    sums = np.cumsum(seg_m[:, ::-1], axis=1)[:, -1]
    moment = (sums[:, :3] + sums[:, 3:]) - c[:, 7 * m]
    # the point loads at the root, case by case in their order (root_resultants' rule)
    tol = 1e-12 * max(1.0, float(y[-1] - y[0]))
    which, pos, fs = [], [], []
    for i, pts in enumerate(points):
        for _name, ps, f in pts:
            if y[0] <= ps[1] + tol:
                which.append(i)
                pos.append(ps - p[0])
                fs.append(f)
    if which:
        cp = _cross(np.stack(pos), np.stack(fs))
        for i, f, cm in zip(which, fs, cp):
            force[i] += f
            moment[i] += cm
    fm = np.stack([force, moment, moment], axis=1).reshape(3 * k, 3)
    axes = np.broadcast_to(np.stack([nrm[0], b[0], s[0]]), (k, 3, 3)).reshape(3 * k, 3)
    return np.einsum("ij,ij->i", fm, axes).reshape(k, 3)


def _trimmed(lc, ctx, wing_force_N, name) -> tuple:
    """(name, strip lift, drag and moment per q, q, cd0, load factor, alpha, body axis, masses,
    points, tilt): one symmetric case trimmed (solve_case's trim), its strip loads and its
    point loads (applied_arrays' arithmetic)."""
    case, models = ctx.case, ctx.models
    name = lc.name if name is None else name
    fs = flight_state(lc, case, models, ctx.atmosphere, wing_force_N, name)
    _v_eas, _v_tas, _mach, q, _mass, _force, model, cd0, body_axis, cf_req, drag_form = fs
    alpha, _cl = trim_alpha(model, cf_req, cd0, body_axis, drag_form)
    lift_pq, drag_pq, mom_pq = model.strip_loads(alpha)
    masses = ctx.masses_for(lc.fuel_fraction)
    points, tilt = point_forces(lc.load_factor, alpha, body_axis, masses, case.point_masses)
    return (name, lift_pq, drag_pq, mom_pq, q, cd0, lc.load_factor, alpha, body_axis, masses,
            points, tilt)


def _grid_loads_many(grid, lat, lift_pq, drag_pq, mom_pq, q, cd0, load_factor, kg_per_m):
    """applied_arrays' lift, drag, side, pitch and inertia ((K, n) each) of K cases at once:
    its operations elementwise over the cases (the interpolation row by row, the sums of each
    row alone, as grid._to_grid_rows takes them). lift_pq, drag_pq, mom_pq: (K, strips);
    q, cd0, load_factor: (K,); kg_per_m: (K, n)."""
    y = grid.y
    idx, ys, ws, h = _starboard_strips(np.asarray(lat.strip_y), np.asarray(lat.strip_width), y)
    k, n = len(q), y.size
    qc, cd0c = q[:, None], cd0[:, None]
    series = np.empty((k, 3, idx.size))
    series[:, 0] = lift_pq[:, idx] * qc
    series[:, 1] = drag_pq[:, idx] * qc + cd0c * qc * np.asarray(lat.strip_chord)[idx]
    series[:, 2] = mom_pq[:, idx] * qc
    series = series.reshape(3 * k, idx.size)
    out = _to_grid_array(y, h, ys, series, ws)
    out = out.reshape(k, 3, n)
    lift, drag, pitch = out[:, 0], out[:, 1], out[:, 2]
    inertia = (load_factor * G0)[:, None] * kg_per_m
    side = -lift * _slope(grid.load_z, y)
    return lift, drag, side, pitch, inertia


class RootsBatch:
    """The symmetric cases of a root-only run, trimmed one by one and integrated together.

    :meth:`solve` has solve_case's arguments: it trims the case and puts its loads on the grid
    and returns a placeholder; :meth:`results` replaces the placeholders of a list of results by
    their CaseRoots, the root loads of up to BATCH_CASES cases from one
    :func:`root_resultants_many` (the same values to the bit as solve_case and the beam
    integration give)."""

    def __init__(self, ctx):
        self.ctx, self.pieces = ctx, []

    def solve(self, lc, ctx=None, wing_force_N=None, *, name=None, tail=None) -> "_Pending":
        self.pieces.append(_trimmed(lc, self.ctx if ctx is None else ctx, wing_force_N, name))
        return _Pending(len(self.pieces) - 1)

    def results(self, items) -> list:
        """``items`` with every placeholder of this batch replaced by its CaseRoots."""
        got = self._roots()
        return [got[i.index] if isinstance(i, _Pending) else i for i in items]

    def _roots(self) -> list:
        out = []
        for start in range(0, len(self.pieces), BATCH_CASES):
            out += self._chunk(self.pieces[start:start + BATCH_CASES])
        return out

    def _chunk(self, pieces) -> list:
        g, lat = self.ctx.grid, self.ctx.models.lattice
        (names, lift_pq, drag_pq, mom_pq, q, cd0, lf, alpha, _body, masses, points,
         tilt) = zip(*pieces)
        lift, drag, side, pitch, inertia = _grid_loads_many(
            g, lat, np.stack(lift_pq), np.stack(drag_pq), np.stack(mom_pq),
            np.array(q, float), np.array(cd0, float), np.array(lf, float),
            np.stack([mm.kg_per_m for mm in masses]))
        r = root_resultants_many(
            g.y, g.spar_x, g.spar_z, lift, drag, side, pitch, g.load_x, g.load_z, inertia,
            np.stack([mm.x_m for mm in masses]), np.stack([mm.z_m for mm in masses]), points,
            alpha, tilt)
        bad = np.flatnonzero(~np.isfinite(r).all(axis=1))
        if bad.size:  # what the records of a full case would have refused
            raise InputError(f"root loads of case {names[bad[0]]!r}: not finite on the "
                             f"{lat.n_span}x{lat.n_chord} lattice")
        return [CaseRoots(nm, RootLoads((v,), (mb,), (t,)))
                for nm, (v, mb, t) in zip(names, r.tolist())]


class _Pending(NamedTuple):
    index: int


__all__ = ["root_resultants", "root_resultants_many", "RootsBatch", "BATCH_CASES"]
