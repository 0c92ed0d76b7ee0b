"""The same NACA wing exported the ways shops do: starboard half, port half, full span, in other
CAD frames (right- or left-handed, Y or Z up, mm), and as an exposed wing off the CAD plane.

Geometry from the NACA 4-digit equations (NACA Report 460, Jacobs, Ward and Pinkerton 1933;
restated in Report 824) lofted by tests/wingfactory.py; the truth is the design of that file.
"""

from __future__ import annotations

import numpy as np

from geomload.records import WingMesh
from helpers.wingfactory import design, wing_triangles

# CAD frames as rows: CAD coordinates = A @ wing-frame coordinates (x aft, y starboard, z up).
# A right-handed Y-up frame with X aft has Z = X cross Y = aft cross up = port, i.e. -y.
Y_UP_RIGHT = np.array([[1.0, 0, 0], [0, 0, 1.0], [0, -1.0, 0]])  # det +1
# the same axes with Z pointing starboard: a left-handed (mirrored) frame
Y_UP_LEFT = np.array([[1.0, 0, 0], [0, 0, 1.0], [0, 1.0, 0]])  # det -1


def port_of(tris):
    """The port half of a starboard soup: y -> -y, winding reversed so faces still point out."""
    t = tris.copy()
    t[:, :, 1] *= -1.0
    return t[:, ::-1]


def in_frame(tris, A, translation=None):
    """Triangles in a CAD frame given by the matrix A (rows = CAD axes in wing coordinates)."""
    t = tris @ np.asarray(A, float).T
    if translation is not None:
        t = t + np.asarray(translation, float)
    return t


def three_copies(n_chord=60, n_span=24, **design_kw):
    """(starboard, port, full-span) `WingMesh` copies of one design, and the design dict.

    The starboard and port halves are mirror images (the port one wound outward); the full
    span holds both. Every copy is the same wing, so a reader must give the same stations.
    """
    d = design(**design_kw)
    stb = wing_triangles(d, n_chord, n_span)
    full = wing_triangles(d, n_chord, n_span, full_span=True)
    return (WingMesh(stb, "<starboard>", "m"), WingMesh(port_of(stb), "<port>", "m"),
            WingMesh(full, "<full span>", "m"), d)
