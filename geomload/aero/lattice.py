"""Vortex lattice on the mean (camber) surface of a wing described by `Stations`.

Geometry (wing frame, metres): each section lies in a plane y = const; its chord line runs from
the leading edge (x_le, z_le) to the trailing edge (x_te, z_te), so twist and dihedral are
carried by those points; the camber line (camber_z, height / chord, normal to the chord line)
is added on top. Between stations LE, TE and camber are interpolated linearly in y. The
stations are extended to y = 0 and to the geometry tip y = semispan by linear extrapolation of
the quarter-chord point and of the chord length (clamped at zero), keeping the outermost
section's twist and camber.

Panels: the bound vortex lies on the panel quarter-chord line and the collocation point at the
panel three-quarter chord of the mid-strip section; the normal is the mean-surface normal there
(chordwise tangent from the camber slope, spanwise tangent across the strip). This is the
horseshoe-vortex lattice of Katz & Plotkin, Low-Speed Aerodynamics (2nd ed.), sec. 12.1-12.3,
and Bertin & Cummings, Aerodynamics for Engineers, ch. 7 (1/4-3/4 rule: exact 2-D lift for a
flat plate and a parabolic camber line).
"""

from __future__ import annotations

import numpy as np

from geomload.errors import AeroError
from geomload.aero.records import Lattice
from geomload.geometry.records import Stations


def _check_int(value, name: str) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
        raise AeroError(f"{name}: panel count must be a positive integer, got {value!r}")
    return int(value)


def _check_stations(st: Stations) -> None:
    y = np.asarray(st.y, float)
    n = y.size
    if n < 2:
        raise AeroError(f"stations: need at least 2 stations, got {n}")
    for name in ("x_le", "z_le", "x_te", "z_te", "chord"):
        arr = np.asarray(getattr(st, name), float)
        if arr.shape != (n,):
            raise AeroError(f"stations: {name} has shape {arr.shape}, expected ({n},)")
        if not np.all(np.isfinite(arr)):
            raise AeroError(f"stations: {name} holds non-finite values")
    if not np.all(np.isfinite(y)) or np.any(np.diff(y) <= 0.0) or y[0] < -1e-9 * abs(y[-1]):
        raise AeroError("stations: y must be finite, >= 0 and strictly increasing root to tip")
    span = float(st.semispan)
    if not np.isfinite(span) or span < y[-1] - 1e-9 * max(1.0, abs(span)):
        raise AeroError(f"stations: semispan {st.semispan!r} m is below the last station y")
    chord = np.hypot(np.asarray(st.x_te) - st.x_le, np.asarray(st.z_te) - st.z_le)
    bad = np.nonzero(~(chord > 1e-9 * span))[0]
    if bad.size:
        raise AeroError(f"stations: zero or negative chord at y = {y[bad[0]]:.6g} m")
    cx = np.asarray(st.camber_x, float)
    cz = np.asarray(st.camber_z, float)
    if cx.ndim != 1 or cx.size < 2 or np.any(np.diff(cx) <= 0) or cz.shape != (n, cx.size):
        raise AeroError("stations: camber_x must increase over 0..1 and camber_z be (n, k)")
    if not (np.all(np.isfinite(cz)) and np.all(np.isfinite(cx))):
        raise AeroError("stations: camber line holds non-finite values")


def _extend(st: Stations):
    """Stations extended to y = 0 and y = semispan: y, LE (n, 3), chord vector d (n, 3), rows."""
    y = np.asarray(st.y, float)
    le = np.column_stack([st.x_le, y, st.z_le]).astype(float)
    d = np.column_stack([np.asarray(st.x_te) - st.x_le, 0 * y, np.asarray(st.z_te) - st.z_le])
    rows = np.arange(y.size)

    def extrapolate(i0, i1, y_new):
        qc0, qc1 = le[i0] + 0.25 * d[i0], le[i1] + 0.25 * d[i1]
        c0, c1 = np.linalg.norm(d[i0]), np.linalg.norm(d[i1])
        t = (y_new - y[i0]) / (y[i1] - y[i0])
        qc = qc0 + t * (qc1 - qc0)
        c = max(0.0, c0 + t * (c1 - c0))
        dn = d[i1] / c1 * c  # direction (twist) of the nearest station i1
        return qc - 0.25 * dn, dn

    if y[0] > 0.0:
        l0, d0 = extrapolate(1, 0, 0.0)
        y, le, d = np.r_[0.0, y], np.vstack([l0, le]), np.vstack([d0, d])
        rows = np.r_[0, rows]
    s = float(st.semispan)
    if s > y[-1] * (1 + 1e-12):
        lt, dt = extrapolate(-2, -1, s)
        y, le, d = np.r_[y, s], np.vstack([le, lt]), np.vstack([d, dt])
        rows = np.r_[rows, rows[-1]]
    le[:, 1] = y
    return y, le, d, rows


