"""The self-contained HTML report of a run (images embedded as base64; no external files).

Every string that comes from the user (case names, paths, the case file, notes) passes through
html.escape. Pictures are given as a dict name -> PNG bytes, a path to a PNG, or the Exception
that prevented them (shown as "3D render unavailable: <reason>" / "plot unavailable: <reason>").
"""

from __future__ import annotations

import base64
import dataclasses
import datetime as _dt
import math
from pathlib import Path

import numpy as np

from geomload import CAUTION, __version__
from geomload.export import envelope_access as ea
from geomload.export import report_tables as rt
from geomload.export.atomic import write_text_atomic
from geomload.export.html_table import esc, fmt as _fmt, table as _table  # noqa: F401
from geomload.export.report_controls import controls_section
from geomload.export.view3d import view3d_from_run
from geomload.report_text import case_cn

SECTIONS = (("job", "The job"), ("geometry", "Geometry check"),
            ("masses", "Masses and inertia"), ("aerodynamics", "Aerodynamics"),
            ("loads", "Spanwise loads"), ("station_table", "Envelope by station"),
            ("view3d", "3-D check in the browser"), ("vn", "V-n diagram and design speeds"),
            ("critical", "Critical cases and root loads"),
            ("basis", "Assumptions behind the numbers"), ("inputs", "Inputs"),
            ("versions", "Versions and run time"))
RENDER_KEYS = ("lattice_overlay", "surface_dcp", "spar_bending", "stations")
CAPTIONS = {
    "planform": "Planform of the semi-span with the cut stations, lattice and MAC.",
    "lattice_overlay": "CAD surface in the wing frame with the vortex lattice overlaid.",
    "stations": "Cut stations on the CAD surface.",
    "spanwise": "Spanwise cl per case; cl·c/c_ref beside the elliptic and Schrenk loads of the same CL.",
    "cl_alpha": "Wing CL against angle of attack (lattice) with the trimmed cases.",
    "loads": "Shear, bending and torsion along the span: cases (limit) and the envelope, limit and ultimate.",
    "inplane": "In-plane (chordwise) shear and bending along the span, limit: shear positive aft "
               "(+x, the drag direction), bending positive when the tip is pushed aft.",
    "surface_dcp": "CAD surface coloured by delta-Cp (lower minus upper) of the critical case.",
    "spar_bending": "Bending moment as colour on the spar axis (critical case), inside the translucent wing.",
    "vn": "V-n diagram with the design points labelled.",
}
SECTION_IMAGES = {"geometry": ("planform", "lattice_overlay", "stations"),
                  "aerodynamics": ("spanwise", "cl_alpha"),
                  "loads": ("loads", "inplane", "surface_dcp", "spar_bending"), "vn": ("vn",)}

CSS = """body{font-family:sans-serif;max-width:1100px;margin:1em auto;padding:0 1em;color:#222}
h1{font-size:1.5em}h2{border-bottom:2px solid #446;padding-bottom:.2em;margin-top:1.6em}
.caution{background:#fff3cd;border:1px solid #e0b000;padding:.6em;font-weight:bold}
.warn{color:#8a4b00}table{border-collapse:collapse;margin:.6em 0;font-size:.9em}
td,th{border:1px solid #bbb;padding:.2em .5em;text-align:right}th{background:#eef}
td.t,th.t{text-align:left}figure{margin:1em 0}img{max-width:100%;border:1px solid #ddd}
figcaption{font-size:.85em;color:#555}pre{background:#f6f6f6;padding:.6em;overflow-x:auto}
.na{background:#fbe9e9;border:1px dashed #c66;padding:.8em}tr.stall td{background:#fdf0dc}"""


def image_bytes(value) -> bytes:
    if isinstance(value, (bytes, bytearray)):
        return bytes(value)
    return Path(value).read_bytes()


