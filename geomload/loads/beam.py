"""Shear, bending and torsion along the load (spar) axis of one semi-span, and Schrenk's load.

Method (docs/methods_loads.md): cantilever statics from tip to root. At station y_i the loads
outboard of it reduce to a force F_i and a moment M_i about the spar point P_i = (x_s, y_i, z_s).
Distributed loads are taken piecewise linear in y between stations, their application lines
too, so per segment the force integrand is linear (trapezoid exact) and the moment integrand
(r - P_i) x f is quadratic (Simpson exact). Point loads add a jump at their y: a load at exactly
y_i counts as outboard of y_i (the value just inboard of the load). Loads outboard of the last
station are not seen: append a tip station (zero lift) when the stations stop short of the tip.

Local spar frame at each station: s = spar tangent (outboard), b = the x axis made normal to s
(in the wing plane, aft), n = b x s (normal to the wing plane, up). Then
    shear V = F.n (positive up), bending = M.b (positive tip-up), torsion = M.s (nose-up),
    in-plane shear = F.b (positive aft), in-plane bending = -M.n (positive tip-aft).
For an unswept, flat wing these are F_z, M_x, M_y, F_x and -M_z of the wing frame.
"""

from __future__ import annotations

import math

import numpy as np

from geomload.aero.vortex import cross as _cross  # component form, numpy.cross's arithmetic
from geomload.errors import InputError
from geomload.geometry.sparline import spar_line  # noqa: F401  (re-exported)
from geomload.record_checks import kept

from .records import AppliedLoads, Equilibrium, LoadGrid, PointLoad, SpanLoads  # noqa: F401

SIGN_CONVENTION = (
    "shear positive up (net upward load outboard of the station); bending positive tip-up; "
    "torsion positive nose-up about the spar axis; in-plane shear positive aft; in-plane "
    "bending positive tip-aft; local spar frame (s along the spar outboard, b chordwise aft "
    "normal to s, n = b x s up); limit loads unless marked ultimate"
)


def _col(a, n, name, default=0.0):
    if a is None:
        return np.full(n, float(default))
    a = np.asarray(a, dtype=float)
    if a.ndim == 0:
        return np.full(n, float(a))
    if a.shape != (n,) or not np.isfinite(a).all():
        raise InputError(f"integrate_loads: {name} must be {n} finite values, got shape {a.shape}")
    return a


def spar_frame(y, spar_x, spar_z):
    """Unit vectors (s, b, n), each (n, 3), of the local spar frame at each station."""
    p = np.column_stack([spar_x, y, spar_z])
    s = np.gradient(p, y, axis=0) if len(y) > 1 else np.array([[0.0, 1.0, 0.0]])
    s /= np.linalg.norm(s, axis=1)[:, None]
    b = np.array([1.0, 0.0, 0.0]) - s[:, :1] * s
    b /= np.linalg.norm(b, axis=1)[:, None]
    return s, b, _cross(b, s)


_FRAMES: dict = {}  # (y, spar_x, spar_z) bytes -> read-only (s, b, n): every case of a run
_FRAMES_KEEP = 8  # shares one grid, and np.gradient costs about 0.2 ms per call


def _shared_spar_frame(y, spar_x, spar_z):
    """(s, b, n, p, p - p[-1], diff(y)): spar_frame, the spar points and the segment lengths,
    computed once per grid (the arrays are returned read-only and shared)."""

    def build():
        p = np.column_stack([spar_x, y, spar_z])
        return (*spar_frame(y, spar_x, spar_z), p, p - p[-1], np.diff(y))

    return kept(_FRAMES, (y.tobytes(), spar_x.tobytes(), spar_z.tobytes()), build, _FRAMES_KEEP)


def _segment_moments(y, p, r, f):
    """Per segment j: force integral (3,) and moment integral about p[j] of the linear load
    f(eta) applied on the linear line r(eta); Simpson's rule, exact for these quadratics."""
    return _segment_moments_many(np.diff(y)[:, None], p, ((r, f),))[0]


