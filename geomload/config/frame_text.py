"""Where the wing frame sits in the CAD model, in the CAD unit: what a user needs to write a
case-file position in either frame (`geomload inspect` prints it, `geomload new-case` writes it
into the template).

The wing frame (:mod:`geomload.config.position_keys`): origin at the leading edge of the root
section on the root / symmetry plane, x aft along the root chord, y along the span (starboard
positive), z up. ``WingFrame``: p_wing = rotation @ (p_cad - origin), both in metres; the rows
of ``rotation`` are the wing axes in CAD coordinates.
"""

from __future__ import annotations

import numpy as np

AXIS_TOL = 1e-9  # a wing axis within this (direction cosine) of a CAD axis is that CAD axis:
# far below any drawing accuracy, far above the round-off of the frame's rotation
CAD_AXES = "XYZ"


def frame_in_cad(frame, mesh) -> dict:
    """The wing-frame origin and axes in CAD terms, as plain data (numbers rounded to 9
    significant figures), for a JSON "frame" table beside its ``origin_cad_m``.

    frame : the `WingFrame`; mesh : the `WingMesh` (its unit).
    Returns a dict: ``cad_unit`` (the unit the file was read in, e.g. "mm", or "units of
    0.002 m"); ``origin_cad_in_cad_unit`` [x, y, z], the origin in CAD coordinates and that
    unit; ``wing_axes_in_cad`` {"x": "+X", "y": "-Y", ...}, the CAD direction of each wing axis
    (a signed CAD axis, or the unit vector [cx, cy, cz] when the wing axis is oblique).
    """
    scale = float(getattr(mesh, "unit_scale_m", 1.0))
    origin = np.asarray(frame.origin, float) / scale
    axes = {name: _direction(row) for name, row in zip("xyz", np.asarray(frame.rotation, float))}
    return {"cad_unit": _unit(mesh, scale),
            "origin_cad_in_cad_unit": [float(f"{v + 0.0:.9g}") for v in origin],
            "wing_axes_in_cad": axes}


def frame_origin(wing) -> dict:
    """:func:`frame_in_cad` of a `Wing`."""
    return frame_in_cad(wing.frame, wing.mesh)


def _unit(mesh, scale) -> str:
    """The CAD unit's name ("mm"), also for a file that carries its own unit; else the length
    of one CAD unit ("units of 0.002 m")."""
    from geomload.units import LENGTH_UNITS

    u = str(getattr(mesh, "units", ""))
    if u in LENGTH_UNITS:
        return u
    for name, f in LENGTH_UNITS.items():
        if abs(scale - f) <= 1e-12 * f:
            return name
    return f"units of {scale:g} m"


def _direction(row):
    k = int(np.argmax(np.abs(row)))
    if abs(abs(float(row[k])) - 1.0) <= AXIS_TOL:
        return ("+" if row[k] > 0 else "-") + CAD_AXES[k]
    return [float(f"{v + 0.0:.6f}") for v in row]


def _dir_text(d) -> str:
    """'CAD +X', or an oblique axis as its vector and the nearest CAD axis it is turned from."""
    if isinstance(d, str):
        return f"CAD {d}"
    v = np.asarray(d, float)
    k = int(np.argmax(np.abs(v)))
    turn = float(np.degrees(np.arccos(min(1.0, abs(v[k]) / float(np.linalg.norm(v))))))
    near = ("+" if v[k] > 0 else "-") + CAD_AXES[k]
    return ("CAD (" + ", ".join(f"{c + 0.0:g}" for c in v)
            + f"), {near} turned {turn:.3g} deg")


def frame_origin_lines(wing) -> list:
    """Lines for a person: the origin in CAD coordinates and unit, and the axes."""
    f = frame_origin(wing)
    x, y, z = (f"{v + 0.0:.6g}" for v in f["origin_cad_in_cad_unit"])
    unit = f["cad_unit"]
    ax = f["wing_axes_in_cad"]
    root = ("on the CAD plane of symmetry (the root face lies off it)"
            if float(getattr(wing.frame, "y_root", 0.0)) > 0.0 else "on the root / symmetry plane")
    return [f"Wing frame in the CAD model (CAD unit {unit}), for case-file positions in either "
            "frame:",
            f"  origin (root leading edge, {root}): x = {x}, y = {y}, z = {z} {unit}",
            f"  wing x (aft) along {_dir_text(ax['x'])}",
            f"  wing y (span, starboard) along {_dir_text(ax['y'])}",
            f"  wing z (up) along {_dir_text(ax['z'])}"]


__all__ = ["frame_in_cad", "frame_origin", "frame_origin_lines"]
