"""Lattice refinement study: how far a result still moves with the lattice density.

Three lattices (n_span, n_chord) x ratio^k, k = 0, 1, 2, and Richardson extrapolation
(L. F. Richardson, Phil. Trans. R. Soc. A 210, 1911) of CL, e and the root bending coefficient.
The run's own error bars on the loads are :mod:`geomload.aero.convergence`.
"""

from __future__ import annotations

import math

import numpy as np

from geomload.aero.lattice import build_lattice
from geomload.aero.solve import AeroModel, _alpha_rad
from geomload.errors import AeroError
from geomload.aero.records import AeroSolution, Lattice
from geomload.geometry.records import Stations


def root_bending_coefficient(sol: AeroSolution, lattice: Lattice) -> float:
    """Root bending coefficient C_B = int_0^s cl c y dy / (S/2 * s) (starboard strips).

    For an elliptic load C_B = CL * 4 / (3 pi) (centroid 4s/(3 pi); beam statics)."""
    right = sol.y > 0
    m = np.sum(sol.cl_c[right] * sol.y[right] * lattice.strip_width[right])
    return float(m / (0.25 * lattice.s_ref * lattice.b_ref))


def _richardson(f, r: float) -> dict:
    f1, f2, f3 = (float(v) for v in f)
    d12, d23 = f1 - f2, f2 - f3
    order, ext = float("nan"), f3
    if d12 * d23 > 0 and abs(d23) < abs(d12):
        order = math.log(abs(d12) / abs(d23)) / math.log(r)
        ext = f3 - d23 / (r**order - 1.0)
        err = abs(ext - f3)
    else:
        err = max(abs(d12), abs(d23))
    return dict(values=[f1, f2, f3], extrapolated=ext, order=order, error=err)


def check_convergence(stations: Stations, alpha_deg: float, mach: float = 0.0,
                      n_span: int = 12, n_chord: int = 4, ratio: int = 2) -> dict:
    """Discretisation error by solving at three lattice densities (n_span, n_chord) * ratio^k.

    Richardson extrapolation (L. F. Richardson, Phil. Trans. R. Soc. A 210, 1911; observed order
    p = ln((f1 - f2)/(f2 - f3)) / ln r, f_ext = f3 - (f2 - f3)/(r^p - 1)) of CL, e and the root
    bending coefficient (see root_bending_coefficient). When the three values do not converge
    monotonically the order is nan, f_ext is the finest value and the error the largest change.
    """
    _alpha_rad(alpha_deg)
    if isinstance(ratio, bool) or not isinstance(ratio, int) or ratio < 2:
        raise AeroError(f"ratio: refinement ratio must be an integer >= 2, got {ratio!r}")
    levels, cl, e, cb = [], [], [], []
    for k in range(3):
        ns, nc = n_span * ratio**k, n_chord * ratio**k
        lat = build_lattice(stations, n_span=ns, n_chord=nc)
        sol = AeroModel(lat, mach).solve(alpha_deg)
        levels.append(dict(n_span=ns, n_chord=nc, panels=ns * nc))
        cl.append(sol.CL), e.append(sol.e), cb.append(root_bending_coefficient(sol, lat))
    return dict(levels=levels, ratio=ratio, CL=_richardson(cl, ratio), e=_richardson(e, ratio),
                root_bending=_richardson(cb, ratio))


__all__ = ["check_convergence", "root_bending_coefficient"]
