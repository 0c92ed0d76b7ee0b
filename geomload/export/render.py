"""3-D pictures with pyvista (imported lazily): offscreen PNGs for the report and `view`.

Views are in the wing frame (x aft, y starboard, z up), seen from ahead, above and to port.
`render_all` never raises for a rendering failure: it returns the exception in place of the
picture so the report can say "3D render unavailable: <reason>".
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from geomload.errors import InputError, OutputError
from geomload.export import envelope_access as ea
from geomload.export import vtk as gvtk
from geomload.export.atomic import write_bytes_atomic
from geomload.textsafe import printable

WINDOW = (900, 600)


def _quiet_vtk() -> None:
    """Keep VTK's own log lines (e.g. 'bad X server connection' on a headless machine, where it
    falls back to offscreen rendering) off the user's terminal; errors still raise."""
    try:
        from vtkmodules.vtkCommonCore import vtkLogger, vtkObject

        vtkLogger.SetStderrVerbosity(vtkLogger.VERBOSITY_OFF)
        vtkObject.GlobalWarningDisplayOff()
    except Exception:  # noqa: BLE001 - cosmetic only
        pass


def _caution(p):
    """The preliminary-estimate caution along the bottom of every 3-D picture of loads."""
    p.add_text("Preliminary estimate - not a substitute for certified structural analysis",
               position="lower_edge", font_size=8, color="dimgray")


def _plotter(off_screen=True, size=WINDOW):
    import pyvista as pv

    _quiet_vtk()
    p = pv.Plotter(off_screen=off_screen, window_size=list(size))
    p.set_background("white")
    return p


# The wing is drawn in the left part of the picture and the colour bars stand in the right
# strip (from BAR_STRIP_X of the width), so a bar never covers the wing.
BAR_STRIP_X = 0.80
WING_SHIFT = 0.3  # camera window centre offset that moves the scene left, into its part
WING_OPACITY = 0.4  # low enough that the spar tube inside reads through both skins


def _camera(p, bounds, zoom=1.5, shift=0.0):
    b = np.asarray(bounds, float).reshape(3, 2)
    c = b.mean(axis=1)
    L = float(np.max(b[:, 1] - b[:, 0])) or 1.0
    p.camera_position = [(c[0] - 0.9 * L, c[1] - 0.9 * L, c[2] + 0.8 * L), tuple(c), (0, 0, 1)]
    p.reset_camera()
    p.camera.zoom(zoom)
    if shift:
        p.camera.SetWindowCenter(shift, 0.0)


def scaled_field(values, unit: str, title: str, position_x: float = 0.88):
    """(values in the displayed unit, scalar-bar arguments, colour limits) for one field: round
    ticks in a k/M-prefixed unit and no float noise (view3d.nice_scale), e.g. 0 instead of
    -9.73e-05 N m."""
    from geomload.export.view3d import nice_scale

    v = np.asarray(values, float)
    fin = v[np.isfinite(v)]
    sc = nice_scale(float(fin.min()) if fin.size else 0.0, float(fin.max()) if fin.size else 0.0,
                    unit)
    f = sc["factor"]
    dec = max((len(lb.split(".", 1)[1]) if "." in lb else 0) for lb in sc["labels"])
    bar = {"title": f"{title}\n({sc['unit']})", "color": "black", "title_font_size": 13,
           "label_font_size": 12, "n_labels": len(sc["ticks"]), "fmt": f"%.{dec}f",
           "vertical": True, "position_x": position_x, "position_y": 0.12, "width": 0.05,
           "height": 0.75}
    return v / f, bar, (sc["lo"] / f, sc["hi"] / f)


def png_bytes(img) -> bytes:
    """PNG file bytes of an (h, w, 3 or 4) uint8 image (PNG specification, ISO/IEC 15948:
    signature, IHDR, one zlib-compressed IDAT with filter byte 0 per row, IEND)."""
    import struct
    import zlib

    a = np.ascontiguousarray(np.asarray(img, np.uint8))
    h, w, c = a.shape
    raw = np.zeros((h, 1 + w * c), np.uint8)
    raw[:, 1:] = a.reshape(h, w * c)

    def chunk(tag, data):
        return (struct.pack(">I", len(data)) + tag + data
                + struct.pack(">I", zlib.crc32(tag + data) & 0xFFFFFFFF))

    ihdr = struct.pack(">IIBBBBB", w, h, 8, 6 if c == 4 else 2, 0, 0, 0)
    return (b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", ihdr)
            + chunk(b"IDAT", zlib.compress(raw.tobytes(), 6)) + chunk(b"IEND", b""))


