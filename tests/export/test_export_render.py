"""Offscreen 3-D pictures (small meshes) and the screenshot form of `view`."""

import numpy as np
import pytest
from PIL import Image

from geomload.errors import InputError
from geomload.export import render, vtk

from helpers import fakerun


def _pixels(path):
    return np.asarray(Image.open(path).convert("RGB"), float)


@pytest.fixture(scope="module")
def run():
    return fakerun.make_run()


def test_render_all_and_stations(tmp_path, run):
    out = render.render_all(run, tmp_path)
    assert set(out) == set(render.RENDERS)
    for name, p in out.items():
        assert not isinstance(p, Exception), (name, p)
        px = _pixels(p)
        assert px.shape == (render.WINDOW[1], render.WINDOW[0], 3) and px.var() > 0
    p = render.render_stations_png(run.mesh, run.frame, run.stations, tmp_path / "st.png")
    px = _pixels(p)
    # the orange chord lines (R high, B low) are drawn
    orange = (px[..., 0] > 200) & (px[..., 1] > 80) & (px[..., 1] < 190) & (px[..., 2] < 80)
    assert orange.sum() > 50


def test_dcp_colours_differ_between_cases(tmp_path, run):
    a = _pixels(render.render_surface_dcp(run, tmp_path / "a.png", case=run.cases[0].name))
    b = _pixels(render.render_surface_dcp(run, tmp_path / "b.png", case=run.cases[2].name))
    assert np.abs(a - b).mean() > 1.0   # negative vs positive lift paint differently


def test_render_failure_is_returned_not_raised(tmp_path, run, monkeypatch):
    def boom(*a, **k):
        raise RuntimeError("no OpenGL context")  # what a machine without OpenGL would raise

    monkeypatch.setitem(render.RENDERS, "surface_dcp", boom)
    out = render.render_all(run, tmp_path)
    assert isinstance(out["surface_dcp"], RuntimeError)


def test_view_screenshot_and_bad_case(tmp_path, run):
    vtk.write_all_vtk(tmp_path, run)
    p = render.view(tmp_path, case=run.cases[0].name, screenshot=tmp_path / "v.png")
    assert _pixels(p).var() > 0
    with pytest.raises(InputError, match="not in this run"):
        render.view(tmp_path, case="no such case", screenshot=tmp_path / "x.png")
    with pytest.raises(InputError, match="not a geomload run folder"):
        render.view(tmp_path / "missing", screenshot=tmp_path / "y.png")


@pytest.mark.skipif(__import__("sys").platform.startswith(("win", "darwin")),
                    reason="Windows and macOS always have a display")
def test_view_without_a_display_says_so(tmp_path, monkeypatch):
    # a headless machine cannot open a window: one clear line pointing at --screenshot
    # (common practice, no source)
    run = fakerun.make_run(("cruise",))
    vtk.write_all_vtk(tmp_path, run)
    monkeypatch.delenv("DISPLAY", raising=False)
    monkeypatch.delenv("WAYLAND_DISPLAY", raising=False)
    with pytest.raises(InputError, match="--screenshot"):
        render.view(tmp_path)


def test_render_process_gives_the_same_pictures(run):
    """The forked render process returns the same PNGs as rendering in this process."""
    s = vtk.surface_data(run)
    job = render.RenderProcess.start(run, s)
    assert job is not None
    try:
        got = job.result()
    finally:
        job.stop()
    here = render.render_images(run, s)
    assert set(got) == set(here) == set(render.RENDERS)
    import io

    for name in render.RENDERS:
        assert isinstance(got[name], bytes), got[name]
        a = np.asarray(Image.open(io.BytesIO(got[name])).convert("RGB"), float)
        b = np.asarray(Image.open(io.BytesIO(here[name])).convert("RGB"), float)
        assert a.shape == b.shape and np.abs(a - b).mean() < 2.0


def test_render_process_crash_costs_only_the_pictures(run):
    import os
    import signal

    job = render.RenderProcess.start(run, vtk.surface_data(run))
    os.kill(job.proc.pid, signal.SIGKILL)   # a real crash of the child (as a VTK segfault would)
    try:
        got = job.result()
    finally:
        job.stop()
    assert set(got) == set(render.RENDERS)
    assert all(isinstance(v, Exception) and "render process" in str(v) for v in got.values())
    assert not job.proc.is_alive()


def test_png_writer_matches_a_reference_reader():
    # PNG (ISO/IEC 15948) bytes from our encoder decoded by Pillow, pixel for pixel
    rng = np.random.default_rng(1)
    img = rng.integers(0, 256, size=(7, 5, 3), dtype=np.uint8)
    import io

    back = np.asarray(Image.open(io.BytesIO(render.png_bytes(img))))
    np.testing.assert_array_equal(back, img)
    rgba = rng.integers(0, 256, size=(3, 4, 4), dtype=np.uint8)
    np.testing.assert_array_equal(np.asarray(Image.open(io.BytesIO(render.png_bytes(rgba)))), rgba)


def test_pictures_and_view_with_hostile_names(tmp_path):
    names = ("banked turn 60°", "Überziehen", "$\\alpha$ $", "\x1b[2Jclear")
    run = fakerun.make_run(names)
    out = render.render_all(run, tmp_path)
    assert not [v for v in out.values() if isinstance(v, Exception)], out
    vtk.write_all_vtk(tmp_path, run)
    p = render.view(tmp_path, case="Überziehen", screenshot=tmp_path / "shot.png")
    assert _pixels(p).var() > 0


def test_view_screenshot_refuses_a_symlink_target(tmp_path):
    from geomload.errors import OutputError

    run = fakerun.make_run(("cruise",))
    vtk.write_all_vtk(tmp_path, run)
    (tmp_path / "mine.txt").write_text("the user's file\n")
    (tmp_path / "shot.png").symlink_to(tmp_path / "mine.txt")
    with pytest.raises(OutputError, match="symbolic link"):
        render.view(tmp_path, screenshot=tmp_path / "shot.png")
    assert (tmp_path / "mine.txt").read_text() == "the user's file\n"
    with pytest.raises(OutputError, match="input"):  # nor onto the run's own files
        render.view(tmp_path, screenshot=tmp_path / "surface.vtp")


def test_colour_bar_scale_has_no_float_noise():
    from geomload.export.render import scaled_field

    # a bending moment that is zero at the tip up to round-off: the bar starts at 0, ticks are
    # round and printed without exponent (round tick steps of 1, 2, 2.5 or 5 x 10^k: common
    # practice, no source)
    v, bar, clim = scaled_field(np.array([-9.73e-05, 120.0, 287.5]), "N·m", "bending M")
    assert clim == (0.0, 300.0)
    assert bar["fmt"] == "%.0f" and bar["n_labels"] == 7
    assert "(N·m)" in bar["title"] and np.allclose(v, [-9.73e-05, 120.0, 287.5])
    v, bar, clim = scaled_field(np.array([0.0, 41250.0]), "Pa", "lift per plan area")
    assert "(kPa)" in bar["title"] and clim[1] >= 41.25 and v[1] == 41.25
    # the bars stand right of the wing's part of the picture
    assert bar["position_x"] >= 0.78
