"""Wings built in memory from the NACA 4-digit equations, with their exact design values.

Other stages' tests may use `naca_wing_mesh(...)` for a `WingMesh` whose geometry is known
exactly (NACA Report 824 sections on a straight-tapered planform).

The mesh itself is lofted by geomload.geometry.airfoil.loft_wing (it is the test input); every
expected value here is computed from the published equations by this file and aero_wings.py
alone, never by geomload: the NACA 4-digit thickness form and mean line (NACA Report 824;
Abbott & von Doenhoff, Theory of Wing Sections, sec. 6.4) and the farthest-point chord line
found below by a bounded scalar search (scipy.optimize.minimize_scalar).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from helpers.aero_wings import naca4_camber
from geomload.geometry.airfoil import loft_wing
from geomload.records import WingMesh

# NACA Report 824 thickness coefficients; the last one is -0.1015 (blunt TE) or -0.1036 (closed)
_THICKNESS = (0.2969, -0.1260, -0.3516, 0.2843)


def _naca4_side(code, t, blunt_te, x, upper):
    """(x, z) / chord of the upper or lower surface at mean-line stations x (Report 824:
    thickness y_t laid off normal to the mean line, x_u = x - y_t sin th, z_u = y_c + y_t cos th,
    x_l = x + y_t sin th, z_l = y_c - y_t cos th, tan th = dy_c/dx)."""
    m, p = int(code[0]) / 100.0, int(code[1]) / 10.0
    x = np.asarray(x, float)
    a = _THICKNESS + ((-0.1015,) if blunt_te else (-0.1036,))
    yt = 5 * t * (a[0] * np.sqrt(x) + a[1] * x + a[2] * x**2 + a[3] * x**3 + a[4] * x**4)
    if m == 0.0:
        slope = np.zeros_like(x)
    else:  # derivative of the two parabolas of the mean line
        slope = np.where(x < p, 2 * m / p**2 * (p - x), 2 * m / (1 - p) ** 2 * (p - x))
    th = np.arctan(slope)
    sgn = 1.0 if upper else -1.0
    return x - sgn * yt * np.sin(th), naca4_camber(code, x) + sgn * yt * np.cos(th)


@lru_cache(maxsize=None)
def farthest_point_chord(code, blunt_te=True, t=None):
    """The chord line by the farthest-point-from-the-TE rule, from the equations.

    The TE point is the mid-point of the two surface ends, (1, y_c(1)) = (1, 0). The contour
    point farthest from it is searched along each surface with x = s^2 (smooth through the
    sqrt(x) nose): a 4001-point scan of s, then a bounded golden-section refinement
    (scipy.optimize.minimize_scalar). Returns (le_xz, chord, angle_deg), chord per unit nominal
    chord, angle positive nose-up (LE above the TE).
    """
    from scipy.optimize import minimize_scalar

    t = int(code[2:]) / 100.0 if t is None else float(t)
    xu, zu = _naca4_side(code, t, blunt_te, 1.0, True)
    xl, zl = _naca4_side(code, t, blunt_te, 1.0, False)
    te = np.array([0.5 * (xu + xl), 0.5 * (zu + zl)])

    def dist(s, upper):
        x, z = _naca4_side(code, t, blunt_te, s * s, upper)
        return float(np.hypot(x - te[0], z - te[1]))

    s = np.linspace(0.0, 1.0, 4001)
    best = None
    for upper in (True, False):
        xs, zs = _naca4_side(code, t, blunt_te, s * s, upper)
        d = np.hypot(xs - te[0], zs - te[1])
        k = int(np.argmax(d))
        lo, hi = s[max(k - 1, 0)], s[min(k + 1, s.size - 1)]
        r = minimize_scalar(lambda v: -dist(v, upper), bounds=(lo, hi), method="bounded",
                            options=dict(xatol=1e-12))
        cand = (max(-r.fun, d[k]), r.x if -r.fun >= d[k] else s[k], upper)
        if best is None or cand[0] > best[0]:
            best = cand
    dmax, sv, upper = best
    le = np.array(_naca4_side(code, t, blunt_te, sv * sv, upper), float)
    le.setflags(write=False)  # shared by the cache
    ang = np.degrees(np.arctan2(le[1] - te[1], te[0] - le[0]))
    return le, float(dmax), float(ang)


def design(semispan=1.8, root_chord=0.36, taper=0.5, sweep_le_deg=4.0, dihedral_deg=3.0,
           washout_deg=3.0, t_root=0.12, t_tip=0.10, code="2412"):
    """The design as a dict of parameters and exact functions of y (m, deg)."""
    s = semispan
    d = dict(semispan=s, root_chord=root_chord, taper=taper, sweep_le_deg=sweep_le_deg,
             dihedral_deg=dihedral_deg, washout_deg=washout_deg, t_root=t_root, t_tip=t_tip, code=code)
    f = lambda y: np.abs(np.asarray(y, float)) / s  # noqa: E731
    d["chord"] = lambda y: root_chord * (1 - (1 - taper) * f(y))
    d["x_le"] = lambda y: np.abs(y) * np.tan(np.radians(sweep_le_deg))
    d["z_le"] = lambda y: np.abs(y) * np.tan(np.radians(dihedral_deg))
    d["twist"] = lambda y: -washout_deg * f(y)
    d["t"] = lambda y: t_root + (t_tip - t_root) * f(y)
    ct = root_chord * taper
    # straight-tapered wing formulas (e.g. Raymer, Aircraft Design, ch. 4)
    d["area"] = s * (root_chord + ct)
    d["span"] = 2 * s
    d["aspect_ratio"] = (2 * s) ** 2 / d["area"]
    d["mac"] = 2.0 / 3.0 * root_chord * (1 + taper + taper**2) / (1 + taper)
    d["y_mac"] = s / 3.0 * (1 + 2 * taper) / (1 + taper)
    return d


def measured_definition(d, y, blunt_te=True):
    """Exact chord, LE (x, z) and twist by the farthest-point chord-line rule at stations y.

    The LE of a cambered section found as the point farthest from the TE sits slightly above
    the nominal NACA LE (see airfoil.farthest_point_chord); this evaluates that rule on the
    exact equations so tests can compare like with like.
    """
    y = np.asarray(y, float)
    out = {k: np.zeros(y.size) for k in ("chord", "x_le", "z_le", "twist")}
    for i, yi in enumerate(y):
        le, cl, ang = farthest_point_chord(d["code"], blunt_te, float(d["t"](yi)))
        c, a = float(d["chord"](yi)), np.radians(float(d["twist"](yi)))
        out["x_le"][i] = d["x_le"](yi) + c * (le[0] * np.cos(a) + le[1] * np.sin(a))
        out["z_le"][i] = d["z_le"](yi) + c * (-le[0] * np.sin(a) + le[1] * np.cos(a))
        out["chord"][i] = c * cl
        out["twist"][i] = d["twist"](yi) + ang
    return out


def wing_triangles(d, n_chord=80, n_span=40, blunt_te=True, full_span=False):
    """(m, 3, 3) triangle soup of design d, sections parallel to x-z, wing frame (m)."""
    s = d["semispan"]
    ys = s * np.sin(np.linspace(0, np.pi / 2, n_span))  # denser towards the tip
    if full_span:
        ys = np.concatenate([-ys[:0:-1], ys])
    return loft_wing(ys, d["chord"](ys), d["x_le"](ys), d["z_le"](ys), d["twist"](ys), d["t"](ys),
                     d["code"], n_chord, blunt_te)


def naca_wing_mesh(n_chord=80, n_span=40, blunt_te=True, full_span=False, rotation=None,
                   translation=None, scale=1.0, source="<naca wing>", **design_kw):
    """A `WingMesh` of a NACA wing, optionally moved: p = scale * rotation @ p_wing + translation.

    Returns (mesh, design dict).
    """
    d = design(**design_kw)
    t = wing_triangles(d, n_chord, n_span, blunt_te, full_span)
    if rotation is not None:
        t = t @ np.asarray(rotation, float).T
    t = t * scale
    if translation is not None:
        t = t + np.asarray(translation, float)
    return WingMesh(triangles=t, source=source, units="m"), d


def random_rotation(seed):
    """A proper rotation matrix from a seeded QR decomposition."""
    q, r = np.linalg.qr(np.random.default_rng(seed).normal(size=(3, 3)))
    q = q * np.sign(np.diag(r))
    if np.linalg.det(q) < 0:
        q[:, 0] = -q[:, 0]
    return q


def expected_stations(d, y, blunt_te=True):
    """Exact station values in the wing frame geomload defines (x along the root chord line,
    origin at the root LE), by the farthest-point chord-line rule; y (m) starboard stations.

    Returns dict: chord, x_le, z_le, twist (deg), x_qc, z_qc.
    """
    ex = measured_definition(d, y, blunt_te)
    r = measured_definition(d, [0.0], blunt_te)
    le0 = np.array([r["x_le"][0], r["z_le"][0]])
    a = np.radians(r["twist"][0])  # the root chord line is nose-up by a in the design frame
    dx = np.array([np.cos(a), -np.sin(a)])
    nz = np.array([np.sin(a), np.cos(a)])
    p = np.column_stack([ex["x_le"], ex["z_le"]]) - le0
    out = dict(chord=ex["chord"], x_le=p @ dx, z_le=p @ nz, twist=ex["twist"] - r["twist"][0])
    tw = np.radians(out["twist"])
    out["x_qc"] = out["x_le"] + 0.25 * out["chord"] * np.cos(tw)
    out["z_qc"] = out["z_le"] - 0.25 * out["chord"] * np.sin(tw)
    return out


def expected_max_camber(code, t, blunt_te=True):
    """(f/c, x/c) of the NACA mean line measured normal to the farthest-point chord line.

    That chord line runs from a LE slightly above the nominal one, so f/c is a little below m.
    """
    le, cl, _ = farthest_point_chord(code, blunt_te, t)
    x = np.linspace(0, 1, 20001)
    p = np.column_stack([x, naca4_camber(code, x)]) - le
    u = (np.array([1.0, 0.0]) - le) / cl
    n = np.array([-u[1], u[0]])
    h = (p @ n) / cl
    i = int(np.argmax(h))
    return float(h[i]), float((p[i] @ u) / cl)


def write_stl(path, tris):
    """Write triangles (m, 3, 3), or a list of such arrays, as a binary STL; returns path."""
    from geomload.geometry.readers.stl import STL_RECORD

    tris = np.concatenate(tris) if isinstance(tris, list) else tris
    rec = np.zeros(len(tris), STL_RECORD)
    rec["v"] = tris
    with open(path, "wb") as f:
        f.write(b"x" * 80 + np.uint32(len(tris)).tobytes())
        rec.tofile(f)
    return path
