"""2-D plots: units on every axis, reference shapes of the right total lift, files written."""

import numpy as np
import pytest

from geomload.export import plots

from helpers import fakerun


@pytest.fixture(scope="module")
def run():
    return fakerun.make_run()


def test_every_axis_has_a_label_with_units(run):
    figs = plots.build_figures(run)
    assert set(figs) == {"planform", "spanwise", "cl_alpha", "loads", "inplane", "vn"}
    for name, fig in figs.items():
        assert not isinstance(fig, Exception), (name, fig)
        for ax in fig.axes:
            for lab in (ax.get_xlabel(), ax.get_ylabel()):
                assert "(" in lab and ")" in lab, (name, lab)   # "(m)", "(N)", "(-)", ...


def test_reference_shapes_carry_the_same_lift(run):
    # elliptic load 4 CL S/(pi b) sqrt(1-(2y/b)^2): its integral over the span is CL S
    # (Prandtl lifting line; integral of sqrt(1-t^2) over [-1, 1] is pi/2). Schrenk (NACA TM 948)
    # is the mean of that and the planform-shaped load, so it carries CL S too.
    cr = run.cases[1]
    sh = plots.spanload_shapes(run, cr)
    S, q = run.lattice.s_ref, cr.q_pa
    integ = lambda f, yy=sh["y_ref"]: 2 * np.sum(0.5 * (f[1:] + f[:-1]) * np.diff(yy))  # noqa: E731
    # running loads in N/m: both sides integrate to the lift CL q S (N)
    assert integ(sh["elliptic"]) == pytest.approx(cr.aero.CL * q * S, rel=5e-3)  # sqrt edge: trapezoid
    # the loads' own Schrenk cross-check (with the twist's basic loading) is drawn as it is
    assert np.array_equal(sh["schrenk"], cr.loads.schrenk_lift_N_per_m)
    assert sh["schrenk_label"] == "Schrenk with twist"
    # without it, the planform/elliptic mean of the same lift
    import dataclasses

    bare = dataclasses.replace(cr, loads=dataclasses.replace(
        cr.loads, schrenk_lift_N_per_m=np.full_like(cr.loads.y, np.nan)))
    sh = plots.spanload_shapes(run, bare)
    assert sh["schrenk_label"] == "Schrenk"
    assert integ(sh["schrenk"], sh["y_schrenk"]) == pytest.approx(cr.aero.CL * q * S, rel=5e-3)
    assert sh["elliptic"][0] == pytest.approx(4 * cr.aero.CL * q * S / (np.pi * run.lattice.b_ref))
    assert np.allclose(sh["case"], np.asarray(cr.aero.cl_c) * q)


def test_make_plots_writes_png_and_vn_svg(tmp_path, run):
    out = plots.make_plots(run, tmp_path)
    for name, p in out.items():
        assert p.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n", name
    svg = (tmp_path / "vn.svg").read_text()
    assert svg.lstrip().startswith("<?xml") and "<svg" in svg
    for c in run.vn[0].corners:   # every corner and gust point is labelled
        assert f"<!-- {c.label} -->" in svg


def test_one_bad_plot_does_not_stop_the_others(run, monkeypatch):
    def boom(*a, **k):
        raise ValueError("no sweep")

    monkeypatch.setattr(plots, "plot_cl_alpha", boom)
    figs = plots.build_figures(run)
    assert isinstance(figs["cl_alpha"], ValueError) and not isinstance(figs["loads"], Exception)
