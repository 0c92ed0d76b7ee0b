"""NACA 4-digit sections and a simple wing loft built from them.

Equations: NACA Report 824 (Abbott, von Doenhoff and Stivers, 1945) and Abbott & von Doenhoff,
*Theory of Wing Sections* (1959), section 6.4: thickness

    y_t = 5 t (0.2969 sqrt(x) - 0.1260 x - 0.3516 x^2 + 0.2843 x^3 - 0.1015 x^4)

(0.1015 leaves a blunt trailing edge of about 0.25 % t; -0.1036 closes it) and the two-parabola
mean line of maximum camber m at p. Thickness is laid off normal to the mean line. Chord = 1,
leading edge at (0, 0), trailing edge at (1, 0) (the nominal chord line).

`loft_wing` builds the closed triangle soup of a straight-tapered wing from these sections; the
samples and the tests use it so the expected geometry is known exactly.
"""

from __future__ import annotations

import numpy as np

TE_BLUNT = -0.1015
TE_SHARP = -0.1036


def naca4_params(code: str) -> tuple[float, float, float]:
    """Split a 4-digit code ("2412") into (m, p, t) as fractions of chord."""
    code = str(code).strip()
    if len(code) != 4 or not code.isdigit():
        raise ValueError(f"NACA code {code!r} is not 4 digits")
    return int(code[0]) / 100.0, int(code[1]) / 10.0, int(code[2:]) / 100.0


def naca4_thickness(x: np.ndarray, t: float, blunt_te: bool = True) -> np.ndarray:
    """Half thickness y_t(x) / c for thickness ratio t (Report 824 eq.; x in 0..1)."""
    x = np.asarray(x, float)
    a4 = TE_BLUNT if blunt_te else TE_SHARP
    return 5.0 * t * (0.2969 * np.sqrt(x) - 0.1260 * x - 0.3516 * x**2 + 0.2843 * x**3 + a4 * x**4)


def naca4_camber(code: str, x: np.ndarray) -> np.ndarray:
    """Mean-line height y_c(x) / c of a 4-digit section (two parabolas joined at x = p)."""
    y, _ = _camber_and_slope(code, x)
    return y


def naca4_camber_slope(code: str, x: np.ndarray) -> np.ndarray:
    """Mean-line slope dy_c/dx of a 4-digit section."""
    _, dy = _camber_and_slope(code, x)
    return dy


def _camber_and_slope(code, x):
    m, p, _ = naca4_params(code)
    x = np.asarray(x, float)
    if m == 0.0 or p == 0.0:
        return np.zeros_like(x), np.zeros_like(x)
    front = x < p
    y = np.where(front, m / p**2 * (2 * p * x - x**2), m / (1 - p) ** 2 * ((1 - 2 * p) + 2 * p * x - x**2))
    dy = np.where(front, 2 * m / p**2 * (p - x), 2 * m / (1 - p) ** 2 * (p - x))
    return y, dy


def cosine_spacing(n: int) -> np.ndarray:
    """n points on 0..1 clustered at both ends: x = (1 - cos(pi k / (n - 1))) / 2."""
    return 0.5 * (1.0 - np.cos(np.linspace(0.0, np.pi, n)))


def naca4_surfaces(code: str, n: int = 100, blunt_te: bool = True, t: float | None = None):
    """Upper and lower surfaces at the same n cosine-spaced mean-line stations, LE to TE.

    Returns (upper, lower), each (n, 2) arrays of (x, z) / chord; upper[0] == lower[0] is the
    leading edge (0, 0). `t` overrides the thickness ratio of the code (for blended sections).
    """
    m, p, tc = naca4_params(code)
    tc = tc if t is None else float(t)
    xc = cosine_spacing(n)
    yt = naca4_thickness(xc, tc, blunt_te)
    if not blunt_te:
        yt[-1] = 0.0
    yc, dy = _camber_and_slope(code, xc)
    th = np.arctan(dy)
    upper = np.column_stack([xc - yt * np.sin(th), yc + yt * np.cos(th)])
    lower = np.column_stack([xc + yt * np.sin(th), yc - yt * np.cos(th)])
    return upper, lower


