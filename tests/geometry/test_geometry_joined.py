"""Several loops at one station joined into one airfoil: a wing split into two bodies by a
plane at an angle (so that stations cut both), touching or overlapping, gives the one-body
wing's sections.

Truth: the NACA 4-digit equations (NACA Report 460, Jacobs, Ward and Pinkerton 1933; restated
in Report 824) on a straight-tapered planform (tests/wingfactory.py); the split bodies are
boolean intersections by a general-purpose mesh library (manifold3d through trimesh).
Tolerances: chord 1 %, twist relative to the root 0.25 deg, span 0.5 %, dihedral 0.3 deg.
"""

import numpy as np
import pytest

from helpers.aircraftfactory import panel, split_at_an_angle
from geomload.geometry import read_wing
from geomload.geometry.joinloops import join_loops
from helpers.validation import check
from helpers.wingfactory import design, expected_stations, write_stl

NACA = "NACA Report 460 / 824 equations, farthest-point chord line"
TAPER = "straight-taper formulas (Raymer ch. 4)"


def _area(p):
    q = np.roll(p, -1, 0)
    return 0.5 * abs(float((p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]).sum()))


@pytest.mark.parametrize("overlap", [0.0, 0.003])
def test_wing_split_at_an_angle_gives_the_one_body_sections(tmp_path, overlap):
    d = design()
    a, b = split_at_an_angle(panel(d, 0.0, d["semispan"], n_span=15), y_split=0.9,
                             angle_deg=45.0, overlap=overlap)
    w = read_wing(write_stl(tmp_path / "split.stl", [a, b]), units="m", n_stations=25)
    st, pf = w.stations, w.planform
    both = (st.y > 0.9 + 0.02) & (st.y < 0.9 + 0.34)  # the joint runs from y = 0.9 to 1.26 m
    assert both.sum() >= 2
    ex = expected_stations(d, st.y)
    for label, sel in (("stations cutting both bodies", both), ("all stations", slice(None))):
        e, m = ex["chord"][sel], st.chord[sel]
        k = int(np.argmax(np.abs(m / e - 1)))
        check(NACA, f"split at 45 deg, overlap {overlap} m, {label}: chord (m), worst", e[k],
              m[k], rel=0.01)
        e = (ex["twist"] - ex["twist"][0])[sel]
        m = (st.twist_deg - st.twist_deg[0])[sel]
        k = int(np.argmax(np.abs(m - e)))
        check(NACA, f"split at 45 deg, overlap {overlap} m, {label}: twist (deg), worst", e[k],
              m[k], abs=0.25)
    check(TAPER, f"split at 45 deg, overlap {overlap} m: span (m)", d["span"], pf.span,
          rel=0.005)
    check("design dihedral", f"split at 45 deg, overlap {overlap} m: dihedral (deg)",
          d["dihedral_deg"], pf.dihedral_deg, abs=0.3)
    if overlap:  # overlapping skins: the joining is a decision the reader states
        assert any("joined into one airfoil" in x.text for x in w.warnings)


def test_join_of_two_overlapping_pieces_is_their_union():
    """Two pieces of an ellipse (semi-axes 1 and 0.1) cut by a slanted line, each reaching
    0.05 past it: the joined loop's area is the ellipse polygon's (shoelace formula, analytic),
    and a third loop above it (another surface) is not joined."""
    t = np.linspace(0.0, 2 * np.pi, 400, endpoint=False)
    ell = np.column_stack([np.cos(t), 0.1 * np.sin(t)])
    u = ell[:, 0] + 2.0 * ell[:, 1]  # the cut line x + 2 z = 0, slanted

    def piece(sel_fn):
        keep = sel_fn(u)
        # close each piece along the cut line with straight points (as a plane cut gives)
        p = ell[keep]
        i = int(np.argmax(np.abs(np.diff(np.nonzero(keep)[0]))) if not keep.all() else 0)
        return np.roll(p, -(i + 1), 0) if i else p

    a = piece(lambda v: v <= 0.05)
    b = piece(lambda v: v >= -0.05)
    above = ell * 0.3 + np.array([0.0, 0.5])
    loop, n = join_loops([a, b, above])
    assert n == 2
    check("shoelace area of the ellipse polygon (analytic)", "joined ellipse pieces: area",
          _area(ell), _area(loop), rel=2e-3)
