"""Plain-text and JSON summaries the CLI prints (inspect, aero, run). No I/O here."""

from __future__ import annotations

import math

import numpy as np

from geomload import CAUTION
from geomload.loads.envelope import critical_rows as critical_table
from geomload.textsafe import printable


def _f(x, nd=4):
    return float(np.round(float(x), nd))


def planform_dict(planform) -> dict:
    p = planform
    return {
        "area_m2": _f(p.area, 6), "span_m": _f(p.span, 6), "aspect_ratio": _f(p.aspect_ratio),
        "taper": _f(p.taper), "root_chord_m": _f(p.root_chord, 6), "tip_chord_m": _f(p.tip_chord, 6),
        "mac_m": _f(p.mac, 6), "x_mac_le_m": _f(p.x_mac_le, 6), "y_mac_m": _f(p.y_mac, 6),
        "x_mac_quarter_chord_m": _f(p.x_mac_qc, 6),
        "sweep_le_deg": _f(p.sweep_le_deg), "sweep_quarter_chord_deg": _f(p.sweep_qc_deg),
        "dihedral_deg": _f(p.dihedral_deg), "washout_deg": _f(p.washout_deg),
    }


def frame_dict(frame) -> dict:
    return {
        "span_axis": frame.span_axis, "up_axis": frame.up_axis, "full_span": bool(frame.full_span),
        "asymmetry": _f(frame.asymmetry, 6),
        "rotation_wing_from_cad": np.round(frame.rotation, 9).tolist(),
        "origin_cad_m": np.round(frame.origin, 9).tolist(),
    }


def stations_rows(stations) -> list:
    s = stations
    return [
        {"y_m": _f(s.y[i], 6), "x_le_m": _f(s.x_le[i], 6), "z_le_m": _f(s.z_le[i], 6),
         "chord_m": _f(s.chord[i], 6), "twist_deg": _f(s.twist_deg[i]),
         "thickness_ratio": _f(s.thickness_ratio[i]), "x_thickness_c": _f(s.x_thickness[i]),
         "camber_ratio": _f(s.camber_ratio[i], 5), "x_camber_c": _f(s.x_camber[i]),
         "dihedral_deg": _f(s.dihedral_deg[i])}
        for i in range(s.n)
    ]


def inspect_json(mesh, frame, stations, planform) -> dict:
    return {
        "source": mesh.source, "units": mesh.units, "triangles": mesh.n_triangles,
        "frame": frame_dict(frame), "planform": planform_dict(planform),
        "stations": stations_rows(stations),
        "notes": list(mesh.notes) + list(frame.notes) + list(stations.notes),
    }


def inspect_text(mesh, frame, stations, planform) -> str:
    p = planform
    side = "full wing (both sides)" if frame.full_span else "half wing (one side)"
    lines = [
        f"Geometry: {mesh.source}  ({mesh.n_triangles} triangles, read in {mesh.units})",
        f"Frame: span along CAD {frame.span_axis}, up along CAD {frame.up_axis}; {side}"
        + (f"; asymmetry {100 * frame.asymmetry:.2f} % of semi-span" if frame.full_span else ""),
        "",
        "Planform (both sides)",
        f"  S = {p.area:.4f} m^2   b = {p.span:.4f} m   AR = {p.aspect_ratio:.3f}   "
        f"taper = {p.taper:.3f}",
        f"  root chord = {p.root_chord:.4f} m   tip chord = {p.tip_chord:.4f} m",
        f"  MAC = {p.mac:.4f} m at y = {p.y_mac:.4f} m, LE x = {p.x_mac_le:.4f} m",
        f"  sweep LE = {p.sweep_le_deg:.2f} deg   sweep c/4 = {p.sweep_qc_deg:.2f} deg   "
        f"dihedral = {p.dihedral_deg:.2f} deg   washout = {p.washout_deg:.2f} deg",
        "",
        f"{'y_m':>8} {'x_le_m':>8} {'z_le_m':>8} {'chord_m':>8} {'twist':>7} {'t/c':>6} "
        f"{'camber':>7} {'dihed':>6}",
    ]
    s = stations
    for i in range(s.n):
        lines.append(
            f"{s.y[i]:8.4f} {s.x_le[i]:8.4f} {s.z_le[i]:8.4f} {s.chord[i]:8.4f} "
            f"{s.twist_deg[i]:7.2f} {s.thickness_ratio[i]:6.3f} {s.camber_ratio[i]:7.4f} "
            f"{s.dihedral_deg[i]:6.2f}")
    lines.append("(angles in degrees; twist nose-up positive; wing frame x aft, y starboard, z up)")
    return "\n".join(lines)


