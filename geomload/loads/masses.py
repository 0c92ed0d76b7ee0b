"""Wing structural mass, fuel tanks and point masses -> inertia per span and point loads.

Convention (docs/methods_loads.md): the case gives the wing structure and each fuel tank for
both sides together; each semi-span carries half, so the semi-span integral of m'(y) here is
half the case value. A point mass is one item on the starboard side with an identical item
mirrored to port, so the semi-span carries its full value. Distributed masses are piecewise
linear on the stations and scaled so their trapezoid integral is exactly the semi-span share.
A tank spanning fewer than two stations is lumped at its mid-span point instead.
Inertia (load factor n, standard gravity g0): n g0 m'(y) per span acting along -z.
"""

from __future__ import annotations

import numpy as np

from geomload.config.schema import FuelTank, WingMassSpec
from geomload.errors import CaseError
from geomload.units import G0

from .records import MassDistribution, PointLoad, PointMass


def _integral(y, f):
    return float(np.sum(0.5 * (f[1:] + f[:-1]) * np.diff(y)))


def wing_mass_per_span(y, chord, spec: WingMassSpec) -> np.ndarray:
    """Per-side structural mass per span (kg/m) at y; integral over y = spec.total_kg / 2.

    "chord": proportional to the local chord (common practice, no source); "table":
    the table's per-side kg/m interpolated linearly, rescaled to the table's own total.
    """
    y, c = np.asarray(y, float), np.asarray(chord, float)
    shape = c if spec.distribution == "chord" else np.interp(y, spec.table_y_m, spec.table_kg_per_m)
    area = _integral(y, shape)
    if area <= 0:
        raise CaseError("wing_mass: the distribution has no mass over the stations")
    return shape * (0.5 * spec.total_kg / area)


TANK_END_TOL_REL = 1e-9  # x span of the grid: a grid point this close to a tank end is the end


def tank_mass_per_span(y, chord, tank: FuelTank, fraction: float = 1.0):
    """Per-side fuel mass per span (kg/m) at y over the tank's span range, its integral equal
    to fraction * mass_kg / 2; None when fewer than two grid points lie strictly inside it.

    Piecewise linear on the grid, the distribution is zero at the tank's ends and full at the
    grid points inside: no mass lies inboard of y_from_m or outboard of y_to_m. The load grid
    puts points a small gap inside each end (geomload.loads.grid), so the ramps are that short.
    """
    y, c = np.asarray(y, float), np.asarray(chord, float)
    tol = TANK_END_TOL_REL * max(float(y[-1] - y[0]), 1e-300)
    inside = (y > tank.y_from_m + tol) & (y < tank.y_to_m - tol)
    if inside.sum() < 2:
        return None
    shape = np.where(inside, c if tank.distribution == "chord" else 1.0, 0.0)
    return shape * (0.5 * fraction * tank.mass_kg / _integral(y, shape))


def mass_distribution(y, chord, x_le, x_te, spar_x, spar_z, wing_mass=None, fuel_tanks=(),
                      fuel_fraction=1.0) -> MassDistribution:
    """Distributed mass of one semi-span from the case's wing mass and fuel tanks.

    y, chord, x_le, x_te, spar_x, spar_z : (n,) stations (m). The c.g. of an item with a
    cg_chord_fraction f lies at x_le + f (x_te - x_le); otherwise on the spar axis.
    fuel_fraction : share of every tank's fuel on board (0..1).
    """
    y = np.asarray(y, float)
    n = y.size
    parts, xs, lumped = {}, {}, []
    x_of = lambda f: spar_x if f is None else np.asarray(x_le) + f * (np.asarray(x_te) - x_le)  # noqa: E731
    if wing_mass is not None:
        parts["wing structure"] = wing_mass_per_span(y, chord, wing_mass)
        xs["wing structure"] = x_of(wing_mass.cg_chord_fraction)
    for tank in fuel_tanks:
        if fuel_fraction <= 0:
            break
        m = tank_mass_per_span(y, chord, tank, fuel_fraction)
        if m is None:
            ym = 0.5 * (tank.y_from_m + tank.y_to_m)
            pos = np.array([np.interp(ym, y, x_of(tank.cg_chord_fraction)), ym, np.interp(ym, y, spar_z)])
            lumped.append(PointMass(tank.name, 0.5 * fuel_fraction * tank.mass_kg, pos))
            continue
        parts[tank.name] = parts.get(tank.name, 0.0) + m
        xs[tank.name] = x_of(tank.cg_chord_fraction)
    total = sum(parts.values()) if parts else np.zeros(n)
    total = np.asarray(total, float)
    with np.errstate(invalid="ignore", divide="ignore"):
        x = sum(parts[k] * xs[k] for k in parts) / total if parts else np.asarray(spar_x, float)
    x = np.where(total > 0, x, spar_x)
    return MassDistribution(y, total, np.asarray(x, float), np.asarray(spar_z, float).copy(), parts,
                            tuple(lumped))


def inertia_loads(dist: MassDistribution, load_factor: float, point_masses=(), g: float = G0):
    """Inertia of one semi-span at load factor n.

    Returns (inertia_N_per_m, point_loads): n g m'(y) (N/m, positive down, to pass with
    x_m/z_m of ``dist`` to integrate_loads) and a tuple of PointLoad with force (0, 0, -n g m)
    for every point mass (starboard item, full mass) and every lumped tank.
    """
    loads = [PointLoad(p.name, np.asarray(p.position, float),
                       np.array([0.0, 0.0, -load_factor * g * p.mass]))
             for p in tuple(point_masses) + tuple(dist.lumped)]
    return load_factor * g * dist.kg_per_m, tuple(loads)
