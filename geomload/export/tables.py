"""CSV and JSON tables of a run, written atomically.

Every CSV starts with '#' comment lines (units, sign convention, frame, source, case, the
caution), then one row of unit-carrying column names, then the data: the caution is the first
thing a reader sees. Read back with `read_csv_table`, pandas.read_csv(path, comment="#"), or
numpy.genfromtxt(path, delimiter=",", names=True, skip_header=comment_lines(path)). Text cells
never hold ',', '"' or '#' (replaced), so no quoting is needed; a text cell beginning with
=, +, - or @ gets a leading ' so that spreadsheets show it as text instead of running it as a
formula (numbers are never changed; textsafe.csv_text_cell). summary.json is strict JSON: a
number that is not finite is written as null.
"""

from __future__ import annotations

import math

import numpy as np

from geomload import CAUTION, __version__
from geomload import textsafe
from geomload.export import envelope_access as ea
from geomload.export.atomic import write_text_atomic
from geomload.export.json_text import dumps_safe

SIGNS = ("sign convention: shear positive up (net upward load outboard of the station); "
         "bending positive tip-up (upper skin in compression); torsion positive nose-up about "
         "the spar axis")
FRAME = ("wing frame: x aft along the root chord, y along the span (starboard positive, "
         "y = 0 on the symmetry plane), z up; metres")


_CLEANED: dict = {}   # header line -> its cleaned text: most lines repeat in every table
CLEANED_KEPT = 256    # lines kept (the constant lines of a run's tables come first)


def _clean(s) -> str:
    """One line of text safe inside a '#' comment line."""
    if type(s) is str:
        hit = _CLEANED.get(s)
        if hit is not None:
            return hit
    t = str(s)
    if not (t.isascii() and t.isprintable()):  # printable ASCII has nothing to escape
        t = textsafe.printable(t)
    t = " ".join(t.split())
    if type(s) is str and len(_CLEANED) < CLEANED_KEPT:
        _CLEANED[s] = t
    return t


def _csv(header_lines, columns: dict) -> str:
    """The '#' comment lines (units, frame, source, caution), then the column-names row, then the
    rows (floats to 10 significant digits). Read back with `read_csv_table`, or e.g.
    numpy.genfromtxt(path, delimiter=",", names=True, skip_header=<number of # lines>)."""
    names = list(columns)
    cols = [np.asarray(columns[k]) for k in names]
    n = max((c.size for c in cols), default=0)
    out = [f"# {_clean(h)}" for h in header_lines] + [",".join(names)]
    text = [c.dtype == object or c.dtype.kind in "US" for c in cols]
    if not any(text):  # all numbers: one %-format per row ('%.10g' is the same as f'{v:.10g}')
        a = np.full((n, len(cols)), np.nan)
        for j, c in enumerate(cols):
            a[: c.size, j] = np.asarray(c, float).ravel()
        # the whole table in one %-format: the row format repeated once per row, applied to
        # the values in row order (the same '%.10g' of each value as a per-row format)
        row = ",".join(["%.10g"] * len(cols)) + "\n"
        return "\n".join(out) + "\n" + (row * n) % tuple(a.ravel().tolist())
    for i in range(n):
        row = []
        for c, is_text in zip(cols, text):
            v = c[i] if i < c.size else float("nan")
            row.append(_cell_text(v) if is_text else f"{float(v):.10g}")
        out.append(",".join(row))
    return "\n".join(out) + "\n"


def _only(columns: dict, rows) -> dict:
    """The columns at the reported rows (a boolean mask: the rib stations, or every row)."""
    rows = np.asarray(rows, bool)
    return {k: np.asarray(v)[rows] for k, v in columns.items()}


def _cell_text(v) -> str:
    return textsafe.csv_text_cell(v)


_FRAME_LINES: list = [None, None]  # the last frame's values and its lines (one per run)


def frame_lines(frame) -> list:
    lines = [FRAME]
    if frame is not None:
        r = np.asarray(frame.rotation)
        o = np.asarray(frame.origin)
        key = (frame.span_axis, frame.up_axis, bool(frame.full_span), r.dtype.str, r.shape,
               r.tobytes(), o.dtype.str, o.shape, o.tobytes())  # every value the lines print
        if key == _FRAME_LINES[0]:
            return list(_FRAME_LINES[1])
        lines.append(f"CAD axes: span {frame.span_axis}, up {frame.up_axis}; full span "
                     f"{bool(frame.full_span)}; p_wing = R (p_cad - origin), origin "
                     f"{np.round(frame.origin, 6).tolist()} m, R rows {np.round(r, 6).tolist()}")
        _FRAME_LINES[:] = [key, list(lines)]
    return lines