# the stall-onset keys of `aero --json`, with their units (the same words as the console)
STALL_KEYS = {"first_station_y": "first_station_y_m", "alpha_at_onset": "alpha_at_onset_deg",
              "CL_at_onset": "CL_at_onset", "cl_max": "section_cl_max"}


def aero_json(sol, stall, conv, lattice) -> dict:
    out = {
        "alpha_deg": _f(sol.alpha_deg, 6), "mach": _f(sol.mach, 6),
        "CL": _f(sol.CL, 6), "CDi": _f(sol.CDi, 7), "e": _f(sol.e, 5), "Cm": _f(sol.Cm, 6),
        "CL_alpha_per_rad": _f(sol.CL_alpha_per_rad, 5),
        "alpha_zero_lift_deg": _f(sol.alpha_zero_lift_deg, 5), "x_ac_m": _f(sol.x_ac_m, 6),
        "S_ref_m2": _f(lattice.s_ref, 6), "c_ref_m": _f(lattice.c_ref, 6),
        "b_ref_m": _f(lattice.b_ref, 6),
        "panels": int(lattice.n_span * lattice.n_chord),
        "stall": {STALL_KEYS.get(k, k): (None if v is None else (_f(v, 5) if isinstance(v, (int, float)) else v))
                  for k, v in (stall or {}).items()},
        "strips": [
            {"y_m": _f(sol.y[i], 6), "chord_m": _f(sol.chord[i], 6), "cl": _f(sol.cl[i], 5),
             "cl_c_m": _f(sol.cl_c[i], 6), "cdi": _f(sol.cdi[i], 7), "cm_c4": _f(sol.cm_c4[i], 5)}
            for i in range(sol.y.size)
        ],
    }
    if conv:
        out["convergence"] = _jsonable(conv)
    out["caution"] = CAUTION
    return out


