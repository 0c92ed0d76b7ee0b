"""Vortex-lattice results against published theory (sources beside each check)."""

import math

import numpy as np
import pytest
from scipy.integrate import quad

from helpers.aero_wings import datcom_lift_slope, elliptic, helmbold, make_stations, naca4_camber, \
    trapezoid
from geomload.aero.lattice import build_lattice
from geomload.aero.refinement import check_convergence, root_bending_coefficient
from geomload.aero.solve import AeroModel
from geomload.errors import AeroError
from helpers.validation import check

LIFTING_LINE = "lifting-line theory (VALIDATION.md 1)"


@pytest.fixture(scope="module")
def elliptic_model():
    st = elliptic(8.0, semispan=5.0, n=120)
    return AeroModel(build_lattice(st, n_span=100, n_chord=4))


def test_elliptic_wing_is_elliptically_loaded(elliptic_model):
    # lifting-line theory (Anderson, Fundamentals of Aerodynamics, ch. 5; VALIDATION.md 1):
    # elliptic planform, untwisted -> elliptic load, e = 1, CDi = CL^2/(pi A)
    sol = elliptic_model.solve(4.0)
    A = 8.0
    check(LIFTING_LINE, "span efficiency e, elliptic wing A = 8 (-)", 1.0, sol.e, abs=0.01)
    check(LIFTING_LINE, "CDi = CL^2/(pi A), elliptic wing A = 8 (-)", sol.CL**2 / (math.pi * A),
          sol.CDi, rel=0.02)
    # the load is elliptic: cl c = l0 sqrt(1 - (y/s)^2) with l0 from the same total
    # (a lifting surface departs slightly from lifting line; 2.5 % of l0 allowed)
    ell = np.sqrt(1 - (sol.y / 5.0) ** 2)
    w = elliptic_model.lattice.strip_width
    l0 = np.sum(sol.cl_c * w) / np.sum(ell * w)
    check(LIFTING_LINE, "max abs(cl c / l0 - sqrt(1 - (y/s)^2)), elliptic wing (-)", 0.0,
          np.max(np.abs(sol.cl_c / l0 - ell)), abs=math.nextafter(0.025, 0))  # strictly < 0.025
    # root bending of an elliptic load: C_B = CL 4/(3 pi) (beam statics, VALIDATION.md 8)
    cb = root_bending_coefficient(sol, elliptic_model.lattice)
    check("beam statics, elliptic load (VALIDATION.md 8)", "root bending coefficient C_B (-)",
          sol.CL * 4 / (3 * math.pi), cb, rel=0.01)


def test_elliptic_lift_slope_helmbold(elliptic_model):
    # Helmbold's equation, VALIDATION.md 2: lifting-surface results agree to a few percent
    sol = elliptic_model.solve(2.0)
    check("Helmbold (VALIDATION.md 2)", "CL_alpha, elliptic wing A = 8 (1/rad)", helmbold(8.0),
          sol.CL_alpha_per_rad, rel=0.03)
    # lifting-line a = a0/(1 + a0/(pi A)) with a0 = 2 pi (VALIDATION.md 1) is an upper bound
    # for a lifting surface (common practice, no source)
    assert sol.CL_alpha_per_rad < 2 * math.pi / (1 + 2 / 8.0)
    # flat wing: no lift at zero incidence (strictly below 1e-8 deg)
    check("thin-airfoil theory, flat plate (VALIDATION.md 4)", "alpha_L0, flat wing (deg)", 0.0,
          sol.alpha_zero_lift_deg, abs=math.nextafter(1e-8, 0))


def thin_airfoil_alpha_l0(code):
    """Thin-airfoil zero-lift angle (deg): -(1/pi) int_0^pi dz/dx (cos t - 1) dt
    (Anderson, Fundamentals of Aerodynamics, eq. 4.61)."""
    h = 1e-7
    slope = lambda x: (naca4_camber(code, x + h) - naca4_camber(code, x - h)) / (2 * h)  # noqa
    f = lambda t: slope(0.5 * (1 - math.cos(t))) * (math.cos(t) - 1)  # noqa: E731
    val = quad(f, 0, math.pi, points=[math.acos(1 - 2 * 0.4)])[0]
    return -math.degrees(val / math.pi)


def test_naca2412_zero_lift_angle():
    # thin-airfoil theory for the NACA 2412 mean line: alpha_L0 = -2.08 deg (VALIDATION.md 4);
    # an untwisted wing of one section has the section's alpha_L0 in linear theory
    ref = thin_airfoil_alpha_l0("2412")
    check("thin-airfoil theory (VALIDATION.md 4)", "alpha_L0 of NACA 2412 mean line, quadrature (deg)",
          -2.08, ref, abs=0.01)
    st = trapezoid(12.0, 1.0, 0.0, camber="2412")
    sol = AeroModel(build_lattice(st, n_span=20, n_chord=10)).solve(0.0)
    check("thin-airfoil theory (VALIDATION.md 4)", "alpha_L0, untwisted NACA 2412 wing (deg)", ref,
          sol.alpha_zero_lift_deg, abs=0.2)
    # thin-airfoil theory (VALIDATION.md 4): alpha_L0 < 0, so at zero incidence
    # CL ~ a (0 - alpha_L0) > 0; with a > 4 /rad at A = 12 that is well above 0.1
    assert sol.CL > 0.1
    # section moment about c/4 of a 2412 mean line: cm = -0.053 thin-airfoil (from memory)
    check("thin-airfoil theory, NACA 2412, from memory", "section cm about c/4, median strip (-)",
          -0.053, np.median(sol.cm_c4), abs=0.008)


