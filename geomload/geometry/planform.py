"""Planform summary of the whole wing from one semi-span of stations (`Planform`).

Definitions (e.g. Raymer, *Aircraft Design: A Conceptual Approach*, ch. 4; Anderson,
*Fundamentals of Aerodynamics*, ch. 5): S = 2 int_0^s c dy (projected on x-y), b = 2 s,
AR = b^2 / S, taper = c_tip / c_root, MAC = (2/S) int_0^s c^2 dy, y_MAC = (2/S) int c y dy,
x_LE,MAC = (2/S) int c x_LE dy. Chord, LE and twist are taken piecewise linear between
stations and extrapolated linearly to the root plane (y = 0) and to the geometric tip (y = s);
products of two piecewise-linear functions are integrated exactly. An exposed wing's
carried-through part (y < y_root) keeps its root station's twist, as the lattice does. Sweep and dihedral are the
slopes of least-squares lines through the LE / quarter-chord points.
"""

from __future__ import annotations

import numpy as np

from ..errors import GeometryError
from .records import Planform, Stations


def _extend(y, f, y0, y1):
    """Values of f on [y0] + y + [y1], extrapolating linearly from the end pairs."""
    a = f[0] + (f[1] - f[0]) * (y0 - y[0]) / (y[1] - y[0])
    b = f[-1] + (f[-1] - f[-2]) * (y1 - y[-1]) / (y[-1] - y[-2])
    return np.concatenate([[a], f, [b]])


def _int_prod(y, f, g):
    """Exact integral of the product of two piecewise-linear functions sampled at y."""
    h = np.diff(y)
    return float(np.sum(h / 6.0 * (2 * f[:-1] * g[:-1] + f[:-1] * g[1:] + f[1:] * g[:-1] + 2 * f[1:] * g[1:])))


def _slope_deg(y, v):
    return float(np.degrees(np.arctan(np.polyfit(y, v, 1)[0])))


def summarize(stations: Stations, y_root: float = 0.0) -> Planform:
    """Planform of the whole wing (both sides by symmetry) from the starboard `Stations`.

    Lengths m, area m^2, angles deg. Raises GeometryError with fewer than 3 stations.
    y_root: the root of the geometry (an exposed wing's root off y = 0); the gross planform is
    carried through to y = 0 by extending the leading and trailing edges, the exposed one
    starts at y_root. span_surface is measured along the quarter-chord line in y-z.
    """
    st = stations
    if st.n < 3:
        raise GeometryError(f"planform needs at least 3 stations (got {st.n})")
    y_all = np.asarray(st.y, float)
    s = float(st.semispan)
    # a winglet's stations stand one above the other at nearly the same y: the projected
    # planform uses the stations that advance in y (by more than 0.01 % of the semi-span)
    keep = np.concatenate([[True], np.diff(np.maximum.accumulate(y_all)) > 1e-4 * s])
    keep &= y_all >= np.maximum.accumulate(y_all)
    if keep.sum() >= 3 and not keep.all():
        import dataclasses

        st = dataclasses.replace(st, **{k: np.asarray(getattr(st, k))[keep] for k in (
            "y", "x_le", "z_le", "x_te", "z_te", "chord", "twist_deg", "thickness_ratio",
            "x_thickness", "camber_ratio", "x_camber", "dihedral_deg", "camber_z", "s_m")})
        surface_extra = float(np.asarray(stations.s_m)[-1] - np.asarray(st.s_m)[-1])
    else:
        surface_extra = 0.0
    if stations.s_tip_m is not None:  # the line's own length to the tip, beyond the stations
        surface_extra += float(stations.s_tip_m - np.asarray(stations.s_m)[-1])
    y = np.asarray(st.y, float)
    y0 = 0.0 if y[0] > 0 else y[0]
    y1 = s if s > y[-1] else y[-1]
    ye = np.concatenate([[y0], y, [y1]])
    c = np.maximum(_extend(y, st.chord, y0, y1), 0.0)
    xle = _extend(y, st.x_le, y0, y1)
    tw = _extend(y, st.twist_deg, y0, y1)
    if y_root > 0.0:  # the carried-through part keeps the exposed root's incidence (as the lattice)
        tw[0] = float(st.twist_deg[0])
    one = np.ones_like(ye)
    half_area = _int_prod(ye, c, one)
    area = 2.0 * half_area
    if not area > 0:
        raise GeometryError("planform area is zero")
    span = 2.0 * s
    mac = 2.0 / area * _int_prod(ye, c, c)
    y_mac = 2.0 / area * _int_prod(ye, c, ye)
    x_mac_le = 2.0 / area * _int_prod(ye, c, xle)
    zqc = _extend(y, st.z_qc, y0, y1)
    if stations.s_tip_m is not None:
        span_surface = 2.0 * (float(np.asarray(st.s_m)[-1]) + surface_extra)
    else:
        span_surface = 2.0 * (float(np.hypot(np.diff(ye), np.diff(zqc)).sum()) + surface_extra)
    if y_root > 0.0:  # exposed wing: the part outboard of its own root
        ys = np.concatenate([[y_root], y[y > y_root], [y1]])
        cs = np.maximum(np.interp(ys, ye, c), 0.0)
        exposed_area = 2.0 * _int_prod(ys, cs, np.ones_like(ys))
        exposed_span = 2.0 * (s - y_root)
    else:
        exposed_area, exposed_span = area, span
    return Planform(span_surface=span_surface, exposed_area=exposed_area, exposed_span=exposed_span,
                    area=area, span=span, aspect_ratio=span**2 / area, taper=float(c[-1] / c[0]),
                    root_chord=float(c[0]), tip_chord=float(c[-1]), mac=mac, x_mac_le=x_mac_le,
                    y_mac=y_mac, sweep_le_deg=_slope_deg(y, st.x_le), sweep_qc_deg=_slope_deg(y, st.x_qc),
                    dihedral_deg=_slope_deg(y, st.z_qc), washout_deg=float(tw[0] - tw[-1]))
