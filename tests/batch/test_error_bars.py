"""Error bars on the headline loads: the Richardson estimate from the run's lattice and coarser
ones must bound the change of every case's root loads on a lattice twice as fine."""

from __future__ import annotations

import math

import pytest
from helpers.batch_helpers import SAMPLE

from helpers.validation import check

from geomload.batch import _api
# the batch package's names (a shim of geomload.aero.convergence)
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


# ------------------------------------------------------------------- wired into run (the library)
WINGS = {  # two generated wings (tests/wingfactory.py): a moderate and a strongly swept one
    "tapered_ar9": dict(semispan=1.8, root_chord=0.45, taper=0.45, sweep_le_deg=3.0,
                        dihedral_deg=4.0, washout_deg=2.0),
    "swept_ar5": dict(semispan=1.2, root_chord=0.6, taper=0.3, sweep_le_deg=30.0,
                      dihedral_deg=0.0, washout_deg=4.0),
}


def _wing_case(tmp_path, name, kw, n_span=12, n_chord=4):
    import numpy as np
    from helpers.wingfactory import design, wing_triangles

    from geomload.geometry.read import STL_RECORD

    tris = wing_triangles(design(**kw), n_chord=40, n_span=30)
    rec = np.zeros(tris.shape[0], STL_RECORD)
    rec["v"] = tris
    stl = tmp_path / f"{name}.stl"
    stl.write_bytes(b"\0" * 80 + np.uint32(tris.shape[0]).tobytes() + rec.tobytes())
    case = tmp_path / f"{name}.toml"
    case.write_text(f"""title = "{name}"
[geometry]
file = "{stl.name}"
units = "m"
stations = 16
[aircraft]
gross_mass_kg = 30.0
cl_max = 1.4
[wing_mass]
total_kg = 3.0
[[load_case]]
name = "pull-up"
speed = 30.0
load_factor = 3.0
[[load_case]]
name = "push-over"
speed = 35.0
load_factor = -1.0
[lattice]
n_span = {n_span}
n_chord = {n_chord}
""")
    return case


@pytest.mark.filterwarnings("ignore")
@pytest.mark.parametrize("wing", sorted(WINGS))
def test_run_error_bars_bound_a_twice_finer_lattice_on_generated_wings(tmp_path, wing):
    from geomload.config import read_case_file
    from geomload.pipeline import compute

    case = read_case_file(_wing_case(tmp_path, wing, WINGS[wing]))
    run = compute(case, error_bars=True)
    assert run.error_bars is not None and run.timings["error estimate"] > 0
    finer = _roots(compute(_api.with_lattice(case, 2 * case.lattice.n_span,
                                             2 * case.lattice.n_chord)))
    for name, q in _roots(run).items():
        bar = run.error_bars.of(name).values()
        for key in ("root_shear_N", "root_bending_Nm", "root_torsion_Nm"):
            change = abs(finer[name][key] - q[key])
            # reference: the same case solved on a lattice twice as fine in each direction
            check("vortex lattice twice as fine in each direction (Richardson 1911 bound)",
                  f"{wing} {name} {key}: change <= estimate", 1.0,
                  float(change <= bar[key]), abs=0.0)


def test_summary_and_console_carry_the_error_bars(tmp_path):
    import json

    from geomload.config import read_case_file
    from geomload.export.tables import summary
    from geomload.pipeline import compute
    from geomload.report_text import run_table

    case = read_case_file(_wing_case(tmp_path, "w", WINGS["tapered_ar9"]))
    run = compute(case, error_bars=True)
    s = json.loads(json.dumps(summary(run)))
    for c in s["cases"]:
        e = c["error_estimate"]
        assert set(e) >= {"root_shear_N", "root_bending_Nm", "root_torsion_Nm"}
        assert e["root_bending_Nm"] == pytest.approx(run.error_bars.of(c["name"]).root_bending_Nm)
        assert e["root_bending_Nm"] > 0
    table = run_table(run)
    assert table.count("+-") >= 3 * len(run.cases)
    # at most one warning per quantity, never one per case
    flagged = [m for m in run.messages if m.text.startswith("error estimate:")]
    assert len(flagged) <= 3
    assert compute(case).error_bars is None  # the in-memory default stays as it was