def _segment_moments_many(h, p, lines):
    """Per segment j and per (r, f) of `lines`: force integral (3,) and moment integral about
    p[j] of the linear load f(eta) applied on the linear line r(eta); Simpson's rule, exact for
    these quadratics. h: (n-1, 1) segment lengths. Returns [(force, moment), ...] in the order
    of `lines` (every cross product in one call: the arrays are short, the calls dominate)."""
    arms, loads = [], []
    for r, f in lines:
        fa, fb = f[:-1], f[1:]
        ra, rb = r[:-1] - p[:-1], r[1:] - p[:-1]
        arms += [ra, ra + rb, rb]
        loads += [fa, fa + fb, fb]
    c = _cross(np.stack(arms), np.stack(loads))
    out = []
    for k, (_r, f) in enumerate(lines):
        force = 0.5 * h * (f[:-1] + f[1:])
        out.append((force, h / 6.0 * (c[3 * k] + c[3 * k + 1] + c[3 * k + 2])))
    return out


def integrate_loads(y, spar_x, spar_z, lift_N_per_m, *, drag_N_per_m=None, side_N_per_m=None,
                    pitch_Nm_per_m=None,
                    load_x=None, load_z=None, inertia_N_per_m=None, inertia_x=None,
                    inertia_z=None, point_loads=(), case="", ultimate_factor=1.5,
                    schrenk_lift_N_per_m=None, alpha_deg=0.0,
                    inertia_alpha_deg=None) -> SpanLoads:
    """Integrate the loads of one semi-span from tip to root (limit loads, SI).

    Parameters
    ----------
    y : (n,) station positions, strictly increasing root to tip (m).
    spar_x, spar_z : (n,) spar-axis position at each station (m, wing frame).
    lift_N_per_m : (n,) lift per metre of y (N/m), normal to the free stream: along
        (-sin a, 0, cos a) of the wing frame at angle of attack a = alpha_deg.
    drag_N_per_m : (n,) drag per metre of y (N/m), along the free stream (cos a, 0, sin a);
        default 0.
    side_N_per_m : (n,) aerodynamic force per metre of y along +y (N/m), e.g. the inboard tilt
        -lift tan(dihedral) of a force normal to a dihedral surface; default 0.
    pitch_Nm_per_m : (n,) section pitching moment per metre about the load line, nose-up
        (N m/m), e.g. cm_c4 q c^2 with the load line at the quarter chord; default 0.
    load_x, load_z : (n,) line where lift and drag act (m); default the spar line.
    inertia_N_per_m : (n,) n g m'(y) (N/m), along (sin b, 0, -cos b) with b = inertia_alpha_deg:
        b = 0 puts it along -z (load factor normal to the longitudinal axis, 14 CFR 23.321(a));
        b = alpha opposes the lift (load factor normal to the flight path); default 0.
    inertia_x, inertia_z : (n,) line of the distributed mass (m); default the spar line.
    point_loads : sequence of :class:`PointLoad` (force vectors in N, wing frame).
    case : case name stored in the result; ultimate_factor : ultimate / limit (14 CFR 23.303).
    schrenk_lift_N_per_m : (n,) cross-check series stored as is (NaN when not given).
    alpha_deg : angle of attack of the wing frame's x axis to the free stream (deg); 0 makes
        lift act along +z and drag along +x. Point-load forces are taken as given.
    inertia_alpha_deg : tilt of the inertia direction (deg); default alpha_deg.

    Returns
    -------
    SpanLoads with the sign convention of :data:`SIGN_CONVENTION`; ``pitch_Nm_per_m`` is the
    aerodynamic moment per span about the spar axis; ``force_N`` and ``moment_Nm`` ((n, 3),
    outboard resultant about the spar point, wing frame), ``axis_s``, ``axis_b``, ``axis_n``
    ((n, 3) local frame), ``spar_points_m`` ((n, 3)) and ``applied`` (the loads given).
    """
    y = np.asarray(y, dtype=float)
    n = y.size
    if n < 2 or not np.all(np.isfinite(y)) or np.any(np.diff(y) <= 0):
        raise InputError("integrate_loads: y must hold >= 2 finite stations increasing root to tip")
    sx, sz = _col(spar_x, n, "spar_x"), _col(spar_z, n, "spar_z")
    alpha = float(alpha_deg)
    applied = AppliedLoads(
        lift_N_per_m=_col(lift_N_per_m, n, "lift_N_per_m"),
        drag_N_per_m=_col(drag_N_per_m, n, "drag_N_per_m"),
        side_N_per_m=_col(side_N_per_m, n, "side_N_per_m"),
        pitch_Nm_per_m=_col(pitch_Nm_per_m, n, "pitch_Nm_per_m"),
        load_x_m=sx if load_x is None else _col(load_x, n, "load_x"),
        load_z_m=sz if load_z is None else _col(load_z, n, "load_z"),
        inertia_N_per_m=_col(inertia_N_per_m, n, "inertia_N_per_m"),
        inertia_x_m=sx if inertia_x is None else _col(inertia_x, n, "inertia_x"),
        inertia_z_m=sz if inertia_z is None else _col(inertia_z, n, "inertia_z"),
        point_loads=tuple(point_loads), alpha_deg=alpha,
        inertia_alpha_deg=alpha if inertia_alpha_deg is None else float(inertia_alpha_deg))
    return integrate(y, sx, sz, applied, case=case, ultimate_factor=ultimate_factor,
                     schrenk_lift_N_per_m=schrenk_lift_N_per_m)


