"""Interactive 3-D view for the HTML report: one self-contained HTML fragment, no network request.

The CAD surface (decimated for display) is coloured by the chosen case's pressure jump, the spar is
a tube coloured by that case's bending moment and stays visible through the translucent wing; a
case selector, mouse rotate / zoom / pan, and two colour bars beside (never over) the picture.

Drawing uses three.js 0.160.1 (MIT, vendored from the npm registry under ``assets/three/``:
``three.module.min.js`` and ``OrbitControls.js``, unmodified). The library text is embedded in
the fragment as inert ``<script type="text/plain">`` blocks and loaded as ES modules from blob
URLs made in the page, so the HTML file needs nothing but itself. The data are embedded as
base64 little-endian arrays (float32 points, uint16/uint32 indices, uint16-quantised fields).

In the page, the fragment's root element gets ``data-drawn="1"`` once drawn (or ``data-error``
with the reason, also shown in the page), ``data-shown`` = the case on display, and
``element.gl3.project(x, y, z)`` -> canvas pixel of a wing-frame point (used by the tests).
"""

from __future__ import annotations

import base64
import html
import itertools
import json
import math
from pathlib import Path

import numpy as np

from geomload import CAUTION
from geomload.export import envelope_access as ea
from geomload.export import vtk as gvtk
from geomload.export.decimate import Decimated, decimate, decimated_field  # noqa: F401

THREE_VERSION = "0.160.1"  # npm package `three`, files build/three.module.min.js, OrbitControls.js
ASSET_DIR = Path(__file__).resolve().parent / "assets" / "three"
# Display-surface budget: 40 000 triangles is smooth at report size and keeps a report of a few
# dozen cases well under 10 MB (about 0.1 MB per case of quantised field, 0.6 MB of geometry).
MAX_TRIANGLES = 40_000
# Colour tables: perceptually uniform matplotlib maps, sampled; one per quantity so the spar
# reads apart from the surface behind it.
SURFACE_CMAP, SPAR_CMAP, TABLE_SIZE = "viridis", "plasma", 64
WING_OPACITY = 0.45  # low enough that the opaque spar tube reads through both skins
Q_MAX = 65534  # uint16 quantisation levels; 65535 marks a missing (non-finite) value
# A field whose spread is below this fraction of its magnitude is drawn as constant: colour
# differences below it would be float noise, not loads.
FLAT_REL = 1e-6
SNAP_REL = 1e-6
PREFIXES = ((1e6, "M"), (1e3, "k"), (1.0, ""))

_ids = itertools.count(1)


def nice_scale(lo: float, hi: float, unit: str, max_intervals: int = 6) -> dict:
    """A colour-bar scale that encloses [lo, hi] (SI) with round ticks in a readable unit.

    The unit gets a k or M prefix when the larger magnitude reaches 1e3 or 1e6; the tick step is
    the smallest of 1, 2, 2.5 or 5 x 10^k giving at most `max_intervals` intervals; labels carry
    exactly the decimals of the step (no float noise); a bound within SNAP_REL of the range from
    zero counts as zero.

    Returns
    -------
    dict: lo, hi (SI, the range the colours span), ticks (SI), labels (str), unit (e.g. "kPa"),
    factor (SI per displayed unit).
    """
    lo, hi = float(lo), float(hi)
    if not (math.isfinite(lo) and math.isfinite(hi)):
        lo, hi = 0.0, 0.0
    if hi < lo:
        lo, hi = hi, lo
    mag = max(abs(lo), abs(hi))
    factor, prefix = next(((f, p) for f, p in PREFIXES if mag >= f), (1.0, ""))
    a, b = lo / factor, hi / factor
    if b - a <= FLAT_REL * max(abs(a), abs(b)) or b - a == 0:
        pad = abs(a) * 0.1 if a != 0 else 1.0
        a, b = a - pad, b + pad
    span = b - a
    if abs(a) < SNAP_REL * span:  # a bound that is float noise around zero is zero
        a = 0.0
    if abs(b) < SNAP_REL * span:
        b = 0.0
    e0 = math.floor(math.log10(span / max_intervals))
    for e, m in itertools.product((e0, e0 + 1, e0 + 2), (1, 2, 2.5, 5)):
        step = m * 10.0 ** e
        a_n, b_n = math.floor(a / step + 1e-9) * step, math.ceil(b / step - 1e-9) * step
        if round((b_n - a_n) / step) <= max_intervals:
            break
    k = int(round((b_n - a_n) / step))
    dec = max(0, -e + (1 if m == 2.5 else 0))
    ticks = [float(f"{(a_n + i * step) * factor:.12g}") for i in range(k + 1)]
    labels = []
    for t in ticks:
        s = f"{t / factor:.{dec}f}"
        labels.append("0" if float(s) == 0 else s.replace("-", "\u2212"))
    return {"lo": ticks[0], "hi": ticks[-1], "ticks": ticks,
            "labels": labels, "unit": prefix + unit, "factor": factor}


