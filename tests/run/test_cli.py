"""Command-line contract: exit codes, one-line errors, atomic run folders, never a lost input.

Exit codes (README "Exit codes", geomload/cli/): 0 ok, 1 bad input, 2 usage, 3 internal error
with a pointer to report it, 130 interrupted (128 + SIGINT 2, the POSIX shell convention for a
process ended by a signal; common practice, no source). Failures are injected by monkeypatching
a library step; the folder checks follow the product's rule: a run that fails part-way leaves
no partial file.
"""

from __future__ import annotations
from helpers.paths import ROOT, TESTS

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

import geomload.export.vtk
import geomload.geometry
import geomload.pipeline
from geomload.cli import cli
from helpers.nothinglost import leftovers, snapshot

HERE = TESTS
from helpers import make_corpus  # noqa: E402


@pytest.fixture(scope="module")
def corpus(tmp_path_factory):
    folder = tmp_path_factory.mktemp("cli_corpus")
    make_corpus.build(folder)
    return folder


def _run(args, **kw):
    return CliRunner().invoke(cli, [str(a) for a in args], **kw)


# ---------------------------------------------------------------------------- exit code 0
def test_exit_0_run_writes_the_folder_and_keeps_inputs(corpus, tmp_path):
    before = snapshot(corpus)
    out = tmp_path / "run"
    res = _run(["run", corpus / "good.toml", "--out", out, "--no-render"])
    assert res.exit_code == 0, res.stderr
    for rel in ("stations.csv", "summary.json", "loads/pull-up.csv", "lattice.vtp",
                "spar_axis.vtp", "surface.vtp", "report.html"):
        assert (out / rel).is_file(), rel
    assert snapshot(corpus) == before  # inputs untouched
    assert not leftovers(tmp_path)
    # the run ends with the table and the caution (the product's output rule)
    caution = geomload.CAUTION.strip().splitlines()[-1]
    assert "pull-up" in res.stdout and caution in res.stdout
    assert res.stdout.index("pull-up") < res.stdout.index(caution)
    summary = json.loads((out / "summary.json").read_text())
    assert [c["name"] for c in summary["cases"]] == ["pull-up"]


def test_exit_0_inspect_csv_and_json(corpus, tmp_path):
    csv = tmp_path / "st.csv"
    res = _run(["inspect", corpus / "wing.stl", "--stations", "8", "--csv", csv, "--json"])
    assert res.exit_code == 0, res.stderr
    data = json.loads(res.stdout)
    assert len(data["stations"]["y_m"] if isinstance(data["stations"], dict) else data["stations"]) == 8
    lines = csv.read_text().splitlines()
    header = next(ln for ln in lines if not ln.startswith("#"))
    for col in ("y_m", "x_le_m", "z_le_m", "chord_m", "twist_deg", "thickness_ratio", "camber_ratio"):
        assert col in header.split(","), col  # the station-table columns
    assert lines[0].startswith("#")


def test_new_case_template_round_trip(corpus, tmp_path):
    """`geomload new-case GEOMETRY > case.toml` gives a case the tool accepts and runs."""
    res = _run(["new-case", corpus / "wing.stl"])
    assert res.exit_code == 0, res.stderr
    # the unit written is stated as a guess, the path as absolute (it was given so)
    assert 'units = "m" guessed' in res.stderr and "absolute, as given" in res.stderr
    case = tmp_path / "case.toml"
    case.write_text(res.stdout)
    from geomload.case import load_case

    c = load_case(case)
    assert Path(c.geometry.file) == (corpus / "wing.stl").resolve()
    r = _run(["run", case, "--out", tmp_path / "out", "--no-render"])
    assert r.exit_code == 0, r.stderr


def test_version_and_help():
    assert _run(["--version"]).exit_code == 0
    for cmd in ([], ["inspect"], ["aero"], ["new-case"], ["run"], ["view"]):
        r = _run([*cmd, "--help"])
        assert r.exit_code == 0 and "Usage" in r.stdout, cmd