def _couple(dy, pitch):
    """(n-1, 3) segment couples of the section moments, about axes parallel to y."""
    couple = np.zeros((dy.size, 3))
    couple[:, 1] = 0.5 * dy * (pitch[:-1] + pitch[1:])
    return couple


def _stacked_lines(y, dy, lift, drag, side, load_x, load_z, inertia, inertia_x, inertia_z,
                   alpha_deg, inertia_alpha_deg) -> tuple:
    """The aero (0) and inertia (1) load lines and their loads stacked, each operation once for
    both: (R (2, n, 3) the lines' points, L (2, n, 3) their loads per metre in the wing frame,
    l_ab = L[:, :-1] + L[:, 1:], seg_f (n - 1, 3) the force of each segment, both lines)."""
    n = y.size
    ca, sa = np.cos(np.radians(alpha_deg)), np.sin(np.radians(alpha_deg))
    fx_aero, fz_aero = drag * ca - lift * sa, lift * ca + drag * sa
    bi = np.radians(inertia_alpha_deg)
    R, L = np.empty((2, n, 3)), np.empty((2, n, 3))
    R[0, :, 0], R[0, :, 1], R[0, :, 2] = load_x, y, load_z
    R[1, :, 0], R[1, :, 1], R[1, :, 2] = inertia_x, y, inertia_z
    L[0, :, 0], L[0, :, 1], L[0, :, 2] = fx_aero, side, fz_aero
    L[1, :, 0], L[1, :, 1], L[1, :, 2] = inertia * np.sin(bi), 0.0, -inertia * np.cos(bi)
    l_ab = L[:, :-1] + L[:, 1:]
    f_seg = 0.5 * dy[:, None] * l_ab
    return R, L, l_ab, f_seg[0] + f_seg[1]


def _fill_segment_rows(arms, loads, R, L, l_ab, p, rel, seg_f, m) -> None:
    """The first 7 m rows of the integration's cross products: per line (Simpson) the arms
    r_a, r_a + r_b, r_b about p[j] and the loads f_a, f_a + f_b, f_b of each of the m segments
    (6 m rows), then each segment's force about the next station inboard (m rows)."""
    va, vl = arms[:6 * m].reshape(2, 3, m, 3), loads[:6 * m].reshape(2, 3, m, 3)
    va[:, 0] = R[:, :-1] - p[:-1]
    va[:, 2] = R[:, 1:] - p[:-1]
    va[:, 1] = va[:, 0] + va[:, 2]
    vl[:, 0], vl[:, 1], vl[:, 2] = L[:, :-1], l_ab, L[:, 1:]
    arms[6 * m:7 * m], loads[6 * m:7 * m] = rel[:-1], seg_f