def _figure(name, value) -> str:
    cap = CAPTIONS.get(name, name)
    if value is None:
        return ""
    if isinstance(value, BaseException):
        kind = "3D render" if name in RENDER_KEYS else "plot"
        reason = " ".join(str(value).split()) or type(value).__name__
        return f'<div class="na" id="img-{esc(name)}">{kind} unavailable: {esc(reason)}</div>'
    try:
        data = base64.b64encode(image_bytes(value)).decode("ascii")
    except OSError as exc:
        return f'<div class="na" id="img-{esc(name)}">picture unavailable: {esc(exc)}</div>'
    return (f'<figure id="img-{esc(name)}"><img alt="{esc(cap)}" src="data:image/png;base64,{data}">'
            f"<figcaption>{esc(cap)}</figcaption></figure>")


def _images(images, names) -> str:
    return "".join(_figure(n, images.get(n)) for n in names if n in images)


def _job(run) -> str:
    c0 = getattr(run.case, "title", "") or Path(run.case_path).stem
    out = [f"<p>Case file <code>{esc(run.case_path)}</code>; geometry <code>{esc(run.mesh.source)}</code> "
           f"({run.mesh.n_triangles} triangles, read in {esc(run.mesh.units)}); {run.stations.n} stations; "
           f"{len(run.cases)} flight case(s). Job: <b>{esc(c0)}</b>.</p>",
           f'<p class="caution">{esc(CAUTION)}</p>']
    warns = list(run.warnings) + [f"{c.name}: {c.stall_warning}" for c in run.cases if c.stall_warning]
    warns = list(dict.fromkeys(warns))  # the pipeline may already list the stall warnings
    if warns:
        out.append("<ul>" + "".join(f'<li class="warn">{esc(w)}</li>' for w in warns) + "</ul>")
    return "".join(out)


def _planform_table(p) -> str:
    rows = [("area S (both sides)", p.area, "m²"), ("span b", p.span, "m"),
            ("aspect ratio", p.aspect_ratio, "-"), ("taper c_tip/c_root", p.taper, "-"),
            ("root chord", p.root_chord, "m"), ("tip chord", p.tip_chord, "m"),
            ("MAC", p.mac, "m"), ("MAC leading edge x", p.x_mac_le, "m"), ("MAC y", p.y_mac, "m"),
            ("MAC quarter chord x", p.x_mac_qc, "m"), ("LE sweep", p.sweep_le_deg, "deg"),
            ("c/4 sweep", p.sweep_qc_deg, "deg"), ("dihedral", p.dihedral_deg, "deg"),
            ("washout (root - tip twist)", p.washout_deg, "deg")]
    return _table(("quantity", "value", "unit"), rows, text_cols=(0, 2))


def _aero_table(run) -> str:
    stalled = rt.stalled_names(run)
    rows = [(rt.case_label(c.name, stalled), c.aero.alpha_deg, c.aero.CL, case_cn(run, c),
             c.aero.CDi, rt.e_text(c), c.aero.Cm, c.mach, c.aero.CL_alpha_per_rad)
            for c in run.cases]
    return (_table(("case", "alpha (deg)", "CL", "CN", "CDi", "e", "Cm", "Mach",
                    "CL_alpha (1/rad)"), rows, row_class=_stall_class(stalled))
            + "<p>CN: the wing's normal-force coefficient (force normal to the root chord line "
              "over q S), compared with the V-n diagram's maximum. e (span efficiency) is left "
              "blank (—) where the case carries no lift (n = 0).</p>")


def _stall_class(stalled):
    return lambda k, r: "stall" if str(r[0]).endswith(rt.STALL_MARK) else ""


