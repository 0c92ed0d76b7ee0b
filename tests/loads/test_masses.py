"""Mass distributions and inertia of loads.masses.

Checks: conservation of mass (the semi-span integral is half of the both-sides value, the
convention of docs/methods_loads.md); inertia n g m'(y) with standard gravity 9.80665 m/s^2
(CGPM 1901); cantilever statics for the relief (VALIDATION.md 8).
"""

import numpy as np

from geomload.case import FuelTank, WingMassSpec
from geomload.loads.beam import equilibrium_residual, integrate_loads
from geomload.loads.masses import (G0, inertia_loads, mass_distribution, tank_mass_per_span,
                                   wing_mass_per_span)
from geomload.records import PointMass
from helpers.validation import check

MASS = "conservation of mass, per-side convention"


Y = np.linspace(0.0, 2.0, 11)
CHORD = 0.5 - 0.1 * Y  # linear taper 0.5 -> 0.3 m
XLE = 0.05 * Y
XTE = XLE + CHORD


def _trapz(y, f):
    return float(np.sum(0.5 * (f[1:] + f[:-1]) * np.diff(y)))


def test_chord_distribution_holds_half_the_wing_mass_and_follows_the_chord():
    m = wing_mass_per_span(Y, CHORD, WingMassSpec(6.0))
    check(MASS, "semi-span integral of m'(y), wing mass 6 kg (kg)", 3.0, _trapz(Y, m), rel=1e-12)
    np.testing.assert_allclose(m / CHORD, m[0] / CHORD[0], rtol=1e-12)
    # exact value for a linear taper: m' = (M/2) c / int c dy, int c dy = 0.8 m^2
    check(MASS, "root m' = (M/2) c / int c dy, linear taper (kg/m)", 3.0 * 0.5 / 0.8, m[0], rel=1e-12)


def test_table_distribution_uses_per_side_values():
    spec = WingMassSpec(2 * 1.5, "table", (0.0, 2.0), (1.0, 0.5))  # per-side integral 1.5 kg
    m = wing_mass_per_span(Y, CHORD, spec)
    # linear interpolation of the per-side table (0 m, 1.0 kg/m), (2 m, 0.5 kg/m), derived here;
    # its trapezoid integral is the 1.5 kg per side (conservation of mass)
    np.testing.assert_allclose(m, 1.0 - 0.25 * Y, rtol=1e-12)
    check(MASS, "semi-span integral of the table distribution (kg)", 1.5, _trapz(Y, m), rel=1e-12)


def test_fuel_tank_over_a_span_range():
    tank = FuelTank("inner", 4.0, 0.4, 1.2)
    m = tank_mass_per_span(Y, CHORD, tank, fraction=0.5)
    check(MASS, "semi-span integral of a 4 kg tank, half full (kg)", 0.5 * 0.5 * 4.0, _trapz(Y, m),
          rel=1e-12)
    inside = (Y > 0.4 + 1e-9) & (Y < 1.2 - 1e-9)
    # a tank carries mass only over its span range, uniform or chord-shaped (its definition):
    # zero at its ends (so nothing reaches past them), uniform at the points inside
    assert np.all(m[~inside] == 0.0)
    np.testing.assert_allclose(m[inside], m[inside][0])  # uniform per span
    mc = tank_mass_per_span(Y, CHORD, FuelTank("inner", 4.0, 0.4, 1.2, "chord"))
    np.testing.assert_allclose(mc[inside] / CHORD[inside], mc[inside][0] / CHORD[inside][0])
    # project behaviour: a tank narrower than a station gap is not spread (it is lumped)
    assert tank_mass_per_span(Y, CHORD, FuelTank("tiny", 1.0, 0.41, 0.5)) is None


def test_fuel_tank_ends_are_exact_on_a_grid_with_step_points():
    # the load grid adds a point a small gap inside each tank end: the mass then lies inside
    # [y_from, y_to] and its centroid is the range's mid-point (centroid of a uniform load)
    gap = 1e-6 * 1.6
    y = np.unique(np.concatenate([np.linspace(0.0, 1.6, 9), [0.3, 0.3 + gap, 1.1 - gap, 1.1]]))
    c = np.interp(y, Y, CHORD)
    m = tank_mass_per_span(y, c, FuelTank("inner", 4.0, 0.3, 1.1))
    assert np.all(m[(y <= 0.3) | (y >= 1.1)] == 0.0)
    check(MASS, "semi-span integral of a 4 kg tank (kg)", 2.0, _trapz(y, m), rel=1e-12)
    centroid = _trapz(y, m * y) / _trapz(y, m)
    check("centroid of a uniform span range", "y of a uniform tank 0.3-1.1 m (m)", 0.7, centroid,
          rel=1e-6)
    # project behaviour: a tank narrower than a station gap is not spread (it is lumped)
    assert tank_mass_per_span(Y, CHORD, FuelTank("tiny", 1.0, 0.41, 0.5)) is None


