"""Error bars on the headline loads: the Richardson estimate from the run's lattice and coarser
ones must bound the change of every case's root loads on a lattice twice as fine."""

from __future__ import annotations

import math

import pytest
from batch_helpers import SAMPLE

from validation import check

from geomload.batch import _api
from geomload.batch.errorbars import _roots, envelope_errors, estimate_errors, richardson


def test_richardson_on_a_first_order_sequence():
    # analytic: Q(h) = 1 + h (first order); from h = 1/4, 1/2, 1: Q_h error is exactly 1/4
    e, p, mono = richardson(1.25, 1.5, 2.0)
    assert mono
    check("Richardson (1911), analytic sequence Q = 1 + h", "observed order (-)", 1.0, p, rel=1e-12)
    check("Richardson (1911), analytic sequence Q = 1 + h", "error of Q(1/4) (-)", 0.25, e,
          rel=1e-12)
    # second order Q = 1 + h^2: the estimate (first order assumed at most) is conservative
    e, p, mono = richardson(1.0625, 1.25, 2.0)
    assert mono and math.isclose(p, 2.0) and e >= 0.0625
    e, p, mono = richardson(1.0, 1.1, 0.9)  # oscillating: flagged, larger difference
    assert not mono and math.isclose(e, 0.2)


@pytest.mark.filterwarnings("ignore")
def test_estimate_bounds_a_twice_finer_lattice():
    case = _api.load_case(SAMPLE)
    run = _api.compute(case)
    est = estimate_errors(case, run)
    fine_run = _api.compute(_api.with_lattice(case, 2 * case.lattice.n_span,
                                              2 * case.lattice.n_chord))
    finer = _roots(fine_run)
    here = _roots(run)
    assert set(est) == set(here) and len(here) > 20
    for name, q in here.items():
        for key in ("root_shear_N", "root_bending_Nm", "root_torsion_Nm"):
            change = abs(finer[name][key] - q[key])
            # reference: the same case on a lattice twice as fine in each direction
            assert change <= est[name][key], (name, key, change, est[name][key])
    env = envelope_errors(est)
    a, b = _api.envelope_table(run.envelope), _api.envelope_table(fine_run.envelope)
    for q, key in (("shear", "root_shear_N"), ("bending", "root_bending_Nm"),
                   ("torsion", "root_torsion_Nm")):
        for side in ("max", "min"):
            assert abs(float(b[f"{q}_{side}"][0]) - float(a[f"{q}_{side}"][0])) <= env[key]
