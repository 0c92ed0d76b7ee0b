"""The HTML report: every section and picture, pictures decode and are not blank, user text escaped."""

import base64
import io
import json
import re
import subprocess

import numpy as np
import pytest

from geomload import CAUTION
from geomload.export import report, write_all
from geomload.export.run_folder import OutputDir

from helpers import fakerun
from helpers.browser import CHROMIUM, VIEW_STATE_JS, Browser, need_chromium, requested_urls, shot, wait_for

EVIL = "<script>alert(1)</script>"


@pytest.fixture(scope="module")
def rundir(tmp_path_factory):
    run = fakerun.make_run(("cruise 1g", EVIL, "push -1.5g"))
    out = tmp_path_factory.mktemp("r") / "run"
    with OutputDir(out, inputs=[run.case_path]) as od:
        res = write_all(run, od.staging, options={"--n-stations": 12})
    return run, out, res


def _images(html):
    return re.findall(r'<img alt="([^"]*)" src="data:image/png;base64,([A-Za-z0-9+/=]+)"', html)


def test_all_outputs_present(rundir):
    run, out, res = rundir
    for rel in res["files"]:
        assert (out / rel).is_file(), rel
    for name in ("stations.csv", "summary.json", "envelope.csv", "vn.csv", "lattice.vtp",
                 "spar_axis.vtp", "surface.vtp", "report.html", "plots/vn.svg", "plots/loads.png"):
        assert (out / name).is_file(), name
    assert len(list((out / "loads").glob("*.csv"))) == 3
    assert json.loads((out / "summary.json").read_text())["caution"] == CAUTION


def test_report_sections_and_images(rundir):
    run, out, res = rundir
    html = (out / "report.html").read_text()
    for key, title in report.SECTIONS:
        assert f'<section id="{key}"><h2>{title}</h2>' in html
    # the job and the caution come first
    assert html.index(CAUTION) < html.index('<section id="geometry"')
    imgs = _images(html)
    expected = {n for n in res["images"]}
    assert len(imgs) == len(expected) == 9
    for name in expected:
        assert f'id="img-{name}"' in html
    from PIL import Image
    for alt, data in imgs:
        px = np.asarray(Image.open(io.BytesIO(base64.b64decode(data))).convert("RGB"), float)
        assert px.var() > 0, alt            # not blank
        assert min(px.shape[:2]) > 100
    assert "src=\"http" not in html and "<link" not in html   # self-contained


def test_user_strings_escaped(rundir):
    run, out, _ = rundir
    html = (out / "report.html").read_text()
    assert EVIL not in html
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html
    # the only scripts are the 3-D view's four blocks (library, controls, data, code)
    assert html.lower().count("<script") == 4
    outside = html.split('<div class="gl3"', 1)[0]
    assert "<script" not in outside.lower()
    assert "--n-stations" in html and "pellin_wing.stl" in html  # inputs echoed


def test_render_failure_message(rundir):
    run, out, res = rundir
    imgs = {k: out / v for k, v in res["images"].items()}
    imgs["surface_dcp"] = RuntimeError("no OpenGL context\nsecond line")
    html = report.render_html(run, imgs)
    assert "3D render unavailable: no OpenGL context second line" in html
    assert len(_images(html)) == 8


def test_report_without_envelope(rundir):
    run, _, res = rundir
    import dataclasses
    bare = dataclasses.replace(run, envelope=None, vn=None)
    _, out, _ = rundir
    html = report.render_html(bare, {k: out / v for k, v in res["images"].items() if k != "vn"})
    assert "No envelope was defined" in html and "No V-n diagram" in html


def test_chromium_screenshot(rundir, tmp_path):
    need_chromium()
    _, out, _ = rundir
    shot = tmp_path / "shot.png"
    subprocess.run([CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu",
                    f"--screenshot={shot}", "--window-size=1200,2000",
                    (out / "report.html").as_uri()], check=True, timeout=60, capture_output=True)
    from PIL import Image
    px = np.asarray(Image.open(shot).convert("RGB"), float)
    assert px.var() > 0


def test_report_in_chromium_draws_3d_view_offline(rundir, tmp_path):
    """The whole report.html in headless Chromium: the new sections are there, the 3-D view
    draws (canvas pixels not blank, many colours) and the page makes no network request."""
    need_chromium()
    run, out, _ = rundir
    page = out / "report.html"
    html = page.read_text()
    for key in ("masses", "station_table", "view3d"):
        assert f'<section id="{key}">' in html, key
    assert "<h3>Design speeds</h3>" in html and "V_S1 (m/s EAS)" in html
    assert "in-plane bending max (N·m)" in html
    # settings in words, no Python literals; residual noise shown as balanced
    inputs = html.split('<section id="inputs">', 1)[1].split("</section>", 1)[0]
    for lit in (">None<", ">True<", ">False<"):
        assert lit not in inputs, lit
    assert "balanced (|residual| &lt; 1e-09)" in html
    (tmp_path / "profile").mkdir()
    b = Browser(tmp_path / "profile")
    try:
        s = b.open_page(page.as_uri(), 1100, 900)
        b.eval("document.getElementById('view3d').scrollIntoView()", s)
        state = wait_for(b, s, VIEW_STATE_JS)
        assert state == "1", state
        b.eval("document.querySelector('.gl3-canvas').scrollIntoView()", s)
        rect = json.loads(b.eval("JSON.stringify((function(){var r=document.querySelector("
                                 "'.gl3-canvas').getBoundingClientRect();return {x:r.x+scrollX,y:r.y+scrollY,"
                                 "width:r.width,height:r.height}})())", s))
        assert rect["width"] > 300 and rect["height"] > 300
        px = shot(b, s, rect)
        shown = b.eval("document.querySelector('.gl3').dataset.shown", s)
        events = list(b.events)
    finally:
        b.close()
    # the view opens on the critical case (largest root bending)
    from geomload.export import envelope_access as ea
    assert shown == ea.critical_case(run).name
    bg = np.array([247, 247, 247])
    drawn = np.any(np.abs(px - bg) > 6, axis=2)
    assert drawn.mean() > 0.02, "3-D canvas is (nearly) blank"
    assert len({tuple(c) for c in (px[drawn] // 4).tolist()}) > 50
    urls = requested_urls(events)
    assert urls and all(u.split(":", 1)[0] in ("file", "blob", "data") for u in urls), urls
    errors = [e for e in events if e.get("method") == "Runtime.exceptionThrown"]
    assert not errors, errors[:3]
    assert page.stat().st_size < 10e6
