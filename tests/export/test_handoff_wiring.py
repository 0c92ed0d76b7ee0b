"""The structural hand-off wired into `run`: the [structure] table, the rib stations in every
loads table and FE deck, the CAD unit of a file that carries its own, and bad structural input.

Checks against statics (a cantilever's internal loads follow from the loads outboard alone),
the real FE solver CalculiX (ccx) and the STEP file's own unit declaration.
"""

from __future__ import annotations
from helpers.paths import ROOT

import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from geomload.config import read_case_file
from geomload.errors import CaseError
from geomload.export import fe, write_all
from geomload.export.tables import read_csv_table
from geomload.pipeline import compute
from test_fe_beam import need_ccx, solve
from helpers.validation import check

SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"
RIBS = (0.0, 0.3, 0.55, 0.9, 1.2)  # 0.55 m: the camera pod's point load falls on this rib
RIBS_NO_ROOT = (0.2, 0.55, 1.0)


def sample_text(extra_spar="", structure=None, envelope=False) -> str:
    """The sample case with an absolute geometry path, its two load cases (no envelope unless
    asked, to stay fast), extra [spar] keys and a replaced [structure] table."""
    from helpers.sample_variants import symmetric_text

    text = symmetric_text()  # without control surfaces, tail and c.g.: the lift-share cases
    if not envelope:
        text = text[:text.index("[envelope]")]
    text = text.replace("chord_fraction = 0.28\n", "chord_fraction = 0.28\n" + extra_spar)
    if structure is not None:
        text = re.sub(r"\[structure\].*?\n\n", structure + "\n\n", text, flags=re.S)
    return text


def run_with(tmp_path, name="case.toml", **kw):
    p = tmp_path / name
    p.write_text(sample_text(**kw))
    case = read_case_file(p)
    return case, compute(case)


@pytest.fixture(scope="module")
def rib_run(tmp_path_factory):
    d = tmp_path_factory.mktemp("ribs")
    case, run = run_with(d, extra_spar=f"rib_y_m = {list(RIBS)}\n")
    out = d / "out"
    files = write_all(run, out, render=False)["files"]
    return run, out, files


def test_every_table_and_deck_reports_exactly_the_rib_rows(rib_run):
    run, out, files = rib_run
    names = {str(f) for f in files}
    assert "sizing.csv" in names and any(n.startswith("fe/") and n.endswith(".inp") for n in names)
    for cr in run.cases:
        L = cr.loads
        t = read_csv_table(next(out.glob(f"loads/{cr.name.replace(' ', '_')}*.csv")))
        # the rib rows only; a point-load step on a rib gives its two sides (two rows)
        assert sorted(set(np.round(t["y_m"], 4))) == sorted(set(RIBS)), cr.name
        assert t["y_m"].size == len(RIBS) + 1
        sel = np.flatnonzero(L.rows)
        for col in ("shear_N", "bending_Nm", "torsion_Nm"):
            check("the case's own loads at its grid rows (CSV written to 10 digits)",
                  f"{cr.name} {col} at the ribs (relative)", 0.0,
                  np.abs(t[col] - getattr(L, col)[sel]).max() / np.abs(getattr(L, col)).max(),
                  abs=1e-9)
        # the deck: one node per rib (the two sides of the step share one), statics exact
        nl = fe.nodal_loads(L)
        assert nl.y_m.size == len(RIBS)
        rec = fe.internal_loads(nl)
        for col in ("shear_N", "bending_Nm", "torsion_Nm"):
            ref = np.abs(getattr(L, col)).max()
            worst = np.abs(rec[col] - getattr(L, col)[nl.station_index]).max() / ref
            check("cantilever statics: internal load at a node = the loads outboard of it",
                  f"{cr.name} {col} recovered at the rib nodes (relative)", 0.0, worst, abs=1e-9)
        csv = read_csv_table(out / "fe" / f"{cr.name.replace(' ', '_')}_nodal_loads.csv")
        assert csv["node"].size == len(RIBS)
    env = read_csv_table(out / "envelope.csv") if (out / "envelope.csv").exists() else None
    assert env is None or sorted(set(np.round(env["y_m"], 4))) == sorted(set(RIBS))


def test_rib_deck_without_a_root_rib_solved_by_ccx(tmp_path):
    need_ccx()
    _case, run = run_with(tmp_path, extra_spar=f"rib_y_m = {list(RIBS_NO_ROOT)}\n")
    L = max(run.cases, key=lambda c: abs(c.loads.bending_Nm[0])).loads
    nl = fe.nodal_loads(L)
    # the clamp stays at the root: a root node, then one node per rib (two at the step merged)
    assert nl.y_m[0] == 0.0 and nl.y_m.size == len(RIBS_NO_ROOT) + 1
    unit, scale = fe.cad_unit(run)
    deck = fe.beam_deck(nl, run.frame, scale, unit)
    rf, rm = fe.root_reaction(deck, solve(deck, tmp_path), run.frame)
    force, moment = -rf, -rm
    src = "CalculiX ccx static solution of the rib-station beam deck (real FE solver)"
    check(src, "root shear (N)", L.shear_N[0], force @ L.axis_n[0], rel=1e-3)
    check(src, "root bending (N m)", L.bending_Nm[0], moment @ L.axis_b[0], rel=1e-3)
    check(src, "root torsion (N m)", L.torsion_Nm[0], moment @ L.axis_s[0], rel=1e-3)


