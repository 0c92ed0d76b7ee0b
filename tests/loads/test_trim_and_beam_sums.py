"""Two exact reformulations checked against the direct computation they replace.

- Trim: the induced drag of a vortex lattice is a quadratic form of the circulation (Trefftz
  plane, Katz & Plotkin sec. 8.3), and the circulation at any angle is cos(a) G_x + sin(a) G_z
  (linearity of the tangency condition); so CDi(alpha) from the form fixed by three solves equals
  a full solve at any angle, and the trim by superposition equals the trim by repeated solves.
- Beam: the resultant about each spar point of all loads outboard of it is, by definition (statics),
  sum_j [m_j + (P_j - P_i) x f_j]; the cumulative sums equal that direct double sum.
"""

from __future__ import annotations

import numpy as np
import pytest

from helpers.aero_wings import trapezoid
from geomload.aero.lattice import build_lattice
from geomload.aero.models import MachModels
from geomload.aero.solve import AeroModel
from geomload.aero.trim import trim
from geomload.loads.beam import _segment_moments, integrate_loads
from helpers.validation import check


@pytest.fixture(scope="module")
def models():
    lat = build_lattice(trapezoid(aspect=7.0, taper=0.45, sweep_qc_deg=10.0, dihedral_deg=4.0),
                        n_span=14, n_chord=5)
    return MachModels(lat)


def test_induced_drag_form_equals_a_full_solve(models):
    q = models.induced_drag_form(0.2)
    model = models.get(0.2)
    for a in (-7.0, -1.0, 3.0, 11.0, 17.0):
        ca, sa = np.cos(np.radians(a)), np.sin(np.radians(a))
        cdi = q[0] * ca * ca + 2 * q[1] * ca * sa + q[2] * sa * sa
        check("Trefftz-plane drag is quadratic in the circulation (Katz & Plotkin 8.3)",
              f"CDi at {a} deg, quadratic form vs full solve (-)", model.solve(a).CDi, cdi,
              rel=1e-10, abs=1e-15)


@pytest.mark.parametrize("cf", [-0.6, 0.3, 1.1])
def test_trim_by_superposition_equals_trim_by_solves(models, cf):
    model = models.get(0.2)
    a1, s1, cl1 = trim(model, cf, 0.012, True, models.induced_drag_form(0.2))
    a2, s2, cl2 = trim(model, cf, 0.012, True, None)
    assert a1 == pytest.approx(a2, rel=1e-11, abs=1e-12)
    assert cl1 == pytest.approx(cl2, rel=1e-11, abs=1e-12)
    # the trimmed normal force CN = CL cos a + CD sin a is the one asked for (definition)
    a = np.radians(a1)
    assert s1.CL * np.cos(a) + (s1.CDi + 0.012) * np.sin(a) == pytest.approx(cf, rel=1e-9)


def test_beam_cumulative_sums_equal_the_direct_sum():
    rng = np.random.default_rng(7)
    n = 40
    y = np.sort(rng.uniform(0.0, 3.0, n))
    sx, sz = 0.1 + 0.05 * y, 0.04 * y
    r = integrate_loads(y, sx, sz, rng.uniform(50, 200, n), drag_N_per_m=rng.uniform(1, 5, n),
                        inertia_N_per_m=rng.uniform(5, 20, n), load_x=sx + rng.uniform(-.1, .1, n),
                        alpha_deg=6.0)
    p = np.column_stack([sx, y, sz])
    a = r.applied
    ca, sa = np.cos(np.radians(6.0)), np.sin(np.radians(6.0))
    f = np.column_stack([a.drag_N_per_m * ca - a.lift_N_per_m * sa, a.side_N_per_m,
                         a.lift_N_per_m * ca + a.drag_N_per_m * sa])
    fa, ma = _segment_moments(y, p, np.column_stack([a.load_x_m, y, a.load_z_m]), f)
    q = a.inertia_N_per_m
    fi, mi = _segment_moments(y, p, np.column_stack([a.inertia_x_m, y, a.inertia_z_m]),
                              np.column_stack([q * sa, 0 * q, -q * ca]))
    seg_f, seg_m = fa + fi, ma + mi
    for i in range(n):  # statics: every segment outboard of station i, moved to P_i
        force = seg_f[i:].sum(axis=0)
        moment = (seg_m[i:] + np.cross(p[i:-1] - p[i], seg_f[i:])).sum(axis=0)
        np.testing.assert_allclose(r.force_N[i], force, rtol=1e-12, atol=1e-9)
        np.testing.assert_allclose(r.moment_Nm[i], moment, rtol=1e-12, atol=1e-9)