def colour_table(name: str, n: int = TABLE_SIZE) -> list:
    """`n` sRGB colours (0..255 ints) sampled evenly from matplotlib colormap `name`."""
    from matplotlib import colormaps

    rgba = colormaps[name](np.linspace(0.0, 1.0, n))
    return [[int(round(255 * c)) for c in row[:3]] for row in rgba]


def _b64(a) -> str:
    return base64.b64encode(np.ascontiguousarray(a).tobytes()).decode("ascii")


def _quantise(v, lo, hi) -> str:
    v = np.asarray(v, float)
    t = (v - lo) / (hi - lo) if hi > lo else np.zeros_like(v)
    q = np.round(np.clip(t, 0.0, 1.0) * Q_MAX)
    q[~np.isfinite(v)] = Q_MAX + 1
    return _b64(q.astype("<u2"))


def _range(arrays):
    fin = [a[np.isfinite(a)] for a in arrays]
    fin = [a for a in fin if a.size]
    if not fin:
        return 0.0, 0.0
    return float(min(a.min() for a in fin)), float(max(a.max() for a in fin))


def _script_text(s: str) -> str:
    """Text safe inside a <script> element (no early end tag, no comment opener)."""
    return s.replace("</", "<\\/").replace("<!--", "<\\!--")


def _json_text(data) -> str:
    """JSON for a <script type="application/json"> block: every "<" written as \\u003c, so no
    user text (a case name) can open or close a tag inside it."""
    return json.dumps(data, separators=(",", ":")).replace("<", "\\u003c")


