"""Balancing tail load: equilibrium and the classical two-force statics."""

import pytest

from helpers.aero_wings import trapezoid
from geomload.aero.lattice import build_lattice
from geomload.aero.pitch_trim import Tailplane, trim_pitch
from geomload.aero.solve import AeroModel
from geomload.errors import CaseError
from helpers.validation import check

STATICS = "rigid-body statics in pitch (Perkins & Hage, Airplane Performance Stability and " \
          "Control, ch. 5)"


@pytest.fixture(scope="module")
def wing():
    st = trapezoid(7.5, 0.5, sweep_qc_deg=3.0, semispan=5.5, camber="4412", twist_tip_deg=-2.0)
    return AeroModel(build_lattice(st, n_span=20, n_chord=6))


def _trim(model, x_cg, n=3.8, cm0=-0.02):
    lat = model.lattice
    tail = Tailplane(area_m2=3.2, x_ac_m=lat.x_ref[0] + 5.0)
    return trim_pitch(model.coefficients, lat.s_ref, lat.c_ref, lat.x_ref[0], n, 11000.0,
                      2400.0, x_cg, tail, cm0_fuselage=cm0)


@pytest.mark.parametrize("cg_frac", [0.15, 0.32])
def test_trim_equilibrium_and_closed_form(wing, cg_frac):
    lat = wing.lattice
    x_le = lat.x_ref[0] - 0.25 * lat.c_ref
    x_cg = x_le + cg_frac * lat.c_ref
    n, W, q, cm0 = 3.8, 11000.0, 2400.0, -0.02
    t = _trim(wing, x_cg, n, cm0)
    check(STATICS, f"n W = wing + tail load, c.g. {100 * cg_frac:g} % MAC (N)", n * W,
          t.wing_lift_N + t.tail_load_N, rel=1e-3)
    check(STATICS, f"pitching moment about the c.g. / (n W MAC), c.g. {100 * cg_frac:g} % MAC",
          0.0, t.residual_moment_Nm / (n * W * lat.c_ref), abs=1e-6)
    # closed form with the wing's aerodynamic centre x_ac and Cm_ac (linear wing):
    # L_w = (n W l_t - q S c (Cm_ac + Cm0)) / (l_t + x_cg - x_ac), L_t = n W - L_w
    sol = wing.solve(0.0)
    cm_ac = wing.coefficients(sol.alpha_zero_lift_deg)[1]
    lt = t.tail_arm_m
    qSc = q * lat.s_ref * lat.c_ref
    Lw = (n * W * lt - qSc * (cm_ac + cm0)) / (lt + x_cg - sol.x_ac_m)
    # the near-field lift is CL_lin cos^2(a) (see aero.solve), so the ac moves slightly with
    # alpha (measured: 12 N of 42 kN at n = 3.8): 0.1 % of n W allowed
    check(STATICS, f"tail load vs two-force statics, c.g. {100 * cg_frac:g} % MAC (N)",
          n * W - Lw, t.tail_load_N, abs=1e-3 * n * W)


def test_forward_cg_needs_more_down_load(wing):
    lat = wing.lattice
    x_le = lat.x_ref[0] - 0.25 * lat.c_ref
    fwd, aft = _trim(wing, x_le + 0.12 * lat.c_ref), _trim(wing, x_le + 0.35 * lat.c_ref)
    # statics (common practice, no source): a forward c.g. is balanced by a more negative tail load
    assert fwd.tail_load_N < aft.tail_load_N
    assert fwd.wing_lift_N > aft.wing_lift_N


def test_bad_trim_inputs(wing):
    lat = wing.lattice
    x_le = lat.x_ref[0] - 0.25 * lat.c_ref
    with pytest.raises(CaseError, match=r"^cg.x_m: .* outside the MAC"):
        _trim(wing, x_le + 1.6 * lat.c_ref)
    with pytest.raises(CaseError, match=r"^cg.x_m: .* outside the MAC"):
        _trim(wing, x_le - 0.6 * lat.c_ref)
    tail = Tailplane(area_m2=3.0, x_ac_m=x_le + 0.25 * lat.c_ref)
    with pytest.raises(CaseError, match=r"^tail.x_ac_m: tail arm 0 m"):
        trim_pitch(wing.coefficients, lat.s_ref, lat.c_ref, lat.x_ref[0], 1.0, 1e4, 2e3,
                   x_le + 0.25 * lat.c_ref, tail)


def test_fused_on_axis_coefficients_match_the_composition(wing):
    """The model's one-function force coefficient on the body axis (what a pitch trim with
    the body load-factor axis calls) equals the general composition of CL, Cm and the induced
    drag form to the bit (the same arithmetic; both are this program's, so the check is of
    one against the other: common practice, no source)."""
    from geomload.aero.control_models import axis_coefficients

    form, cd0 = (0.011, -0.004, 0.052), 0.027
    fused = axis_coefficients(wing.coefficients, form, cd0)
    general = axis_coefficients(lambda a: wing.coefficients(a), form, cd0)
    assert "AeroModel.axis_coefficients" in fused.__qualname__  # the fused path is taken
    assert "AeroModel" not in general.__qualname__
    for a in (-12.0, -3.3, 0.0, 1e-9, 4.7, 11.25, 17.0):
        assert fused(a) == general(a)
    lat = wing.lattice
    tail = Tailplane(area_m2=3.2, x_ac_m=lat.x_ref[0] + 5.0)
    trims = [trim_pitch(c, lat.s_ref, lat.c_ref, lat.x_ref[0], 3.8, 11000.0, 2400.0,
                        lat.x_ref[0], tail, cm0_fuselage=-0.02) for c in (fused, general)]
    assert trims[0] == trims[1]
