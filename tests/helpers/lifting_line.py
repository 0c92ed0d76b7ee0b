"""Prandtl's lifting-line theory, Fourier-series solution, written independently of the lattice.

Source: Anderson, Fundamentals of Aerodynamics (5th ed.), sec. 5.3 "Prandtl's classical
lifting-line theory", eq. 5.49-5.53 (the monoplane equation); Glauert, The Elements of Aerofoil
and Airscrew Theory (1926), ch. XI. With y = -(b/2) cos(theta) (theta = 0 at the port tip) and
Gamma(theta) = 2 b V sum_n A_n sin(n theta) (all n: the load need not be symmetric),

    alpha(theta) - alpha_L0(theta) = sum_n A_n sin(n theta) [4 b / (a0 c(theta)) + n / sin(theta)],

satisfied at N collocation angles theta_k = k pi / (N + 1). alpha is the local geometric angle of
attack (here including the roll-rate up-wash p y / V) and alpha_L0 the local zero-lift angle
(here including a plain flap's increment, thin-airfoil theory: Glauert's
d alpha_L0 / d delta = -(pi - theta_h + sin theta_h) / pi, cos theta_h = 1 - 2 x_h / c;
Anderson sec. 4.9 problem/Abbott & von Doenhoff sec. 8.3). CL = pi A A_1 (Anderson eq. 5.59).
The rolling moment is integrated numerically from the lift per span rho V Gamma (Gauss-Legendre),
body axes, positive right (starboard) wing down: L = -int y rho V Gamma dy.
"""

from __future__ import annotations

import math

import numpy as np


def glauert_flap_effectiveness(hinge_fraction: float) -> float:
    """tau = -d alpha_L0 / d delta of a thin plain flap hinged at x_h / c (thin-airfoil theory)."""
    th = math.acos(1.0 - 2.0 * hinge_fraction)
    return (math.pi - th + math.sin(th)) / math.pi


class LiftingLine:
    """Lifting line of span b (m) with chord c(y) (callable, m), section slope a0 (1/rad)."""

    def __init__(self, span, chord, a0=2.0 * math.pi, n=81):
        self.b, self.chord, self.a0, self.n = float(span), chord, float(a0), int(n)
        th = np.arange(1, n + 1) * math.pi / (n + 1)
        self.th = th
        y = -0.5 * self.b * np.cos(th)
        c = chord(y)
        k = np.arange(1, n + 1)
        S = np.sin(np.outer(th, k))
        self.M = S * (4.0 * self.b / (a0 * c))[:, None] + S * k[None, :] / np.sin(th)[:, None]
        xg, wg = np.polynomial.legendre.leggauss(400)
        self.yq = 0.5 * self.b * xg
        self.wq = 0.5 * self.b * wg
        self.area = float(np.sum(self.wq * chord(self.yq)))
        self.aspect = self.b**2 / self.area

    def solve(self, alpha_eff):
        """Fourier coefficients A_n for the effective angle alpha - alpha_L0 (callable, rad)."""
        y = -0.5 * self.b * np.cos(self.th)
        return np.linalg.solve(self.M, alpha_eff(y))

    def gamma_per_V(self, A, y):
        """Gamma / V (m) at y."""
        th = np.arccos(np.clip(-2.0 * np.asarray(y) / self.b, -1.0, 1.0))
        k = np.arange(1, self.n + 1)
        return 2.0 * self.b * np.sin(np.outer(th, k)) @ A

    def CL(self, A) -> float:
        return math.pi * self.aspect * A[0]

    def Cl_roll(self, A) -> float:
        """Rolling moment coefficient L / (q S b), right wing down positive (q = rho V^2 / 2)."""
        g = self.gamma_per_V(A, self.yq)
        return -2.0 * float(np.sum(self.wq * self.yq * g)) / (self.area * self.b)
