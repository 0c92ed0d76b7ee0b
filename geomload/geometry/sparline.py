"""The spar axis in the wing frame: where the spar crosses each station (geometry only; the
loads stage integrates about it and the case-file check keeps it inside the sections)."""

from __future__ import annotations

import numpy as np


def spar_line(y, x_le, x_te, z_le, z_te, chord_fraction=0.25, line=()):
    """Spar axis (x, z) in metres at stations y: the chord fraction point of every section, or
    a polyline ((y, x, z), ...) interpolated linearly (extrapolated along its end segments)."""
    y = np.asarray(y, float)
    if not line:
        f = float(chord_fraction)
        return (np.asarray(x_le) + f * (np.asarray(x_te) - x_le),
                np.asarray(z_le) + f * (np.asarray(z_te) - z_le))
    pts = np.asarray(line, float)
    out = []
    for k in (1, 2):
        v = np.interp(y, pts[:, 0], pts[:, k])
        for mask, (i, j) in ((y < pts[0, 0], (0, 1)), (y > pts[-1, 0], (-2, -1))):
            slope = (pts[j, k] - pts[i, k]) / (pts[j, 0] - pts[i, 0])
            v = np.where(mask, pts[i, k] + slope * (y - pts[i, 0]), v)
        out.append(v)
    return out[0], out[1]


__all__ = ["spar_line"]
