"""Analytic test wings as Stations records (exact geometry known by construction).

NACA 4-digit mean line: Abbott & von Doenhoff, Theory of Wing Sections (1959), sec. 6.4;
NACA Report 824 (1945): y_c = m/p^2 (2 p x - x^2) for x < p, m/(1-p)^2 (1 - 2p + 2 p x - x^2)
for x >= p (x, y_c as fractions of chord).
"""

from __future__ import annotations

import numpy as np

from geomload.records import Stations

CAMBER_X = 0.5 * (1 - np.cos(np.linspace(0.0, np.pi, 201)))


def naca4_camber(code: str, x):
    """Mean-line height / chord of NACA 4-digit section `code` at chord fractions x."""
    m, p = int(code[0]) / 100.0, int(code[1]) / 10.0
    x = np.asarray(x, float)
    if m == 0.0:
        return np.zeros_like(x)
    return np.where(x < p, m / p**2 * (2 * p * x - x * x),
                    m / (1 - p) ** 2 * (1 - 2 * p + 2 * p * x - x * x))


def make_stations(y, x_qc, chord, semispan, twist_deg=0.0, z_qc=0.0, camber=None,
                  thickness=0.12):
    """Stations from quarter-chord line, chord and twist (deg, nose-up) at y (m)."""
    y = np.asarray(y, float)
    n = y.size
    b = lambda v: np.broadcast_to(np.asarray(v, float), (n,)).copy()  # noqa: E731
    x_qc, chord, tw, z_qc = b(x_qc), b(chord), np.radians(b(twist_deg)), b(z_qc)
    dx, dz = chord * np.cos(tw), -chord * np.sin(tw)
    cz = np.zeros((n, CAMBER_X.size)) if camber is None else \
        np.tile(naca4_camber(camber, CAMBER_X), (n, 1))
    f = cz.max(axis=1)
    dih = np.degrees(np.gradient(z_qc, y)) if n > 1 else np.zeros(n)
    return Stations(
        y=y, x_le=x_qc - 0.25 * dx, z_le=z_qc - 0.25 * dz, x_te=x_qc + 0.75 * dx,
        z_te=z_qc + 0.75 * dz, chord=chord, twist_deg=np.degrees(tw),
        thickness_ratio=b(thickness), x_thickness=b(0.3), camber_ratio=f,
        x_camber=CAMBER_X[cz.argmax(axis=1)] if camber else b(0.0), dihedral_deg=dih,
        camber_x=CAMBER_X.copy(), camber_z=cz, semispan=float(semispan))


def elliptic(aspect=8.0, semispan=5.0, n=80, camber=None):
    """Elliptic planform with a straight (unswept) quarter-chord line: c = c0 sqrt(1-(y/s)^2),
    S = pi c0 s / 2, A = 8 s / (pi c0). Stations cosine-clustered at the tip, tip inset."""
    c0 = 8.0 * semispan / (np.pi * aspect)
    y = semispan * np.sin(0.5 * np.pi * np.arange(n) / n)
    return make_stations(y, 0.0, c0 * np.sqrt(1 - (y / semispan) ** 2), semispan, camber=camber)


def trapezoid(aspect=6.0, taper=0.5, sweep_qc_deg=0.0, semispan=5.0, camber=None,
              twist_tip_deg=0.0, dihedral_deg=0.0):
    """Straight-tapered wing: root chord cr, tip chord taper*cr, quarter-chord line swept by
    sweep_qc_deg; S = (1 + taper) cr s, A = 4 s^2 / S. Two stations (exact: linear)."""
    cr = 4.0 * semispan / (aspect * (1 + taper))
    y = np.array([0.0, semispan])
    t = np.tan(np.radians(sweep_qc_deg))
    return make_stations(y, cr / 4 + t * y, cr * np.array([1.0, taper]), semispan,
                         twist_deg=[0.0, twist_tip_deg], camber=camber,
                         z_qc=np.tan(np.radians(dihedral_deg)) * y)


def helmbold(aspect):
    """Helmbold lift slope (1/rad) of an unswept wing: 2 pi A / (2 + sqrt(A^2 + 4))."""
    return 2 * np.pi * aspect / (2 + np.sqrt(aspect**2 + 4))


def datcom_lift_slope(aspect, sweep_deg, mach=0.0, eta=1.0):
    """USAF DATCOM subsonic lift slope (1/rad), sec. 4.1.3.2 (also Raymer ch. 12):
    2 pi A / (2 + sqrt(4 + (A beta / eta)^2 (1 + tan^2(sweep)/beta^2)))."""
    beta = np.sqrt(1 - mach**2)
    t = np.tan(np.radians(sweep_deg))
    return 2 * np.pi * aspect / (2 + np.sqrt(4 + (aspect * beta / eta) ** 2 * (1 + t**2 / beta**2)))