def write_stations_csv(path, stations, frame=None, source="", units="", inputs=()):
    """Write the cut stations (wing frame, one semi-span, root to tip).

    Columns: y_m, x_le_m, z_le_m, x_te_m, z_te_m, chord_m, twist_deg (nose-up positive),
    thickness_ratio, x_thickness_c, camber_ratio, x_camber_c, dihedral_deg, x_qc_m, z_qc_m, and
    s_m (arc length along the span line) when the span line turns (`wing_summary.is_nonplanar`).
    """
    s = stations
    head = [f"geomload {__version__} stations", CAUTION, f"source: {source} (read in {units})",
            *frame_lines(frame), f"semispan_m: {s.semispan:.10g}",
            "units: metres and degrees; ratios are fractions of the local chord"]
    head += [f"note: {n}" for n in s.notes]
    cols = {"y_m": s.y, "x_le_m": s.x_le, "z_le_m": s.z_le, "x_te_m": s.x_te, "z_te_m": s.z_te,
            "chord_m": s.chord, "twist_deg": s.twist_deg, "thickness_ratio": s.thickness_ratio,
            "x_thickness_c": s.x_thickness, "camber_ratio": s.camber_ratio,
            "x_camber_c": s.x_camber, "dihedral_deg": s.dihedral_deg, "x_qc_m": s.x_qc,
            "z_qc_m": s.z_qc}
    from geomload.geometry.wing_summary import is_nonplanar

    if is_nonplanar(s):  # a turning span line: the arc length along it, from y = 0
        cols["s_m"] = s.s_m
        head.append("s_m: arc length along the quarter-chord span line (y-z plane) from y = 0")
    return write_text_atomic(path, _csv(head, cols), inputs)


def case_line(cr) -> str:
    a = cr.aero
    return (f"case: {cr.name}; v_eas {cr.v_eas:.4g} m/s; v_tas {cr.v_tas:.4g} m/s; altitude "
            f"{cr.altitude_m:.6g} m; Mach {cr.mach:.4g}; q {cr.q_pa:.6g} Pa; n {cr.load_factor:.4g}; "
            f"mass {cr.mass_kg:.6g} kg; lift share {cr.lift_share:.4g}; alpha {a.alpha_deg:.4f} deg; "
            f"CL {a.CL:.5f}" + _case_extra(cr))


def _case_extra(cr) -> str:
    """The kind, control state and tail load of a case (empty for a plain symmetric case)."""
    out = "" if getattr(cr, "kind", "symmetric") == "symmetric" else f"; kind {cr.kind}"
    ctl = getattr(cr, "control", None)
    if ctl is not None:
        out += "".join(f"; {n} {d:.4g} deg" for n, d in ctl.deflections_deg)
        if ctl.pb_2V:
            out += f"; steady roll pb/2V {ctl.pb_2V:.4g}"
        if ctl.side_factors != (1.0, 1.0):
            out += (f"; airload factors starboard {ctl.side_factors[0]:g}, port "
                    f"{ctl.side_factors[1]:g}")
    if getattr(cr, "tail_load_N", None) is not None:
        out += (f"; tail load {cr.tail_load_N:.6g} N (up +) at c.g. x {cr.x_cg_m:.4g} m; wing "
                f"normal force {cr.wing_normal_force_N:.6g} N (both sides)")
    return out