def _root_table(run) -> str:
    rows, stalled = [], rt.stalled_names(run)
    bars = getattr(run, "error_bars", None)
    for c in run.cases:
        L, uf = c.loads, float(c.loads.ultimate_factor)
        row = [rt.case_label(c.name, stalled), c.v_eas, c.altitude_m, c.load_factor,
               c.aero.alpha_deg, c.aero.CL, L.shear_N[0], L.bending_Nm[0], L.torsion_Nm[0],
               uf * L.shear_N[0], uf * L.bending_Nm[0], uf * L.torsion_Nm[0],
               rt.residual_text(c.residual)]
        b = None if bars is None else bars.of(c.name)
        if bars is not None:  # the error estimate beside each root load
            e = (math.nan,) * 3 if b is None else tuple(b.values().values())
            row[7:7] = [e[0]]
            row[9:9] = [e[1]]
            row[11:11] = [e[2]]
        rows.append(tuple(row))
    head = ["case", "V_EAS (m/s)", "altitude (m)", "n", "alpha (deg)", "CL",
            "root V (N)", "root M (N·m)", "root T (N·m)", "ult. V (N)", "ult. M (N·m)",
            "ult. T (N·m)", "equilibrium"]
    if bars is not None:
        head[7:7] = ["+- V (N)"]
        head[9:9] = ["+- M (N·m)"]
        head[11:11] = ["+- T (N·m)"]
    out = _table(head, rows, text_cols=(0, len(head) - 1), row_class=_stall_class(stalled))
    if bars is not None:
        lat = " and ".join(f"{a} x {b}" for a, b in bars.lattices[1:])
        env = bars.envelope
        out += (f"<p>+-: discretization error estimate of the limit root load (Richardson "
                f"extrapolation from the run's lattice and the coarser {esc(lat)} panels; see the "
                f"warnings for loads that do not converge monotonically). Envelope root extremes: "
                f"shear +-{_fmt(env.root_shear_N, 2)} N, bending +-{_fmt(env.root_bending_Nm, 2)} "
                f"N·m, torsion +-{_fmt(env.root_torsion_Nm, 2)} N·m.</p>")
    return out


def _critical(run) -> str:
    out = ["<h3>Root loads per case (limit and ultimate)</h3>", _root_table(run)]
    if run.envelope is not None:
        st = rt.stalled_names(run)
        rows = [(r["quantity"], r["unit"], r["root_limit"], r["root_ultimate"],
                 rt.case_label(r["root_case"], st), r["peak_limit"], r["peak_y_m"],
                 rt.case_label(r["peak_case"], st)) for r in ea.critical_table(run.envelope)]
        out += ["<h3>Envelope: governing cases</h3>",
                _table(("quantity", "unit", "root limit", "root ultimate", "root case",
                        "peak limit", "peak at y (m)", "peak case"), rows, text_cols=(0, 1, 4, 7))]
    else:
        out.append("<p>No envelope was defined; the cases above are the only ones run.</p>")
    crit = ea.critical_case(run)
    out.append("<p>Critical case (largest root bending magnitude): "
               f"<b>{esc(rt.case_label(crit.name, rt.stalled_names(run)))}</b>.</p>")
    return "".join(out)


def _obj_rows(obj) -> list:
    if obj is None:
        return []
    if dataclasses.is_dataclass(obj):
        items = dataclasses.asdict(obj).items()
    elif isinstance(obj, dict):
        items = obj.items()
    else:
        items = getattr(obj, "__dict__", {}).items()
    return [(k, rt.setting_text(v)) for k, v in items if not str(k).startswith("_")]


def _inputs(run, options) -> str:
    f = run.frame
    frame_rows = [("span axis (CAD)", f.span_axis), ("up axis (CAD)", f.up_axis),
                  ("full span in the file", rt.setting_text(f.full_span)),
                  ("asymmetry / semi-span", rt.setting_text(f.asymmetry)),
                  ("origin (CAD, m)", rt.setting_text(np.round(f.origin, 6))),
                  ("rotation rows (wing x, y, z in CAD)",
                   "; ".join(rt.setting_text(r) for r in np.round(f.rotation, 6)))]
    frame_rows += [("note", n) for n in f.notes]
    imp = [("geometry file", run.mesh.source), ("units", run.mesh.units)]
    imp += [(f"case: {k}", v) for k, v in _obj_rows(getattr(run.case, "geometry", None))]
    imp += [(k, rt.setting_text(v)) for k, v in (options or {}).items()]
    imp += [("mesh note", n) for n in run.mesh.notes] + [("station note", n) for n in run.stations.notes]
    return ("<h3>Case file</h3>" + f"<pre>{esc(run.case_text)}</pre>"
            + "<h3>Import options</h3>" + _table(("option", "value"), imp, text_cols=(0, 1))
            + "<h3>Detected wing frame</h3>" + _table(("item", "value"), frame_rows, text_cols=(0, 1)))


