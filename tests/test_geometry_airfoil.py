"""NACA 4-digit generator checks against the published equations (NACA Report 824)."""

import numpy as np

from geomload.geometry.airfoil import naca4_camber, naca4_surfaces, naca4_thickness


def test_thickness_max_is_t_near_30_percent():
    # NACA Report 824 / Abbott & von Doenhoff 6.4: the 4-digit thickness form has its maximum
    # t at x = 0.30 (within about 1 % of t for these coefficients).
    x = np.linspace(0, 1, 100001)
    yt = naca4_thickness(x, 0.12)
    assert abs(2 * yt.max() / 0.12 - 1) < 0.01
    assert abs(x[np.argmax(yt)] - 0.30) < 0.01


def test_te_thickness_blunt_and_sharp():
    # Report 824: coefficient -0.1015 leaves a finite TE (coefficient sum 0.0021, so 2 y_t(1) = 10 t * 0.0021 = 0.021 t);
    # -0.1036 closes it.
    assert abs(2 * naca4_thickness(1.0, 0.12, True) - 0.12 * 0.021) < 1e-9
    assert abs(naca4_thickness(1.0, 0.12, False)) < 1e-6


def test_camber_max_m_at_p():
    # Abbott & von Doenhoff 6.4: the 4-digit mean line has its maximum m at x = p (2412: 0.02 at 0.4).
    x = np.linspace(0, 1, 10001)
    yc = naca4_camber("2412", x)
    assert abs(yc.max() - 0.02) < 1e-9
    assert abs(x[np.argmax(yc)] - 0.4) < 1e-3
    assert abs(yc[0]) < 1e-12 and abs(yc[-1]) < 1e-12


def test_surfaces_straddle_mean_line():
    # Thickness laid off normal to the mean line: the mid-point of upper and lower points at the
    # same station lies on the mean line (Abbott & von Doenhoff eq. 6.1).
    up, lo = naca4_surfaces("4412", 60)
    mid = 0.5 * (up + lo)
    assert np.allclose(mid[:, 1], naca4_camber("4412", mid[:, 0]), atol=1e-12)