def test_mass_distribution_totals_cg_line_and_lumped_tanks():
    spar = 0.25
    d = mass_distribution(Y, CHORD, XLE, XTE, XLE + spar * CHORD, np.zeros_like(Y),
                          WingMassSpec(6.0, cg_chord_fraction=0.4),
                          (FuelTank("inner", 4.0, 0.4, 1.2, cg_chord_fraction=0.4),
                           FuelTank("tiny", 1.0, 0.41, 0.5)), fuel_fraction=1.0)
    check(MASS, "semi-span mass, wing 6 kg + tanks 4 kg and 1 kg (kg)", 3.0 + 2.0 + 0.5,
          d.semispan_mass_kg, rel=1e-12)
    np.testing.assert_allclose(d.x_m, XLE + 0.4 * CHORD, rtol=1e-12)  # both items at 40 % chord
    assert len(d.lumped) == 1
    check(MASS, "lumped mass of a 1 kg tank narrower than a station gap (kg)", 0.5, d.lumped[0].mass,
          rel=1e-6)
    check("centroid of a uniform span range", "y of the lumped tank, range 0.41-0.5 m (m)", 0.455,
          d.lumped[0].position[1], rel=1e-6)
    empty = mass_distribution(Y, CHORD, XLE, XTE, XLE, np.zeros_like(Y), None,
                              (FuelTank("inner", 4.0, 0.4, 1.2),), fuel_fraction=0.0)
    assert empty.semispan_mass_kg == 0.0


def test_inertia_and_relief_through_the_beam():
    # n = 3: inertia 3 g m'(y); a mirrored point mass of 2 kg at y = 1.5 carries 3 g 2 N down.
    n = 3.0
    d = mass_distribution(Y, CHORD, XLE, XTE, XLE + 0.25 * CHORD, np.zeros_like(Y), WingMassSpec(6.0))
    pm = PointMass("pod", 2.0, np.array([0.3, 1.5, -0.05]))
    q, pls = inertia_loads(d, n, [pm])
    np.testing.assert_allclose(q, n * G0 * d.kg_per_m)
    check("inertia n g m, g = 9.80665 m/s^2 (CGPM 1901)", "inertia of a 2 kg pod at n = 3 (N)",
          -n * G0 * 2.0, pls[0].force[2], rel=1e-6)
    lift = np.full(Y.size, 400.0)
    r = integrate_loads(Y, XLE + 0.25 * CHORD, np.zeros_like(Y), lift, inertia_N_per_m=q,
                        inertia_x=d.x_m, point_loads=pls)
    # statics: root shear = L - n g (M/2 + m_pod)
    check("cantilever statics (VALIDATION.md 8)", "root shear L - n g (M/2 + m_pod) (N)",
          400.0 * 2.0 - n * G0 * (3.0 + 2.0), r.shear_N[0], rel=1e-12)
    # internal consistency (no outside source): the residual check agrees with the integration
    res = equilibrium_residual(r)
    assert res["shear_residual_rel"] < 1e-9 and res["bending_residual_rel"] < 1e-9
    # torsion of the pod weight W about the (straight, slightly swept) spar: x_s = 0.125 +
    # 0.025 y, s = (sin L, cos L, 0), tan L = 0.025. r - P0 = (0.175, 1.5, -0.05), F = (0, 0, -W):
    # M = (-1.5 W, 0.175 W, 0), torsion = M.s = W (0.175 cos L - 1.5 sin L) (nose-up, pod aft)
    W, lam = n * G0 * 2.0, np.arctan(0.025)
    check("cantilever statics, swept spar", "root torsion of the pod weight about the spar (N m)",
          W * (0.175 * np.cos(lam) - 1.5 * np.sin(lam)), r.torsion_Nm[0], rel=1e-9)