def _image(p) -> bytes:
    """The plotter's picture as PNG bytes (rendered in memory; no file is written by VTK)."""
    try:
        img = p.screenshot(None, return_img=True)
    finally:
        p.close()
    return png_bytes(img)


def _shoot(p, path, inputs=()):
    """Render `p` and write the PNG atomically through geomload's own writer."""
    write_bytes_atomic(path, _image(p), inputs)
    return Path(path)


def _bar(title):
    return {"title": title, "color": "black", "title_font_size": 14, "label_font_size": 12,
            "n_labels": 5, "fmt": "%.3g", "vertical": True, "position_x": 0.88, "position_y": 0.1}


def render_surface_dcp(run, path, case=None, inputs=(), surface=None, image_only=False):
    """The CAD surface coloured by delta-Cp (lower - upper, dimensionless) of one case.

    case: a case name; None -> the critical case (largest root |bending|).
    surface: a prebuilt vtk.surface_polydata(run) (saves rebuilding it per picture).
    """
    cr = ea.find_case(run, case)
    s = surface if surface is not None else gvtk.surface_data(run)
    v, bar, clim = scaled_field(np.asarray(cr.aero.dcp, float)[s.panel], "", "delta-Cp\nlower - upper")
    bar["title"] = "delta-Cp (-)\nlower - upper"
    surf = gvtk.surface_polydata(run, s, {"dcp": v})
    p = _plotter()
    p.add_mesh(surf, scalars="dcp", cmap="coolwarm", clim=clim, scalar_bar_args=bar)
    _caution(p)
    p.add_text(f"delta-Cp, case: {printable(cr.name)}  (x q = {cr.q_pa:.0f} Pa gives the pressure jump in Pa)",
               font_size=9, color="black")
    _camera(p, surf.bounds, zoom=1.35, shift=WING_SHIFT)
    return _image(p) if image_only else _shoot(p, path, inputs)


def render_lattice_overlay(run, path, inputs=(), surface=None, image_only=False):
    """The CAD surface (grey, translucent) with the vortex-lattice panels drawn over it."""
    surf = gvtk.surface_polydata(run, surface)
    lat = gvtk.lattice_polydata(run, with_cases=False)
    p = _plotter()
    p.add_mesh(surf, color="lightgrey", opacity=0.55)
    p.add_mesh(lat, style="wireframe", color="navy", line_width=1.5)
    p.add_text(f"CAD surface with the vortex lattice ({run.lattice.n_span} x {run.lattice.n_chord} "
               f"panels per side), wing frame, m", font_size=9, color="black")
    p.show_axes()
    _camera(p, surf.bounds)
    return _image(p) if image_only else _shoot(p, path, inputs)


def render_spar_bending(run, path, case=None, inputs=(), surface=None, image_only=False):
    """The spar axis as a tube coloured by the bending moment (N m) inside the translucent wing."""
    cr = ea.find_case(run, case)
    line = gvtk.spar_line(run, cr)
    import pyvista as pv

    poly = pv.lines_from_points(line)
    m, bar, clim = scaled_field(np.asarray(cr.loads.bending_Nm, float), "N·m",
                                "bending M, limit\n+tip-up")
    poly.point_data["bending"] = m
    span = float(np.ptp(line[:, 1])) or 1.0
    # a tube as thick as the wing allows: the bending reads as colour along the spar
    tube = poly.tube(radius=0.015 * span, n_sides=24)
    surf = gvtk.surface_polydata(run, surface)
    p = _plotter()
    p.add_mesh(tube, scalars="bending", cmap="plasma", clim=clim, scalar_bar_args=bar)
    p.add_mesh(surf, color="lightsteelblue", opacity=WING_OPACITY, show_edges=False)
    _caution(p)
    p.add_text(f"bending moment as colour on the spar, case: {printable(cr.name)}",
               font_size=9, color="black")
    _camera(p, surf.bounds, zoom=1.35, shift=WING_SHIFT)
    return _image(p) if image_only else _shoot(p, path, inputs)


