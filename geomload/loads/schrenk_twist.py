"""Schrenk's approximate span loading with the basic (twist) loading (NACA TM 948, 1940).

Schrenk splits the lift per span into the additional loading (proportional to the wing CL: the
mean of a planform-shaped and an elliptic distribution, `loads.beam.schrenk`) and the basic
loading at zero wing lift caused by twist, taken as HALF the loading strip theory would give
with the aerodynamic twist measured from the wing's zero-lift angle (the other half is
cancelled by the induced angles):

    l_basic(y) / q = (a0 / 2) c(y) (eps(y) - eps_bar),   eps_bar = int c eps dy / int c dy

so the basic loading carries no net lift. eps (rad) is the local geometric twist plus the
change of the section zero-lift angle (nose-up positive); a0 the section lift slope (1/rad,
default 2 pi, thin-airfoil theory). Also in Perkins & Hage, Airplane Performance Stability and
Control (1949), sec. 2-6 (Schrenk's method with twist).
"""

from __future__ import annotations

import math

import numpy as np

from geomload.errors import InputError


def _trapz(y, f):
    return float((0.5 * (f[1:] + f[:-1]) * (y[1:] - y[:-1])).sum())  # np.diff's arithmetic


def basic_loading_per_q(y, chord, twist_deg, a0_per_rad: float = 2.0 * math.pi) -> np.ndarray:
    """Basic (twist) lift per span / q (m) at stations y (m, root to tip) of one semi-span."""
    y, c = np.asarray(y, float), np.asarray(chord, float)
    eps = np.radians(np.asarray(twist_deg, float))
    if y.shape != c.shape or y.shape != eps.shape or y.size < 2:
        raise InputError("schrenk_twist: y, chord and twist_deg need the same shape (>= 2)")
    area = _trapz(y, c)
    if not area > 0.0:
        raise InputError("schrenk_twist: chord must be positive")
    eps_bar = _trapz(y, c * eps) / area
    return 0.5 * float(a0_per_rad) * c * (eps - eps_bar)


def schrenk_with_twist(y, chord, semispan: float, total_lift_half_N: float, q_Pa: float,
                       twist_deg, a0_per_rad: float = 2.0 * math.pi) -> np.ndarray:
    """Lift per span (N/m) at y: Schrenk's additional loading carrying total_lift_half_N on the
    semi-span plus the basic loading q l_basic/q (zero net lift). With no twist it equals
    `loads.beam.schrenk`; at zero total lift only the basic loading remains."""
    from geomload.loads.beam import schrenk

    return schrenk(y, chord, semispan, total_lift_half_N) + float(q_Pa) * basic_loading_per_q(
        y, chord, twist_deg, a0_per_rad)
