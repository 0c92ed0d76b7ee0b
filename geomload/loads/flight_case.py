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

from geomload.record_checks import kept
from geomload.units import G0

from .beam import _trapz, integrate
from .grid import _to_grid_rows, strip_to_grid  # noqa: F401  (strip_to_grid: the earlier import)
from .masses import inertia_loads  # noqa: F401  (the earlier import)
from .schrenk_twist import basic_loading_per_q, schrenk_with_twist
from .records import (AppliedLoads, LoadGrid, MassDistribution, PointLoad, SpanLoads,
                      TrimState)


def applied_loads(grid: LoadGrid, trimmed, strip_width, masses: MassDistribution,
                  point_masses=()) -> AppliedLoads:
    """The AppliedLoads of a TrimmedCase (geomload.aero.trim) on the grid.

    strip_width: (ns,) the lattice strip widths (m); masses: the case's MassDistribution on the
    grid; point_masses: PointMass items (starboard, full mass each).
    """
    sol = trimmed.solution
    lift, drag, side, pitch, inertia, tilt, points = applied_arrays(
        grid, sol.y, strip_width, sol.lift_per_q, sol.drag_per_q, sol.moment_per_q, sol.chord,
        trimmed.q_pa, trimmed.cd0, trimmed.load_factor, trimmed.alpha_deg, trimmed.body_axis,
        masses, point_masses)
    point_loads = tuple(PointLoad(name, position, force) for name, position, force in points)
    return AppliedLoads(lift_N_per_m=lift, drag_N_per_m=drag, side_N_per_m=side,
                        pitch_Nm_per_m=pitch, load_x_m=grid.load_x, load_z_m=grid.load_z,
                        inertia_N_per_m=inertia, inertia_x_m=masses.x_m, inertia_z_m=masses.z_m,
                        point_loads=point_loads, alpha_deg=trimmed.alpha_deg,
                        inertia_alpha_deg=tilt)


def applied_arrays(grid: LoadGrid, strip_y, strip_width, lift_per_q, drag_per_q, moment_per_q,
                   chord, q_pa, cd0, load_factor, alpha_deg, body_axis, masses: MassDistribution,
                   point_masses=()) -> tuple:
    """The pieces of :func:`applied_loads` without the record: (lift, drag, side, pitch,
    inertia (each (n,) on the grid: N/m, N m/m), inertia tilt (deg), ((name, position (3,) m,
    force (3,) N) of each point mass, then each lumped mass)). Strip series per q as an
    AeroSolution holds them (strip_y, chord in m)."""
    y = grid.y
    idx, ys, ws, h = _starboard_strips(np.asarray(strip_y), np.asarray(strip_width), y)

    def pick(a):
        return np.asarray(a)[idx]

    q = q_pa
    lift_s = pick(lift_per_q) * q
    drag_s = pick(drag_per_q) * q + cd0 * q * pick(chord)
    pitch_s = pick(moment_per_q) * q
    lift, drag, pitch = _to_grid_rows(y, h, ys, (lift_s, drag_s, pitch_s), ws)
    # n g m'(y) and the point masses' weights: masses.inertia_loads' arithmetic, each force
    # built once (with the tilt)
    inertia = load_factor * G0 * masses.kg_per_m
    points, tilt = point_forces(load_factor, alpha_deg, body_axis, masses, point_masses)
    side = -lift * _slope(grid.load_z, y)
    return lift, drag, side, pitch, inertia, tilt, points


def point_forces(load_factor, alpha_deg, body_axis, masses: MassDistribution,
                 point_masses=()) -> tuple:
    """(((name, position (3,) m, force (3,) N) of each point mass, then each lumped mass),
    inertia tilt (deg)): the weights n g m of the point masses along the load factor."""
    # inertia along the load factor: normal to the longitudinal axis (body, 14 CFR 23.321(a)),
    # or opposite the lift (flight path)
    tilt = 0.0 if body_axis else alpha_deg
    ca, sa = math.cos(math.radians(tilt)), math.sin(math.radians(tilt))
    points = []
    for p in tuple(point_masses) + tuple(masses.lumped):
        fz = np.float64(-load_factor * G0 * p.mass)
        points.append((p.name, np.asarray(p.position, float), np.array([-fz * sa, 0.0, fz * ca])))
    return points, tilt


_STRIPS: dict = {}  # (strip y, strip width, grid y) bytes -> read-only pieces (one per lattice)
_STRIPS_KEEP = 8


