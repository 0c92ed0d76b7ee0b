"""Geometry stage: CAD file -> triangle soup -> wing frame -> stations -> planform.

Heavy readers (trimesh, cascadio) are imported inside `read.read_mesh` only.
"""

from __future__ import annotations

from ..records import no_progress


def load_wing(path, units=None, body=None, span_axis=None, up_axis=None, n_stations=20,
              spacing="cosine", progress=None):
    """Read a CAD wing and measure it: returns (WingMesh, WingFrame, Stations, Planform).

    See `read.read_mesh`, `frame.detect_frame`, `sections.cut_stations` and
    `planform.summarize` for units, conventions and errors (InputError / GeometryError).
    """
    from .frame import detect_frame_indexed
    from .planform import summarize
    from .read import read_mesh
    from .sections import cut_stations

    progress = progress or no_progress
    mesh = read_mesh(path, units=units, body=body, progress=progress)
    frame, index = detect_frame_indexed(mesh, span_axis=span_axis, up_axis=up_axis)
    stations = cut_stations(mesh, frame, n=n_stations, spacing=spacing, progress=progress,
                            index=index)
    return mesh, frame, stations, summarize(stations)


__all__ = ["load_wing"]
