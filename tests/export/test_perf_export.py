"""The faster export path writes the same outputs, refuses the same targets and keeps the
nothing-lost promise: inputs resolved once per run, one fsync pass per staged run folder, plots
drawn in a child process. (Safe file output and input protection: the product's own contract,
common practice, no source. No timing is asserted: benchmarks/ measure speed.)"""

import hashlib
import os
from pathlib import Path

import pytest

from geomload.errors import OutputError
from geomload.export import atomic, plots, write_all
from geomload.export.atomic import ResolvedInputs, check_not_input, write_text_atomic
from geomload.export.run_folder import OutputDir, leftovers

from helpers import fakerun


@pytest.fixture()
def project(tmp_path):
    proj = tmp_path / "proj"
    (proj / "cad").mkdir(parents=True)
    (proj / "case.toml").write_text('title = "QM-36 Pellin"\n')
    (proj / "cad" / "wing.stl").write_bytes(b"solid pellin\nendsolid pellin\n")
    os.symlink(proj / "cad", tmp_path / "cad_link")            # a symlinked parent
    os.link(proj / "case.toml", tmp_path / "case_hardlink.toml")  # another name, same inode
    os.symlink(proj / "case.toml", tmp_path / "case_symlink.toml")
    return proj


def _refused(path, inputs):
    try:
        check_not_input(path, inputs)
    except OutputError as exc:
        return str(exc)
    return None


def test_resolved_inputs_refuse_exactly_what_the_plain_list_refuses(tmp_path, project):
    inputs = [project / "case.toml", project / "cad" / "wing.stl", None, ""]
    resolved = ResolvedInputs(inputs)
    assert tuple(resolved) == (project / "case.toml", project / "cad" / "wing.stl")
    targets = {  # target -> refused?
        project / "case.toml": True, project / "cad" / "wing.stl": True,
        tmp_path / "case_hardlink.toml": True, tmp_path / "case_symlink.toml": True,
        tmp_path / "cad_link" / "wing.stl": True, tmp_path / "cad_link": True,
        project: True, project / "cad": True, tmp_path: True, Path("/"): True,
        project / "out.csv": False, project / "cad" / "other.stl": False,
        tmp_path / "proj2": False, tmp_path / "pro": False, project / "case.toml.csv": False,
    }
    for target, refused in targets.items():
        plain, fast = _refused(target, inputs), _refused(target, resolved)
        assert plain == fast, target
        assert (plain is not None) == refused, (target, plain)
    assert ResolvedInputs(resolved) is resolved      # resolving twice costs nothing


def test_one_fsync_pass_only_inside_a_staged_run_folder(tmp_path, project):
    with atomic.sync_at_end(tmp_path):               # not a staging folder: nothing deferred
        write_text_atomic(tmp_path / "plain.csv", "a\n")
        assert atomic._SYNC_AT_END == {}
    od = OutputDir(tmp_path / "run", inputs=[project / "case.toml"]).open()
    try:
        with atomic.sync_at_end(od.staging):
            write_text_atomic(od.path("a.csv"), "a\n")
            write_text_atomic(od.path("loads/b.csv"), "b\n")
            (pending,) = atomic._SYNC_AT_END.values()
            assert sorted(Path(p).name for p, _ident in pending) == ["a.csv", "b.csv"]
        assert atomic._SYNC_AT_END == {}
        od.commit()
    finally:
        if not od.committed:
            od.abort()
    assert (tmp_path / "run" / "loads" / "b.csv").read_text() == "b\n"
    assert leftovers(tmp_path) == []


def test_failed_block_registers_nothing_and_commits_nothing(tmp_path, project):
    out = tmp_path / "run"
    with pytest.raises(RuntimeError, match="stop"):
        with OutputDir(out, inputs=[project / "case.toml"]) as od:
            with atomic.sync_at_end(od.staging):
                write_text_atomic(od.path("a.csv"), "a\n")
                raise RuntimeError("stop")
    assert atomic._SYNC_AT_END == {} and not out.exists() and leftovers(tmp_path) == []


def _tree(folder) -> dict:
    out = {}
    for root, _dirs, names in os.walk(folder):
        for n in names:
            p = os.path.join(root, n)
            out[os.path.relpath(p, folder)] = hashlib.sha256(Path(p).read_bytes()).hexdigest()
    return out


def test_plots_in_a_child_process_write_the_same_files(tmp_path):
    run = fakerun.make_run()
    got = {}
    for parallel in (False, True):
        out = tmp_path / f"run_{parallel}"
        with OutputDir(out, inputs=[run.case_path]) as od:
            res = write_all(run, od.staging, render=False, parallel=parallel, run_time_s=1.0)
        got[parallel] = (_tree(out), [str(p) for p in res["files"]], res["images"])
    serial, forked = got[False], got[True]
    assert forked[1] == serial[1]                     # same files, same order
    assert forked[2] == serial[2]
    assert set(serial[2]) == set(plots.plot_names(run))
    # byte for byte, PNG included; matplotlib's SVG carries its creation time and random ids
    # (so does the report that embeds it), and the run marker its creation time
    stamped = ("geomload-run.json", "report.html", os.path.join("plots", "vn.svg"))
    assert set(serial[0]) == set(forked[0])
    differ = [k for k in serial[0] if k not in stamped and serial[0][k] != forked[0][k]]
    assert differ == [] and any(k.endswith(".png") for k in serial[0])


