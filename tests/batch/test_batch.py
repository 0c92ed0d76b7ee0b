"""`geomload batch`: a grid of variants run serially, on a local process pool and on a real Dask
cluster (scheduler and two workers on 127.0.0.1), which must agree byte for byte in every CSV;
a failing variant does not stop the others; each variant equals a single run of its case file."""

from __future__ import annotations

import csv
import io
import json
import math
import os
import socket
import subprocess
import sys

import pytest
from helpers.batch_helpers import ROOT, SAMPLE, cli, csv_files, dask_cluster, small_case
from helpers.validation import check

from geomload import CAUTION

# the launch pull-up at 400 m/s EAS is supersonic at sea level (Mach > 1): that variant fails
GRID = ["--vary", "load_case[1].speed=30,34,400"]
ERR_COLS = [f"root_{q}_{s}_err_{u}" for q, u in (("shear", "N"), ("bending", "Nm"),
                                                 ("torsion", "Nm")) for s in ("max", "min")]
ERR_SUMMARY = {"shear": "root_shear_N", "bending": "root_bending_Nm", "torsion": "root_torsion_Nm"}


def _rows(path):
    lines = [ln for ln in path.read_text().splitlines() if not ln.startswith("#")]
    return list(csv.DictReader(io.StringIO("\n".join(lines))))


@pytest.fixture(scope="module")
def cases(tmp_path_factory):
    d = tmp_path_factory.mktemp("cases")
    return small_case(d)


@pytest.fixture(scope="module")
def serial(cases, tmp_path_factory):
    out = tmp_path_factory.mktemp("serial") / "b"
    p = cli("batch", cases, *GRID, "--out", out, "--workers", "1", "--no-render")
    return out, p


def test_serial_batch_table_and_failure(serial):
    out, p = serial
    assert p.returncode == 1, p.stderr  # one variant failed: exit 1, the others written
    err = [ln for ln in p.stderr.splitlines() if "failed" in ln]
    assert len(err) == 1 and "03_speed-400.0" in err[0] and "Mach" in err[0], p.stderr
    text = (out / "batch.csv").read_text()
    assert text.startswith("# geomload") and f"# {CAUTION}" in text.splitlines()
    rows = _rows(out / "batch.csv")
    assert [r["variant"] for r in rows] == ["01_speed-30.0", "02_speed-34.0", "03_speed-400.0"]
    assert [r["status"] for r in rows] == ["ok", "ok", "failed"]
    assert [r["load_case[1].speed"] for r in rows] == ["30.0", "34.0", "400.0"]
    for col in ("root_shear_max_N", "root_bending_max_Nm", "root_bending_min_Nm",
                "root_torsion_max_Nm", "root_torsion_min_Nm", "root_bending_governing_case",
                "run_folder"):
        assert rows[0][col] and rows[1][col], col
    # every root load has its error bar beside it, positive, as the run's summary.json has it
    cols = list(rows[0])
    for col in ERR_COLS:
        assert cols[cols.index(col) - 1] == col.replace("_err", "")
        assert float(rows[0][col]) > 0 and float(rows[1][col]) > 0 and rows[2][col] == "", col
    for r in rows[:2]:
        env = json.loads((out / r["run_folder"] / "summary.json").read_text())["envelope"]
        for col in ERR_COLS:
            key = ERR_SUMMARY[col.split("_")[1]]
            assert float(r[col]) == pytest.approx(env["error_estimate"][key], rel=1e-9), col
        assert r["error_not_monotone"] == "; ".join(env["error_estimate"]["not_monotone"])
    assert rows[2]["root_shear_max_N"] == "" and "Mach" in rows[2]["error"]
    assert sorted(x.name for x in (out / "runs").iterdir()) == ["01_speed-30.0", "02_speed-34.0",
                                                                 "03_speed-400.0"]
    # the failed variant keeps its case file (to reproduce it) and nothing else
    assert [x.name for x in (out / "runs" / "03_speed-400.0").iterdir()] == ["case.toml"]
    case_text = (out / "runs" / "01_speed-30.0" / "case.toml").read_text()
    stl = (SAMPLE.parent / "pellin_half_wing_mm.stl").resolve()
    assert f'file = "{stl}"' in case_text  # relative path resolved against the original folder
    assert (out / "index.html").read_text().count("runs/01_speed-30.0/report.html") == 1
    assert (out / "plots" / "root_loads_vs_load_case_1_.speed.png").stat().st_size > 1000
    assert not [x for x in out.parent.iterdir() if x.name.startswith(".")]  # no staging left


