"""Beam load decks of the spar, solved by the real FE solver CalculiX (ccx).

Without ccx on PATH the solver checks skip with the reason; with GEOMLOAD_REQUIRE_CCX=1 (CI)
they fail instead.
"""

from helpers.paths import ROOT
import os
import shutil
import subprocess
from dataclasses import replace

import numpy as np
import pytest

from geomload import CAUTION
from geomload.errors import InputError
from geomload.export import fe
from geomload.export.tables import read_csv_table, write_loads_csv
from geomload.loads.beam import equilibrium_residual, integrate_loads
from helpers.validation import check

CCX = shutil.which("ccx")
SAMPLE_CASE = os.path.join(str(ROOT),
                           "sample_geometry", "pellin_case.toml")


def need_ccx():
    if CCX is None:
        if os.environ.get("GEOMLOAD_REQUIRE_CCX") == "1":
            pytest.fail("ccx (Debian package calculix-ccx) is required (GEOMLOAD_REQUIRE_CCX=1) "
                        "but not on PATH")
        pytest.skip("ccx (CalculiX, Debian package calculix-ccx) not on PATH")


def solve(deck, folder, name="deck"):
    """Run ccx on a deck; return the .dat text."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / f"{name}.inp").write_text(deck.text)
    r = subprocess.run([CCX, "-i", name], cwd=folder, capture_output=True, text=True, timeout=120)
    dat = folder / f"{name}.dat"
    assert r.returncode == 0 and dat.exists(), r.stdout[-2000:]
    return dat.read_text()


def sub_model(nl, k):
    """The part of the beam outboard of node k (node k its root): its root reaction is the
    internal load of the whole beam at node k (a cantilever is statically determinate)."""
    return fe.NodalLoads(nl.case, nl.y_m[k:], nl.points_m[k:], nl.force_N[k:],
                         nl.moment_Nm[k:], nl.axis_s[k:], nl.axis_b[k:], nl.axis_n[k:],
                         nl.station_index[k:])


@pytest.fixture(scope="module")
def sample_run():
    from geomload.case import load_case
    from geomload.pipeline import compute

    return compute(load_case(SAMPLE_CASE))


@pytest.fixture(scope="module")
def critical(sample_run):
    return max(sample_run.cases, key=lambda c: abs(c.loads.bending_Nm[0]))


def test_sample_critical_case_root_reaction_by_ccx(sample_run, critical, tmp_path):
    need_ccx()
    from geomload.geometry.read import UNITS

    L = critical.loads
    nl = fe.nodal_loads(L)
    deck = fe.beam_deck(nl, sample_run.frame, UNITS[sample_run.mesh.units], sample_run.mesh.units)
    assert deck.text.splitlines()[0] == "** " + CAUTION
    rf, rm = fe.root_reaction(deck, solve(deck, tmp_path), sample_run.frame)
    force, moment = -rf, -rm  # the load the root carries = minus the support's reaction
    s, b, n = L.axis_s[0], L.axis_b[0], L.axis_n[0]
    src = "CalculiX ccx 2.x static solution of the written beam deck (real FE solver)"
    check(src, f"root shear, case {L.case} (N)", L.shear_N[0], force @ n, rel=1e-3)
    check(src, f"root bending, case {L.case} (N m)", L.bending_Nm[0], moment @ b, rel=1e-3)
    check(src, f"root torsion, case {L.case} (N m)", L.torsion_Nm[0], moment @ s, rel=1e-3)
    # along the span: the outboard part clamped at node k, solved by ccx, carries at its root
    # the internal loads of the whole beam at node k (statically determinate cantilever)
    scale = UNITS[sample_run.mesh.units]
    for k in (nl.y_m.size // 4, nl.y_m.size // 2, 3 * nl.y_m.size // 4):
        sub = sub_model(nl, k)
        d = fe.beam_deck(sub, sample_run.frame, scale, sample_run.mesh.units)
        rf, rm = fe.root_reaction(d, solve(d, tmp_path / f"n{k}"), sample_run.frame)
        i = nl.station_index[k]
        s, b, n = nl.axis_s[k], nl.axis_b[k], nl.axis_n[k]
        yk = f"y = {nl.y_m[k]:.3f} m"
        check(src, f"shear at {yk}, case {L.case} (N)", L.shear_N[i], -rf @ n, rel=1e-3)
        check(src, f"bending at {yk}, case {L.case} (N m)", L.bending_Nm[i], -rm @ b, rel=1e-3)
        check(src, f"torsion at {yk}, case {L.case} (N m; abs floor 0.1 % of root bending)",
              L.torsion_Nm[i], -rm @ s, rel=1e-3, abs=1e-3 * abs(L.bending_Nm[0]))


def test_every_deck_sums_to_the_case_loads_and_recovers_the_csv(sample_run, tmp_path):
    from geomload.geometry.read import UNITS

    scale = UNITS[sample_run.mesh.units]
    worst = {"force": 0.0, "moment": 0.0, "csv_force": 0.0, "csv_moment": 0.0,
             "shear_N": 0.0, "bending_Nm": 0.0, "torsion_Nm": 0.0}
    R = sample_run.frame.rotation
    for k, cr in enumerate(sample_run.cases):
        L = cr.loads
        nl = fe.nodal_loads(L)
        # totals summed directly from the distributed and point loads, independently of the
        # tip-to-root recursion (equilibrium_residual's direct integral)
        eq = equilibrium_residual(L)
        P0 = nl.points_m[0]
        tot_f = nl.force_N.sum(0)
        tot_m = (nl.moment_Nm + np.cross(nl.points_m - P0, nl.force_N)).sum(0)
        fref, mref = np.abs(tot_f).max(), np.abs(tot_m).max()
        worst["force"] = max(worst["force"], abs(tot_f[2] - eq["total_vertical_N"]) / fref,
                             np.abs(tot_f - L.force_N[0]).max() / fref)
        worst["moment"] = max(worst["moment"], abs(tot_m[0] - eq["first_moment_Nm"]) / mref,
                              np.abs(tot_m - L.moment_Nm[0]).max() / mref)
        # the deck's CSV (CAD frame and unit, 17 digits) sums to the same totals
        path = tmp_path / f"case{k}_nodal_loads.csv"
        path.write_text(fe.nodal_loads_csv(nl, sample_run.frame, scale, sample_run.mesh.units))
        t = read_csv_table(path)
        u = sample_run.mesh.units
        xyz = np.column_stack([t[f"x_{u}"], t[f"y_{u}"], t[f"z_{u}"]]) * scale
        Fc = np.column_stack([t["Fx_N"], t["Fy_N"], t["Fz_N"]])
        Mc = np.column_stack([t[f"Mx_N{u}"], t[f"My_N{u}"], t[f"Mz_N{u}"]]) * scale
        csv_m = R @ (Mc + np.cross(xyz - xyz[0], Fc)).sum(0)
        worst["csv_force"] = max(worst["csv_force"], np.abs(R @ Fc.sum(0) - tot_f).max() / fref)
        worst["csv_moment"] = max(worst["csv_moment"], np.abs(csv_m - tot_m).max() / mref)
        # node by node: the internal loads recovered from the nodal loads equal the loads CSV
        lc = tmp_path / "loads.csv"
        write_loads_csv(lc, cr)
        c = read_csv_table(lc)
        rec = fe.internal_loads(nl)
        for col in ("shear_N", "bending_Nm", "torsion_Nm"):
            ref = max(np.abs(c[col]).max(), 1e-12)
            worst[col] = max(worst[col], np.abs(rec[col] - c[col][nl.station_index]).max() / ref)
    n = len(sample_run.cases)
    src = "free-body statics: the case's loads summed directly (loads/beam.py equilibrium)"
    check(src, f"nodal forces vs total force, worst of {n} cases (relative)", 0.0,
          worst["force"], abs=1e-9)
    check(src, f"nodal moments about the root vs total, worst of {n} cases (relative)", 0.0,
          worst["moment"], abs=1e-9)
    check(src, f"nodal-loads CSV (CAD frame, mm) force sum, worst of {n} cases (relative)", 0.0,
          worst["csv_force"], abs=1e-9)
    check(src, f"nodal-loads CSV (CAD frame, mm) root moment, worst of {n} cases (relative)",
          0.0, worst["csv_moment"], abs=1e-9)
    for col in ("shear_N", "bending_Nm", "torsion_Nm"):
        check("statics node by node vs the loads CSV (written to 10 significant digits)",
              f"recovered {col} vs CSV, worst of {n} cases (relative to the largest)", 0.0,
              worst[col], abs=1e-9)


def _cantilever(w, L=1.5, n=81, x=0.3):
    """Straight unswept cantilever along y, load w(y) N/m upwards, cosine-spaced stations."""
    y = L * 0.5 * (1 - np.cos(np.linspace(0, np.pi, n)))
    sp = np.full(n, x)
    return integrate_loads(y, sp, np.zeros(n), w(y), case="cantilever")


def test_cantilever_uniform_and_elliptic_through_ccx(tmp_path):
    need_ccx()
    span, w0 = 1.5, 200.0
    cases = {
        # Euler-Bernoulli cantilever, any strength-of-materials text (e.g. Timoshenko & Gere,
        # Mechanics of Materials): V = w (L - y), M = w (L - y)^2 / 2
        "uniform": (lambda y: np.full_like(y, w0),
                    lambda y: w0 * (span - y), lambda y: 0.5 * w0 * (span - y) ** 2, 1e-6),
        # elliptic load w0 sqrt(1 - e^2), e = y / L, integrated in closed form:
        # V = w0 L (acos e - e sqrt(1-e^2)) / 2, M = w0 L^2 [(1-e^2)^1.5 / 3 - e V / (w0 L)];
        # tolerance: piecewise-linear stations (81, cosine spacing) on the sqrt tip
        "elliptic": (lambda y: w0 * np.sqrt(np.clip(1 - (y / span) ** 2, 0, None)),
                     lambda y: w0 * span * 0.5 * (np.arccos(y / span) - y / span
                                                  * np.sqrt(1 - (y / span) ** 2)),
                     lambda y: w0 * span ** 2 * ((1 - (y / span) ** 2) ** 1.5 / 3
                                                 - 0.5 * y / span * (np.arccos(y / span) - y / span
                                                                     * np.sqrt(1 - (y / span) ** 2))),
                     2e-3),
    }
    src = "Euler-Bernoulli cantilever statics (Timoshenko & Gere, Mechanics of Materials)"
    for name, (w, V, M, tol) in cases.items():
        loads = _cantilever(w, span)
        nl = fe.nodal_loads(loads)
        for k in (0, 20, 40, 60):  # root and three stations along the span, each solved by ccx
            sub = sub_model(nl, k)
            deck = fe.beam_deck(sub, None, 1e-3, "mm")
            rf, rm = fe.root_reaction(deck, solve(deck, tmp_path / f"{name}{k}"))
            yk = nl.y_m[k]
            check(src + ", via ccx", f"{name} load: V at y = {yk:.3f} m (N)", V(yk), -rf[2], rel=tol)
            check(src + ", via ccx", f"{name} load: M at y = {yk:.3f} m (N m)", M(yk), -rm[0],
                  rel=tol)


def test_merged_close_stations_keep_exact_statics():
    # two stations 1 um apart with a point load between them share a node; statics exact
    from geomload.loads.beam import PointLoad

    y = np.array([0.0, 0.4, 0.400001, 1.0])
    pl = PointLoad("m", np.array([0.35, 0.4000005, 0.02]), np.array([0.0, 0.0, -30.0]))
    loads = integrate_loads(y, np.full(4, 0.3), np.zeros(4), np.full(4, 100.0), point_loads=(pl,))
    nl = fe.nodal_loads(loads)
    assert nl.y_m.size == 3
    rec = fe.internal_loads(nl)
    # common practice, no source: exact statics of a moved force (transfer moment r x F)
    for col in ("shear_N", "bending_Nm", "torsion_Nm"):
        assert np.allclose(rec[col], getattr(loads, col)[nl.station_index], rtol=1e-12, atol=1e-9)


def test_write_fe_decks_writes_both_files_with_caution(sample_run, tmp_path):
    loads = [cr.loads for cr in sample_run.cases[:2]]
    paths = fe.write_fe_decks(tmp_path, loads, sample_run.frame, 1e-3, "mm")
    assert len(paths) == 4 and all(p.parent.name == "fe" for p in paths)
    for p in paths:
        first = p.read_text().splitlines()[:3]
        assert any(CAUTION in line for line in first)
    bad = replace(loads[0], force_N=None)
    with pytest.raises(InputError, match="force_N"):
        fe.write_fe_decks(tmp_path / "x", [loads[1], bad])
    assert not (tmp_path / "x").exists()


def test_missing_solver_fails_when_required(monkeypatch):
    # without ccx: skip normally, fail when GEOMLOAD_REQUIRE_CCX=1 (CI)
    import sys

    mod = sys.modules[__name__]
    monkeypatch.setattr(mod, "CCX", None)
    monkeypatch.setenv("GEOMLOAD_REQUIRE_CCX", "1")
    with pytest.raises(pytest.fail.Exception, match="required"):
        need_ccx()
    monkeypatch.delenv("GEOMLOAD_REQUIRE_CCX")
    with pytest.raises(pytest.skip.Exception, match="calculix-ccx"):
        need_ccx()


def test_deck_in_a_turned_cad_frame_by_ccx(tmp_path):
    """Span along CAD -Z, up along CAD +Y, origin away from 0, CAD unit inch: the deck and the
    CSV are written in those axes and unit, and the solver's reaction turned back equals the
    wing-frame root loads."""
    need_ccx()
    from geomload.records import WingFrame

    R = np.array([[1.0, 0.0, 0.0], [0.0, 0.0, -1.0], [0.0, 1.0, 0.0]])  # rows: wing x, y, z
    frame = WingFrame(rotation=R, origin=np.array([0.5, -0.2, 1.0]), full_span=False,
                      span_axis="-Z", up_axis="+Y")
    n = 21
    y = np.linspace(0.0, 1.5, n)
    loads = integrate_loads(y, 0.3 + 0.1 * y, 0.05 * y, np.full(n, 150.0),
                            drag_N_per_m=np.full(n, 8.0), pitch_Nm_per_m=np.full(n, -6.0),
                            load_x=0.25 + 0.1 * y, case="turned")
    nl = fe.nodal_loads(loads)
    inch = 0.0254
    deck = fe.beam_deck(nl, frame, inch, "in")
    rf, rm = fe.root_reaction(deck, solve(deck, tmp_path), frame)
    src = "CalculiX ccx static solution, deck in a turned CAD frame (inch)"
    s, b, nn = loads.axis_s[0], loads.axis_b[0], loads.axis_n[0]
    check(src, "root shear (N)", loads.shear_N[0], -rf @ nn, rel=1e-3)
    check(src, "root bending (N m)", loads.bending_Nm[0], -rm @ b, rel=1e-3)
    check(src, "root torsion (N m)", loads.torsion_Nm[0], -rm @ s, rel=1e-3)
    csv = tmp_path / "n.csv"
    csv.write_text(fe.nodal_loads_csv(nl, frame, inch, "in"))
    t = read_csv_table(csv)
    xyz = np.column_stack([t["x_in"], t["y_in"], t["z_in"]]) * inch
    # common practice, no source: the stored transform applied back gives the wing points
    assert np.allclose(frame.to_wing(xyz), nl.points_m, atol=1e-12)
    assert np.isclose(t["Mz_Nin"].sum() * inch,  # CAD z = -wing y: moments in N*in
                      -(nl.moment_Nm[:, 1]).sum(), rtol=1e-12)


def test_one_call_writes_the_handoff_and_refuses_a_bad_mesh(sample_run, tmp_path):
    out = fe.write_structural_handoff(sample_run, tmp_path / "ok", plot=False)
    names = {p.name for p in out["files"]}
    assert "sizing.csv" in names and len([n for n in names if n.endswith(".inp")]) == \
        len(sample_run.cases)
    assert any("thickness shape" in w for w in out["warnings"])
    bad = tmp_path / "bad.vtu"
    bad.write_text("<VTKFile>not really</VTKFile>")
    with pytest.raises(InputError, match="bad.vtu"):
        fe.write_structural_handoff(sample_run, tmp_path / "no", structural_mesh=bad)
    assert not (tmp_path / "no").exists()


# ------------------------------------------------------- decks formatted in a child process
def _fe_tree(folder):
    out = {}
    for p in sorted((folder / "fe").iterdir()):
        out[p.name] = p.read_bytes()
    return out


def test_decks_formatted_in_a_child_are_the_decks_formatted_here(sample_run, tmp_path,
                                                                  monkeypatch):
    """A run with many cases formats its FE decks in a forked child (geomload.forked) while it
    writes the loads tables; the files must be the ones formatted in one process, byte for
    byte and in the same order, also when the child dies (the decks are then made here).
    Reference: the in-process decks, which the ccx checks above validate (speed work changes
    no byte; common practice, no source)."""
    import signal

    from geomload.export import write_all
    from geomload.export.run_folder import OutputDir

    monkeypatch.setattr(fe, "MIN_FORKED_CASES", 1)  # the sample's cases are enough to fork
    got = {}
    for how in ("serial", "forked"):
        out = tmp_path / how
        with OutputDir(out, inputs=[SAMPLE_CASE]) as od:
            res = write_all(sample_run, od.staging, render=False, parallel=how == "forked",
                            run_time_s=1.0)
        got[how] = (_fe_tree(out), [str(p) for p in res["files"]])
    assert got["forked"] == got["serial"]
    job = fe.start_deck_process(sample_run)
    try:  # what the child sends is what this process makes
        sent = job.result()["decks"]
    finally:
        job.stop()
    unit, scale = fe.cad_unit(sample_run)
    assert sent == fe.deck_texts([c.loads for c in sample_run.cases], sample_run.frame, scale,
                                 unit)
    job = fe.start_deck_process(sample_run)
    assert job is not None
    os.kill(job.proc.pid, signal.SIGKILL)  # a real crash of the child
    try:
        with OutputDir(tmp_path / "killed", inputs=[SAMPLE_CASE]) as od:
            fe.write_structural_handoff(sample_run, od.staging, [SAMPLE_CASE],
                                        **sample_run.case.structure.handoff_options(),
                                        deck_job=job)
    finally:
        job.stop()
    killed = _fe_tree(tmp_path / "killed")
    assert killed == got["serial"][0]
    n_decks = sum(name.endswith(".inp") for name in killed)
    assert n_decks == len(sample_run.cases)
