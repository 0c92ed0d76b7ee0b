"""Reusing the frame's span index for the cut gives the same stations as a fresh index.

Internal consistency of two code paths (common practice, no source): the expected values are
the stations of the plain path, compared to round-off.
"""

import numpy as np

from geomload.geometry.frame import detect_frame, detect_frame_indexed
from geomload.geometry.sections import cut_stations
from helpers.wingfactory import naca_wing_mesh, random_rotation


def test_reused_index_gives_the_same_stations():
    mesh, _ = naca_wing_mesh(n_chord=40, n_span=20, rotation=random_rotation(7),
                             translation=[0.3, -1.0, 2.0])
    frame, index = detect_frame_indexed(mesh)
    assert np.allclose(frame.rotation, detect_frame(mesh).rotation, atol=0, rtol=0)
    a = cut_stations(mesh, frame, n=12)
    b = cut_stations(mesh, frame, n=12, index=index)
    for name in ("y", "x_le", "z_le", "chord", "twist_deg", "thickness_ratio", "camber_ratio"):
        assert np.allclose(getattr(a, name), getattr(b, name), rtol=1e-12, atol=1e-12), name
    assert a.semispan == b.semispan or abs(a.semispan - b.semispan) < 1e-12
