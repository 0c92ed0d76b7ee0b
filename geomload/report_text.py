"""Plain-text and JSON summaries the CLI prints (inspect, aero, run). No I/O here."""

from __future__ import annotations

import math

import numpy as np

from geomload import CAUTION
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
         "thickness_ratio": _f(s.thickness_ratio[i]), "x_thickness": _f(s.x_thickness[i]),
         "camber_ratio": _f(s.camber_ratio[i], 5), "x_camber": _f(s.x_camber[i]),
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


def aero_json(sol, stall, conv, lattice) -> dict:
    out = {
        "alpha_deg": _f(sol.alpha_deg, 6), "mach": _f(sol.mach, 6),
        "CL": _f(sol.CL, 6), "CDi": _f(sol.CDi, 7), "e": _f(sol.e, 5), "Cm": _f(sol.Cm, 6),
        "CL_alpha_per_rad": _f(sol.CL_alpha_per_rad, 5),
        "alpha_zero_lift_deg": _f(sol.alpha_zero_lift_deg, 5), "x_ac_m": _f(sol.x_ac_m, 6),
        "S_ref_m2": _f(lattice.s_ref, 6), "c_ref_m": _f(lattice.c_ref, 6),
        "b_ref_m": _f(lattice.b_ref, 6),
        "panels": int(lattice.n_span * lattice.n_chord),
        "stall": {k: (None if v is None else (_f(v, 5) if isinstance(v, (int, float)) else v))
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


def aero_text(sol, stall, conv, lattice) -> str:
    lines = [
        f"Vortex lattice: {lattice.n_span} x {lattice.n_chord} panels "
        f"({'half wing with mirror images' if lattice.mirrored else 'full span'}), "
        f"S_ref = {lattice.s_ref:.4f} m^2, c_ref = {lattice.c_ref:.4f} m, b = {lattice.b_ref:.4f} m",
        f"alpha = {sol.alpha_deg:.3f} deg   Mach = {sol.mach:.3f}",
        f"CL = {sol.CL:.5f}   CDi = {sol.CDi:.6f}   e = {sol.e:.4f}   Cm = {sol.Cm:.5f}",
        f"CL_alpha = {sol.CL_alpha_per_rad:.4f} /rad   alpha(L=0) = {sol.alpha_zero_lift_deg:.3f} deg"
        f"   x_ac = {sol.x_ac_m:.4f} m",
    ]
    if stall:
        y0, cl0 = stall.get("first_station_y"), stall.get("CL_at_onset")
        if y0 is not None and cl0 is not None:
            if math.isfinite(y0) and math.isfinite(cl0):
                lines.append(f"Stall onset (section cl_max {stall.get('cl_max', float('nan')):.2f}):"
                             f" first at y = {y0:.3f} m, wing CL = {cl0:.4f}, alpha = "
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
                vals = ", ".join(f"{v:.6g}" for v in np.atleast_1d(val.get("values", [])))
                order = val.get("order", float("nan"))
                if math.isfinite(order):
                    lines.append(f"  {key}: values {vals} -> extrapolated {val['extrapolated']:.6g}"
                                 f", error estimate {val.get('error', float('nan')):.2g}, observed "
                                 f"order {order:.2f}")
                else:
                    lines.append(f"  {key}: values {vals}: not converging monotonically; no "
                                 f"extrapolation (largest change {val.get('error', float('nan')):.2g})")
    lines.append("")
    lines.append(f"{'y_m':>8} {'chord_m':>8} {'cl':>8} {'cl_c_m':>9} {'cdi':>9}")
    for i in range(sol.y.size):
        lines.append(f"{sol.y[i]:8.4f} {sol.chord[i]:8.4f} {sol.cl[i]:8.4f} {sol.cl_c[i]:9.5f} "
                     f"{sol.cdi[i]:9.6f}")
    lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines)


def _pm(v, nd) -> str:
    """An error estimate in a fixed 6-character cell (more digits when it is small)."""
    v = float(v)
    if not math.isfinite(v):
        return f"{'?':<6}"
    return f"{v:<6.{nd}f}" if v >= 10 ** -nd else f"{v:<6.1e}"


def run_table(result) -> str:
    head = (f"{'case':<32} {'alpha_deg':>9} {'CL':>7} {'root_shear_N':>13} "
            f"{'root_bending_Nm':>16} {'root_torsion_Nm':>16}")
    lines = ["Limit loads at the wing root (one semi-span)", head, "-" * len(head)]
    bars = getattr(result, "error_bars", None)
    if bars is not None:  # the discretization error estimate beside each root load
        head = (f"{'case':<32} {'alpha_deg':>9} {'CL':>7} {'root_shear_N':>21} "
                f"{'root_bending_Nm':>22} {'root_torsion_Nm':>20}")
        lines = ["Limit loads at the wing root (one semi-span; +- discretization error estimate)",
                 head, "-" * len(head)]
    for c in result.cases:
        ld = c.loads
        b = None if bars is None else bars.of(c.name)
        if b is None:
            lines.append(f"{printable(c.name)[:32]:<32} {c.aero.alpha_deg:9.3f} {c.aero.CL:7.4f} "
                         f"{ld.shear_N[0]:13.1f} {ld.bending_Nm[0]:16.1f} {ld.torsion_Nm[0]:16.2f}")
        else:
            lines.append(f"{printable(c.name)[:32]:<32} {c.aero.alpha_deg:9.3f} {c.aero.CL:7.4f} "
                         f"{ld.shear_N[0]:13.1f} +-{_pm(b.root_shear_N, 1)} "
                         f"{ld.bending_Nm[0]:14.1f} +-{_pm(b.root_bending_Nm, 1)} "
                         f"{ld.torsion_Nm[0]:12.2f} +-{_pm(b.root_torsion_Nm, 2)}".rstrip())
    if result.envelope is not None:
        from geomload.loads.envelope import critical_rows as critical_table

        lines.append("")
        lines.append("Critical cases (envelope of limit loads at the root; ultimate = "
                     f"{result.case.ultimate_factor:g} x limit)")
        lines.append(f"  {'quantity':<14} {'root limit':>12} {'root ultimate':>14}  case"
                     if bars is None else f"  {'quantity':<14} {'root limit':>12} "
                     f"{'+- error':<8} {'root ultimate':>14}  case")
        env_bar = None if bars is None else bars.envelope
        for r in critical_table(result.envelope):
            unit = r["unit"]
            pm = ""
            if env_bar is not None:
                key = {"shear": "root_shear_N", "bending": "root_bending_Nm",
                       "torsion": "root_torsion_Nm"}.get(str(r["quantity"]).split()[0])
                pm = f" +-{_pm(env_bar.values()[key], 1)}" if key else " " * 9
            lines.append(f"  {r['quantity']:<14} {r['root_limit']:12.1f}{pm} "
                         f"{r['root_ultimate']:14.1f}  {printable(r['root_case'])}  ({unit})")
    n_beyond = sum(1 for c in result.cases if c.stall_warning)
    if n_beyond:
        lines.append(f"{n_beyond} case(s) lie beyond the stall line (see the warnings above); "
                     "their loads are kept in the envelope, which is conservative")
    lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines)
