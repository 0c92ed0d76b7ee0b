"""Cases are solved on a lattice at (or just above) their own Mach: the Prandtl-Glauert factor
1/beta, beta = sqrt(1 - M^2) (Glauert's compressibility rule), of the lattice Mach is at most
0.5 % above the case's, and so is the lift slope of a real lattice (checked by solving it)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from helpers.aero_wings import trapezoid
from geomload.aero.lattice import build_lattice
from geomload.aero.models import MachModels, lattice_mach
from helpers.validation import check

AIM = 0.005  # the lift-slope error the binning must stay below


def _pg(m):
    return 1.0 / math.sqrt(1.0 - m * m)


def test_prandtl_glauert_factor_of_the_lattice_mach_is_within_half_a_percent():
    machs = np.linspace(0.0005, 0.949, 4001)
    worst = 0.0
    for m in machs:
        lat = lattice_mach(float(m))
        assert lat >= m  # the conservative side for gusts
        worst = max(worst, _pg(lat) / _pg(m) - 1.0)
    check("Prandtl-Glauert factor 1/sqrt(1 - M^2) (Glauert)",
          "largest excess of the lattice factor over the case's, M 0 to 0.95 (-)", 0.0, worst,
          abs=AIM)
    assert lattice_mach(0.0) == 0.0
    assert lattice_mach(0.97) == 0.97  # above the binned range: the case's own Mach


@pytest.mark.parametrize("mach", [0.45, 0.55, 0.651])
def test_lift_slope_at_the_lattice_mach_is_within_half_a_percent(mach):
    lattice = build_lattice(trapezoid(aspect=8.0, taper=0.5), n_span=12, n_chord=4)
    from geomload.aero.solve import AeroModel

    own = AeroModel(lattice, mach=mach).solve(0.0).CL_alpha_per_rad
    binned = MachModels(lattice).lift_slope(mach)
    check("Prandtl-Glauert rule applied to the lattice at the case's own Mach",
          f"lift slope at the binned lattice Mach / at M {mach} (-)", 1.0, binned / own,
          rel=AIM)
    assert binned >= own