def _segment_moment_rows(c, dy, pitch, m) -> np.ndarray:
    """(m, 6): per segment its moment about its inboard station from both lines (Simpson of the
    cross products c of `_fill_segment_rows`) plus the pitch couple, in the first three
    columns; the last three are the caller's."""
    vc = c[:6 * m].reshape(2, 3, m, 3)
    m_seg = dy[:, None] / 6.0 * (vc[:, 0] + vc[:, 1] + vc[:, 2])
    seg_m = np.empty((m, 6))
    seg_m[:, :3] = m_seg[0] + m_seg[1]
    seg_m[:, :3] += _couple(dy, pitch)
    return seg_m


def _reverse_cumsum(a):
    """out[i] = sum of a[i:] along axis 0, with one zero row appended (the tip)."""
    out = np.empty((a.shape[0] + 1,) + a.shape[1:])
    out[-1] = 0.0
    np.cumsum(a[::-1], axis=0, out=out[-2::-1])  # written in place, tip to root
    return out


def integrate(y, spar_x, spar_z, applied: AppliedLoads, *, case: str = "",
              ultimate_factor: float = 1.5, schrenk_lift_N_per_m=None, trim=None, chord_m=None,
              output_rows=None, check_equilibrium: bool = False) -> SpanLoads:
    """Integrate one semi-span's AppliedLoads from tip to root on the stations y (m), with the
    spar axis (spar_x, spar_z) (m); see :func:`integrate_loads` for the meaning of each load.

    The resultant about each spar point P_i sums, over the segments j outboard of it, the
    segment's own moment about P_j plus (P_j - P_i) x its force: with cumulative sums from the
    tip, M_i = S_m,i + S_pf,i - P_i x F_i (positions taken relative to the tip point, so the
    subtraction loses nothing near the tip).

    trim, chord_m, output_rows: stored in the record as given; check_equilibrium: also store
    :func:`equilibrium_residual` (one record built per case instead of two).
    """
    y = np.asarray(y, dtype=float)
    n = y.size
    a = applied
    sx, sz = np.asarray(spar_x, float), np.asarray(spar_z, float)
    if a.lift_N_per_m.size != n:
        raise InputError(f"integrate: applied loads have {a.lift_N_per_m.size} points, grid {n}")
    lift, drag, side, pitch, q = (a.lift_N_per_m, a.drag_N_per_m, a.side_N_per_m,
                                  a.pitch_Nm_per_m, a.inertia_N_per_m)
    ax, az, ix, iz = a.load_x_m, a.load_z_m, a.inertia_x_m, a.inertia_z_m
    s, b, nrm, p, rel, dy = _shared_spar_frame(y, sx, sz)

    R, L, l_ab, seg_f = _stacked_lines(y, dy, lift, drag, side, ax, az, q, ix, iz,
                                       a.alpha_deg, a.inertia_alpha_deg)
    # the forces first (no cross product), then every cross product of the case in one call
    # (elementwise: the same bits as one call per product)
    force = _reverse_cumsum(seg_f)
    tol = 1e-12 * max(1.0, float(y[-1] - y[0]))
    # y increases: y <= r_y + tol is the first k stations (one search for every point load)
    ks = (np.searchsorted(y, [pl.position[1] + tol for pl in a.point_loads],
                          side="right").tolist() if a.point_loads else [])
    m = n - 1
    rows = 8 * m + 1 + sum(ks)
    arms, loads = np.empty((rows, 3)), np.empty((rows, 3))
    _fill_segment_rows(arms, loads, R, L, l_ab, p, rel, seg_f, m)
    arms[7 * m:8 * m + 1], loads[7 * m:8 * m + 1] = rel, force
    o = 8 * m + 1
    for pl, k in zip(a.point_loads, ks):
        arms[o:o + k], loads[o:o + k] = pl.position[None, :] - p[:k], pl.force[None, :]
        o += k
    c = _cross(arms, loads)
    seg_m = _segment_moment_rows(c, dy, pitch, m)
    seg_m[:, 3:] = c[6 * m:7 * m]
    sums = _reverse_cumsum(seg_m)
    moment = (sums[:, :3] + sums[:, 3:]) - c[7 * m:8 * m + 1]
    o = 8 * m + 1
    for pl, k in zip(a.point_loads, ks):
        force[:k] += pl.force
        moment[:k] += c[o:o + k]
        o += k

    dot = lambda u, e: np.einsum("ij,ij->i", u, e)  # noqa: E731
    pitch_spar = pitch + (az - sz) * L[0, :, 0] - (ax - sx) * L[0, :, 2]
    eq = (_equilibrium(case, y, applied, p, force, moment,
                       ((R[0], L[0]), (R[1], L[1]), dy)) if check_equilibrium else None)
    return SpanLoads(
        case=case, y=y, lift_N_per_m=lift, drag_N_per_m=drag, pitch_Nm_per_m=pitch_spar,
        inertia_N_per_m=q, shear_N=dot(force, nrm), bending_Nm=dot(moment, b),
        torsion_Nm=dot(moment, s), inplane_shear_N=dot(force, b),
        inplane_bending_Nm=-dot(moment, nrm),
        schrenk_lift_N_per_m=(np.full(n, np.nan) if schrenk_lift_N_per_m is None
                              else _col(schrenk_lift_N_per_m, n, "schrenk_lift_N_per_m")),
        ultimate_factor=float(ultimate_factor), force_N=force, moment_Nm=moment, axis_s=s,
        axis_b=b, axis_n=nrm, spar_points_m=p, applied=applied, trim=trim, equilibrium=eq,
        chord_m=chord_m, output_rows=output_rows)


