"""The airfoil quantities of one closed section loop.

Section definitions (common practice, no source): trailing edge = mid-point of a blunt TE face or
the sharp TE vertex; leading edge = point of the contour farthest from the TE (refined between
vertices by a local parabola); chord line LE -> TE; twist = chord-line angle, nose-up positive;
camber and thickness measured normal to the chord line, normalised by chord.
"""

from __future__ import annotations

import numpy as np

from .airfoil import cosine_spacing

N_CAMBER = 41
_FINE = cosine_spacing(401)


def section_properties(loop: np.ndarray) -> dict:
    """Airfoil quantities of one closed (k, 2) loop in (x, z), x roughly aft.

    Returns LE, TE (2,), chord, twist_deg, thickness_ratio, x_thickness, camber_ratio, x_camber,
    camber (N_CAMBER,) on `camber_x()`, blunt (bool).
    """
    p = np.asarray(loop, float)
    k = p.shape[0]
    q = np.roll(p, -1, 0)
    cr = p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]
    area = 0.5 * cr.sum()
    g = ((p + q) * cr[:, None]).sum(0) / (6 * area) if abs(area) > 1e-300 else p.mean(0)
    ia = int(np.argmax(np.hypot(*(p - g).T)))
    ax = (p[ia] - g) / np.linalg.norm(p[ia] - g)
    span_ax = float(np.ptp(p @ ax))
    seg = q - p
    seglen = np.hypot(*seg.T)
    steep = (np.abs(seg @ ax) < 0.5 * seglen) & ((p - p[ia]) @ ax > -0.02 * span_ax) & ((q - p[ia]) @ ax > -0.02 * span_ax)
    # walk the TE face both ways from the aft-most vertex (segment i joins vertex i and i + 1)
    e_fwd = ia
    while steep[e_fwd % k] and (e_fwd - ia) < k // 4:
        e_fwd += 1
    e_bwd = ia
    while steep[(e_bwd - 1) % k] and (ia - e_bwd) < k // 4:
        e_bwd -= 1
    e_fwd, e_bwd = e_fwd % k, e_bwd % k
    blunt = e_fwd != e_bwd
    te = 0.5 * (p[e_fwd] + p[e_bwd])
    j = int(np.argmax(np.hypot(*(p - te).T)))
    le = _refine_le(p, j, te)
    chord = float(np.linalg.norm(te - le))
    cx = (te - le) / chord
    nz = np.array([-cx[1], cx[0]])
    uv = np.column_stack([(p - le) @ cx, (p - le) @ nz]) / chord
    # two chains LE -> TE
    idx_f = np.arange(j, j + ((e_bwd - j) % k) + 1) % k  # forward from LE to the face end e_bwd
    idx_b = np.arange(j, j - ((j - e_fwd) % k) - 1, -1) % k  # backward from LE to e_fwd
    ca, cb = _chain_curve(uv[idx_f]), _chain_curve(uv[idx_b])
    va, vb = np.interp(_FINE, *ca), np.interp(_FINE, *cb)
    if va.mean() < vb.mean():
        va, vb = vb, va
    thick = va - vb
    camb = 0.5 * (va + vb)
    it = int(np.argmax(thick))
    ic = int(np.argmax(np.abs(camb)))
    xt, tmax = _peak(_FINE, thick, it)
    xc, cmax = _peak(_FINE, camb, ic)
    cz = np.interp(camber_x(), _FINE, camb)
    cz[0] = cz[-1] = 0.0
    twist = float(np.degrees(np.arctan2(le[1] - te[1], te[0] - le[0])))
    return dict(le=le, te=te, chord=chord, twist_deg=twist, thickness_ratio=tmax, x_thickness=xt,
                camber_ratio=cmax, x_camber=xc, camber=cz, blunt=blunt)


def camber_x() -> np.ndarray:
    """The chordwise stations (x/c) shared by every camber line: 41 cosine-spaced points."""
    return cosine_spacing(N_CAMBER)


def _chain_curve(uv):
    """(u, v) of a chain LE -> TE with u made strictly increasing (for interpolation)."""
    u, v = uv[:, 0], uv[:, 1]
    u = np.concatenate([[0.0], u[1:]])
    v = np.concatenate([[0.0], v[1:]])
    keep = np.concatenate([[True], u[1:] > np.maximum.accumulate(u)[:-1]])
    return u[keep], v[keep]


def _peak(x, f, i):
    """Parabolic refinement of an extremum of f at index i; returns (x_peak, f_peak)."""
    if 0 < i < x.size - 1:
        xs, fs = x[i - 1:i + 2], f[i - 1:i + 2]
        a = np.polyfit(xs - x[i], fs, 2)
        if a[0] != 0:
            dx = -a[1] / (2 * a[0])
            if abs(dx) <= max(x[i + 1] - x[i], x[i] - x[i - 1]):
                return float(x[i] + dx), float(np.polyval(a, dx))
    return float(x[i]), float(f[i])


def _refine_le(p, j, te):
    """Sub-vertex farthest point from te: fit u = a + b v + q v^2 to the vertices near p[j]."""
    L = float(np.linalg.norm(te - p[j]))
    cx = (te - p[j]) / L
    nz = np.array([-cx[1], cx[0]])
    k = p.shape[0]
    idx = np.arange(j - 8, j + 9) % k
    u, v = (p[idx] - p[j]) @ cx, (p[idx] - p[j]) @ nz
    near = u < 0.01 * L
    if near.sum() < 3 or np.ptp(v[near]) <= 0:
        return p[j].copy()
    A = np.column_stack([np.ones(near.sum()), v[near], v[near] ** 2])
    a, b, qq = np.linalg.lstsq(A, u[near], rcond=None)[0]
    den = 2 * qq - 1.0 / L
    if den <= 0:
        return p[j].copy()
    vs = -b / den
    if not v[near].min() <= vs <= v[near].max():
        return p[j].copy()
    us = a + b * vs + qq * vs * vs
    return p[j] + us * cx + vs * nz