def test_swept_tapered_wing_datcom():
    # USAF DATCOM subsonic lift slope, VALIDATION.md 3 (loose, several percent); sweep of the
    # maximum thickness line ~ quarter chord for this check
    A, lam, sweep_qc = 6.0, 0.5, 30.0
    st = trapezoid(A, lam, sweep_qc)
    model = AeroModel(build_lattice(st, n_span=30, n_chord=6))
    sol = model.solve(3.0)
    t_le = math.tan(math.radians(sweep_qc)) + (1 - lam) / (A * (1 + lam))
    t_30 = t_le - 4 * 0.3 * (1 - lam) / (A * (1 + lam))  # sweep of the 30 % chord line
    ref = datcom_lift_slope(A, math.degrees(math.atan(t_30)))
    check("USAF DATCOM (VALIDATION.md 3)", "CL_alpha, A = 6, taper 0.5, 30 deg sweep (1/rad)", ref,
          sol.CL_alpha_per_rad, rel=0.04)
    # aft sweep moves the aerodynamic centre behind the root quarter chord (common practice,
    # no source)
    assert sol.x_ac_m > st.x_le[0] + 0.25 * st.chord[0]


def test_prandtl_glauert_scaling():
    # Prandtl-Glauert (VALIDATION.md 7): loads at M equal incompressible loads on the wing
    # stretched by 1/beta in x, i.e. CL_alpha(M; A) = CL_alpha(0; beta A)/beta; DATCOM gives
    # the same ratio
    A, lam, sw = 6.0, 0.5, 30.0
    st = trapezoid(A, lam, sw)
    lat = build_lattice(st, n_span=24, n_chord=4)
    a0 = AeroModel(lat).solve(2.0).CL_alpha_per_rad
    m = AeroModel(lat, mach=0.5)
    a5 = m.solve(2.0).CL_alpha_per_rad
    t = math.tan(math.radians(sw)) + (1 - lam) / (A * (1 + lam)) - 4 * 0.3 * (1 - lam) / (
        A * (1 + lam))
    sw30 = math.degrees(math.atan(t))
    ratio = datcom_lift_slope(A, sw30, mach=0.5) / datcom_lift_slope(A, sw30)
    check("Prandtl-Glauert with DATCOM (VALIDATION.md 7)",
          "CL_alpha(M 0.5) / CL_alpha(M 0), A = 6, 30 deg sweep (-)", ratio, a5 / a0, rel=0.015)
    assert m.warnings == []  # project behaviour: no compressibility warning below M 0.7
    # high aspect ratio, unswept: section lift slope scales as 1/beta (2-D rule)
    st = trapezoid(40.0, 1.0, 0.0)
    lat = build_lattice(st, n_span=16, n_chord=4)
    r = AeroModel(lat, mach=0.5).solve(1.0).cl[0] / AeroModel(lat).solve(1.0).cl[0]
    check("Prandtl-Glauert 2-D rule (VALIDATION.md 7)", "root cl(M 0.5) / cl(M 0), A = 40 (-)",
          1 / math.sqrt(0.75), r, rel=0.02)
    assert AeroModel(lat, mach=0.75).warnings  # project behaviour: warn from M 0.7


def test_half_wing_with_images_equals_full_span():
    # symmetry: the image system in y = 0 is the mirrored port wing (method of images; Katz &
    # Plotkin, Low-Speed Aerodynamics, ch. 12, chapter from memory)
    st = trapezoid(7.0, 0.6, 20.0, camber="2412", twist_tip_deg=-3.0, dihedral_deg=5.0)
    half = AeroModel(build_lattice(st, n_span=8, n_chord=4)).solve(5.0)
    full = AeroModel(build_lattice(st, n_span=8, n_chord=4, full_span=True)).solve(5.0)
    for k in ("CL", "CDi", "Cm", "e", "CL_alpha_per_rad", "alpha_zero_lift_deg", "x_ac_m"):
        assert getattr(full, k) == pytest.approx(getattr(half, k), rel=1e-9, abs=1e-12), k
    np.testing.assert_allclose(full.cl[8:], half.cl, rtol=1e-9)
    np.testing.assert_allclose(full.cl[:8], half.cl[::-1], rtol=1e-9)
    np.testing.assert_allclose(full.gamma[32:], half.gamma, rtol=1e-9)


