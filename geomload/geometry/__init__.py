"""Geometry stage: CAD file -> triangle soup -> wing frame -> stations -> planform.

Public functions: `load_wing` (the four records), `read_wing` (a `Wing` record with the bodies,
control surfaces, tailplane and warnings), `guess_unit` (the one unit plausibility check).
Heavy readers (trimesh, cascadio) are imported inside the readers only.
"""

from __future__ import annotations

from .units import UNITS, guess_unit  # noqa: F401  (light: no numpy-heavy imports)


def load_wing(path, units=None, body=None, span_axis=None, up_axis=None, n_stations=20,
              spacing="cosine", progress=None, **options):
    """Read a CAD wing and measure it: returns (WingMesh, WingFrame, Stations, Planform).

    The keyword options of `read_wing` (side, require_units, units_hint) are accepted too.
    See `read_wing` for units, conventions and errors (InputError / GeometryError).
    """
    w = read_wing(path, units=units, body=body, span_axis=span_axis, up_axis=up_axis,
                  n_stations=n_stations, spacing=spacing, progress=progress, **options)
    return w.mesh, w.frame, w.stations, w.planform


def read_wing(path, units=None, body=None, span_axis=None, up_axis=None, n_stations=20,
              spacing="cosine", progress=None, side=None, require_units=False, units_hint=None,
              display=False):
    """Read a CAD file and analyse its wing: returns a `records.Wing`.

    Parameters
    ----------
    path : str or Path
    units : {"m", "cm", "mm", "in", "ft"} or None
        The file's length unit; overrides the unit a STEP/IGES/GLB/3MF file declares (warning).
    body : int or None
        1-based body of a multi-body file to analyse as the wing.
    span_axis, up_axis : str or None
        CAD axes, optionally signed ("y", "+z", "-y"); a signed up axis decides up versus down.
    n_stations : int; spacing : "cosine" | "uniform"
    progress : callable(stage, done, total) or None
    side : {"starboard", "port", None}
        The side of a half wing as it lies in the file (None: detected from the sections).
    require_units : bool
        Refuse a unit-less mesh (STL/OBJ/PLY/OFF) read with no unit (GeometryError naming the
        file, the likely unit and the key to set; `units_hint` words the key).
    display : bool
        Also build the decimated display surface of a large single-body mesh (Wing.display_soup)
        in a worker thread beside the frame and the cuts, for a caller that writes one (a run);
        a command that only measures the wing leaves it (False).

    Raises
    ------
    InputError, GeometryError: one line naming the file.
    """
    from .wing import read_wing as _read

    return _read(path, units=units, body=body, span_axis=span_axis, up_axis=up_axis,
                 n_stations=n_stations, spacing=spacing, progress=progress, side=side,
                 require_units=require_units, units_hint=units_hint, display=display)


__all__ = ["load_wing", "read_wing", "guess_unit", "UNITS"]
