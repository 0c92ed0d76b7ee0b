"""A full-span wing with blended 90-degree winglets: stations normal to the span line.

Truth: NACA 2412 sections (NACA Report 460 equations, tests/wingfactory.py) laid normal to a
known span line (straight, a circular blend of 0.15 m radius, then vertical; tests/
aircraftfactory.py), chord linear in the arc length. Tolerances: chord 2 % on the winglet, 1 %
inboard; projected span 0.5 %; span along the surface 0.5 % (the arc length of that line).
"""

import numpy as np

from helpers.aircraftfactory import winglet_wing
from geomload.geometry import read_wing
from geomload.geometry.read import STL_RECORD
from helpers.validation import check
from helpers.wingfactory import farthest_point_chord

NACA = "NACA Report 460 equations on a known span line"


def test_blended_winglets(tmp_path):
    tris, chord = winglet_wing()
    rec = np.zeros(len(tris), STL_RECORD)
    rec["v"] = tris
    p = tmp_path / "winglets.stl"
    with open(p, "wb") as f:
        f.write(b"x" * 80 + np.uint32(len(tris)).tobytes())
        rec.tofile(f)
    w = read_wing(p, units="m", n_stations=21)
    st, pf = w.stations, w.planform
    _, cl, _ = farthest_point_chord("2412")  # farthest-point chord per unit nominal chord
    ex = chord(st.s_m) * cl
    tol = np.where(st.s_m > 1.5, 0.02, 0.01)
    k = int(np.argmax(np.abs(st.chord / ex - 1) / tol))
    check(NACA, f"winglet wing: chord at s = {st.s_m[k]:.3f} m (m)", ex[k], st.chord[k], rel=tol[k])
    check(NACA, "winglet wing: projected span (m)", 2 * 1.65, pf.span, rel=0.005)
    check(NACA, "winglet wing: span along the surface (m)", 2 * (1.5 + 0.5 * np.pi * 0.15 + 0.3),
          pf.span_surface, rel=0.005)
    assert st.dihedral_deg[-1] > 80.0  # the outermost stations are on the vertical winglet