def test_variant_equals_single_run(serial, tmp_path):
    """Reference: the single-run command `geomload run` on the variant's own case file."""
    out, _ = serial
    run_dir = out / "runs" / "02_speed-34.0"
    single = tmp_path / "single"
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    p = subprocess.run([sys.executable, "-m", "geomload.cli", "run", str(run_dir / "case.toml"),
                        "--out", str(single), "--no-render"], capture_output=True, text=True,
                       env=env, timeout=300)
    assert p.returncode == 0, p.stderr
    assert (single / "envelope.csv").read_bytes() == (run_dir / "envelope.csv").read_bytes()
    env_rows = _rows(single / "envelope.csv")
    row = _rows(out / "batch.csv")[1]
    for q, u in (("shear", "N"), ("bending", "Nm"), ("torsion", "Nm")):
        for side in ("max", "min"):
            check("geomload run of the same case file (single-run pipeline)",
                  f"root {q} {side} of variant 02 ({u})", float(env_rows[0][f"{q}_{side}_{u}"]),
                  float(row[f"root_{q}_{side}_{u}"]), rel=1e-9)
    # the error bars too: the single run's summary.json (its envelope's root error estimate)
    single_err = json.loads((single / "summary.json").read_text())["envelope"]["error_estimate"]
    for col in ERR_COLS:
        check("geomload run of the same case file (single-run pipeline)",
              f"{col} of variant 02", single_err[ERR_SUMMARY[col.split('_')[1]]], float(row[col]),
              rel=1e-9)
    bmax, bmin = float(env_rows[0]["bending_max_Nm"]), float(env_rows[0]["bending_min_Nm"])
    gov = env_rows[0]["bending_max_case" if abs(bmax) >= abs(bmin) else "bending_min_case"]
    assert row["root_bending_governing_case"] == gov


def _same_as_serial(serial_out, other):
    """Every CSV byte for byte (batch.csv with its error-bar columns included), and the error
    estimates of every case in each run's summary.json (the rest of it records times)."""
    a, b = csv_files(serial_out), csv_files(other)
    assert sorted(a) == sorted(b) and len(a) > 10
    assert [k for k in a if a[k] != b[k]] == []
    rows = _rows(other / "batch.csv")
    assert all(r[c] for r in rows if r["status"] == "ok" for c in ERR_COLS)
    for r in rows:
        if r["status"] == "ok":
            x, y = (json.loads((d / r["run_folder"] / "summary.json").read_text())
                    for d in (serial_out, other))
            assert [c["error_estimate"] for c in x["cases"]] == \
                [c["error_estimate"] for c in y["cases"]]
            assert x["envelope"]["error_estimate"] == y["envelope"]["error_estimate"]


def test_local_pool_equals_serial(serial, cases, tmp_path):
    out, _ = serial
    pool = tmp_path / "pool"
    p = cli("batch", cases, *GRID, "--out", pool, "--workers", "2")  # no 3-D pictures by default
    assert p.returncode == 1, p.stderr
    _same_as_serial(out, pool)

    def names(d):
        return sorted(x.relative_to(d).as_posix() for x in d.rglob("*"))

    assert names(pool) == names(out)  # the same files (none hidden, no pictures)


def test_cluster_equals_serial(serial, cases, tmp_path):
    out, _ = serial
    with dask_cluster(tmp_path) as address:
        dist = tmp_path / "cluster"
        p = cli("batch", cases, *GRID, "--out", dist, "--cluster", address, "--no-render")
    assert p.returncode == 1, p.stderr
    _same_as_serial(out, dist)


def test_compare_two_variants(serial, tmp_path):
    out, _ = serial
    cmp_dir = tmp_path / "cmp"
    p = cli("compare", out / "runs" / "01_speed-30.0", out / "runs" / "02_speed-34.0",
            "--out", cmp_dir)
    assert p.returncode == 0, p.stderr
    assert CAUTION in p.stdout
    rows = _rows(cmp_dir / "compare.csv")
    batch = _rows(out / "batch.csv")
    root_b = [r for r in rows if r["run"] == "02_speed-34.0" and float(r["y_m"]) == 0.0][0]
    want = float(batch[1]["root_bending_max_Nm"]) - float(batch[0]["root_bending_max_Nm"])
    assert math.isclose(float(root_b["delta_bending_max_Nm"]), want, rel_tol=1e-8, abs_tol=1e-6)
    assert (cmp_dir / "compare_roles.csv").read_text().count("02_speed-34.0") == 6


