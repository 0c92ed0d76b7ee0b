"""Report section of the unsymmetric (rolling) and flaps-down cases, the balancing tail loads
and which kind of case governs each station. Empty for a run with symmetric cases only and no
tail."""

from __future__ import annotations

import numpy as np

from geomload.export.html_table import table as _table

QUANTITIES = (("shear_N", "shear"), ("bending_Nm", "bending"), ("torsion_Nm", "torsion"))


def _kind_of(run) -> dict:
    kinds = {}
    for c in run.cases:
        for side, s in c.sides:
            kinds[s.case] = c.kind + ("" if side == "semispan" else f" ({side})")
    return kinds


def controls_section(run) -> str:
    """HTML: the rolling and flaps-down cases per side, the tail loads per case, the rolling
    derivatives and steady roll, and the kind of case governing each station."""
    unsym = [c for c in run.cases if c.port_loads is not None]
    tail = [c for c in run.cases if c.tail_load_N is not None]
    if not unsym and not tail:
        return ""
    out = []
    if unsym:
        rows = []
        for c in unsym:
            ctl = c.control
            d = ", ".join(f"{n} {v:.3g}" for n, v in ctl.deflections_deg) if ctl else ""
            for side, s in c.sides:
                rows.append((c.name, side, c.kind, c.v_eas, c.load_factor, d or "-",
                             ctl.pb_2V if ctl else 0.0, float(s.shear_N[0]),
                             float(s.bending_Nm[0]), float(s.torsion_Nm[0])))
        out.append("<h3>Rolling and flaps-down cases, each side on its own (limit, root)</h3>"
                   "<p>Rolling: 14 CFR 23.349 simplified (airload factors per side) and with "
                   "the aileron deflections of 23.455 at 2/3 of the positive maneuvering load "
                   "factor, both at the initial state (zero roll rate) and in steady roll; flaps down: 23.345 (pre-2017 texts, from memory). "
                   "Inertia relief on both sides. Aileron + is port trailing edge down (rolls "
                   "right wing down).</p>")
        out.append(_table(("case", "side", "kind", "V EAS m/s", "n", "deflection deg",
                           "pb/2V", "shear N", "bending N m", "torsion N m"), rows,
                          text_cols=(0, 1, 2, 5)))
        roll = [c for c in unsym if c.control is not None and np.isfinite(c.control.Cl_p)]
        if roll:
            out.append("<h3>Roll derivatives and steady roll (lattice, per rad and per unit "
                       "pb/2V)</h3>")
            out.append(_table(("case", "Cl_delta_a /rad", "Cl_p", "pb/2V", "Cl aileron",
                               "Cl damping", "Cl of the side airloads"),
                              [(c.name, c.control.Cl_delta_per_rad, c.control.Cl_p,
                                c.control.pb_2V, c.control.Cl_aileron, c.control.Cl_damping,
                                c.control.Cl_airload) for c in roll]))
    if tail:
        out.append("<h3>Balancing tail load (wing normal force + tail load = n W)</h3>")
        out.append(_table(("case", "kind", "c.g. x m", "n", "n W N", "wing normal force N",
                           "tail load N (up +)"),
                          [(c.name, c.kind, c.x_cg_m, c.load_factor,
                            c.load_factor * c.mass_kg * 9.80665, c.wing_normal_force_N,
                            c.tail_load_N) for c in tail], text_cols=(0, 1)))
        if any(c.control is not None and c.control.side_factors != (1.0, 1.0) for c in tail):
            out.append("<p>The simplified rolling cases (23.349(a)(1)) carry the airload of the "
                       "trimmed condition A times each side's factor (100 % / 75 % or 60 %): "
                       "their wing normal force is below n W by that reduction, by the rule; "
                       "the tail load is that of the trimmed condition A.</p>")
    env = run.envelope
    if env is not None:
        kinds = _kind_of(run)
        idx = np.nonzero(env.rows)[0]
        rows = []
        for i in idx:
            r = [float(env.y[i])]
            for q, _ in QUANTITIES:
                r += [kinds.get(env.max_case[q][i], "?"), kinds.get(env.min_case[q][i], "?")]
            rows.append(tuple(r))
        head = ["y m"] + [f"{t} {s}" for _, t in QUANTITIES for s in ("max", "min")]
        out.append("<h3>Kind of case governing each station (limit envelope)</h3>")
        out.append(_table(head, rows, text_cols=tuple(range(1, 7))))
    return "\n".join(out)