def ultimate(loads: SpanLoads) -> dict:
    """Ultimate shear, bending, torsion and in-plane values: ultimate_factor x limit."""
    k = loads.ultimate_factor
    return {name: k * getattr(loads, name) for name in
            ("shear_N", "bending_Nm", "torsion_Nm", "inplane_shear_N", "inplane_bending_Nm")}


def _trapz(y, f):
    """Integral over y of f, linear between stations (trapezoid rule, exact)."""
    return float(np.sum(0.5 * np.diff(y) * (f[1:] + f[:-1])))


def equilibrium_residual(loads: SpanLoads) -> Equilibrium:
    """Root equilibrium check, computed independently of the tip-to-root recursion.

    The whole semi-span's loads are summed directly about the root spar point p0: force = the
    integrals of the aerodynamic force (lift, drag at alpha, side force) and of the inertia
    (trapezoid, exact for linear loads) plus the point loads; moment = the integral of
    (r - p0) x f (closed form for products of linear functions) plus the section moments and the
    point-load moments. Compared, as vectors, with the root resultant of the recursion.

    Returns an Equilibrium record: total_vertical_N (z of the summed force), first_moment_Nm (x of
    the summed moment), shear_residual_rel, bending_residual_rel (vector differences relative to
    the size of the loads carried, so a case whose net load is about zero is judged fairly).
    """
    if loads.applied is None or loads.spar_points_m is None or loads.force_N is None:
        raise InputError(f"equilibrium_residual: case {loads.case!r} carries no beam detail")
    return _equilibrium(loads.case, loads.y, loads.applied, loads.spar_points_m, loads.force_N,
                        loads.moment_Nm)