def _versions(run, run_time_s) -> str:
    vers = dict(run.versions) or {"geomload": __version__}
    t = dict(run.timings)
    total = run_time_s if run_time_s is not None else sum(  # a child's time ran meanwhile
        float(v) for k, v in t.items() if "child process" not in k)
    rows = [(k, f"{float(v):.3f}") for k, v in t.items()] + [("total", f"{float(total):.3f}")]
    stamp = _dt.datetime.now().astimezone().isoformat(timespec="seconds")
    return (_table(("package", "version"), list(vers.items()), text_cols=(0, 1))
            + _table(("step", "time (s)"), rows, text_cols=(0,))
            + f"<p>Report written {esc(stamp)} by geomload {esc(__version__)}.</p>")


def _has(case, what) -> bool:
    """Whether the case describes a tail ("tail") or control surfaces ("surfaces")."""
    controls = getattr(case, "controls", None)
    return controls is not None and bool(getattr(controls, what, None))


def _basis(run) -> str:
    """The modelling decisions a reviewer must know to read the numbers (docs/methods_loads.md)."""
    case = run.case
    axis = getattr(case, "load_factor_axis", "body")
    spar = getattr(getattr(case, "spar", None), "chord_fraction", None)
    lat = run.lattice
    items = [
        ("load factor", "the wing's share of the aerodynamic force normal to the longitudinal "
         "axis (root chord line) over W, 14 CFR 23.321(a); inertia along -z" if axis == "body"
         else "lift over W (flight path); inertia opposite the lift"),
        ("aerodynamics", f"vortex lattice, {lat.n_span} x {lat.n_chord} panels "
         f"({'half wing with mirror images' if lat.mirrored else 'full span'}), linear theory, "
         "Prandtl-Glauert compressibility, one factorisation per Mach bin of 0.05"),
        ("load directions", "lift normal to the free stream, drag along it, resolved at the "
         "trimmed alpha; lift tilted with the dihedral surface"),
        ("spar axis", f"{spar:g} of the local chord" if spar is not None else "the given polyline"),
        ("stall", "cases beyond the stall bound are flagged and kept in the envelope "
         "(conservative)"),
        ("ultimate", f"{getattr(case, 'ultimate_factor', 1.5):g} x limit (14 CFR 23.303)"),
        ("tail and c.g.", "each case trimmed in pitch at the forward and aft c.g.: wing + "
         "tail = n W, moments balanced about the c.g.; lift_share is not used"
         if _has(case, "tail") else "no tail given: the wing carries a constant lift share of "
         "n W (add [tail] and [cg] for the balancing tail load)"),
        ("unsymmetric cases", "rolling (23.349) and flaps-down (23.345) cases on the full-span "
         "lattice, each side integrated on its own" if _has(case, "surfaces") else
         "none: no control surfaces given (add [[control_surface]], [rolling], [flaps])"),
        ("not modelled", "the air loads and hinge moments of the control surfaces as separate "
         "parts, ground loads, aeroelastic deformation, viscous stall beyond the flag"),
    ]
    rows = "".join(f"<tr><td class='t'>{esc(k)}</td><td class='t'>{esc(v)}</td></tr>" for k, v in items)
    return (f"<table><tr><th>item</th><th>basis</th></tr>{rows}</table>"
            f"<p class='caution'>{esc(CAUTION)}</p>")


def _masses(run) -> str:
    rows = [(n, m, "" if y is None else y, "" if i is None else i) for n, m, y, i in rt.mass_rows(run)]
    return (_table(("item", "mass, both sides (kg)", "spanwise c.g. |y| (m)",
                    "roll inertia about the symmetry plane (kg·m²)"), rows)
            + "<p>Masses as given in the case file (fuel full); each item's inertia is the sum of "
              "m·y² over both sides; the rest of the aircraft is carried at the symmetry plane.</p>")


def _speeds(run) -> str:
    rows = rt.speed_rows(run)
    if not rows:
        return ""
    return ("<h3>Design speeds</h3>"
            + _table(("mass (kg)", "altitude (m)", "V_S1 (m/s EAS)", "V_A (m/s EAS)",
                      "V_C (m/s EAS)", "V_D (m/s EAS)", "n positive", "n negative"), rows, ()))