# ---------------------------------------------------------------------------- exit code 2
@pytest.mark.parametrize("args", [["--bogus"], ["inspect"], ["run", "x.toml"],
                                  ["aero", "w.stl", "--alpha", "abc"], ["frobnicate"]])
def test_exit_2_usage(args):
    r = _run(args)
    assert r.exit_code == 2
    assert "Traceback" not in r.stdout + r.stderr and "Error:" in r.stderr


# ---------------------------------------------------------------------------- exit code 3
def _boom(*a, **k):
    raise RuntimeError("injected failure")


def test_exit_3_internal_error_points_to_a_report(corpus, monkeypatch):
    monkeypatch.delenv("GEOMLOAD_DEBUG", raising=False)
    monkeypatch.setattr(geomload.geometry, "read_wing", _boom)
    r = _run(["inspect", corpus / "wing.stl"])
    assert r.exit_code == 3
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("geomload: internal error:")
    assert "RuntimeError" in lines[0] and "please report" in lines[0]
    assert "Traceback" not in r.stdout + r.stderr


def test_debug_variable_lets_the_traceback_through(corpus, monkeypatch):
    monkeypatch.setenv("GEOMLOAD_DEBUG", "1")
    monkeypatch.setattr(geomload.geometry, "read_wing", _boom)
    r = _run(["inspect", corpus / "wing.stl"])
    assert isinstance(r.exception, RuntimeError)


def test_exit_3_mid_export_leaves_nothing(corpus, tmp_path, monkeypatch):
    """A crash after some outputs were staged: no run folder, no staging folder, inputs intact."""
    monkeypatch.delenv("GEOMLOAD_DEBUG", raising=False)
    before = snapshot(corpus)
    monkeypatch.setattr(geomload.export.vtk, "write_all_vtk", _boom)
    r = _run(["run", corpus / "good.toml", "--out", tmp_path / "out", "--no-render"])
    assert r.exit_code == 3 and "please report" in r.stderr
    assert list(tmp_path.iterdir()) == []
    assert snapshot(corpus) == before


def test_failed_forced_run_keeps_the_previous_run(corpus, tmp_path, monkeypatch):
    out = tmp_path / "out"
    assert _run(["run", corpus / "good.toml", "--out", out, "--no-render"]).exit_code == 0
    old = {p.relative_to(out): p.read_bytes() for p in out.rglob("*") if p.is_file()}
    monkeypatch.delenv("GEOMLOAD_DEBUG", raising=False)
    monkeypatch.setattr(geomload.export.vtk, "write_all_vtk", _boom)
    r = _run(["run", corpus / "good.toml", "--out", out, "--no-render", "--force"])
    assert r.exit_code == 3
    now = {p.relative_to(out): p.read_bytes() for p in out.rglob("*") if p.is_file()}
    assert now == old
    assert not leftovers(tmp_path)


def test_forced_run_replaces_an_earlier_run_only(corpus, tmp_path):
    out = tmp_path / "out"
    r = _run(["run", corpus / "good.toml", "--out", out, "--no-render"])
    assert r.exit_code == 0, r.stderr
    first = (out / "summary.json").read_bytes()
    r = _run(["run", corpus / "good.toml", "--out", out, "--no-render", "--force"])
    assert r.exit_code == 0, r.stderr
    assert (out / "summary.json").is_file() and (out / "geomload-run.json").is_file()
    assert not leftovers(tmp_path)
    # a folder geomload did not make is refused even with --force, and survives byte for byte
    mine = tmp_path / "mine"
    mine.mkdir()
    (mine / "notes.txt").write_text("my own notes\n")
    r = _run(["run", corpus / "good.toml", "--out", mine, "--no-render", "--force"])
    assert r.exit_code == 1
    assert (mine / "notes.txt").read_text() == "my own notes\n"
    assert first


# -------------------------------------------------------------------------- exit code 130
def _interrupt(*a, **k):
    raise KeyboardInterrupt


