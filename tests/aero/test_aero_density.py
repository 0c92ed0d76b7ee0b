"""Lattice density: fine spanwise with coarse chordwise panels must stay well conditioned.

Convergence with lattice density is a property of a consistent discretisation (common
practice, no source); lifting-line theory bounds the wing lift slope by the 2-D thin-airfoil
value 2 pi / beta (Anderson, Fundamentals of Aerodynamics, ch. 5; VALIDATION.md 1 and 7).
"""

import math

import pytest

from helpers import aero_wings
from geomload.aero import lattice as lat_mod
from geomload.aero.lattice import build_lattice
from geomload.aero.solve import AeroModel
from geomload.errors import AeroError
from helpers.validation import check


def _wing():
    # tapered 0.5, A = 8, NACA 2412 camber (tests/aero_wings.py builds it from the equations)
    return aero_wings.trapezoid(8.0, 0.5, 0.0, semispan=4.0, camber="2412")


@pytest.mark.parametrize("n_span, n_chord", [(80, 4), (160, 4), (240, 2)])
def test_fine_span_coarse_chord_converges(n_span, n_chord):
    st = _wing()
    ref = AeroModel(build_lattice(st, 40, 10)).solve(4.0)
    sol = AeroModel(build_lattice(st, n_span, n_chord)).solve(4.0)
    src = "convergence with lattice density (common practice, no source)"
    check(src, f"CL at {n_span}x{n_chord} panels vs 40x10 (-)", ref.CL, sol.CL, rel=0.01)
    check(src, f"span efficiency e at {n_span}x{n_chord} panels vs 40x10 (-)", ref.e, sol.e,
          rel=0.03)
    # lifting-line bound: 0 < a < 2 pi / beta, beta = 1 here (Anderson, Fundamentals of
    # Aerodynamics, ch. 5; VALIDATION.md 1)
    assert 0 < sol.CL_alpha_per_rad < 2 * math.pi


def test_an_ill_conditioned_lattice_is_refused(monkeypatch):
    # without the tip-strip cap, 160 x 4 half-cosine panels are ill-conditioned (lift slope
    # outside (0, 2 pi]); the model must refuse it rather than return loads
    monkeypatch.setattr(lat_mod, "MAX_TIP_PANEL_ASPECT", 1e12)
    lat = build_lattice(_wing(), 400, 2)
    with pytest.raises(AeroError, match="ill-conditioned"):
        AeroModel(lat)
