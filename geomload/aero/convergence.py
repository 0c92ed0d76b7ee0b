"""Discretization error bars on the headline loads: Richardson extrapolation over lattices.

The run's lattice (n_span x n_chord, spacing h) is compared with the same wing on lattices
coarser by REFINE in each direction (2h and 4h). With Q_h, Q_2h, Q_4h a root load of one case:

* observed order p = ln((Q_4h - Q_2h) / (Q_2h - Q_h)) / ln(REFINE), when both differences have
  the same sign (monotone convergence);
* error estimate of Q_h (Richardson): |Q_h - Q_2h| / (REFINE^p' - 1), with p' the observed order
  held between ORDER_MIN and ORDER_MAX (above ORDER_MAX the pre-asymptotic coarse lattices would
  promise too much; below ORDER_MIN the estimate is no longer meaningful);
* not monotone (the differences change sign), or converging faster than ORDER_ASYMPTOTIC_MAX
  (the coarse lattices are not yet in the asymptotic range, so a small last difference can be
  luck): the estimate is the larger of the two differences and the quantity is flagged.

Method: L. F. Richardson, Phil. Trans. R. Soc. A 210 (1911) 307-357; the observed-order form is
P. J. Roache, "Verification and Validation in Computational Science and Engineering" (1998).
The gust load factors change with the lattice's lift slope, so that share of the discretization
error is included.

The coarse runs go through the caller's `compute` (the run pipeline, handed in: this stage does
not import the pipeline) with the run's cache, so the wing is read and cut once and each coarse
lattice is factorised once (and kept for later runs of the same wing).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

REFINE = 2  # each coarser lattice has half the panels in each direction
ORDER_MIN = 0.5  # below this the estimate is capped at REFINE^0.5 - 1 in the denominator
ORDER_MAX = 1.0  # first order assumed at most: conservative for a vortex lattice's loads
ORDER_ASYMPTOTIC_MAX = 2.0  # an observed order above this (the coarser difference more than 4x
# the finer one) is outside the asymptotic range of a vortex lattice's loads (first to second
# order): measured on generated swept and tapered wings, a third lattice then moved torsion by
# up to 10x the Richardson estimate, so the larger difference is used instead
MIN_N_SPAN, MIN_N_CHORD = 2, 1  # the smallest lattice the case reader accepts
FLOOR_REL = 1e-5  # smallest estimate, as a fraction of |Q|: a trimmed case's root shear moves by
# ~1e-6 |Q| between lattices without converging (it is fixed by n W up to the small drag and
# side-force shares); 10 ppm is far below any engineering significance and keeps the bound honest
KEYS = (("root_shear_N", "shear_N"), ("root_bending_Nm", "bending_Nm"),
        ("root_torsion_Nm", "torsion_Nm"))
LABELS = {"root_shear_N": "root shear", "root_bending_Nm": "root bending",
          "root_torsion_Nm": "root torsion"}


@dataclass(frozen=True)
class ErrorBar:
    """Absolute discretization error estimates of the root loads (N, N m; limit loads).

    order: observed order per quantity (nan when not defined), in KEYS order; not_monotone: the
    keys whose convergence is not monotone (the estimate is then the larger difference)."""

    root_shear_N: float
    root_bending_Nm: float
    root_torsion_Nm: float
    order: tuple = (math.nan, math.nan, math.nan)
    not_monotone: tuple = ()

    def values(self) -> dict:
        return {k: float(getattr(self, k)) for k, _f in KEYS}


@dataclass(frozen=True)
class ErrorBars:
    """Error bars of a run: per case (a tuple of (case name, ErrorBar), run order; the
    starboard side of an unsymmetric case), the envelope's root maxima and minima (ErrorBar or
    None), the lattices compared, and the port side of each unsymmetric case (a tuple of
    (case name, ErrorBar))."""

    cases: tuple
    envelope: object = None
    lattices: tuple = ()
    port: tuple = ()

    def of(self, name: str, side: str = "starboard"):
        """The ErrorBar of case `name` (its `side` "starboard" or "port"), or None (an index
        built on first use: tables and reports ask once per case)."""
        index = self.__dict__.get("_index")
        if index is None:
            index = {}
            for s, pairs in (("starboard", self.cases), ("port", self.port)):
                for n, b in pairs:
                    index.setdefault((n, s), b)  # the first, as a search in run order finds
            object.__setattr__(self, "_index", index)
        return index.get((name, "port" if side == "port" else "starboard"))


def _roots(result) -> dict:
    return {cr.name: {k: float(getattr(cr.loads, f)[0]) for k, f in KEYS} for cr in result.cases}


def _side_roots(result) -> dict:
    """{(case name, side): root loads} of every side the loads envelope takes: the starboard
    loads of each case and, for an unsymmetric case, its port loads."""
    out = {}
    for cr in result.cases:
        for side, loads in (("starboard", cr.loads), ("port", cr.port_loads)):
            if loads is not None:
                out[(cr.name, side)] = {k: float(getattr(loads, f)[0]) for k, f in KEYS}
    return out


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
    if p <= 0.0 or p > ORDER_ASYMPTOTIC_MAX:  # growing differences, or pre-asymptotic
        return max(abs(d1), abs(d2), floor), p, False
    p_used = min(max(p, ORDER_MIN), ORDER_MAX)
    return max(abs(d1) / (refine ** p_used - 1.0), floor), p, True


def coarser_lattices(lattice_spec) -> list:
    """The (n_span, n_chord) of the coarser lattices compared (at most two, distinct)."""
    out = []
    for k in (1, 2):
        ns = max(MIN_N_SPAN, lattice_spec.n_span // REFINE ** k)
        nc = max(MIN_N_CHORD, lattice_spec.n_chord // REFINE ** k)
        if (ns, nc) == (lattice_spec.n_span, lattice_spec.n_chord) or (ns, nc) in out:
            break
        out.append((ns, nc))
    return out


def coarse_roots(case, compute, cache=None) -> list:
    """The root loads of every side of every case on each coarser lattice
    (:func:`coarser_lattices`): a list, one {(case name, side): {key: value}} per lattice, from
    ``compute(case, cache=..., detail=False)`` (the run pipeline's). Plain floats: the list can
    come back from another process."""
    lat = case.lattice
    levels = []
    for ns, nc in coarser_lattices(lat):
        coarse_case = dataclasses.replace(case, lattice=dataclasses.replace(lat, n_span=ns,
                                                                            n_chord=nc))
        levels.append(_side_roots(compute(coarse_case, cache=cache, detail=False)))
    return levels


def estimate_errors(case, result, compute, cache=None, levels=None) -> dict:
    """Discretization error estimates of every case's root loads.

    Parameters
    ----------
    case : the parsed Case of the run.
    result : its RunResult (on the case's own lattice).
    compute : callable compute(case, cache=..., detail=False) -> RunResult (the run
        pipeline's; detail=False: only the cases' loads are read).
    cache : the pipeline cache (shares the geometry read and cut and the factorised models).
    levels : :func:`coarse_roots` of the case when already computed (None: computed here).

    Returns
    -------
    dict case name -> {"root_shear_N", "root_bending_Nm", "root_torsion_Nm": absolute error
    estimates (N, N m), "order": {key: observed order or nan}, "not_monotone": tuple of the keys
    whose convergence is not monotone (flagged: the estimate is then the larger difference)}.
    """
    fine = _side_roots(result)
    if levels is None:
        levels = coarse_roots(case, compute, cache)
    sides = {}
    for who, q in fine.items():
        est, order, flags = {}, {}, []
        for key, _f in KEYS:
            q2 = levels[0][who][key] if levels and who in levels[0] else None
            q4 = levels[1][who][key] if len(levels) > 1 and who in levels[1] else None
            if q2 is None:
                est[key], order[key] = float("nan"), float("nan")
                flags.append(key)
                continue
            e, p, mono = richardson(q[key], q2, q4)
            est[key], order[key] = e, p
            if not mono:
                flags.append(key)
        sides[who] = (q, est, order, tuple(flags))
    by_name = {}  # case name -> its sides' (value, estimate), in run order (one pass: linear)
    for (name, _side), (v, e, _o, _f) in sides.items():
        by_name.setdefault(name, []).append((v, e))
    out = {}
    for (name, side), (q, est, order, flags) in sides.items():
        if side == "starboard":
            out[name] = {**est, "order": order, "not_monotone": flags,
                         "sides": tuple(by_name[name])}
    return out


def envelope_errors(estimates: dict) -> dict:
    """Error bound of the envelope's root maxima and minima from the per-case estimates.

    With each side's root value v_i known to within its estimate e_i, the true envelope maximum
    lies in [max(v_i - e_i), max(v_i + e_i)] and the minimum in [min(v_i - e_i),
    min(v_i + e_i)] (interval arithmetic: max and min are monotone in each argument). The bound
    of a quantity is the larger distance from the reported maximum or minimum to the ends of
    its interval: only the cases that could take over the governing role count, not the error
    of a case far below the maximum. Without per-side values (``"sides"``), it is the largest
    per-case estimate (max is 1-Lipschitz in the largest-component norm). Keys: root_shear_N,
    root_bending_Nm, root_torsion_Nm (N, N m).
    """
    out = {}
    for key, _f in KEYS:
        pairs = [(v[key], e[key]) for est in estimates.values() for v, e in est.get("sides", ())
                 if math.isfinite(e[key])]
        if pairs and len(pairs) == sum(len(est.get("sides", ())) for est in estimates.values()):
            vals = [v for v, _e in pairs]
            hi, lo = max(vals), min(vals)
            out[key] = max(max(v + e for v, e in pairs) - hi, hi - max(v - e for v, e in pairs),
                           lo - min(v - e for v, e in pairs), min(v + e for v, e in pairs) - lo)
            continue
        vals = [e[key] for e in estimates.values() if math.isfinite(e[key])]
        out[key] = max(vals) if vals else float("nan")
    return out


def error_bars(case, result, compute, cache=None, levels=None) -> tuple:
    """(ErrorBars, warnings): the run's error bars and one summarising warning line per
    quantity that does not converge monotonically in some cases (not one per case). levels:
    :func:`coarse_roots` when already computed (None: computed here)."""
    est = estimate_errors(case, result, compute, cache, levels)
    bars = tuple((name, ErrorBar(*(e[k] for k, _f in KEYS),
                                 order=tuple(e["order"][k] for k, _f in KEYS),
                                 not_monotone=tuple(e["not_monotone"])))
                 for name, e in est.items())
    port = tuple((name, ErrorBar(*(e[k] for k, _f in KEYS)))
                 for name, est_ in est.items() for _v, e in est_["sides"][1:])
    env = envelope_errors(est)
    flagged = {k: [n for n, e in est.items() if k in e["not_monotone"]] for k, _f in KEYS}
    env_bar = ErrorBar(*(env[k] for k, _f in KEYS),
                       not_monotone=tuple(k for k, _f in KEYS if flagged[k]))
    warnings = []
    for k, names in flagged.items():
        if names:
            who = ", ".join(names[:3]) + (f" and {len(names) - 3} more" if len(names) > 3 else "")
            warnings.append(f"error estimate: the {LABELS[k]} of {len(names)} of {len(est)} "
                            f"case(s) ({who}) does not converge steadily (monotonically, at most "
                            f"second order) over the lattices {case.lattice.n_span}x"
                            f"{case.lattice.n_chord} and coarser; its error bar is the larger "
                            "difference between them, not an extrapolation (refine the lattice "
                            "to check)")
    lattices = ((case.lattice.n_span, case.lattice.n_chord), *coarser_lattices(case.lattice))
    return ErrorBars(cases=bars, envelope=env_bar, lattices=lattices, port=port), warnings


__all__ = ["ErrorBar", "ErrorBars", "richardson", "estimate_errors", "envelope_errors",
           "error_bars", "coarse_roots", "coarser_lattices", "REFINE", "KEYS"]
