"""`geomload compare`: envelopes on a common span grid, differences, changed governing cases.

The runs are synthetic folders whose envelopes are linear in y, so the differences on the common
grid are known exactly (linear interpolation reproduces a linear function: analytic)."""

from __future__ import annotations

import csv
import io

import numpy as np
from helpers.batch_helpers import cli
from helpers.validation import check

from geomload import CAUTION

Q = (("shear", "N"), ("bending", "Nm"), ("torsion", "Nm"))


def _run(folder, y, scale, case_at=lambda q, s, y: f"{q}-{s}-a"):
    folder.mkdir(parents=True)
    cols = ["y_m"]
    for q, u in Q:
        for s in ("max", "min"):
            cols += [f"{q}_{s}_{u}", f"{q}_{s}_case"]
    lines = ["# synthetic envelope", ",".join(cols)]
    for yy in y:
        row = [f"{yy:.10g}"]
        for k, (q, _u) in enumerate(Q):
            for s, sign in (("max", 1.0), ("min", -1.0)):
                row += [f"{sign * scale * (k + 1) * (2.0 - yy):.10g}", case_at(q, s, yy)]
        lines.append(",".join(row))
    (folder / "envelope.csv").write_text("\n".join(lines) + "\n")
    return folder


def _rows(path):
    lines = [ln for ln in path.read_text().splitlines() if not ln.startswith("#")]
    return list(csv.DictReader(io.StringIO("\n".join(lines))))


def test_compare_differences_on_the_common_grid(tmp_path):
    a = _run(tmp_path / "a", np.linspace(0.0, 2.0, 11), 100.0)

    def cases_b(q, s, y):
        if q == "bending" and s == "max":
            return "bending-max-a" if y < 0.9 else "bending-max-b"
        if q == "torsion" and s == "min":
            return "torsion-min-b"
        return f"{q}-{s}-a"

    b = _run(tmp_path / "b", np.array([0.0, 0.3, 0.7, 1.0, 1.35, 1.8]), 120.0, cases_b)
    out = tmp_path / "cmp"
    p = cli("compare", a, b, "--out", out)
    assert p.returncode == 0, p.stderr
    assert CAUTION in p.stdout and CAUTION in (out / "compare.csv").read_text()
    rows = _rows(out / "compare.csv")
    grid = [float(r["y_m"]) for r in rows if r["run"] == "b"]
    # common grid: the reference's stations up to the shorter semi-span, plus that tip
    assert np.allclose(grid, [0.0, 0.2, 0.4, 0.6, 0.8, 1.0, 1.2, 1.4, 1.6, 1.8])
    for r in rows:
        if r["run"] != "b":
            continue
        y = float(r["y_m"])
        for k, (q, u) in enumerate(Q):
            # analytic: (120 - 100) (k + 1) (2 - y), exact under linear interpolation
            check("analytic: linear interpolation of a linear envelope is exact",
                  f"delta {q} max at y = {y:g} m ({u})", 20.0 * (k + 1) * (2.0 - y),
                  float(r[f"delta_{q}_max_{u}"]), rel=1e-9, abs=1e-9)
    roles = _rows(out / "compare_roles.csv")
    by_q = {r["quantity"]: r for r in roles}
    assert by_q["bending_max"]["gained_cases"] == "bending-max-b"
    assert by_q["bending_max"]["root_changed"] == "no"
    assert by_q["torsion_min"]["root_changed"] == "yes"
    assert by_q["torsion_min"]["lost_cases"] == "torsion-min-a"
    assert by_q["shear_max"]["gained_cases"] == "-"
    assert "root torsion_min now governed by torsion-min-b" in p.stdout
    html = (out / "compare.html").read_text()
    assert CAUTION in html and "data:image/png;base64," in html


def test_compare_bad_input(tmp_path):
    a = _run(tmp_path / "a", np.linspace(0.0, 2.0, 5), 1.0)
    p = cli("compare", a, "--out", tmp_path / "o")
    assert p.returncode == 1 and "at least two" in p.stderr and not (tmp_path / "o").exists()
    (tmp_path / "empty").mkdir()
    p = cli("compare", a, tmp_path / "empty", "--out", tmp_path / "o")
    assert p.returncode == 1 and "no envelope.csv" in p.stderr and "Traceback" not in p.stderr
    assert not (tmp_path / "o").exists()