def _station_table(run) -> str:
    if run.envelope is None:
        return "<p>No envelope of loads: the case file defines a single case set.</p>"
    out = []
    for title, qs in (("Out-of-plane loads (limit)", ("shear", "bending", "torsion")),
                      ("In-plane (chordwise) loads (limit)", ("inplane_shear", "inplane_bending"))):
        header, rows, text_cols = rt.envelope_rows(run, qs)
        stalled = rt.stalled_names(run)
        cls = (lambda k, r: "stall" if any(str(v).endswith(rt.STALL_MARK) for v in r) else "")
        out += [f"<h3>{esc(title)}</h3>",
                _table(header, rows, text_cols, row_class=cls if stalled else None)]
    out.append("<p>Signs: shear positive up, bending positive tip-up, torsion positive nose-up "
               "about the spar axis; in-plane shear positive aft, in-plane bending positive tip-aft. "
               "Ultimate = limit x the ultimate factor. A case marked “beyond stall” flies above the "
               "section maximum lift coefficient: its loads are kept (conservative) but the "
               "lattice overstates them.</p>")
    return "".join(out)


def _view3d(fragment) -> str:
    if fragment is None:
        return "<p>The 3-D view was not requested.</p>"
    if isinstance(fragment, BaseException):
        reason = " ".join(str(fragment).split()) or type(fragment).__name__
        return f'<div class="na" id="view3d-na">3-D view unavailable: {esc(reason)}</div>'
    return ("<p>Pick a case: the CAD surface is coloured by its pressure jump (lower minus upper, "
            "limit), the spar tube by its bending moment. Works offline in any browser with "
            "WebGL.</p>" + fragment)


def render_html(run, images: dict, options=None, run_time_s=None, view3d=None) -> str:
    """The report as one HTML string (see module docstring).

    view3d : the interactive 3-D fragment (view3d.view3d_from_run), the Exception that stopped
        it (shown as "3-D view unavailable: reason"), or None (not requested).
    """
    images = dict(images or {})
    body = {"job": _job(run),
            "geometry": _images(images, SECTION_IMAGES["geometry"]) + "<h3>Planform summary</h3>"
            + _planform_table(run.planform),
            "masses": _masses(run), "station_table": _station_table(run),
            "view3d": _view3d(view3d),
            "aerodynamics": _images(images, SECTION_IMAGES["aerodynamics"]) + _aero_table(run),
            "loads": _images(images, SECTION_IMAGES["loads"])
            + "<p>Signs: shear positive up, bending positive tip-up, torsion positive nose-up about "
              "the spar axis. Ultimate = limit x ultimate factor (1.5 unless set).</p>",
            "vn": (_images(images, ("vn",)) + _speeds(run) if run.vn is not None and "vn" in images
                   else "<p>No V-n diagram: the case file defines no envelope.</p>"),
            "critical": _critical(run) + controls_section(run), "basis": _basis(run), "inputs": _inputs(run, options),
            "versions": _versions(run, run_time_s)}
    known = {n for names in SECTION_IMAGES.values() for n in names}
    extra = [n for n in images if n not in known]
    if extra:
        body["loads"] += _images(images, extra)
    title = esc(getattr(run.case, "title", "") or Path(run.case_path).stem)
    nav = " · ".join(f'<a href="#{k}">{esc(t)}</a>' for k, t in SECTIONS)
    parts = ["<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>",
             f"<title>geomload report: {title}</title><style>{CSS}</style></head><body>",
             f"<h1>geomload report: {title}</h1><nav>{nav}</nav>"]
    for key, t in SECTIONS:
        parts.append(f'<section id="{key}"><h2>{esc(t)}</h2>{body[key]}</section>')
    parts.append("</body></html>\n")
    return "\n".join(parts)


def view3d_fragment(run, surface=None):
    """The 3-D view fragment of `run`, or the Exception that stopped it (never raises)."""
    try:
        return view3d_from_run(run, surface=surface)
    except Exception as exc:  # noqa: BLE001 - the report says why, the run keeps its outputs
        return exc


def write_report(path, run_result, images: dict, options=None, run_time_s=None, inputs=(),
                 view3d=None):
    """Write report.html atomically; returns its path (view3d: see render_html)."""
    return write_text_atomic(path, render_html(run_result, images, options, run_time_s, view3d),
                             inputs)