def render_stations_png(mesh, frame, stations, path, inputs=()):
    """The CAD mesh in the wing frame with each cut station's chord and camber line drawn."""
    import pyvista as pv

    if mesh.n_triangles > gvtk.MAX_DISPLAY_TRIANGLES:
        cad, tri = gvtk.decimate_soup(mesh.triangles, gvtk.MAX_DISPLAY_TRIANGLES)
        pts = frame.to_wing(cad)
    else:
        pts, tri = gvtk.surface_points_faces(mesh, frame)
    surf = pv.PolyData(pts, np.hstack([np.full((tri.shape[0], 1), 3), tri]).ravel())
    p = _plotter()
    p.add_mesh(surf, color="lightgrey", opacity=0.5)
    s = stations
    cx = np.asarray(s.camber_x, float)
    for i in range(s.n):
        le = np.array([s.x_le[i], s.y[i], s.z_le[i]])
        te = np.array([s.x_te[i], s.y[i], s.z_te[i]])
        chordv = te - le
        nrm = np.array([-chordv[2], 0.0, chordv[0]])
        nrm /= np.linalg.norm(nrm) or 1.0
        cam = le + cx[:, None] * chordv + (s.chord[i] * np.asarray(s.camber_z[i]))[:, None] * nrm
        p.add_mesh(pv.lines_from_points(np.vstack([le, te])), color="darkorange", line_width=3)
        p.add_mesh(pv.lines_from_points(cam), color="navy", line_width=2)
    p.add_text(f"{s.n} stations: chord (orange) and camber line (blue), wing frame", font_size=9,
               color="black")
    p.show_axes()
    _camera(p, surf.bounds)
    return _shoot(p, path, inputs)


RENDERS = {"surface_dcp": render_surface_dcp, "lattice_overlay": render_lattice_overlay,
           "spar_bending": render_spar_bending}


def render_images(run, surface=None) -> dict:
    """name -> PNG bytes for each of RENDERS, or the Exception that stopped that picture (no
    OpenGL, no display...). Writes no file, so it can run in another process."""
    out, surf = {}, surface
    if surf is None:
        try:
            surf = gvtk.surface_data(run)
        except Exception:  # each picture below then reports its own failure
            pass
    for name, fn in RENDERS.items():
        try:
            out[name] = fn(run, None, surface=surf, image_only=True)
        except Exception as exc:  # -> the report says "3D render unavailable: <reason>"
            out[name] = RuntimeError(f"{type(exc).__name__}: {exc}")
    return out


def write_images(images: dict, folder, inputs=()) -> dict:
    """Write the PNG bytes of `images` as folder/<name>.png atomically; name -> Path, or the
    Exception kept from rendering. A write failure (full disk...) raises OutputError."""
    out = {}
    for name, v in images.items():
        if isinstance(v, (bytes, bytearray)):
            out[name] = write_bytes_atomic(Path(folder) / f"{name}.png", bytes(v), inputs)
        else:
            out[name] = v
    return out


def render_all(run, folder, inputs=(), surface=None) -> dict:
    """folder/<name>.png for each of RENDERS; name -> Path, or the Exception if it failed.
    `surface`: a prebuilt vtk.surface_data(run) (the one surface.vtp was written from)."""
    return write_images(render_images(run, surface), folder, inputs)


def _case_key(mesh, case):
    names = [str(n) for n in np.atleast_1d(mesh.field_data.get("case_names", []))]
    keys = [str(k) for k in np.atleast_1d(mesh.field_data.get("case_keys", []))]
    if case is None:
        crit = np.atleast_1d(mesh.field_data.get("critical_case", [names[0] if names else ""]))
        case = str(crit[0])
    if case not in names:
        raise InputError(f"--case {printable(case)!r}: not in this run (cases: "
                         f"{', '.join(printable(n) for n in names)})")
    return keys[names.index(case)], case


def has_display() -> bool:
    """True when an interactive window can open: always on Windows and macOS; on other systems
    when an X11 or Wayland display is set."""
    import os
    import sys

    if sys.platform.startswith(("win", "darwin")):
        return True
    return bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))