def _jsonable(obj):
    if isinstance(obj, dict):
        return {str(k): _jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_jsonable(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return _jsonable(obj.tolist())
    if isinstance(obj, (np.floating, float)):
        v = float(obj)
        return v if math.isfinite(v) else None
    if isinstance(obj, (np.integer,)):
        return int(obj)
    return obj


# Convergence quantities: (label, unit) for the console (the keys are the library's).
CONVERGENCE_UNITS = {
    "CL": ("lift coefficient CL", "-"),
    "e": ("span efficiency e", "-"),
    "CDi": ("induced drag coefficient CDi", "-"),
    "Cm": ("pitching moment coefficient Cm", "-"),
    "root_bending": ("root bending coefficient C_B = 4 M_root / (q S b)", "-"),
}


def table_text(rows, header=("quantity", "value", "unit"), indent="  ") -> str:
    """Rows of strings as a left/right/left aligned text table (value column right-aligned)."""
    rows = [tuple(str(c) for c in r) for r in rows]
    w = [max(len(str(h)), *(len(r[i]) for r in rows if len(r) > i)) for i, h in enumerate(header)]
    def line(r):
        cells = [r[0].ljust(w[0])] + [r[i].rjust(w[i]) if i == 1 else r[i].ljust(w[i])
                                      for i in range(1, len(header))]
        return (indent + "  ".join(cells)).rstrip()
    out = [line(tuple(header)), indent + "  ".join("-" * x for x in w)]
    for r in rows:
        out.append(line(r) if len(r) == len(header) else indent + r[0])
    return "\n".join(out)


def normal_force_coefficient(CL, CD, alpha_deg) -> float:
    """CN = CL cos(alpha) + CD sin(alpha): the force normal to the wing-frame x axis (root chord
    line) over q S (body axes; 14 CFR 23.321(a) measures the load factor on this force)."""
    a = math.radians(float(alpha_deg))
    return float(CL) * math.cos(a) + float(CD) * math.sin(a)


def aero_text(sol, stall, conv, lattice, planform=None) -> str:
    """The `aero` console text: a quantity / value / unit table (results first, the reference
    geometry last), the stall onset, the convergence check, and the strip table."""
    kind = "half wing with mirror images" if lattice.mirrored else "full span"
    xr = np.asarray(lattice.x_ref, float)
    cn = normal_force_coefficient(sol.CL, sol.CDi, sol.alpha_deg)
    rows = [
        ("lift coefficient CL", f"{sol.CL:.5f}", "-"),
        ("normal-force coefficient CN (CL cos a + CDi sin a)", f"{cn:.5f}", "-"),
        ("induced drag coefficient CDi (Trefftz plane)", f"{sol.CDi:.6f}", "-"),
        ("span efficiency e", f"{sol.e:.4f}" if abs(sol.CL) > 1e-6 else "-", "-"),
        ("pitching moment coefficient Cm (nose-up +)", f"{sol.Cm:.5f}", "-"),
        ("lift slope CL_alpha", f"{sol.CL_alpha_per_rad:.4f}", "1/rad"),
        ("zero-lift angle", f"{sol.alpha_zero_lift_deg:.3f}", "deg"),
        ("aerodynamic centre x_ac", f"{sol.x_ac_m:.4f}", "m"),
        ("angle of attack", f"{sol.alpha_deg:.3f}", "deg"),
        ("Mach number", f"{sol.mach:.3f}", "-"),
        ("reference area S_ref (both sides)", f"{lattice.s_ref:.4f}", "m^2"),
        ("reference chord c_ref (MAC)", f"{lattice.c_ref:.4f}", "m"),
        ("reference span b_ref", f"{lattice.b_ref:.4f}", "m"),
        ("Cm reference point x, y, z (MAC quarter chord)",
         f"{xr[0]:.4f}, {xr[1]:.4f}, {xr[2]:.4f}", "m"),
        ("lattice panels (span x chord, one side)", f"{lattice.n_span} x {lattice.n_chord}", ""),
    ]
    lines = [f"Vortex lattice on the wing ({kind}); wing frame: x aft, y starboard, z up", "",
             table_text(rows)]
    if planform is not None and planform.area > 0:
        d = 100.0 * (lattice.s_ref / planform.area - 1.0)
        lines.append(f"  S_ref is the area of the lattice's straight-edged strips; `inspect` integrates"
                     f" the station chords\n  (S = {planform.area:.4f} m^2): S_ref differs by "
                     f"{d:+.2f} %. Coefficients use S_ref.")
    if stall:
        y0, cl0 = stall.get("first_station_y"), stall.get("CL_at_onset")
        if y0 is not None and cl0 is not None:
            if math.isfinite(y0) and math.isfinite(cl0):
                lines.append(f"Stall onset (section maximum lift coefficient "
                             f"{stall.get('cl_max', float('nan')):.2f}): first at y = {y0:.3f} m, "
                             f"wing CL = {cl0:.4f}, alpha = "
                             f"{stall.get('alpha_at_onset', float('nan')):.2f} deg")
            else:
                lines.append("Stall onset: section cl_max not reached within 45 deg of zero lift")
    if conv:
        levels = conv.get("levels")
        lines.append("Convergence (Richardson extrapolation over three lattice densities"
                     + (": " + ", ".join(f"{lv['n_span']}x{lv['n_chord']}" for lv in levels)
                        if levels else "") + " panels):")
        for key, val in conv.items():
            if isinstance(val, dict) and "extrapolated" in val:
                label, unit = CONVERGENCE_UNITS.get(key, (key, "-"))
                u = f" [{unit}]" if unit != "-" else " [dimensionless]"
                vals = ", ".join(f"{v:.6g}" for v in np.atleast_1d(val.get("values", [])))
                order = val.get("order", float("nan"))
                if math.isfinite(order):
                    lines.append(f"  {label}{u}: values {vals} -> extrapolated "
                                 f"{val['extrapolated']:.6g}, error estimate "
                                 f"{val.get('error', float('nan')):.2g}, observed order {order:.2f}")
                else:
                    lines.append(f"  {label}{u}: values {vals}: not converging monotonically; no "
                                 f"extrapolation (largest change {val.get('error', float('nan')):.2g})")
    lines += ["", "Strips (one side, root to tip; running lift = q x lift per q, N/m at dynamic "
              "pressure q in Pa; lift per q = cl x chord)",
              f"  {'lift per q (N/m/Pa)':>19}  {'span y (m)':>10}  {'chord (m)':>9}  "
              f"{'section cl':>10}  {'section cdi':>11}"]
    for i in range(sol.y.size):
        lines.append(f"  {sol.lift_per_q[i]:19.5f}  {sol.y[i]:10.4f}  {sol.chord[i]:9.4f}  "
                     f"{sol.cl[i]:10.4f}  {sol.cdi[i]:11.6f}")
    lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines)


def _pm(v, nd) -> str:
    """An error estimate in a fixed 6-character cell (more digits when it is small)."""
    v = float(v)
    if not math.isfinite(v):
        return f"{'?':<6}"
    return f"{v:<6.{nd}f}" if v >= 10 ** -nd else f"{v:<6.1e}"


def case_cn(result, c) -> float:
    """The wing's normal-force coefficient of a case: the trimmed force normal to the root chord
    line over q S_ref (what the V-n diagram's maximum is compared with)."""
    t = getattr(c.loads, "trim", None)
    s_ref = float(result.lattice.s_ref)
    if t is not None and t.load_factor_axis == "body" and t.q_pa > 0 and s_ref > 0:
        return float(t.force_required_N) / (float(t.q_pa) * s_ref)
    return normal_force_coefficient(c.aero.CL, c.aero.CDi, c.aero.alpha_deg)


STALL_FLAG = "*"  # beside a case beyond the stall line


PORT_ROW = "port side"


def _root_cells(ld, bars, name, side) -> str:
    """The root shear, bending and torsion cells of one side (with its error estimate)."""
    b = None if bars is None else bars.of(name, side)
    if bars is None:
        return f"{ld.shear_N[0]:10.1f} {ld.bending_Nm[0]:12.1f} {ld.torsion_Nm[0]:12.2f}"
    if b is None:
        return (f"{ld.shear_N[0]:10.1f} {'':8} {ld.bending_Nm[0]:12.1f} {'':8} "
                f"{ld.torsion_Nm[0]:12.2f}")
    return (f"{ld.shear_N[0]:10.1f} +-{_pm(b.root_shear_N, 1)} "
            f"{ld.bending_Nm[0]:12.1f} +-{_pm(b.root_bending_Nm, 1)} "
            f"{ld.torsion_Nm[0]:12.2f} +-{_pm(b.root_torsion_Nm, 2)}")


def run_table(result) -> str:
    """The `run` console summary: root loads per case (with the discretization error estimate
    when the run has one), the critical cases, the caution."""
    bars = getattr(result, "error_bars", None)
    w = (10, 12, 12) if bars is None else (19, 20, 21)
    head = (f"{'case':<32} {'n':>5} {'V_EAS':>6} {'mass':>6} {'alpha':>6} {'CL':>7} {'CN':>7} "
            f"{'root shear':>{w[0]}} {'root bending':>{w[1]}} {'root torsion':>{w[2]}}")
    units = (f"{'':<32} {'-':>5} {'m/s':>6} {'kg':>6} {'deg':>6} {'-':>7} {'-':>7} "
             f"{'N':>{w[0]}} {'N·m':>{w[1]}} {'N·m':>{w[2]}}")
    title = "Limit loads at the wing root (one semi-span)"
    if bars is not None:
        title = "Limit loads at the wing root (one semi-span; +- discretization error estimate)"
    lines = [title, head, units, "-" * len(head)]
    stalled, unsym = 0, False
    for c in result.cases:
        ld = c.loads
        flag = STALL_FLAG if c.stall_warning else " "
        stalled += bool(c.stall_warning)
        name = printable(c.name)
        name = name if len(name) <= 30 else name[:29] + "~"
        row = (f"{name:<30}{flag:>2} {c.load_factor:5.2f} {c.v_eas:6.1f} {c.mass_kg:6.2f} "
               f"{c.aero.alpha_deg:6.2f} {c.aero.CL:7.4f} {case_cn(result, c):7.4f} ")
        lines.append((row + _root_cells(ld, bars, c.name, "starboard")).rstrip())
        if c.port_loads is not None:  # an unsymmetric case: its port side on a row of its own
            unsym = True
            lines.append((f"{'  ' + PORT_ROW:<32} {'':5} {'':6} {'':6} {'':6} {'':7} {'':7} "
                          + _root_cells(c.port_loads, bars, c.name, "port")).rstrip())
    if unsym:
        lines.append(f"An unsymmetric case's first row is its starboard side, the '{PORT_ROW}' "
                     "row below it the port side.")
    if stalled:
        lines.append(f"{STALL_FLAG} {stalled} case(s) beyond the stall line: the wing's normal-force "
                     "coefficient CN exceeds its maximum; their loads are kept in the envelope "
                     "(conservative)")
    if result.envelope is not None:
        lines.append("")
        lines.append("Critical cases (envelope of limit loads at the root; ultimate = "
                     f"{result.case.ultimate_factor:g} x limit)")
        lines.append(f"  {'quantity':<14} {'unit':<5} {'root limit':>11}"
                     + ("" if bars is None else f" {'+- error':<8}")
                     + f" {'root ultimate':>14}  case")
        env_bar = None if bars is None else bars.envelope
        for r in critical_table(result.envelope):
            unit = {"N m": "N·m", "Nm": "N·m"}.get(r["unit"], r["unit"])
            flag = f" {STALL_FLAG}" if any(c.stall_warning and c.name == r["root_case"]
                                           for c in result.cases) else ""
            pm = ""
            if env_bar is not None:
                key = {"shear": "root_shear_N", "bending": "root_bending_Nm",
                       "torsion": "root_torsion_Nm"}.get(str(r["quantity"]).split()[0])
                pm = f" +-{_pm(env_bar.values()[key], 1)}" if key else " " * 9
            lines.append(f"  {r['quantity']:<14} {unit:<5} {r['root_limit']:11.1f}{pm} "
                         f"{r['root_ultimate']:14.1f}  {printable(r['root_case'])}{flag}")
    lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines)