def _starboard_strips(strip_y, strip_width, y) -> tuple:
    """(index, y, width, diff(grid y)): the starboard strips of a lattice (a full-span lattice's
    y >= 0) in increasing y, as an index into the strip arrays, computed once per lattice and
    grid (every case of a run shares them; returned read-only)."""

    def build():
        keep = strip_y >= 0
        ys, ws = strip_y[keep], strip_width[keep]
        order = np.argsort(ys)
        return (np.flatnonzero(keep)[order], ys[order], ws[order], y[1:] - y[:-1])

    return kept(_STRIPS, (strip_y.tobytes(), strip_width.tobytes(), y.tobytes()), build,
                _STRIPS_KEEP)


_SLOPES: dict = {}  # (z, y) bytes -> read-only dz/dy: every case of a run shares one grid
_SLOPES_KEEP = 8


def _slope(z, y) -> np.ndarray:
    """np.gradient(z, y), computed once per grid (returned read-only and shared)."""
    return kept(_SLOPES, (z.tobytes(), y.tobytes()), lambda: np.gradient(z, y), _SLOPES_KEEP)


def grid_twist_deg(grid: LoadGrid) -> np.ndarray:
    """Local chord-line incidence (deg, nose-up positive) at the grid points from the leading
    and trailing edges: the geometric twist up to a constant, which Schrenk's basic loading
    (eps - mean eps) does not see."""
    return np.degrees(np.arctan2(grid.le[:, 2] - grid.te[:, 2], grid.te[:, 0] - grid.le[:, 0]))


_SCHRENK: dict = {}  # id(grid) -> (grid, semispan, chord area, ellipse shape, basic loading / q)
_SCHRENK_KEEP = 8


def _schrenk(grid: LoadGrid, semispan: float, half_lift: float, q_pa: float) -> np.ndarray:
    """schrenk_with_twist(grid.y, grid.chord, semispan, half_lift, q_pa, grid_twist_deg(grid))
    with the parts that depend on the grid alone (the chord area, the elliptic shape, the
    basic loading per q) computed once per grid: the same arithmetic per case."""
    hit = _SCHRENK.get(id(grid))
    if hit is None or hit[0] is not grid or hit[1] != semispan:
        y, c = grid.y, grid.chord
        area = _trapz(y, c)
        if area <= 0 or semispan <= 0:  # schrenk's own message
            return schrenk_with_twist(y, c, semispan, half_lift, q_pa, grid_twist_deg(grid))
        hit = (grid, semispan, area, np.sqrt(np.clip(1 - (y / semispan) ** 2, 0, None)),
               basic_loading_per_q(y, c, grid_twist_deg(grid)))
        if len(_SCHRENK) >= _SCHRENK_KEEP:
            _SCHRENK.clear()
        _SCHRENK[id(grid)] = hit
    _g, _s, area, shape, basic = hit
    # beam.schrenk: the mean of the planform and the elliptic distributions, then the basic
    # loading (schrenk_twist.schrenk_with_twist)
    planform = half_lift * grid.chord / area
    ellipse = 4.0 * half_lift / (np.pi * semispan) * shape
    return 0.5 * (planform + ellipse) + float(q_pa) * basic


def case_loads(grid: LoadGrid, trimmed, applied: AppliedLoads, semispan: float,
               ultimate_factor: float, detail: bool = True) -> SpanLoads:
    """Integrate the applied loads of a TrimmedCase: SpanLoads with its trim state, the
    equilibrium check, Schrenk's cross-check with the basic (twist) loading (NACA TM 948) and
    the grid's reported rows.

    detail=False: the same integrated loads without the two cross-checks (no equilibrium
    record, Schrenk NaN): for runs whose loads only feed a comparison (the error estimate's
    coarser lattices), whose own lattice run carries both checks."""
    y, lift = grid.y, applied.lift_N_per_m
    half_lift = float((0.5 * (lift[1:] + lift[:-1]) * (y[1:] - y[:-1])).sum())
    trim = TrimState(CL_required=trimmed.CL_required, q_pa=trimmed.q_pa,
                     load_factor_axis="body" if trimmed.body_axis else "flight-path",
                     force_required_N=trimmed.force_required_N, lift_total_N=2.0 * half_lift,
                     mach_lattice=trimmed.mach_lattice)
    return integrate(y, grid.spar_x, grid.spar_z, applied, case=trimmed.name,
                     ultimate_factor=ultimate_factor,
                     schrenk_lift_N_per_m=None if not detail else _schrenk(
                         grid, semispan, half_lift, trimmed.q_pa),
                     trim=trim, chord_m=grid.chord,
                     output_rows=None if grid.output_rows.all() else grid.output_rows,
                     check_equilibrium=detail)