def _equilibrium(case, y, a, spar_points, force_N, moment_Nm, lines=None) -> Equilibrium:
    """equilibrium_residual on the pieces of a SpanLoads (see there). lines: the
    ((aero line, aero force), (inertia line, inertia force), diff(y)) arrays `integrate` has
    built already (the same values this function would build)."""
    p0 = spar_points[0]
    lift, drag, q = a.lift_N_per_m, a.drag_N_per_m, a.inertia_N_per_m
    if lines is None:
        al, bi = np.radians(a.alpha_deg), np.radians(a.inertia_alpha_deg)
        zero = np.zeros_like(y)
        fa = np.column_stack([drag * np.cos(al) - lift * np.sin(al), a.side_N_per_m,
                              lift * np.cos(al) + drag * np.sin(al)])
        fi = np.column_stack([q * np.sin(bi), zero, -q * np.cos(bi)])
        ra = np.column_stack([a.load_x_m, y, a.load_z_m])
        ri = np.column_stack([a.inertia_x_m, y, a.inertia_z_m])
        dy = np.diff(y)
    else:
        (ra, fa), (ri, fi), dy = lines
    ra, ri = ra - p0, ri - p0
    h = dy[:, None]
    force = np.zeros(3)
    moment = np.zeros(3)
    # integral of r x f with r and f linear between stations: h/6 (2 r0 x f0 + r0 x f1 +
    # r1 x f0 + 2 r1 x f1) = h/6 (r0 x (2 f0 + f1) + r1 x (f0 + 2 f1)) per segment (exact);
    # the four cross products in one call
    c = _cross(np.stack([ra[:-1], ra[1:], ri[:-1], ri[1:]]),
               np.stack([2.0 * fa[:-1] + fa[1:], fa[:-1] + 2.0 * fa[1:],
                         2.0 * fi[:-1] + fi[1:], fi[:-1] + 2.0 * fi[1:]]))
    for k, f in enumerate((fa, fi)):
        force += (0.5 * h * (f[1:] + f[:-1])).sum(axis=0)  # trapezoid, exact for linear f
        moment += (h / 6.0 * (c[2 * k] + c[2 * k + 1])).sum(axis=0)
    moment[1] += float((0.5 * dy * (a.pitch_Nm_per_m[1:] + a.pitch_Nm_per_m[:-1])).sum())
    tol = 1e-12 * max(1.0, float(y[-1] - y[0]))
    gross = float((0.5 * dy * (np.abs(lift[1:]) + np.abs(lift[:-1]) + np.abs(q[1:])
                               + np.abs(q[:-1]) + np.abs(drag[1:]) + np.abs(drag[:-1]))).sum())
    for pl in a.point_loads:
        r, fv = pl.position - p0, pl.force
        if r[1] >= -tol:
            force += fv
            moment += _cross(r, fv)
        gross += float(np.abs(fv).sum())
    f0, m0 = force_N[0], moment_Nm[0]
    span = float(y[-1] - y[0]) or 1.0
    f_ref = max(_norm(force), gross, 1e-300)
    m_ref = max(_norm(moment), gross * span, 1e-300)
    return Equilibrium(total_vertical_N=float(force[2]), first_moment_Nm=float(moment[0]),
                       shear_residual_rel=_norm(f0 - force) / f_ref,
                       bending_residual_rel=_norm(m0 - moment) / m_ref)


def _norm(v) -> float:
    """np.linalg.norm of a real vector, its own arithmetic (sqrt of v.v) without its dispatch."""
    return math.sqrt(float(v.dot(v)))


def schrenk(y, chord, semispan, total_lift_half):
    """Schrenk's approximate spanwise lift (NACA TM 948): the mean of a distribution shaped
    like the chord and an elliptic one, each carrying total_lift_half (N) on the semi-span.

    y, chord : (n,) stations (m) covering root to tip; the chord integral uses the trapezoid
    rule on them. semispan : tip y (m). Returns lift per span (N/m) at y.
    """
    y, c = np.asarray(y, float), np.asarray(chord, float)
    area = _trapz(y, c)
    if area <= 0 or semispan <= 0:
        raise InputError("schrenk: chord and semispan must be positive")
    planform = total_lift_half * c / area
    ellipse = 4.0 * total_lift_half / (np.pi * semispan) * np.sqrt(np.clip(1 - (y / semispan) ** 2, 0, None))
    return 0.5 * (planform + ellipse)