def write_loads_csv(path, case_result, caution=CAUTION, frame=None, inputs=()):
    """Write the spanwise limit and ultimate loads of one case (one semi-span, root to tip).

    Units: N/m for distributed loads, N m/m for distributed moments, N for shear, N m for
    bending and torsion. Ultimate = limit x ultimate_factor (1.5, 14 CFR 23.303).
    """
    L, cr = case_result.loads, case_result
    uf = float(L.ultimate_factor)
    head = [f"geomload {__version__} spanwise loads (limit; *_ult_* = ultimate)", caution,
            case_line(cr), f"ultimate factor: {uf:g} (ultimate = factor x limit)", SIGNS,
            *frame_lines(frame),
            "units: y m; distributed loads N/m; distributed moments N m/m; shear N; moments N m",
            "inertia_N_per_m: n g m'(y), positive down (weight relief); pitch about the spar axis",
            "cl_c_m: lift_N_per_m / q (section lift coefficient x chord, m); cl: cl_c_m / chord_m"]
    if cr.stall_warning:
        head.append(f"warning: {cr.stall_warning}")
    head.append(f"equilibrium residual (relative): {cr.residual:.3g}")
    q = float(cr.q_pa)
    chord = (np.asarray(L.chord_m, float) if L.chord_m is not None
             else np.interp(L.y, cr.aero.y, cr.aero.chord))
    cl_c = np.asarray(L.lift_N_per_m, float) / q if q > 0 else np.full(np.size(L.y), np.nan)
    with np.errstate(divide="ignore", invalid="ignore"):
        cl = np.where(chord > 0, cl_c / np.where(chord > 0, chord, 1.0), np.nan)
    cols = {"y_m": L.y, "lift_N_per_m": L.lift_N_per_m, "cl_c_m": cl_c, "cl": cl,
            "chord_m": chord, "drag_N_per_m": L.drag_N_per_m,
            "pitch_Nm_per_m": L.pitch_Nm_per_m, "inertia_N_per_m": L.inertia_N_per_m,
            "schrenk_lift_N_per_m": L.schrenk_lift_N_per_m, "shear_N": L.shear_N,
            "bending_Nm": L.bending_Nm, "torsion_Nm": L.torsion_Nm,
            "inplane_shear_N": L.inplane_shear_N, "inplane_bending_Nm": L.inplane_bending_Nm,
            "shear_ult_N": uf * np.asarray(L.shear_N), "bending_ult_Nm": uf * np.asarray(L.bending_Nm),
            "torsion_ult_Nm": uf * np.asarray(L.torsion_Nm),
            "inplane_shear_ult_N": uf * np.asarray(L.inplane_shear_N),
            "inplane_bending_ult_Nm": uf * np.asarray(L.inplane_bending_Nm)}
    rows = L.rows
    if not rows.all():
        head.append("rows: the structure's stations (spar.rib_y_m); loads integrated on the full "
                    "grid, two rows where a load step falls on a station")
    text = _numeric_csv(head, cols, rows, shared=("y_m", "chord_m"))
    return write_text_atomic(path, text if text is not None else _csv(head, _only(cols, rows)),
                             inputs)


_TEMPLATES: dict = {}  # (names, shared, their exact bytes) -> the rows with those written
TEMPLATES_KEPT = 16    # the few load grids of one run


def _numeric_csv(header_lines, columns: dict, rows, shared=()):
    """The text `_csv(header_lines, _only(columns, rows))` gives when every column is a 1-D
    numeric array over the rows of the mask `rows`; None otherwise (then use those two).

    shared : names of columns that many tables of a run hold with the same values (the load
    grid's y and chord): their cells are written once into a row template, kept by the
    columns' exact bytes and reused, and only the other cells are formatted per table. Every
    cell is '%.10g' of the same float64 either way, so the text is the same.
    """
    rows = np.asarray(rows, bool)
    m = int(np.count_nonzero(rows))
    every = m == rows.size
    names = list(columns)
    table = np.empty((len(names), m))
    for j, v in enumerate(columns.values()):
        a = np.asarray(v)
        if a.ndim != 1 or a.shape[0] != rows.size or a.dtype.kind not in "fiu":
            return None
        table[j] = a if every else a[rows]
    keep = [j for j, k in enumerate(names) if k not in shared]
    fixed = [j for j, k in enumerate(names) if k in shared]
    out = "\n".join([f"# {_clean(h)}" for h in header_lines] + [",".join(names)]) + "\n"
    if not fixed or not m:
        row = ",".join(["%.10g"] * len(names)) + "\n"
        return out + (row * m) % tuple(table.T.ravel().tolist())
    shared_t = table[fixed]
    key = (tuple(names), tuple(fixed), m, shared_t.tobytes())
    template = _TEMPLATES.get(key)
    if template is None:
        # the shared cells written, every other cell left as '%.10g' for the table's values
        row = ",".join(["%.10g" if j in fixed else "%%.10g" for j in range(len(names))]) + "\n"
        template = (row * m) % tuple(shared_t.T.ravel().tolist())
        if len(_TEMPLATES) >= TEMPLATES_KEPT:
            _TEMPLATES.clear()
        _TEMPLATES[key] = template
    return out + template % tuple(table[keep].T.ravel().tolist())


