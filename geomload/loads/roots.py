"""The root resultants of a case alone: shear, bending and torsion at the root station, for a
run that reads nothing else (the error estimate's coarser lattices).

The beam integration (:func:`geomload.loads.beam.integrate`) builds the outboard resultant at
every station with cumulative sums from the tip; the root's is the last of those sums. This
module takes that last sum only, with the same operations in the same order (the tip-to-root
running sum, the same cross products and the same dot products), so the root values are the
integration's own to the bit, without the series of the other stations and without the
records (AppliedLoads, SpanLoads, CaseResult) a full case builds.
"""

from __future__ import annotations

import numpy as np

from geomload.aero.trim import flight_state, trim_alpha
from geomload.aero.vortex import cross as _cross

from .beam import _couple, _shared_spar_frame
from .case_records import CaseRoots, RootLoads
from .flight_case import applied_arrays


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
    ca, sa = np.cos(np.radians(alpha_deg)), np.sin(np.radians(alpha_deg))
    fx_aero, fz_aero = drag * ca - lift * sa, lift * ca + drag * sa
    h = dy[:, None]
    bi = np.radians(inertia_alpha_deg)
    R, L = np.empty((2, n, 3)), np.empty((2, n, 3))
    R[0, :, 0], R[0, :, 1], R[0, :, 2] = load_x, y, load_z
    R[1, :, 0], R[1, :, 1], R[1, :, 2] = inertia_x, y, inertia_z
    L[0, :, 0], L[0, :, 1], L[0, :, 2] = fx_aero, side, fz_aero
    L[1, :, 0], L[1, :, 1], L[1, :, 2] = inertia * np.sin(bi), 0.0, -inertia * np.cos(bi)
    l_ab = L[:, :-1] + L[:, 1:]
    f_seg = 0.5 * h * l_ab
    seg_f = f_seg[0] + f_seg[1]
    force = _tip_to_root_sum(seg_f)
    tol = 1e-12 * max(1.0, float(y[-1] - y[0]))
    # a point load counts at the root when the root station lies at or inboard of it
    # (integrate's rule: y_i <= y_load + tol)
    at_root = [(pos, f) for _name, pos, f in points if y[0] <= pos[1] + tol]
    m = n - 1
    rows = 7 * m + 1 + len(at_root)
    arms, loads = np.empty((rows, 3)), np.empty((rows, 3))
    va, vl = arms[:6 * m].reshape(2, 3, m, 3), loads[:6 * m].reshape(2, 3, m, 3)
    va[:, 0] = R[:, :-1] - p[:-1]
    va[:, 2] = R[:, 1:] - p[:-1]
    va[:, 1] = va[:, 0] + va[:, 2]
    vl[:, 0], vl[:, 1], vl[:, 2] = L[:, :-1], l_ab, L[:, 1:]
    arms[6 * m:7 * m], loads[6 * m:7 * m] = rel[:-1], seg_f
    arms[7 * m], loads[7 * m] = rel[0], force
    for j, (pos, f) in enumerate(at_root):
        arms[7 * m + 1 + j], loads[7 * m + 1 + j] = pos - p[0], f
    c = _cross(arms, loads)
    vc = c[:6 * m].reshape(2, 3, m, 3)
    m_seg = h / 6.0 * (vc[:, 0] + vc[:, 1] + vc[:, 2])
    seg_m = np.empty((m, 6))
    seg_m[:, :3] = m_seg[0] + m_seg[1]
    seg_m[:, :3] += _couple(dy, pitch)
    seg_m[:, 3:] = c[6 * m:7 * m]
    sums = _tip_to_root_sum(seg_m)
    moment = (sums[:3] + sums[3:]) - c[7 * m]
    for j, (_pos, f) in enumerate(at_root):
        force += f
        moment += c[7 * m + 1 + j]
    fm = np.stack([force, moment, moment])
    d = np.einsum("ij,ij->i", fm, np.stack([nrm[0], b[0], s[0]]))
    return float(d[0]), float(d[1]), float(d[2])


def solve_case_roots(lc, ctx, wing_force_N=None, *, name=None, tail=None) -> CaseRoots:
    """The root resultants of one symmetric LoadCase (:func:`geomload.loads.cases.solve_case`'s
    trim, applied loads and integration, their root values only): a CaseRoots. Same arguments
    as solve_case (``tail`` is accepted and not used: no tail record is kept)."""
    case, grid, models = ctx.case, ctx.grid, ctx.models
    name = lc.name if name is None else name
    fs = flight_state(lc, case, models, ctx.atmosphere, wing_force_N, name)
    _v_eas, _v_tas, _mach, q, _mass, _force, model, cd0, body_axis, cf_req, drag_form = fs
    alpha, _cl = trim_alpha(model, cf_req, cd0, body_axis, drag_form)
    lift_pq, drag_pq, mom_pq = model.strip_loads(alpha)
    lat = models.lattice
    masses = ctx.masses_for(lc.fuel_fraction)
    lift, drag, side, pitch, inertia, tilt, points = applied_arrays(
        grid, lat.strip_y, lat.strip_width, lift_pq, drag_pq, mom_pq, lat.strip_chord, q, cd0,
        lc.load_factor, alpha, body_axis, masses, case.point_masses)
    v, mb, t = root_resultants(grid.y, grid.spar_x, grid.spar_z, lift, drag, side, pitch,
                               grid.load_x, grid.load_z, inertia, masses.x_m, masses.z_m,
                               points, alpha, tilt)
    return CaseRoots(name, RootLoads((v,), (mb,), (t,)))


__all__ = ["root_resultants", "solve_case_roots"]
