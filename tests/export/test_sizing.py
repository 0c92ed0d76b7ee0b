"""Spar-sizing starting point: a rectangular box checked by hand, the table and its caution."""

import os

import numpy as np
import pytest

from geomload import CAUTION
from geomload.errors import InputError
from geomload.export import sizing
from geomload.loads.beam import integrate_loads
from helpers.validation import check


def box_case():
    """A straight cantilever, 1.2 m, uniform lift 300 N/m and a nose-up pitch 40 N m/m."""
    y = np.linspace(0.0, 1.2, 13)
    return integrate_loads(y, np.full(13, 0.25), np.zeros(13), np.full(13, 300.0),
                           pitch_Nm_per_m=np.full(13, 40.0), case="box", ultimate_factor=1.5)


def test_rectangular_box_by_hand():
    L = box_case()
    y = L.y
    c, h, f1, f2 = 0.8, 0.1, 0.2, 0.6  # chord, constant depth: a rectangular box 0.32 x 0.1 m
    n = y.size
    mat = sizing.material(sigma_allow_Pa=400e6, tau_allow_Pa=250e6)
    s = sizing.size_spar(y, np.full(n, c), np.full(n, h), np.full(n, h), np.full(n, h), f1, f2,
                         [L], mat, depth_factor=0.9)
    i = 0  # root
    M = 1.5 * 0.5 * 300.0 * 1.2 ** 2   # ultimate root bending, w L^2 / 2 (cantilever statics)
    V = 1.5 * 300.0 * 1.2              # ultimate root shear, w L
    T = 1.5 * 40.0 * 1.2               # ultimate root torsion, pitch x L
    # simple beam theory, two-cap idealisation: I = 2 A (h_eff/2)^2, sigma = M (h_eff/2) / I
    # (Timoshenko & Gere, Mechanics of Materials: flexure formula)
    he = 0.9 * h
    I = 2.0 * s.cap_area_m2[i] * (he / 2) ** 2
    check("flexure formula sigma = M c / I, two-cap section (Timoshenko & Gere)",
          "cap stress at the sized area, root (Pa)", 400e6, M * (he / 2) / I, rel=1e-6)
    check("mean web shear tau = V / (h t) (common practice, no source)",
          "web shear stress at the sized thickness, root (Pa)", 250e6,
          V / (h * s.web_thickness_m[i]), rel=1e-6)
    # Bredt-Batho thin-walled torsion: q = T / (2 A), A = 0.32 x 0.1 m (rectangle by hand)
    A = (f2 - f1) * c * h
    check("Bredt-Batho thin-walled torsion, q = T / (2 A) (e.g. Megson, Aircraft Structures)",
          "enclosed box area (m^2)", A, s.box_area_m2[i], rel=1e-12)
    check("Bredt-Batho thin-walled torsion, q = T / (2 A) (e.g. Megson, Aircraft Structures)",
          "skin shear stress at the sized thickness, root (Pa)", 250e6,
          T / (2 * A * s.skin_thickness_m[i]), rel=1e-6)
    check("Euler-Bernoulli cantilever statics (Timoshenko & Gere)", "ultimate root bending (N m)",
          M, s.bending_ult_Nm[i], rel=1e-6)
    assert s.case_bending[0] == "box"


def test_governing_case_and_csv(tmp_path):
    L1 = box_case()
    L2 = integrate_loads(L1.y, np.full(13, 0.25), np.zeros(13), np.full(13, 200.0),
                         pitch_Nm_per_m=np.full(13, 90.0), case="twist", ultimate_factor=1.5)
    n = L1.y.size
    s = sizing.size_spar(L1.y, np.full(n, 0.8), np.full(n, 0.1), np.full(n, 0.1),
                         np.full(n, 0.08), 0.2, 0.6, [L1, L2], sizing.MATERIALS["al-7075-t6"])
    assert s.case_bending[0] == "box" and s.case_torsion[0] == "twist"
    paths = sizing.write_sizing(tmp_path, s)
    text = paths[0].read_text().splitlines()
    assert text[0] == "# " + CAUTION and "STARTING POINT" in text[1]
    assert os.path.getsize(paths[1]) > 0
    with pytest.raises(InputError, match="sizing.material"):
        sizing.material("unobtainium")
    with pytest.raises(InputError, match="front < rear"):
        sizing.size_spar(L1.y, np.full(n, 0.8), np.full(n, 0.1), np.full(n, 0.1),
                         np.full(n, 0.1), 0.6, 0.2, [L1], sizing.MATERIALS["spruce"])


def test_depth_from_thickness_shape_peaks_at_max_thickness():
    # NACA Report 824: the 4-digit thickness is at its maximum t near x/c = 0.30
    d = sizing.depth_from_thickness_shape(np.array([2.0]), np.array([0.12]), 0.30)
    check("NACA Report 824 4-digit thickness distribution", "depth at x/c = 0.30, c = 2, t/c = 0.12 (m)",
          0.24, d[0], rel=2e-3)
