"""The wing frame of an exposed-wing export (root off the CAD's plane of symmetry), carried
through to y = 0.

The frame is first taken from the exposed root's chord, with its origin on the plane of
symmetry straight inboard of the exposed root's leading edge. The run's gross planform extends
the leading and trailing edges linearly to y = 0 (planform.summarize, the lattice), and the
carried-through part keeps the exposed root section's incidence (the lattice holds the root
station's chord direction inboard of it). So the x axis stays along the root chord, and the
origin moves to the carried-through leading edge at y = 0: x and z then mean what they mean for
the same wing exported whole through the fuselage (a point mass's x_m is measured from the same
point). y, and so every point mass and tank station, is unchanged.
"""

from __future__ import annotations

import dataclasses

import numpy as np


def carried_through_frame(frame, stations):
    """`frame` with its origin moved (in x and z only) to the leading edge extrapolated linearly
    to y = 0 from the first two stations; `frame` itself when the root is on y = 0."""
    y = np.asarray(stations.y, float)
    if not float(getattr(frame, "y_root", 0.0) or 0.0) > 0.0 or y.size < 2 or y[0] <= 0.0:
        return frame
    t = (0.0 - y[0]) / (y[1] - y[0])  # linear extrapolation to y = 0 (as the planform does)
    x_le = float(stations.x_le[0] + t * (stations.x_le[1] - stations.x_le[0]))
    z_le = float(stations.z_le[0] + t * (stations.z_le[1] - stations.z_le[0]))
    origin = frame.to_cad(np.array([x_le, 0.0, z_le]))
    note = (f"origin at the leading edge carried through to y = 0 (moved {x_le:+.4g} m in x, "
            f"{z_le:+.4g} m in z from straight inboard of the exposed root's leading edge)")
    return dataclasses.replace(frame, origin=origin, notes=tuple(frame.notes) + (note,))