def write_envelope_csv(path, envelope, inputs=()):
    """Per station: max/min shear, bending, torsion (limit and ultimate) and the governing case."""
    e = ea.table(envelope)
    head = [f"geomload {__version__} envelope of loads over all cases (one semi-span)", CAUTION,
            SIGNS, FRAME, "limit loads; *_ult_* = ultimate (each case's ultimate factor x limit, "
            "1.5 by 14 CFR 23.303 unless set); units: y m, shear N, moments N m",
            "*_case columns: the case that governs the value before it", textsafe.CSV_HEADER_NOTE]
    cols = {"y_m": e["y"]}
    for q, u in e["quantities"]:
        for side in ("max", "min"):
            cols[f"{q}_{side}_{u}"] = e[f"{q}_{side}"]
            cols[f"{q}_{side}_case"] = np.array(e[f"{q}_{side}_case"], dtype=object)
            cols[f"{q}_{side}_ult_{u}"] = e[f"{q}_{side}_ult"]
            cols[f"{q}_{side}_ult_case"] = np.array(e[f"{q}_{side}_ult_case"], dtype=object)
    if not np.all(e["rows"]):
        head.append("rows: the structure's stations (spar.rib_y_m)")
    return write_text_atomic(path, _csv(head, _only(cols, e["rows"])), inputs)


def write_vn_csv(path, vn, inputs=()):
    """The V-n diagram(s): every curve as (curve, v_eas_m_s, n) rows, then the named points."""
    diag, kind, name, v, n = [], [], [], [], []
    for k, d in enumerate(ea.vn_diagrams(vn)):
        title = ea.vn_title(d, k)
        for cname, (vv, nn) in ea.vn_curves(d).items():
            for a, b in zip(np.ravel(vv), np.ravel(nn)):
                diag.append(title), kind.append("curve"), name.append(cname), v.append(a), n.append(b)
        for p in ea.vn_points(d):
            diag.append(title), kind.append("point"), name.append(p["name"])
            v.append(p["v_eas"]), n.append(p["n"])
    head = [f"geomload {__version__} V-n diagram (limit load factors)", CAUTION,
            "units: v_eas_m_s equivalent airspeed m/s; n load factor (-)",
            "kind: 'curve' rows trace a boundary line, 'point' rows are the named design points",
            "diagram: the flying mass and altitude of the diagram", textsafe.CSV_HEADER_NOTE]
    cols = {"diagram": np.array(diag, dtype=object), "kind": np.array(kind, dtype=object), "name": np.array(name, dtype=object),
            "v_eas_m_s": np.array(v, float), "n": np.array(n, float)}
    return write_text_atomic(path, _csv(head, cols), inputs)


def _num(x):
    x = float(x)
    return x if math.isfinite(x) else None


def _error_estimate(run, name, side="starboard"):
    """{root_shear_N, root_bending_Nm, root_torsion_Nm} absolute discretization error estimates
    (limit loads, N and N m) of case `name` (its `side`; None: the envelope's root extremes),
    or None when the run has none (geomload.aero.convergence; `ErrorBars.of` answers from an
    index, so a run's thousands of cases each look theirs up cheaply)."""
    bars = getattr(run, "error_bars", None)
    bar = None if bars is None else (bars.envelope if name is None else bars.of(name, side))
    if bar is None:
        return None
    return {**{k: _num(v) for k, v in bar.values().items()},
            "not_monotone": list(bar.not_monotone)}


def planform_keys(p) -> dict:
    """The planform under the key names of `inspect --json` (each carries its unit)."""
    return {"area_m2": _num(p.area), "span_m": _num(p.span), "aspect_ratio": _num(p.aspect_ratio),
            "taper": _num(p.taper), "root_chord_m": _num(p.root_chord),
            "tip_chord_m": _num(p.tip_chord), "mac_m": _num(p.mac), "x_mac_le_m": _num(p.x_mac_le),
            "y_mac_m": _num(p.y_mac), "x_mac_quarter_chord_m": _num(p.x_mac_qc),
            "sweep_le_deg": _num(p.sweep_le_deg), "sweep_quarter_chord_deg": _num(p.sweep_qc_deg),
            "dihedral_deg": _num(p.dihedral_deg), "washout_deg": _num(p.washout_deg)}