def test_linearity_in_alpha_and_trim():
    # linear theory: circulation is cos(a) g_x + sin(a) g_z, so a flat wing's g / sin(a) is fixed
    st = trapezoid(6.0, 0.5, 10.0)
    m = AeroModel(build_lattice(st, n_span=10, n_chord=4))
    s1, s2, s3 = m.solve_many([1.0, 4.0, -6.0])
    np.testing.assert_allclose(s2.gamma / math.sin(math.radians(4)),
                               s1.gamma / math.sin(math.radians(1)), rtol=1e-10)
    np.testing.assert_allclose(s3.gamma, m.solve(-6.0).gamma, rtol=1e-12)
    # linear theory (VALIDATION.md 1, 7): CL proportional to sin(alpha) for a flat wing, so
    # CL(4 deg) / CL(1 deg) = sin 4 / sin 1 = 3.998 (1 % allowed for the near-field force)
    assert s2.CL / s1.CL == pytest.approx(math.sin(math.radians(4)) / math.sin(math.radians(1)),
                                          rel=0.01)
    # internal consistency (no outside source): the trim angle reproduces the asked CL
    a = m.alpha_for_cl(0.5)
    assert m.solve(a).CL == pytest.approx(0.5, rel=1e-9)


def test_stall_onset_tapered_wing_tip_first():
    # a strongly tapered untwisted wing has its highest section cl outboard (Anderson ch. 5,
    # taper and the spanwise cl distribution), so stall starts outboard
    st = trapezoid(8.0, 0.3, 0.0)
    m = AeroModel(build_lattice(st, n_span=16, n_chord=4))
    r = m.stall(1.2)
    assert r["first_station_y"] > 0.5 * 5.0
    # internal consistency (no outside source): at the onset angle the highest strip cl is
    # the given cl_max, and the wing CL is below it (the other strips carry less)
    assert np.max(m.solve(r["alpha_at_onset"]).cl) == pytest.approx(1.2, rel=1e-6)
    assert r["CL_at_onset"] < 1.2 and r["warnings"] == []
    assert m.stall()["warnings"]  # project behaviour: the default cl_max is stated


def test_convergence_with_density():
    # convergence with lattice density: changes shrink with refinement (common practice, no
    # source); the extrapolation is Richardson's (L. F. Richardson, Phil. Trans. R. Soc. A 210,
    # 1911): order p = ln((f1 - f2)/(f2 - f3)) / ln r, f_ext = f3 - (f2 - f3)/(r^p - 1)
    st = trapezoid(6.0, 0.5, 20.0)
    r = check_convergence(st, 5.0, n_span=8, n_chord=2)
    cl = r["CL"]
    d = np.abs(np.diff(cl["values"]))
    assert d[1] < d[0]  # changes shrink with refinement
    assert cl["order"] > 0.5
    assert cl["error"] < 0.01 * cl["extrapolated"]
    # the three levels are independent solves at 8x2, 16x4 and 32x8 panels (recomputed here)
    for k, (ns, nc) in enumerate([(8, 2), (16, 4), (32, 8)]):
        assert cl["values"][k] == pytest.approx(
            AeroModel(build_lattice(st, n_span=ns, n_chord=nc)).solve(5.0).CL, rel=1e-12)
    f1, f2, f3 = cl["values"]
    p = math.log((f1 - f2) / (f2 - f3)) / math.log(2.0)
    src = "Richardson extrapolation (Phil. Trans. R. Soc. A 210, 1911)"
    check(src, "observed order of CL, A = 6 swept wing, r = 2 (-)", p, cl["order"], rel=1e-9)
    check(src, "extrapolated CL, A = 6 swept wing (-)", f3 - (f2 - f3) / (2.0**p - 1.0),
          cl["extrapolated"], rel=1e-12)
    assert r["levels"][2]["panels"] == 16 * r["levels"][0]["panels"]  # (2 x 2)^2 refinement
    assert r["root_bending"]["extrapolated"] > 0  # positive lift bends the wing tip-up


@pytest.mark.parametrize("mach", [1.0, 1.3, float("nan"), -0.1])
def test_bad_mach(mach):
    lat = build_lattice(trapezoid(), n_span=4, n_chord=2)
    with pytest.raises(AeroError, match="mach") as e:
        AeroModel(lat, mach=mach)
    assert "\n" not in str(e.value)


@pytest.mark.parametrize("alpha", [float("nan"), float("inf"), "x"])
def test_bad_alpha(alpha):
    m = AeroModel(build_lattice(trapezoid(), n_span=4, n_chord=2))
    with pytest.raises(AeroError, match="alpha"):
        m.solve(alpha)


def test_degenerate_wing_rejected():
    st = make_stations([0.0, 1.0, 3.0], 0.25, [1.0, 0.8, 0.0], 3.0)
    with pytest.raises(AeroError, match="chord"):
        check_convergence(st, 2.0)
