"""One trimmed flight case -> the loads applied to one semi-span -> its span loads.

Directions: lift normal to the free stream, drag along it, resolved into the wing frame at the
trimmed alpha; inertia n g m'(y) along -z (normal to the longitudinal axis, n_x = 0: thrust
balances the chordwise force), or opposite the lift with load_factor_axis = "flight-path".
The lattice force is normal to the local (dihedral) surface: its y component per span is
-lift dz/dy of the lift line, so the shear normal to a dihedral spar is lift / cos(dihedral).
"""

from __future__ import annotations

import math

import numpy as np

from .beam import integrate
from .grid import strip_to_grid
from .masses import inertia_loads
from .schrenk_twist import schrenk_with_twist
from .records import (AppliedLoads, LoadGrid, MassDistribution, PointLoad, SpanLoads,
                      TrimState)


def applied_loads(grid: LoadGrid, trimmed, strip_width, masses: MassDistribution,
                  point_masses=()) -> AppliedLoads:
    """The AppliedLoads of a TrimmedCase (geomload.aero.trim) on the grid.

    strip_width: (ns,) the lattice strip widths (m); masses: the case's MassDistribution on the
    grid; point_masses: PointMass items (starboard, full mass each).
    """
    sol, q = trimmed.solution, trimmed.q_pa
    y = grid.y
    keep = np.asarray(sol.y) >= 0  # a full-span lattice: the starboard strips
    ys, ws = np.asarray(sol.y)[keep], np.asarray(strip_width)[keep]
    order = np.argsort(ys)
    ys, ws = ys[order], ws[order]

    def pick(a):
        return np.asarray(a)[keep][order]

    lift_s = pick(sol.lift_per_q) * q
    drag_s = pick(sol.drag_per_q) * q + trimmed.cd0 * q * pick(sol.chord)
    pitch_s = pick(sol.moment_per_q) * q
    lift = strip_to_grid(y, ys, lift_s, ws)
    drag = strip_to_grid(y, ys, drag_s, ws)
    pitch = strip_to_grid(y, ys, pitch_s, ws)
    inertia, point_loads = inertia_loads(masses, trimmed.load_factor, point_masses)
    # inertia along the load factor: normal to the longitudinal axis (body, 14 CFR 23.321(a)),
    # or opposite the lift (flight path)
    tilt = 0.0 if trimmed.body_axis else trimmed.alpha_deg
    ca, sa = math.cos(math.radians(tilt)), math.sin(math.radians(tilt))
    point_loads = tuple(PointLoad(p.name, p.position,
                                  np.array([-p.force[2] * sa, 0.0, p.force[2] * ca]))
                        for p in point_loads)
    side = -lift * _slope(grid.load_z, y)
    return AppliedLoads(lift_N_per_m=lift, drag_N_per_m=drag, side_N_per_m=side,
                        pitch_Nm_per_m=pitch, load_x_m=grid.load_x, load_z_m=grid.load_z,
                        inertia_N_per_m=inertia, inertia_x_m=masses.x_m, inertia_z_m=masses.z_m,
                        point_loads=point_loads, alpha_deg=trimmed.alpha_deg,
                        inertia_alpha_deg=tilt)


_SLOPES: dict = {}  # (z, y) bytes -> read-only dz/dy: every case of a run shares one grid
_SLOPES_KEEP = 8


def _slope(z, y) -> np.ndarray:
    """np.gradient(z, y), computed once per grid (returned read-only and shared)."""
    key = (z.tobytes(), y.tobytes())
    hit = _SLOPES.get(key)
    if hit is None:
        hit = np.gradient(z, y)
        hit.setflags(write=False)
        if len(_SLOPES) >= _SLOPES_KEEP:
            _SLOPES.clear()
        _SLOPES[key] = hit
    return hit


def grid_twist_deg(grid: LoadGrid) -> np.ndarray:
    """Local chord-line incidence (deg, nose-up positive) at the grid points from the leading
    and trailing edges: the geometric twist up to a constant, which Schrenk's basic loading
    (eps - mean eps) does not see."""
    return np.degrees(np.arctan2(grid.le[:, 2] - grid.te[:, 2], grid.te[:, 0] - grid.le[:, 0]))


def case_loads(grid: LoadGrid, trimmed, applied: AppliedLoads, semispan: float,
               ultimate_factor: float, detail: bool = True) -> SpanLoads:
    """Integrate the applied loads of a TrimmedCase: SpanLoads with its trim state, the
    equilibrium check, Schrenk's cross-check with the basic (twist) loading (NACA TM 948) and
    the grid's reported rows.

    detail=False: the same integrated loads without the two cross-checks (no equilibrium
    record, Schrenk NaN): for runs whose loads only feed a comparison (the error estimate's
    coarser lattices), whose own lattice run carries both checks."""
    y, lift = grid.y, applied.lift_N_per_m
    half_lift = float(np.sum(0.5 * (lift[1:] + lift[:-1]) * np.diff(y)))
    trim = TrimState(CL_required=trimmed.CL_required, q_pa=trimmed.q_pa,
                     load_factor_axis="body" if trimmed.body_axis else "flight-path",
                     force_required_N=trimmed.force_required_N, lift_total_N=2.0 * half_lift,
                     mach_lattice=trimmed.mach_lattice)
    return integrate(y, grid.spar_x, grid.spar_z, applied, case=trimmed.name,
                     ultimate_factor=ultimate_factor,
                     schrenk_lift_N_per_m=None if not detail else schrenk_with_twist(
                         y, grid.chord, semispan, half_lift, trimmed.q_pa, grid_twist_deg(grid)),
                     trim=trim, chord_m=grid.chord,
                     output_rows=None if grid.output_rows.all() else grid.output_rows,
                     check_equilibrium=detail)