def _interp_rows(y_tab, table, yq):
    """Linear interpolation of table rows (n, k) at yq (q,) -> (q, k), clamped at the ends."""
    i = np.clip(np.searchsorted(y_tab, yq, side="right") - 1, 0, y_tab.size - 2)
    w = np.clip((yq - y_tab[i]) / (y_tab[i + 1] - y_tab[i]), 0.0, 1.0)[:, None]
    return (1.0 - w) * table[i] + w * table[i + 1]


class _Surface:
    """Mean surface P(y, xi) = LE + xi d + zeta(xi) (-d_z, 0, d_x) and its xi-derivative."""

    def __init__(self, st: Stations):
        self.y, le, d, rows = _extend(st)
        self.geo = np.hstack([le, d])  # (n, 6)
        self.cx = np.asarray(st.camber_x, float)
        cz = np.asarray(st.camber_z, float)[rows]
        self.cz = cz
        self.cs = np.gradient(cz, self.cx, axis=1)

    def _camber(self, table, yq, xi):
        at_xi = np.stack([np.interp(xi, self.cx, r) for r in table])  # (n, m)
        return _interp_rows(self.y, at_xi, yq)  # (q, m)

    def points(self, y_signed, xi, tangent=False):
        ya = np.abs(y_signed)
        g = _interp_rows(self.y, self.geo, ya)
        le, d = g[:, None, :3], g[:, None, 3:]
        nup = np.stack([-d[..., 2], 0 * d[..., 0], d[..., 0]], axis=-1)
        xi = np.asarray(xi, float)
        if tangent:
            zs = self._camber(self.cs, ya, xi)[..., None]
            return d + zs * nup
        zc = self._camber(self.cz, ya, xi)[..., None]
        p = le + xi[None, :, None] * d + zc * nup
        p[..., 1] = np.asarray(y_signed, float)[:, None]
        return p

    def reference(self):
        """S (both sides, projected on x-y), MAC, and the MAC quarter-chord point (3,)."""
        y, g = self.y, self.geo
        c, xle, zqc = g[:, 3], g[:, 0], g[:, 2] + 0.25 * g[:, 5]
        dy = np.diff(y)
        c1, c2, x1, x2, z1, z2 = c[:-1], c[1:], xle[:-1], xle[1:], zqc[:-1], zqc[1:]
        half = np.sum(dy * (c1 + c2) / 2)
        if not half > 0.0:
            raise AeroError("stations: planform area is zero")
        c2int = np.sum(dy * (c1 * c1 + c1 * c2 + c2 * c2) / 3)
        cx_int = np.sum(dy * (2 * c1 * x1 + c1 * x2 + c2 * x1 + 2 * c2 * x2) / 6)
        cz_int = np.sum(dy * (2 * c1 * z1 + c1 * z2 + c2 * z1 + 2 * c2 * z2) / 6)
        mac = c2int / half
        return 2 * half, mac, np.array([cx_int / half + 0.25 * mac, 0.0, cz_int / half])


MAX_TIP_PANEL_ASPECT = 8.0  # tip panel chord / strip width cap of the cosine spacing


def spanwise_edges(semispan: float, n_span: int, spacing: str, full_span: bool,
                   min_width: float = 0.0) -> np.ndarray:
    """Strip edge positions y (m): half-cosine y = s sin(pi i / 2n) on a half wing (refined at
    the tip); a full span takes the mirror of that on both sides, which is the full-cosine
    distribution y = -s cos(pi i / 2n) over 2n strips; or uniform.

    min_width (m): the cosine edges are blended with uniform ones, y = (1 - b) y_cos + b y_uni
    with the smallest b in [0, 1] that keeps the tip strip at least this wide. Very narrow tip
    strips under long panels (chord / width of tens) make the horseshoe lattice ill-conditioned:
    CL and e drift, then diverge, as n_span grows at fixed n_chord (measured on the sample wing:
    e = 0.83 at 80 x 4 panels and 0.0002 at 160 x 4 with pure cosine spacing, 0.975 and 0.972
    with the cap)."""
    e = np.arange(n_span + 1) / n_span
    if spacing == "cosine":
        half = semispan * np.sin(0.5 * np.pi * e)
        if n_span > 1 and min_width > 0.0:
            w_cos, w_uni = half[-1] - half[-2], semispan / n_span
            if w_cos < min_width:
                b = min(1.0, (min_width - w_cos) / (w_uni - w_cos))
                half = (1.0 - b) * half + b * semispan * e
    elif spacing == "uniform":
        half = semispan * e
    else:
        raise AeroError(f"spacing: expected 'cosine' or 'uniform', got {spacing!r}")
    return half if not full_span else np.r_[-half[::-1], half[1:]]