def naca4_surface(code: str, n: int = 100, blunt_te: bool = True, t: float | None = None) -> np.ndarray:
    """Closed contour of a 4-digit section, (k, 2) points (x, z) / chord.

    Order: upper trailing edge -> leading edge -> lower trailing edge; the closing edge (last to
    first) is the blunt trailing-edge face. For a sharp TE the shared TE point appears once.
    """
    upper, lower = naca4_surfaces(code, n, blunt_te, t)
    pts = np.vstack([upper[::-1], lower[1:]])
    return pts if blunt_te else pts[:-1]


def farthest_point_chord(code: str, blunt_te: bool = True, t: float | None = None):
    """The chord line by the "farthest point from the trailing edge" rule, from the equations.

    A cambered section's contour point farthest from the TE is not exactly the nominal LE (0, 0);
    it lies a little above it. Returns (le_xz, chord, angle_deg): the LE point, the chord length
    (per unit nominal chord) and the angle of that chord line relative to the nominal one
    (positive = nose up). Evaluated on 200001 cosine-spaced points, so exact to ~1e-9 chord.
    """
    upper, lower = naca4_surfaces(code, 200001, blunt_te, t)
    te = 0.5 * (upper[-1] + lower[-1])
    pts = np.vstack([upper, lower])
    d = np.hypot(*(pts - te).T)
    le = pts[np.argmax(d)]
    ang = np.degrees(np.arctan2(le[1] - te[1], te[0] - le[0]))
    return le, float(d.max()), float(ang)


def loft_wing(y, chord, x_le, z_le, twist_deg, thickness, code="2412", n_chord=100, blunt_te=True,
              cap_root=True, cap_tip=True):
    """Closed triangle soup (m, 3, 3) of a wing through NACA sections parallel to the x-z plane.

    Parameters are per spanwise section (arrays of the same length, root to tip, or port tip to
    starboard tip): y (m), chord (m), x_le, z_le (nominal LE position, m), twist_deg (rotation
    about the LE, nose-up positive) and thickness (t/c, overriding the code's thickness). The
    camber of `code` is kept. x aft, y starboard, z up; faces wound outward.
    """
    y, chord, x_le, z_le, tw, th = (np.asarray(a, float) for a in (y, chord, x_le, z_le, twist_deg, thickness))
    rings = []
    for j in range(y.size):
        c2 = naca4_surface(code, n_chord, blunt_te, th[j])  # (k, 2)
        a = np.radians(tw[j])
        xs = c2[:, 0] * np.cos(a) + c2[:, 1] * np.sin(a)
        zs = -c2[:, 0] * np.sin(a) + c2[:, 1] * np.cos(a)
        rings.append(np.column_stack([x_le[j] + chord[j] * xs, np.full(xs.size, y[j]), z_le[j] + chord[j] * zs]))
    rings = np.asarray(rings)  # (ns, k, 3)
    ns, k, _ = rings.shape
    i = np.arange(k)
    i1 = (i + 1) % k
    a0, a1 = rings[:-1][:, i], rings[:-1][:, i1]
    b0, b1 = rings[1:][:, i], rings[1:][:, i1]
    # contour runs upper TE -> LE -> lower TE, i.e. clockwise seen from +y for an upright section;
    # the quad (a0, a1, b1, b0) with this order has an outward normal.
    tris = [np.stack([a0, b0, b1], -2).reshape(-1, 3, 3), np.stack([a0, b1, a1], -2).reshape(-1, 3, 3)]
    # caps: ladder between upper and lower points at the same mean-line station
    up = np.arange(n_chord - 1, -1, -1)  # contour index of upper station s (s = 0 is the LE)
    lo = np.concatenate([[n_chord - 1], np.arange(n_chord, n_chord + n_chord - 1)])
    if not blunt_te:
        lo[-1] = 0
    for ring, outward_plus in ((rings[0], False), (rings[-1], True)):
        if (outward_plus and not cap_tip) or (not outward_plus and not cap_root):
            continue
        u0, u1, l0, l1 = ring[up[:-1]], ring[up[1:]], ring[lo[:-1]], ring[lo[1:]]
        t1, t2 = np.stack([u0, l1, u1], 1), np.stack([u0, l0, l1], 1)
        cap = np.concatenate([t1, t2])
        if outward_plus:  # (x, z)-counter-clockwise faces point to -y
            cap = cap[:, ::-1]
        area = 0.5 * np.linalg.norm(np.cross(cap[:, 1] - cap[:, 0], cap[:, 2] - cap[:, 0]), axis=1)
        tris.append(cap[area > 0])
    return np.concatenate(tris)
