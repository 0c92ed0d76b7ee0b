"""Report tables built from a RunResult: mass and inertia breakdown, design speeds per V-n
diagram, the envelope by station, and the display rules for case settings and numbers.

Every function returns plain rows (tuples of str / float); report.py turns them into HTML.
"""

from __future__ import annotations

import math

import numpy as np

from geomload.export import envelope_access as ea

# Beam equilibrium residuals (relative) below this are round-off, shown as "balanced": sums of
# a few hundred terms of O(1) relative size in float64 stay well under 1e-9 (common practice,
# no source); anything larger is printed as a number.
BALANCED_TOL = 1e-9
# |CL| below this: the span efficiency e = CL^2 / (pi A CDi) is 0/0 and not shown.
E_MIN_CL = 1e-6
STALL_MARK = " (beyond stall)"
# fine grid for integrating a distributed mass along one semi-span
MASS_GRID = 401


def setting_text(v) -> str:
    """A case setting as a reader writes it: yes / no / not set, numbers without float noise."""
    if v is None:
        return "not set"
    if isinstance(v, (bool, np.bool_)):
        return "yes" if v else "no"
    if isinstance(v, (float, np.floating)):
        return f"{float(v):.6g}"
    if isinstance(v, (tuple, list, np.ndarray)):
        items = list(np.asarray(v).ravel()) if isinstance(v, np.ndarray) else list(v)
        return "—" if not items else ", ".join(setting_text(x) for x in items)
    return str(v)


def residual_text(r: float) -> str:
    """'balanced (|residual| < 1e-09)' for round-off, else the number."""
    r = float(r)
    if math.isfinite(r) and abs(r) < BALANCED_TOL:
        return f"balanced (|residual| < {BALANCED_TOL:.0e})"
    return f"{r:.3g}"


def e_text(cr) -> str:
    """Span efficiency, or '—' where no lift makes it undefined (n = 0 cases)."""
    if abs(float(cr.aero.CL)) < E_MIN_CL or abs(float(cr.load_factor)) < E_MIN_CL:
        return "—"
    return f"{float(cr.aero.e):.4g}"


def stalled_names(run) -> set:
    return {c.name for c in run.cases if c.stall_warning}


def case_label(name, stalled: set) -> str:
    """A governing case name, flagged when that case is beyond the stall bound."""
    return f"{name}{STALL_MARK}" if name in stalled else str(name)


# ------------------------------------------------------------------------ mass and inertia
def mass_rows(run) -> list:
    """(item, mass kg both sides, spanwise c.g. |y| m, roll inertia about x kg m^2) per item.

    Roll inertia: sum of m y^2 of both sides about the symmetry plane (the wing items only); the
    rest of the aircraft (gross minus the wing items) is listed without a position.
    """
    from geomload.loads.masses import tank_mass_per_span, wing_mass_per_span

    case = run.case
    st = run.stations
    y = np.linspace(float(st.y[0]), float(st.y[-1]), MASS_GRID)
    c = np.interp(y, st.y, st.chord)
    rows, wing_total = [], 0.0

    def dist(name, kg_per_m):
        m = float(np.trapezoid(kg_per_m, y))
        if m <= 0:
            return None
        yc = float(np.trapezoid(kg_per_m * y, y)) / m
        ixx = 2.0 * float(np.trapezoid(kg_per_m * y**2, y))
        return (name, 2.0 * m, yc, ixx)

    if case.wing_mass is not None:
        r = dist("wing structure", wing_mass_per_span(y, c, case.wing_mass))
        if r:
            rows.append(r)
    for t in case.fuel_tanks:
        m = tank_mass_per_span(y, c, t, 1.0)
        if m is None:  # narrower than the grid: a lumped mass at the tank middle
            ym = 0.5 * (t.y_from_m + t.y_to_m)
            rows.append((f"fuel: {t.name}", float(t.mass_kg), ym, float(t.mass_kg) * ym**2))
        else:
            r = dist(f"fuel: {t.name}", m)
            if r:
                rows.append(r)
    for p in case.point_masses:
        yp = abs(float(p.position[1]))
        rows.append((f"point mass: {p.name} (each side {float(p.mass):.4g} kg)",
                     2.0 * float(p.mass), yp, 2.0 * float(p.mass) * yp**2))
    wing_total = sum(r[1] for r in rows)
    gross = float(case.aircraft.gross_mass_kg)
    out = list(rows)
    out.append(("rest of the aircraft (gross minus the items above)", gross - wing_total, None, None))
    out.append(("gross mass", gross, None, sum(r[3] for r in rows)))
    return out


# ------------------------------------------------------------------------ design speeds
def speed_rows(run) -> list:
    """(mass kg, altitude m, V_S1, V_A, V_C, V_D (EAS m/s), n_pos, n_neg) per V-n diagram."""
    rows = []
    for d in ea.vn_diagrams(run.vn):
        s = d.speeds
        rows.append((d.mass_kg, d.altitude_m, d.v_stall_pos, s.v_maneuver, s.v_cruise, s.v_dive,
                     d.n_pos, d.n_neg))
    return rows


# ------------------------------------------------------------------------ envelope by station
ENV_COLUMNS = (("shear", "N", "shear V"), ("bending", "Nm", "bending M"),
               ("torsion", "Nm", "torsion T"), ("inplane_shear", "N", "in-plane shear"),
               ("inplane_bending", "Nm", "in-plane bending"))


def envelope_rows(run, quantities=("shear", "bending", "torsion")) -> tuple:
    """Header and rows of the envelope by station (limit max / min with governing case)."""
    env = ea.table(run.envelope)
    stalled = stalled_names(run)
    rows_mask = np.asarray(env["rows"], bool) if env["rows"] is not None else None
    units = {q: ("N" if u == "N" else "N·m") for q, u, _ in ENV_COLUMNS}
    names = {q: lbl for q, _, lbl in ENV_COLUMNS}
    header = ["y (m)"]
    for q in quantities:
        header += [f"{names[q]} max ({units[q]})", "case", f"{names[q]} min ({units[q]})", "case"]
    rows = []
    for i, yi in enumerate(env["y"]):
        if rows_mask is not None and not rows_mask[i]:
            continue
        r = [float(yi)]
        for q in quantities:
            r += [float(env[f"{q}_max"][i]), case_label(env[f"{q}_max_case"][i], stalled),
                  float(env[f"{q}_min"][i]), case_label(env[f"{q}_min_case"][i], stalled)]
        rows.append(tuple(r))
    text_cols = tuple(2 + 2 * k for k in range(2 * len(quantities)))
    return header, rows, text_cols
