"""`read_wing`: the geometry stage from file to `Wing` record (read, frame, stations, planform)."""

from __future__ import annotations

from .frame import detect_frame_indexed
from .planform import summarize
from .readers import read_mesh
from .records import GeometryWarning, Wing
from .stations import cut_stations


def _no_progress(stage, done, total):
    pass


def read_wing(path, units=None, body=None, span_axis=None, up_axis=None, n_stations=20,
              spacing="cosine", progress=None, side=None, require_units=False, units_hint=None):
    """See `geometry.read_wing`."""
    progress = progress or _no_progress
    mesh = read_mesh(path, units=units, body=body, progress=progress, require_units=require_units,
                     units_hint=units_hint)
    frame, index = detect_frame_indexed(mesh, span_axis=span_axis, up_axis=up_axis, side=side)
    stations = cut_stations(mesh, frame, n=n_stations, spacing=spacing, progress=progress,
                            index=index)
    planform = summarize(stations, y_root=frame.y_root)
    warnings, notes = split_notes(list(mesh.notes) + list(frame.notes) + list(stations.notes))
    return Wing(mesh=mesh, frame=frame, stations=stations, planform=planform,
                warnings=tuple(warnings), notes=tuple(notes))


def split_notes(lines):
    """(GeometryWarning records, plain notes) from note lines ("warning: ..." -> a warning)."""
    warnings, notes = [], []
    for line in lines:
        if line.startswith("warning: "):
            text = line[len("warning: "):]
            kind = text.split(":", 1)[0] if text.split(":", 1)[0] in _KINDS else "geometry"
            warnings.append(GeometryWarning(kind, text))
        else:
            notes.append(line)
    return warnings, notes


_KINDS = ("units", "side", "up", "bodies", "control_surface", "exposed", "frame")