def test_plots_shared_with_the_child_are_the_plots_drawn_alone():
    """finish_plots right after the fork: this process draws from the last plot on while the
    child draws from the first; every plot once, the same PNG bytes as drawn in one process
    (reference: the in-process drawing; speed work changes no byte, common practice)."""
    run = fakerun.make_run()
    alone = plots.plot_images(run)
    job = plots.start_plot_process(run)
    try:
        shared = plots.finish_plots(run, job)
    finally:
        job.stop()
    assert list(shared) == list(plots.plot_names(run)) == list(alone)
    assert all(job.share.claimed[:])                  # each plot claimed by one process
    for name, formats in alone.items():
        assert shared[name]["png"] == formats["png"], name


def test_a_dead_plot_process_costs_only_the_plots():
    import signal

    run = fakerun.make_run()
    job = plots.start_plot_process(run)
    os.kill(job.proc.pid, signal.SIGKILL)             # a real crash of the child
    try:
        got = job.result()
    finally:
        job.stop()
    assert set(got) == set(plots.plot_names(run))
    assert all(isinstance(v, Exception) and "plot process" in str(v) for v in got.values())


# ------------------------------------------------------------------ one LU per control model
def test_control_model_build_solves_every_right_hand_side_with_the_basis():
    """ControlModel.build (one assembly and one LU) gives the circulations of a direct LAPACK
    solve of the assembled influence matrix (numpy.linalg.solve, the reference library), and
    the states of the two-solve construction."""
    import numpy as np

    from helpers.aero_wings import trapezoid
    from helpers.validation import check
    from geomload.aero.controls import ControlSurface
    from geomload.aero.lattice import build_lattice
    from geomload.aero.roll import ControlModel, control_rhs
    from geomload.aero.solve import AeroModel

    st = trapezoid(8.0, 0.5)
    ail = ControlSurface("ail", "aileron", 3.0, 4.6, 0.72, mode="antisymmetric")
    lat = build_lattice(st, n_span=16, n_chord=6, full_span=True, controls=[ail])
    one = ControlModel.build(lat, 0.3, [ail])
    two = ControlModel(AeroModel(lat, mach=0.3), [ail])
    R = control_rhs(lat, [ail])
    assert R.shape == (lat.colloc.shape[0], 3)  # two deflection columns and the roll rate
    assert one.model.extra_solutions.shape == R.shape
    A = one.model._assemble()
    ref = np.linalg.solve(A, np.hstack([one.model._rhs([0.0, 0.5 * np.pi]), R]))
    scale = float(np.abs(ref).max())
    check("numpy.linalg.solve of the assembled influence matrix", "control circulations",
          0.0, float(np.abs(one._B - ref).max()) / scale, abs=1e-12)
    s1 = one.solve(6.0, {"ail": 10.0}, 0.02)
    s2 = two.solve(6.0, {"ail": 10.0}, 0.02)
    check("numpy.linalg.solve of the assembled influence matrix", "CL, one LU against two",
          s2.CL, s1.CL, rel=1e-12)
    check("numpy.linalg.solve of the assembled influence matrix", "rolling moment",
          s2.Cl_roll, s1.Cl_roll, rel=1e-10)
    # a model built without the extra columns, or with other ones, still solves them itself
    other = ControlModel(AeroModel(lat, mach=0.3, extra_rhs=R[:, :1]), [ail])
    assert np.allclose(other._B, one._B, rtol=0, atol=1e-12 * scale)


# Table text made a block at a time must be the text of formatting each row on its own; the
# reference is Python's own %-formatting and repr of each float (common practice, no source).
_SPECIAL = [0.0, -0.0, 1.0, -1.5, 0.1, 1 / 3, 2.0 ** -1074, 1e-300, 1e300, 123456789012345.6,
            -9.87654321e-5, float("nan"), float("inf"), float("-inf"), 70.159097744298]


def _table(rows, cols, seed):
    import numpy as np

    rng = np.random.default_rng(seed)
    t = rng.standard_normal((rows, cols)) * 10.0 ** rng.integers(-12, 12, (rows, cols))
    t.flat[: len(_SPECIAL)] = _SPECIAL[: t.size]
    return t