# ------------------------------------------------------------------------------ bad input
def _one_line_error(p):
    lines = [ln for ln in p.stderr.splitlines() if ln.strip()]
    assert p.returncode == 1, (p.returncode, p.stderr)
    assert len(lines) == 1 and lines[0].startswith("geomload: error:"), p.stderr
    assert "Traceback" not in p.stderr
    return lines[0]


def test_unknown_key_suggests_closest(cases, tmp_path):
    p = cli("batch", cases, "--vary", "aircraft.gross_mas_kg=20,22", "--out", tmp_path / "o")
    line = _one_line_error(p)
    assert "aircraft.gross_mas_kg" in line and "did you mean 'aircraft.gross_mass_kg'" in line
    assert not (tmp_path / "o").exists()


def test_wrong_value_type(cases, tmp_path):
    p = cli("batch", cases, "--vary", "aircraft.gross_mass_kg=20,heavy", "--out", tmp_path / "o")
    line = _one_line_error(p)
    assert "aircraft.gross_mass_kg=heavy" in line and "number" in line
    p = cli("batch", cases, "--vary", "geometry.stations=12,14.5", "--out", tmp_path / "o")
    assert "integer" in _one_line_error(p)
    assert not (tmp_path / "o").exists()


def test_unreachable_cluster(cases, tmp_path):
    with socket.socket() as s:  # a port nobody listens on: bound, then released
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    p = cli("batch", cases, "--vary", "aircraft.gross_mass_kg=20,22", "--out", tmp_path / "o",
            "--cluster", f"tcp://127.0.0.1:{port}", "--cluster-timeout", "2", timeout=120)
    line = _one_line_error(p)
    assert f"tcp://127.0.0.1:{port}" in line and "cannot reach" in line
    assert not (tmp_path / "o").exists() and list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("reply", [None, b"HTTP/1.1 400 Bad Request\r\n\r\n" * 64])
def test_cluster_address_that_is_not_a_scheduler(cases, tmp_path, reply):
    """A port that accepts connections but never answers (None), or answers with something that
    is not Dask: one line, exit 1, nothing written; the subprocess timeout guards a hang."""
    import threading

    with socket.socket() as srv:
        srv.bind(("127.0.0.1", 0))
        srv.listen(8)
        port = srv.getsockname()[1]
        stop = threading.Event()
        held = []

        def serve():
            srv.settimeout(0.2)
            while not stop.is_set():
                try:
                    conn, _ = srv.accept()
                except OSError:
                    continue
                held.append(conn)
                if reply is not None:
                    conn.sendall(reply)

        t = threading.Thread(target=serve, daemon=True)
        t.start()
        try:
            p = cli("batch", cases, "--vary", "aircraft.gross_mass_kg=20,22", "--out",
                    tmp_path / "o", "--cluster", f"tcp://127.0.0.1:{port}", "--cluster-timeout",
                    "2", timeout=120)
        finally:
            stop.set()
            t.join(timeout=5)
            for c in held:
                c.close()
    line = _one_line_error(p)
    assert f"tcp://127.0.0.1:{port}" in line
    assert ("cannot reach a Dask scheduler within 2 s" in line) if reply is None else \
        ("not a Dask scheduler" in line or "cannot reach" in line), line
    assert not (tmp_path / "o").exists()


def test_duplicate_variant_names(cases, tmp_path):
    other = tmp_path / "elsewhere"
    other.mkdir()
    twin = small_case(other)  # also named small.toml
    p = cli("batch", cases, twin, "--out", tmp_path / "o")
    line = _one_line_error(p)
    assert "duplicate variant name 'small'" in line
    assert not (tmp_path / "o").exists()


def test_force_refuses_a_folder_geomload_did_not_make(cases, tmp_path):
    out = tmp_path / "o"
    out.mkdir()
    (out / "notes.txt").write_text("keep me")
    p = cli("batch", cases, "--vary", "aircraft.gross_mass_kg=20,22", "--out", out, "--force")
    assert "refusing to replace" in _one_line_error(p)
    assert (out / "notes.txt").read_text() == "keep me" and len(list(out.iterdir())) == 1
