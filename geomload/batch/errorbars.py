"""Discretization error bars on the headline loads: Richardson extrapolation over lattices.

The run's lattice (n_span x n_chord, spacing h) is compared with the same wing on lattices
coarser by REFINE in each direction (2h and 4h). With Q_h, Q_2h, Q_4h a root load of one case:

* observed order p = ln((Q_4h - Q_2h) / (Q_2h - Q_h)) / ln(REFINE), when both differences have
  the same sign (monotone convergence);
* error estimate of Q_h (Richardson): |Q_h - Q_2h| / (REFINE^p' - 1), with p' the observed order
  held between ORDER_MIN and ORDER_MAX (above ORDER_MAX the pre-asymptotic coarse lattices would
  promise too much; below ORDER_MIN the estimate is no longer meaningful);
* not monotone (the differences change sign): the estimate is the larger of the two differences
  and the quantity is flagged.

Method: L. F. Richardson, Phil. Trans. R. Soc. A 210 (1911) 307-357; the observed-order form is
P. J. Roache, "Verification and Validation in Computational Science and Engineering" (1998).
The gust load factors change with the lattice's lift slope, so that share of the discretization
error is included.
"""

from __future__ import annotations

import math

from geomload.batch import _api

REFINE = 2  # each coarser lattice has half the panels in each direction
ORDER_MIN = 0.5  # below this the estimate is capped at REFINE^0.5 - 1 in the denominator
ORDER_MAX = 1.0  # first order assumed at most: conservative for a vortex lattice's loads
MIN_N_SPAN, MIN_N_CHORD = 2, 1  # the smallest lattice the case reader accepts
FLOOR_REL = 1e-5  # smallest estimate, as a fraction of |Q|: a trimmed case's root shear moves by
# ~1e-6 |Q| between lattices without converging (it is fixed by n W up to the small drag and
# side-force shares); 10 ppm is far below any engineering significance and keeps the bound honest
KEYS = (("root_shear_N", "shear_N"), ("root_bending_Nm", "bending_Nm"),
        ("root_torsion_Nm", "torsion_Nm"))


def _roots(result) -> dict:
    return {cr.name: {k: float(getattr(cr.loads, f)[0]) for k, f in KEYS} for cr in result.cases}


def richardson(q_h: float, q_2h: float, q_4h: float | None, refine: float = REFINE) -> tuple:
    """(error estimate of q_h, observed order or nan, monotone?) from three (or two) lattices."""
    d1 = q_h - q_2h
    floor = FLOOR_REL * max(abs(q_h), 1e-300)
    if q_4h is None:
        return max(abs(d1) / (refine ** ORDER_MAX - 1.0), floor), float("nan"), True
    d2 = q_2h - q_4h
    if abs(d1) <= floor and abs(d2) <= floor:
        return floor, float("nan"), True
    if d1 * d2 <= 0.0 or abs(d1) <= floor:
        return max(abs(d1), abs(d2), floor), float("nan"), False
    p = math.log(abs(d2 / d1)) / math.log(refine)
    if p <= 0.0:  # differences growing: not converging
        return max(abs(d1), abs(d2), floor), p, False
    p_used = min(max(p, ORDER_MIN), ORDER_MAX)
    return max(abs(d1) / (refine ** p_used - 1.0), floor), p, True


def estimate_errors(case, result, cache=None) -> dict:
    """Discretization error estimates of every case's root loads.

    Parameters
    ----------
    case : the parsed Case of the run.
    result : its RunResult (on the case's own lattice).
    cache : the pipeline cache (shares the geometry read and cut), when compute supports one.

    Returns
    -------
    dict case name -> {"root_shear_N", "root_bending_Nm", "root_torsion_Nm": absolute error
    estimates (N, N m), "order": {key: observed order or nan}, "not_monotone": tuple of the keys
    whose convergence is not monotone (flagged: the estimate is then the larger difference)}.
    """
    lat = case.lattice
    fine = _roots(result)
    levels = []
    for k in (1, 2):
        ns = max(MIN_N_SPAN, lat.n_span // REFINE ** k)
        nc = max(MIN_N_CHORD, lat.n_chord // REFINE ** k)
        if ns == lat.n_span and nc == lat.n_chord:
            break
        coarse = _api.compute(_api.with_lattice(case, ns, nc), cache=cache)
        levels.append(_roots(coarse))
    out = {}
    for name, q in fine.items():
        est, order, flags = {}, {}, []
        for key, _f in KEYS:
            q2 = levels[0][name][key] if levels and name in levels[0] else None
            q4 = levels[1][name][key] if len(levels) > 1 and name in levels[1] else None
            if q2 is None:
                est[key], order[key] = float("nan"), float("nan")
                flags.append(key)
                continue
            e, p, mono = richardson(q[key], q2, q4)
            est[key], order[key] = e, p
            if not mono:
                flags.append(key)
        out[name] = {**est, "order": order, "not_monotone": tuple(flags)}
    return out


def envelope_errors(estimates: dict) -> dict:
    """Error bound of the envelope's root maxima and minima from the per-case estimates.

    The envelope maximum over cases moves by at most the largest change of any one case
    (max is 1-Lipschitz in the largest-component norm), so its bound is the largest per-case
    estimate of that quantity (N, N m). Keys: root_shear_N, root_bending_Nm, root_torsion_Nm.
    """
    out = {}
    for key, _f in KEYS:
        vals = [e[key] for e in estimates.values() if math.isfinite(e[key])]
        out[key] = max(vals) if vals else float("nan")
    return out