def build_lattice(stations: Stations, n_span: int = 40, n_chord: int = 10,
                  spacing: str = "cosine", full_span: bool = False, x_ref=None,
                  chord_spacing: str = "uniform", controls=()) -> Lattice:
    """Horseshoe vortex lattice on the mean surface of `stations`.

    Parameters
    ----------
    stations : Stations, one semi-span (starboard, root to tip), wing frame, metres.
    n_span : strips per semi-span (a full-span lattice has 2 * n_span strips).
    n_chord : panels per strip along the chord.
    spacing : spanwise "cosine" (default; half-cosine on a half wing) or "uniform".
    full_span : False: starboard half with mirror images in y = 0 implied (`mirrored`);
        True: both sides, stations mirrored to port, strips ordered port tip to starboard tip.
    x_ref : (3,) moment reference (m); default the MAC quarter chord.
    chord_spacing : chordwise "uniform" (default) or "cosine".
    controls : control surfaces (`geomload.aero.controls.ControlSurface`); when given, a
        chordwise panel edge is placed on every hinge line and the spanwise strip edge nearest
        each surface end is moved onto it (see `controls.chord_fractions`, `controls.snap_edges`).
        Empty (default): the lattice is exactly the one without controls.

    Returns a `Lattice` with s_ref = projected planform area of both sides, c_ref = MAC,
    b_ref = 2 * semispan. Raises AeroError on bad counts, spacing or degenerate stations.
    """
    n_span = _check_int(n_span, "n_span")
    n_chord = _check_int(n_chord, "n_chord")
    _check_stations(stations)
    surf = _Surface(stations)
    s = float(stations.semispan)
    # the chord at the inner edge of the cosine tip strip sets the tip panel length
    y_in = s * np.sin(0.5 * np.pi * (n_span - 1) / n_span) if n_span > 1 else 0.0
    le_te = surf.points(np.array([y_in]), np.array([0.0, 1.0]))
    c_in = float(np.linalg.norm(le_te[0, 1] - le_te[0, 0]))
    ye = spanwise_edges(s, n_span, spacing, bool(full_span),
                        min_width=c_in / n_chord / MAX_TIP_PANEL_ASPECT)
    controls = tuple(controls or ())
    if controls:
        from geomload.aero.controls import chord_fractions, check_controls, snap_edges

        check_controls(controls, s, full_span=bool(full_span))
        ye = snap_edges(ye, controls)
        if chord_spacing not in ("uniform", "cosine"):
            raise AeroError(f"chord_spacing: expected 'cosine' or 'uniform', got {chord_spacing!r}")
        xi = chord_fractions(n_chord, [c.hinge_fraction for c in controls], chord_spacing)
    elif chord_spacing == "uniform":
        xi = np.linspace(0.0, 1.0, n_chord + 1)
    elif chord_spacing == "cosine":
        xi = 0.5 * (1.0 - np.cos(np.pi * np.arange(n_chord + 1) / n_chord))
    else:
        raise AeroError(f"chord_spacing: expected 'cosine' or 'uniform', got {chord_spacing!r}")
    dxi = np.diff(xi)
    xb, xc = xi[:-1] + 0.25 * dxi, xi[:-1] + 0.75 * dxi
    ym = 0.5 * (ye[:-1] + ye[1:])
    ns = ye.size - 1

    corners = surf.points(ye, xi)
    nodes = surf.points(ye, xb)
    colloc = surf.points(ym, xc)
    t_chord = surf.points(ym, xc, tangent=True)
    pc = surf.points(ye, xc)
    t_span = pc[1:] - pc[:-1]
    normal = np.cross(t_chord, t_span)
    normal /= np.linalg.norm(normal, axis=-1, keepdims=True)
    diag1 = corners[1:, 1:] - corners[:-1, :-1]
    diag2 = corners[1:, :-1] - corners[:-1, 1:]
    area = 0.5 * np.linalg.norm(np.cross(diag1, diag2), axis=-1)
    edge_chord = np.linalg.norm(corners[:, -1] - corners[:, 0], axis=-1)

    s_ref, mac, xr = surf.reference()
    if x_ref is not None:
        xr = np.asarray(x_ref, float).reshape(3)
        if not np.all(np.isfinite(xr)):
            raise AeroError("x_ref: moment reference must be 3 finite coordinates (m)")
    return Lattice(
        corners=corners,
        bound_a=nodes[:-1].reshape(-1, 3),
        bound_b=nodes[1:].reshape(-1, 3),
        colloc=colloc.reshape(-1, 3),
        normal=normal.reshape(-1, 3),
        area=area.reshape(-1),
        n_span=ns,
        n_chord=n_chord,
        mirrored=not full_span,
        strip_y=ym,
        strip_chord=0.5 * (edge_chord[:-1] + edge_chord[1:]),
        strip_width=np.diff(ye),
        s_ref=float(s_ref),
        c_ref=float(mac),
        b_ref=2.0 * s,
        x_ref=xr,
    )