def test_file_unit_is_kept_for_the_cad_frame_outputs():
    from geomload.geometry.read import read_mesh

    mesh = read_mesh(str(SAMPLE.parent / "pellin_half_wing.step"))
    assert mesh.units == "file"

    class R:  # the only field cad_unit reads
        pass

    R.mesh = mesh
    # the STEP file declares LENGTH_UNIT SI_UNIT(.MILLI.,.METRE.) (ISO 10303-41 unit entities)
    assert fe.cad_unit(R) == ("mm", 0.001)


@pytest.mark.parametrize("table, key", [
    ('[structure]\nmaterial = "unobtainium"', "structure.material"),
    ('[structure]\nsigma_allow_MPa = 400.0', "structure.tau_allow_MPa"),
    ('[structure]\nfront_spar_fraction = 0.6\nrear_spar_fraction = 0.2',
     "structure.rear_spar_fraction"),
    ('[structure]\nmesh = "no_such_mesh.inp"', "structure.mesh"),
    ('[structure]\nmaterial = "al-7075-t6"\nspar_depth = 3', "structure.spar_depth"),
])
def test_structure_table_errors_name_the_key(tmp_path, table, key):
    p = tmp_path / "case.toml"
    p.write_text(sample_text(structure=table))
    with pytest.raises(CaseError, match=re.escape(key)):
        read_case_file(p)


def test_structure_table_read_in_si(tmp_path):
    (tmp_path / "m.inp").write_text("*NODE\n1, 0, 0, 0\n")
    p = tmp_path / "case.toml"
    p.write_text(sample_text(structure='[structure]\nmesh = "m.inp"\nsigma_allow_MPa = 400.0\n'
                                       'tau_allow_MPa = 250.0\ncap_depth_factor = 0.85'))
    s = read_case_file(p).structure
    assert s.mesh == str((tmp_path / "m.inp").resolve())
    assert (s.sigma_allow_Pa, s.tau_allow_Pa, s.cap_depth_factor) == (400e6, 250e6, 0.85)


def _cli(args, cwd):
    return subprocess.run([sys.executable, "-m", "geomload.cli", *args], cwd=cwd,
                          capture_output=True, text=True, timeout=300)


def _cad_nodes(kind):
    """Nodes inside the sample wing (on its mean line between 20 and 60 % chord) in the CAD frame
    and unit (mm), then put in the wrong unit (metres) or kept only next to the root."""
    from geomload.geometry import load_wing

    _m, frame, st, _p = load_wing(str(SAMPLE.parent / "pellin_half_wing_mm.stl"), units="mm",
                                  n_stations=12)
    y = np.linspace(0.0, st.y[-1], 40) if kind == "wrong_unit" else \
        np.linspace(0.0, 0.01 * st.y[-1], 5)
    pts = []
    for f in (0.2, 0.4, 0.6):
        x = np.interp(y, st.y, st.x_le + f * (st.x_te - st.x_le))
        z = np.interp(y, st.y, 0.5 * (st.z_le + st.z_te))
        pts.append(np.column_stack([x, y, z]))
    cad_m = frame.to_cad(np.vstack(pts))
    return cad_m if kind == "wrong_unit" else cad_m * 1000.0  # metres where mm are expected


@pytest.mark.parametrize("kind", ["unreadable", "wrong_unit", "root_only"])
def test_bad_structural_mesh_one_line_nothing_written(tmp_path, kind):
    mesh = tmp_path / "spar.inp"
    if kind == "unreadable":
        mesh.write_text("*NODE\n1, 0, 0\nthis is not a mesh\n*ELEMENT, TYPE=S3\n1, 1, 2, 9\n")
    else:
        pts = _cad_nodes(kind)
        n = len(pts)
        lines = ["*NODE"] + [f"{i + 1}, {float(x)!r}, {float(y)!r}, {float(z)!r}"
                             for i, (x, y, z) in enumerate(pts)]
        lines += ["*ELEMENT, TYPE=T3D2, ELSET=E"] + [f"{i + 1}, {i + 1}, {i + 2}"
                                                      for i in range(n - 1)]
        mesh.write_text("\n".join(lines) + "\n")
    p = tmp_path / "case.toml"
    p.write_text(sample_text(structure='[structure]\nmesh = "spar.inp"'))
    r = _cli(["run", str(p), "--out", str(tmp_path / "out"), "--no-render"], tmp_path)
    err = [ln for ln in r.stderr.splitlines() if "error" in ln]
    assert r.returncode == 1, r.stderr[-2000:]
    assert len(err) == 1 and "spar.inp" in err[0] and "Traceback" not in r.stderr, err
    expect = {"unreadable": "cannot be read", "wrong_unit": "no node", "root_only": "span only"}
    assert expect[kind] in err[0], err[0]
    assert not (tmp_path / "out").exists()


def test_step_declared_units(tmp_path):
    from geomload.geometry.readers.brep import file_unit

    def declared_scale(path, ext):
        return file_unit(path, ext)

    p = tmp_path / "inch.step"
    p.write_text("#10=(CONVERSION_BASED_UNIT('INCH',#11) LENGTH_UNIT() NAMED_UNIT(#12));\n"
                 "#13=(LENGTH_UNIT() NAMED_UNIT(*) SI_UNIT($,.METRE.));\n")
    # the international inch: 0.0254 m exactly (1959 yard and pound agreement)
    check("international inch (1959 agreement), a STEP CONVERSION_BASED_UNIT('INCH')",
          "metres per CAD unit", 0.0254, declared_scale(p, ".step"), rel=0.0)
    p.write_text("#13=(LENGTH_UNIT() NAMED_UNIT(*) SI_UNIT($,.METRE.));\n")
    assert declared_scale(p, ".step") == 1.0
    p.write_text("no unit here\n")
    assert declared_scale(p, ".step") is None
