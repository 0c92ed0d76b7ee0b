"""NACA 4-digit generator checks against the published equations (NACA Report 824)."""

import numpy as np

from helpers import aero_wings
from geomload.geometry.airfoil import naca4_camber, naca4_surfaces, naca4_thickness

from helpers.validation import check


def test_thickness_max_is_t_near_30_percent():
    # NACA Report 824 / Abbott & von Doenhoff 6.4: the 4-digit thickness form has its maximum
    # t at x = 0.30 (within about 1 % of t for these coefficients).
    x = np.linspace(0, 1, 100001)
    yt = naca4_thickness(x, 0.12)
    src = "NACA Report 824 / Abbott & von Doenhoff 6.4, 4-digit thickness form"
    check(src, "max thickness of a 12 % section, 2 y_t max (-)", 0.12, 2 * yt.max(), rel=0.01)
    check(src, "position of max thickness x/c (-)", 0.30, x[np.argmax(yt)], abs=0.01)


def test_te_thickness_blunt_and_sharp():
    # Report 824: coefficient -0.1015 leaves a finite TE (coefficient sum 0.0021, so 2 y_t(1) = 10 t * 0.0021 = 0.021 t);
    # -0.1036 closes it.
    src = "NACA Report 824 thickness coefficients"
    check(src, "blunt TE thickness 2 y_t(1) of a 12 % section (-)", 0.12 * 0.021,
          2 * naca4_thickness(1.0, 0.12, True), abs=1e-9)
    check(src, "closed TE thickness y_t(1), coefficient -0.1036 (-)", 0.0,
          naca4_thickness(1.0, 0.12, False), abs=1e-6)


def test_camber_max_m_at_p():
    # Abbott & von Doenhoff 6.4: the 4-digit mean line has its maximum m at x = p (2412: 0.02 at 0.4).
    x = np.linspace(0, 1, 10001)
    yc = naca4_camber("2412", x)
    src = "Abbott & von Doenhoff 6.4, NACA 2412 mean line"
    check(src, "max camber m (-)", 0.02, yc.max(), abs=1e-9)
    check(src, "position of max camber p (-)", 0.4, x[np.argmax(yc)], abs=1e-3)
    check(src, "mean line at the LE, y_c(0) (-)", 0.0, yc[0], abs=1e-12)
    check(src, "mean line at the TE, y_c(1) (-)", 0.0, yc[-1], abs=1e-12)


def test_surfaces_straddle_mean_line():
    # Thickness laid off normal to the mean line: the mid-point of upper and lower points at the
    # same station lies on the mean line (Abbott & von Doenhoff eq. 6.1). The mean line is
    # evaluated by the test's own copy of the Report 824 equation (tests/aero_wings.py).
    up, lo = naca4_surfaces("4412", 60)
    mid = 0.5 * (up + lo)
    yc = aero_wings.naca4_camber("4412", mid[:, 0])
    assert np.allclose(mid[:, 1], yc, atol=1e-12)
    # the worst point as one row, at np.allclose's own tolerance (rtol 1e-5 + atol 1e-12)
    k = int(np.argmax(np.abs(mid[:, 1] - yc) / (1e-5 * np.abs(yc) + 1e-12)))
    check("Abbott & von Doenhoff eq. 6.1, NACA 4412", f"surface mid-point height on the mean line, "
          f"worst point (x/c = {mid[k, 0]:.3f}) (-)", yc[k], mid[k, 1], rel=1e-5, abs=1e-12)