def view(run_dir, case=None, screenshot=None):
    """Show a run's surface (the case's pressure jump), lattice and spar axis (bending) in a
    window. A run folder written before the spar axis file was renamed (load_axis.vtp) is read
    too.

    Check boxes at the bottom left switch each layer on and off. With `screenshot` (a PNG path)
    the scene is rendered offscreen into that file instead, and its path is returned.
    """
    import pyvista as pv

    d = Path(run_dir)
    files = {k: d / f"{k}.vtp" for k in ("surface", "lattice", "spar_axis")}
    if not files["spar_axis"].is_file() and (d / "load_axis.vtp").is_file():
        files["spar_axis"] = d / "load_axis.vtp"
    missing = [str(f) for f in files.values() if not f.is_file()]
    if missing:
        raise InputError(f"{d}: not a geomload run folder (missing {', '.join(missing)})")
    if screenshot is None and not has_display():
        raise InputError(f"{d}: no display for an interactive window (DISPLAY is not set); "
                         "use --screenshot FILE to render offscreen")
    try:
        data = {k: pv.read(str(f)) for k, f in files.items()}
    except Exception as exc:
        raise InputError(f"{d}: cannot read the VTK files ({exc})") from None
    key, name = _case_key(data["lattice"], case)
    off = screenshot is not None
    p = _plotter(off_screen=off, size=(1100, 750))
    surf = data["surface"]
    sc = f"pressure_jump_Pa_{key}"
    if sc not in surf.cell_data:
        sc = "pressure_jump_Pa_critical" if "pressure_jump_Pa_critical" in surf.cell_data \
            else "dcp_critical"
    title = ("lift per plan area (Pa)" if sc.startswith("pressure")
             else "delta-Cp (-)\nlower - upper")
    unit = "Pa" if sc.startswith("pressure") else ""
    vals, bar_s, clim_s = scaled_field(np.asarray(surf.cell_data[sc], float), unit,
                                       title.split(" (")[0], position_x=0.78)
    if not unit:
        bar_s["title"] = title
    surf.cell_data["shown"] = vals
    ax = data["spar_axis"]
    span = float(np.ptp(ax.points[:, 1])) or 1.0
    bk = f"bending_Nm_{key}"
    tube = ax.tube(radius=0.015 * span, n_sides=24)
    if bk in ax.point_data:
        mv, bar_m, clim_m = scaled_field(np.asarray(tube.point_data[bk], float), "N·m",
                                         "bending M", position_x=0.90)
        tube.point_data["bending shown"] = mv
        spar = p.add_mesh(tube, scalars="bending shown", cmap="plasma", clim=clim_m,
                          scalar_bar_args=bar_m)
    else:
        spar = p.add_mesh(tube, color="darkred")
    # the spar first and the surface translucent, so the spar stays visible inside the wing
    actors = [p.add_mesh(surf, scalars="shown", cmap="coolwarm", clim=clim_s,
                         scalar_bar_args=bar_s, opacity=WING_OPACITY)]
    actors.append(p.add_mesh(data["lattice"], style="wireframe", color="navy", line_width=1,
                             opacity=0.5))
    actors.append(spar)
    p.add_text(f"case: {printable(name)}" + ("" if sc.endswith(key) else " (surface: critical case)"),
               font_size=10, color="black")
    _caution(p)
    _camera(p, surf.bounds, zoom=1.1, shift=WING_SHIFT)
    if off:
        try:
            return _shoot(p, screenshot, inputs=list(files.values()))
        except OSError as exc:
            raise OutputError(f"{screenshot}: cannot write the screenshot ({exc})") from None
    for i, (a, label) in enumerate(zip(actors, ("surface", "lattice", "spar axis"))):
        p.add_checkbox_button_widget(a.SetVisibility, value=True, position=(10, 10 + 45 * i),
                                     size=35, color_on="steelblue")
        p.add_text(label, position=(52, 18 + 45 * i), font_size=9, color="black")
    p.show(title=f"geomload view: {d.name}")
    return None


# ------------------------------------------------------------------ pictures in another process
from geomload.forked import BUSY_MARGIN, ForkedJob, parallel_pays  # noqa: E402,F401


class RenderProcess(ForkedJob):
    """`render_images(run, surface)` in a forked child process, while the parent writes tables,
    VTK files and plots (see `forked.ForkedJob`: the child writes no file; a crash of the child
    costs only the pictures, `result()` then gives the reason for each of RENDERS).

    Use ``job = RenderProcess.start(run, surface)`` (None where fork is unavailable), then
    ``job.result()``; ``job.stop()`` in a finally block ends the child if still running.
    """

    @classmethod
    def start(cls, run, surface=None):
        return super().start(render_images, (run, surface), tuple(RENDERS), "render")
