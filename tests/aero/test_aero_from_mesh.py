"""Integration: the vortex lattice on stations cut from a NACA 2412 wing mesh."""

from helpers.paths import TESTS
import sys
from pathlib import Path

import numpy as np

from geomload.aero.lattice import build_lattice
from geomload.aero.solve import AeroModel
from geomload.geometry import load_wing
from geomload.geometry.airfoil import loft_wing
from helpers.validation import check

from helpers.make_corpus import stl_binary  # noqa: E402


def test_naca2412_wing_from_mesh_zero_lift_angle(tmp_path):
    n = 7
    y = np.linspace(0.0, 3.0, n)
    tris = loft_wing(y, np.full(n, 0.5), np.zeros(n), np.zeros(n), np.zeros(n),
                     np.full(n, 0.12), code="2412")
    path = tmp_path / "naca2412_wing.stl"
    path.write_bytes(stl_binary(tris))
    _, _, stations, _ = load_wing(str(path), units="m", n_stations=12)
    sol = AeroModel(build_lattice(stations, n_span=20, n_chord=10)).solve(0.0)
    # thin-airfoil theory: alpha_L0(NACA 2412) = -2.08 deg (VALIDATION.md 4); an untwisted
    # wing of one section has the section value in linear theory
    check("thin-airfoil theory (VALIDATION.md 4)", "alpha_L0, NACA 2412 wing cut from a mesh (deg)",
          -2.08, sol.alpha_zero_lift_deg, abs=0.2)