def summary(run) -> dict:
    """The run summary as plain JSON-able data (SI units; key names carry them)."""
    p = run.planform
    cases = []
    for cr in run.cases:
        a, L = cr.aero, cr.loads
        y = np.asarray(L.y)
        total = float(np.sum(0.5 * (L.lift_N_per_m[1:] + L.lift_N_per_m[:-1]) * np.diff(y)))
        uf = float(L.ultimate_factor)
        cases.append({
            "name": cr.name, "v_eas_m_s": _num(cr.v_eas), "v_tas_m_s": _num(cr.v_tas),
            "altitude_m": _num(cr.altitude_m), "mach": _num(cr.mach), "q_pa": _num(cr.q_pa),
            "load_factor": _num(cr.load_factor), "mass_kg": _num(cr.mass_kg),
            "lift_share": _num(cr.lift_share), "alpha_deg": _num(a.alpha_deg), "CL": _num(a.CL),
            "CDi": _num(a.CDi), "e": _num(a.e), "Cm": _num(a.Cm),
            "semispan_lift_N": _num(total), "total_lift_N": _num(2 * total),
            "root_shear_N": _num(L.shear_N[0]), "root_bending_Nm": _num(L.bending_Nm[0]),
            "root_torsion_Nm": _num(L.torsion_Nm[0]), "ultimate_factor": uf,
            "root_shear_ult_N": _num(uf * L.shear_N[0]),
            "root_bending_ult_Nm": _num(uf * L.bending_Nm[0]),
            "root_torsion_ult_Nm": _num(uf * L.torsion_Nm[0]),
            "equilibrium_residual": _num(cr.residual), "stall_warning": cr.stall_warning,
            "error_estimate": _error_estimate(run, cr.name), **_case_kind(cr, run)})
    out = {"caution": CAUTION, "geomload_version": __version__, "case_file": run.case_path,
           "title": str(getattr(run.case, "title", "") or ""),
           "geometry": {"source": run.mesh.source, "units": run.mesh.units,
                        "triangles": run.mesh.n_triangles, "stations": run.stations.n,
                        "span_axis": run.frame.span_axis, "up_axis": run.frame.up_axis,
                        "full_span": bool(run.frame.full_span),
                        "asymmetry": _num(run.frame.asymmetry)},
           "frame": _frame_keys(run),
           "planform": planform_keys(p), "cases": cases, "envelope": None,
           "warnings": list(run.warnings), "timings_s": dict(run.timings),
           "versions": dict(run.versions),
           "null_means": "a number that is not finite (NaN or infinite) is written as null"}
    if getattr(run, "wing", None) is not None:  # gross and exposed planform, span on the surface
        from geomload.geometry.wing_summary import gross_and_exposed

        out["planform_gross_exposed"] = gross_and_exposed(run.wing)
    if run.envelope is not None:
        e = ea.table(run.envelope)
        r = np.flatnonzero(np.asarray(e["rows"], bool))  # the reported rows (rib stations or all)
        env = {"y_m": e["y"][r].tolist()}
        for q, u in e["quantities"]:
            for side in ("max", "min"):
                env[f"{q}_{side}_{u}"] = [_num(e[f"{q}_{side}"][i]) for i in r]
                env[f"{q}_{side}_case"] = [str(e[f"{q}_{side}_case"][i]) for i in r]
                env[f"{q}_{side}_ult_{u}"] = [_num(e[f"{q}_{side}_ult"][i]) for i in r]
                env[f"{q}_{side}_ult_case"] = [str(e[f"{q}_{side}_ult_case"][i]) for i in r]
        env["critical"] = ea.critical_table(run.envelope)
        env["error_estimate"] = _error_estimate(run, None)
        out["envelope"] = env
    return out


def _frame_keys(run) -> dict:
    """The wing frame in CAD terms under the key names of `inspect --json`'s "frame" table."""
    from geomload.config.frame_text import frame_in_cad
    from geomload.report_text import frame_dict

    return {**frame_dict(run.frame), **frame_in_cad(run.frame, run.mesh)}