def view3d_data(surface_points, surface_triangles, case_fields: dict, spar_points=None,
                spar_bending: dict | None = None, max_triangles: int = MAX_TRIANGLES,
                surface_unit: str = "Pa", spar_unit: str = "N\u00b7m") -> dict:
    """The JSON-ready data of the view (decimated surface, quantised fields, scales)."""
    pts = np.asarray(surface_points, float)
    tri = np.asarray(surface_triangles, np.int64)
    if pts.ndim != 2 or pts.shape[1] != 3 or tri.ndim != 2 or tri.shape[1] != 3 or tri.size == 0:
        raise ValueError("view3d: surface_points must be (n, 3) and surface_triangles (m, 3), m > 0")
    if not case_fields:
        raise ValueError("view3d: case_fields is empty (one field per load case is needed)")
    dec = decimate(pts, tri, max_triangles)
    fields = {str(k): decimated_field(v, dec, pts, tri) for k, v in case_fields.items()}
    per_tri = {f.size == dec.triangles.shape[0] and f.size != dec.points.shape[0]
               for f in fields.values()}
    if len({f.size for f in fields.values()}) != 1:
        raise ValueError("view3d: case fields mix per-vertex and per-triangle values")
    sp = None if spar_points is None else np.asarray(spar_points, float)
    bend = {str(k): np.asarray(v, float).ravel() for k, v in (spar_bending or {}).items()}
    if sp is not None:
        if sp.ndim != 2 or sp.shape[1] != 3 or sp.shape[0] < 2:
            raise ValueError("view3d: spar_points must be (n, 3) with n >= 2")
        missing = [k for k in fields if k not in bend]
        if missing:
            raise ValueError(f"view3d: no spar bending for case(s) {missing}")
        bad = [k for k in fields if bend[k].size != sp.shape[0]]
        if bad:
            raise ValueError(f"view3d: spar bending of case(s) {bad} does not match "
                             f"{sp.shape[0]} spar points")
    glo, ghi = _range(fields.values())
    g_scale = nice_scale(glo, ghi, surface_unit)
    cases = []
    for name, f in fields.items():
        s = nice_scale(*_range([f]), surface_unit)
        c = {"name": name, "surface": _quantise(f, s["lo"], s["hi"]), "surface_scale": s}
        if sp is not None:
            b = bend[name]
            bs = nice_scale(*_range([b]), spar_unit)
            c.update(spar=_quantise(b, bs["lo"], bs["hi"]), spar_scale=bs)
        cases.append(c)
    spar_all = nice_scale(*_range([bend[k] for k in fields]), spar_unit) if sp is not None else None
    big = dec.points.shape[0] > 65535
    return {
        "points": _b64(dec.points.astype("<f4")),
        "triangles": _b64(dec.triangles.astype("<u4" if big else "<u2")),
        "index32": big, "per_triangle": per_tri == {True},
        "n_points": int(dec.points.shape[0]), "n_triangles": int(dec.triangles.shape[0]),
        "n_triangles_input": int(tri.shape[0]),
        "spar_points": None if sp is None else _b64(sp.astype("<f4")),
        "cases": cases, "surface_scale_all": g_scale, "spar_scale_all": spar_all,
        "surface_table": colour_table(SURFACE_CMAP), "spar_table": colour_table(SPAR_CMAP),
        "q_max": Q_MAX, "opacity": WING_OPACITY,
    }


def view3d_html(surface_points, surface_triangles, case_fields: dict, spar_points=None,
                spar_bending: dict | None = None, caution: str = "", title: str = "",
                initial_case: str | None = None, max_triangles: int = MAX_TRIANGLES,
                surface_label: str = "Pressure jump, lower minus upper",
                spar_label: str = "Bending moment (positive tip-up)", height_px: int = 520) -> str:
    """A self-contained HTML fragment (a <div> and <script> blocks) with the interactive 3-D view.

    Parameters
    ----------
    surface_points : (n, 3) float, wing frame, m (x aft, y starboard, z up).
    surface_triangles : (m, 3) int, indices into surface_points.
    case_fields : case name -> per-vertex (n,) or per-triangle (m,) pressure jump, Pa (limit).
    spar_points : (k, 3) float, spar axis points, wing frame, m; None draws no spar.
    spar_bending : case name -> (k,) bending moment at spar_points, N m; every case needs one.
    caution : shown above the picture (pass geomload.CAUTION).
    title : heading line of the view.
    initial_case : case shown first (default: the first of case_fields).
    max_triangles : display-surface budget (see `decimate`).

    Returns
    -------
    str, HTML. Loads nothing from the network; needs a browser with WebGL, else it says so in
    the page. Each call embeds the library (~0.7 MB) once.

    Raises
    ------
    ValueError for arrays of the wrong shape or a case without spar bending.
    """
    data = view3d_data(surface_points, surface_triangles, case_fields, spar_points, spar_bending,
                       max_triangles)
    names = [c["name"] for c in data["cases"]]
    start = names.index(initial_case) if initial_case in names else 0
    data["initial"] = start
    data["labels"] = {"surface": surface_label, "spar": spar_label}
    uid = f"gl3v{next(_ids)}"
    esc = lambda s: html.escape(str(s), quote=True)  # noqa: E731
    opts = "".join(f'<option value="{i}"{" selected" if i == start else ""}>{esc(n)}</option>'
                   for i, n in enumerate(names))
    lib = (ASSET_DIR / "three.module.min.js").read_text(encoding="utf-8")
    orbit = (ASSET_DIR / "OrbitControls.js").read_text(encoding="utf-8")
    note = (f"Display surface: {data['n_triangles']} of {data['n_triangles_input']} triangles"
            + (" (decimated for display; colours from the full surface)"
               if data["n_triangles"] < data["n_triangles_input"] else "") + ".")
    spar_bar = ('<div class="gl3-cb" data-q="spar"></div>' if data["spar_points"] else "")
    return f"""<div class="gl3" id="{uid}" style="font-family:sans-serif;margin:1em 0">
<div style="font-weight:bold;margin-bottom:.3em">{esc(title)}</div>
<div class="gl3-caution" style="background:#fff3cd;border:1px solid #e0b000;padding:.4em;font-size:.9em">{esc(caution)}</div>
<div style="margin:.4em 0;font-size:.9em"><label>Load case <select class="gl3-case">{opts}</select></label>
<label style="margin-left:1em"><input type="checkbox" class="gl3-common"> one colour scale for all cases</label>
<span style="margin-left:1em;color:#555">drag: rotate &middot; wheel: zoom &middot; right-drag: pan</span></div>
<div style="display:flex;gap:8px;align-items:stretch">
<div class="gl3-stage" style="flex:1;min-width:0;height:{int(height_px)}px;border:1px solid #ccc;position:relative"><canvas class="gl3-canvas" style="width:100%;height:100%;display:block"></canvas></div>
<div style="width:170px;font-size:12px"><div class="gl3-cb" data-q="surface"></div>{spar_bar}</div>
</div>
<div class="gl3-msg" style="font-size:.85em;color:#555">{esc(note)} Wing frame: x aft, y starboard, z up; limit loads.</div>
</div>
<script type="text/plain" id="{uid}-lib">{_script_text(lib)}</script>
<script type="text/plain" id="{uid}-orbit">{_script_text(orbit)}</script>
<script type="application/json" id="{uid}-data">{_json_text(data)}</script>
<script>{_script_text(_page_code().replace("__UID__", uid))}</script>
"""