@pytest.mark.parametrize("fmt", ["%.14g, %.14g, %.14g", "%r,%r,%r", "%.10g,%.10g,%.10g"])
def test_deck_blocks_are_the_text_of_each_row_formatted_alone(fmt):
    import numpy as np

    from geomload.export import fe_deck

    for seed, rows in ((1, 1), (2, 7), (3, 60)):
        t = _table(rows, 3, seed)
        ids = np.arange(1.0, rows + 1.0)[:, None]            # node numbers as exact floats
        table = np.hstack([ids, t])
        expected = "\n".join(("%d, " + fmt) % (int(r[0]), *r[1:]) for r in table.tolist())
        assert fe_deck._block("%d, " + fmt, table) == expected
        assert fe_deck._block("%d, " + fmt, table, same=True) == expected   # made, then kept
        assert fe_deck._block("%d, " + fmt, table, same=True) == expected   # the kept text
        other = table.copy()
        other[-1, -1] = np.nextafter(other[-1, -1], np.inf)  # one bit: its own text
        alone = "\n".join(("%d, " + fmt) % (int(r[0]), *r[1:]) for r in other.tolist())
        assert fe_deck._block("%d, " + fmt, other, same=True) == alone


def test_numeric_csv_rows_and_nodal_loads_csv_are_each_value_formatted_alone():
    import numpy as np

    from geomload.export import fe_deck, tables
    from geomload.export.fe_nodes import NodalLoads, to_cad

    t = _table(9, 4, 5)
    text = tables._csv(["head"], {f"c{j}_m": t[:, j] for j in range(4)})
    rows = [line for line in text.splitlines() if not line.startswith("#")][1:]
    assert rows == [",".join(f"{v:.10g}" for v in r) for r in t.tolist()]
    n = 9
    finite = lambda a: np.where(np.isfinite(a), a, 1.25)  # noqa: E731 (nodal loads are finite)
    pts = np.column_stack([np.zeros(n), np.linspace(0.0, 1.2, n), np.full(n, -0.0)])
    nl = NodalLoads(case="QM-36 Pellin pull-up", y_m=pts[:, 1], points_m=pts,
                    force_N=finite(_table(n, 3, 6)), moment_Nm=finite(_table(n, 3, 7)),
                    axis_s=pts, axis_b=pts,
                    axis_n=pts)
    for _ in range(2):  # the second time with the kept coordinates text
        csv = fe_deck.nodal_loads_csv(nl)
        data = [line for line in csv.splitlines() if not line.startswith("#")][1:]
        assert data == [f"{i + 1}," + ",".join(map(repr, r)) for i, r in enumerate(
            np.column_stack(to_cad(nl)).tolist())]


@pytest.mark.parametrize("size", [0, 1, 200_000])
def test_atomic_bytes_are_written_whole_with_the_usual_permissions(tmp_path, size):
    data = os.urandom(size)
    p = atomic.write_bytes_atomic(tmp_path / "QM-36.bin", data)
    assert p.read_bytes() == data
    assert (p.stat().st_mode & 0o777) == (0o666 & ~atomic._UMASK)
    assert sorted(os.listdir(tmp_path)) == ["QM-36.bin"]       # no temporary file left


def test_beam_deck_with_its_kept_geometry_is_the_deck_built_afresh():
    """Every case of a run shares the spar's nodes, elements and sections: that part of the
    deck is built once. A deck made with the kept part must be the deck made with none kept,
    byte for byte, also when the lever nodes (nodes with moments) or one coordinate bit differ
    (the deck's own text is the reference: common practice, no source)."""
    import numpy as np

    from geomload.export import fe_deck
    from geomload.export.fe_nodes import NodalLoads

    n = 12
    pts = np.column_stack([np.linspace(0.0, 0.3, n), np.linspace(0.0, 1.5, n),
                           np.linspace(0.0, 0.05, n)])
    rng = np.random.default_rng(11)

    def case(name, moments_at, p=pts):
        m = np.zeros((n, 3))
        m[moments_at] = rng.standard_normal((len(moments_at), 3))
        return NodalLoads(case=name, y_m=p[:, 1], points_m=p, force_N=rng.standard_normal((n, 3)),
                          moment_Nm=m, axis_s=p, axis_b=p, axis_n=p)

    other = pts.copy()
    other[-1, 2] = np.nextafter(other[-1, 2], 1.0)
    cases = [case("pull-up", [1, 2, 5]), case("push-over", [1, 2, 5]),
             case("gust", [0, 7]), case("roll", list(range(n))), case("bit", [1, 2, 5], other)]
    fe_deck._GEOMETRY.clear()
    kept = [fe_deck.beam_deck(c, unit_scale_m=0.0254, unit="in", title="QM-36 Pellin").text
            for c in cases]
    assert len(fe_deck._GEOMETRY) == 4            # (same, same), levers x2, one bit: 4 parts
    for c, text in zip(cases, kept):
        fe_deck._GEOMETRY.clear()
        assert fe_deck.beam_deck(c, unit_scale_m=0.0254, unit="in", title="QM-36 Pellin").text \
            == text
    assert kept[0].split("*CLOAD")[0].split("*NODE, NSET=NALL")[1] \
        == kept[1].split("*CLOAD")[0].split("*NODE, NSET=NALL")[1]
    assert kept[0] != kept[4]