def _case_kind(cr, run=None) -> dict:
    """kind; per-side root loads of an unsymmetric case (with their error estimates when the
    run has them); tail load and wing normal force with a tail; the control state (deflections,
    steady roll, rolling derivatives)."""
    out = {"kind": cr.kind}
    if cr.port_loads is not None:
        sides = {}
        for side, L in cr.sides:
            uf = float(L.ultimate_factor)
            sides[side] = {
                "root_shear_N": _num(L.shear_N[0]), "root_bending_Nm": _num(L.bending_Nm[0]),
                "root_torsion_Nm": _num(L.torsion_Nm[0]),
                "root_shear_ult_N": _num(uf * L.shear_N[0]),
                "root_bending_ult_Nm": _num(uf * L.bending_Nm[0]),
                "root_torsion_ult_Nm": _num(uf * L.torsion_Nm[0]),
                "equilibrium_residual": _num(L.equilibrium.residual),
                "error_estimate": None if run is None else _error_estimate(run, cr.name, side)}
        out["sides"] = sides
    if cr.tail_load_N is not None:
        out["tail_load_N"] = _num(cr.tail_load_N)
        out["x_cg_m"] = _num(cr.x_cg_m)
    if cr.wing_normal_force_N is not None:
        out["wing_normal_force_N"] = _num(cr.wing_normal_force_N)
    c = cr.control
    if c is not None:
        out["control"] = {
            "rule": c.rule, "deflections_deg": {n: _num(d) for n, d in c.deflections_deg},
            "pb_2V": _num(c.pb_2V), "CL": _num(c.CL), "Cl_delta_a_per_rad": _num(c.Cl_delta_per_rad),
            "Cl_p": _num(c.Cl_p), "Cl_aileron": _num(c.Cl_aileron),
            "Cl_damping": _num(c.Cl_damping), "Cl_airload": _num(c.Cl_airload),
            "aileron_torsion_rule_Nm": _num(c.aileron_torsion_rule_Nm),
            "aileron_torsion_lattice_Nm": _num(c.aileron_torsion_lattice_Nm),
            "airload_factors": {"starboard": _num(c.side_factors[0]),
                                "port": _num(c.side_factors[1])}}
    return out


def write_summary_json(path, run_result, inputs=(), more_warnings=()):
    """Write summary.json (see `summary`); more_warnings: the export stage's own warnings (the
    structural hand-off's), listed after the run's."""
    data = summary(run_result)
    data["warnings"] += [w for w in more_warnings if w not in data["warnings"]]
    # the text of json.dumps(textsafe.json_safe(data), indent=1, allow_nan=False,
    # ensure_ascii=False), byte for byte, in one faster pass (json_text)
    return write_text_atomic(path, dumps_safe(data, indent=1) + "\n", inputs)


def write_aero_csv(path, solution, source="", inputs=()):
    """Write the spanwise vortex-lattice result of one solve (per unit dynamic pressure).

    Columns: y_m, chord_m, cl, cl_c_m, cm_c4, cdi, lift_per_q_m (N/m per Pa), drag_per_q_m,
    moment_per_q_m2 (N m/m per Pa, about the strip quarter chord, nose-up), x_cp_m.
    """
    s = solution
    head = [f"geomload {__version__} vortex-lattice spanwise result", CAUTION,
            f"source: {source}", FRAME,
            f"alpha {s.alpha_deg:.4f} deg; Mach {s.mach:.4g}; CL {s.CL:.5f}; CDi {s.CDi:.6f}; "
            f"e {s.e:.4f}; Cm {s.Cm:.5f}; CL_alpha {s.CL_alpha_per_rad:.4f} /rad; "
            f"alpha_0L {s.alpha_zero_lift_deg:.3f} deg",
            "per unit dynamic pressure: multiply *_per_q_* by q (Pa) for N/m and N m/m; "
            "cm_c4 and moment nose-up positive"]
    cols = {"y_m": s.y, "chord_m": s.chord, "cl": s.cl, "cl_c_m": s.cl_c, "cm_c4": s.cm_c4,
            "cdi": s.cdi, "lift_per_q_m": s.lift_per_q, "drag_per_q_m": s.drag_per_q,
            "moment_per_q_m2": s.moment_per_q, "x_cp_m": s.x_cp}
    return write_text_atomic(path, _csv(head, cols), inputs)


def comment_lines(path) -> int:
    """Number of leading '#' lines of a geomload CSV."""
    n = 0
    with open(path, encoding="utf-8") as fh:
        for line in fh:
            if not line.startswith("#"):
                break
            n += 1
    return n


def read_csv_table(path) -> dict:
    """A geomload CSV as {column: numpy array} (numbers as float, text as str)."""
    import csv

    with open(path, encoding="utf-8", newline="") as fh:
        rows = [r for r in csv.reader(line for line in fh if not line.startswith("#"))]
    names, data = rows[0], rows[1:]
    out = {}
    for j, name in enumerate(names):
        col = [r[j] for r in data]
        try:
            out[name] = np.array([float(v) for v in col])
        except ValueError:
            out[name] = np.array(col, dtype=str)
    return out