@pytest.mark.parametrize("where", ["compute", "export"])
def test_exit_130_interrupted_run_leaves_no_folder(where, corpus, tmp_path, monkeypatch):
    if where == "compute":
        monkeypatch.setattr(geomload.pipeline, "compute", _interrupt)
    else:  # after stations.csv, loads/*.csv and summary.json are staged
        monkeypatch.setattr(geomload.export.vtk, "write_all_vtk", _interrupt)
    before = snapshot(corpus)
    r = _run(["run", corpus / "good.toml", "--out", tmp_path / "out", "--no-render"])
    assert r.exit_code == 130
    assert "interrupted" in r.stderr and "Traceback" not in r.stdout + r.stderr
    assert list(tmp_path.iterdir()) == []
    assert snapshot(corpus) == before


def test_exit_130_inspect(corpus, monkeypatch):
    monkeypatch.setattr(geomload.geometry, "read_wing", _interrupt)
    r = _run(["inspect", corpus / "wing.stl"])
    assert r.exit_code == 130 and "interrupted" in r.stderr


# -------------------------------------------------------------------------- real processes
_INJECT = """
import sys, geomload.geometry as g
def f(*a, **k):
    raise {exc}
g.read_wing = f
from geomload.cli import main
main(sys.argv[1:])
"""


@pytest.mark.parametrize("exc,code,text", [("RuntimeError('injected')", 3, "please report"),
                                           ("KeyboardInterrupt", 130, "interrupted")])
def test_real_process_exit_codes_3_and_130(exc, code, text, corpus):
    env = {k: v for k, v in os.environ.items() if k != "GEOMLOAD_DEBUG"}
    p = subprocess.run([sys.executable, "-c", _INJECT.format(exc=exc), "inspect",
                        str(corpus / "wing.stl")], capture_output=True, text=True, timeout=60, env=env)
    assert p.returncode == code, p.stderr
    assert text in p.stderr and "Traceback" not in p.stderr


def test_real_process_ok_and_usage(corpus, tmp_path):
    p = subprocess.run([sys.executable, "-m", "geomload.cli", "inspect", str(corpus / "wing.stl"),
                        "--stations", "8"], capture_output=True, text=True, timeout=60)
    assert p.returncode == 0, p.stderr
    assert "chord" in p.stdout.lower()
    p = subprocess.run([sys.executable, "-m", "geomload.cli", "inspect", "--no-such-option"],
                       capture_output=True, text=True, timeout=60)
    assert p.returncode == 2 and "Traceback" not in p.stderr


def test_help_imports_no_heavy_library():
    """`geomload --help` stays fast because the CLI imports no heavy library (DEVELOPERS.md);
    the time itself is measured by benchmarks/bench_cli.py, never by a test (no timing in
    tests)."""
    p = subprocess.run([sys.executable, "-m", "geomload.cli", "--help"], capture_output=True,
                       text=True, timeout=60)
    assert p.returncode == 0 and "Usage" in p.stdout
    q = subprocess.run([sys.executable, "-c", "import sys, geomload.cli; print(sorted(m for m in "
                        "('trimesh', 'pyvista', 'matplotlib', 'scipy') if m in sys.modules))"],
                       capture_output=True, text=True, timeout=60)
    assert q.stdout.strip() == "[]"  # rules: heavy libraries imported lazily


# ------------------------------------------------------------------------ units of a mesh
SAMPLE_MM = ROOT / "sample_geometry" / "pellin_half_wing_mm.stl"


def test_new_case_guesses_millimetres_and_run_refuses_a_3600_m_wing(tmp_path):
    # the sample STL is in millimetres (pellin_design.json: 3.6 m span); read as metres it spans
    # 3600 m, beyond the 200 m plausibility limit of the geometry stage
    r = _run(["new-case", SAMPLE_MM])
    assert r.exit_code == 0, r.output
    assert '\nunits = "mm"' in r.stdout
    text = r.stdout.replace('\nunits = "mm"', '\n# units = "mm"')
    (tmp_path / "case.toml").write_text(text)
    r = _run(["run", tmp_path / "case.toml", "--out", tmp_path / "out", "--no-render"])
    assert r.exit_code == 1
    assert "geometry.units" in r.stderr and "3600 m" in r.stderr
    assert not (tmp_path / "out").exists()