def _page_code() -> str:
    return (ASSET_DIR.parent / "view3d.js").read_text(encoding="utf-8")


def view3d_from_run(run, surface=None, caution: str | None = None,
                    title: str = "3-D check: pressure jump on the CAD surface, bending on the spar",
                    initial_case: str | None = None, max_triangles: int = MAX_TRIANGLES) -> str:
    """`view3d_html` for a records.RunResult: every case, the critical case shown first.

    Surface: the welded CAD surface in the wing frame (``surface``: a prebuilt vtk.Surface
    record, e.g. write_all's display surface, or vtk.surface_polydata(run); else built here); each triangle takes the pressure jump
    dcp x q (Pa) of its nearest lattice panel, as in surface.vtp. Spar: vtk.spar_line(run) with
    each case's loads.bending_Nm (limit).
    """
    if surface is not None and hasattr(surface, "tri"):  # a vtk.Surface record (write_all's)
        pts, tri = np.asarray(surface.points, float), np.asarray(surface.tri, np.int64)
        near = np.asarray(surface.panel)
    elif surface is not None:
        pts = np.asarray(surface.points, float)
        tri = np.asarray(surface.faces).reshape(-1, 4)[:, 1:]
        near = np.asarray(surface.cell_data["panel"])
    else:
        pts, tri = gvtk.surface_points_faces(run.mesh, run.frame)
        near = gvtk.map_to_panels(pts[tri].mean(axis=1)[:, :2], run.lattice)
    spar = gvtk.spar_line(run)
    fields, bending = {}, {}
    for cr in run.cases:
        fields[cr.name] = np.asarray(cr.aero.dcp, float)[near] * float(cr.q_pa)
        b = np.asarray(cr.loads.bending_Nm, float)
        y = np.asarray(cr.loads.y, float)
        bending[cr.name] = b if b.size == spar.shape[0] else np.interp(spar[:, 1], y, b)
    if initial_case is None:
        initial_case = ea.critical_case(run).name
    return view3d_html(pts, tri, fields, spar, bending, CAUTION if caution is None else caution,
                       title, initial_case=initial_case, max_triangles=max_triangles)
