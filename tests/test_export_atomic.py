"""Atomic outputs: temp file + rename, staged run folders, inputs never overwritten (issue 7)."""

import os

import pytest

from geomload.errors import OutputError
from geomload.export import atomic
from geomload.export.atomic import OutputDir, safe_name, write_text_atomic

import fakerun


def _leftovers(folder):
    return [p for p in os.listdir(folder) if p.startswith(".")]


def test_atomic_write_and_failure_keeps_old_file(tmp_path):
    p = tmp_path / "a.csv"
    write_text_atomic(p, "one\n")
    assert p.read_text() == "one\n"
    with pytest.raises(RuntimeError):
        with atomic.atomic_path(p) as tmp:
            tmp.write_text("half")
            raise RuntimeError("injected")
    assert p.read_text() == "one\n"          # the old content survives a failed rewrite
    assert _leftovers(tmp_path) == []       # and no temporary file is left behind


def test_refuses_input_paths(tmp_path):
    inp = tmp_path / "wing.stl"
    inp.write_text("solid x\nendsolid x\n")
    with pytest.raises(OutputError, match="input"):
        write_text_atomic(inp, "oops", inputs=[inp])
    assert inp.read_text().startswith("solid")
    with pytest.raises(OutputError, match="contains the input"):
        OutputDir(tmp_path, force=True, inputs=[inp]).open()
    od = OutputDir(tmp_path / "out", inputs=[inp]).open()
    with pytest.raises(OutputError, match="relative"):
        od.path("../wing.stl")
    od.abort()


def test_outputdir_refuses_nonempty_without_force(tmp_path):
    out = tmp_path / "run"
    out.mkdir()
    (out / "old.txt").write_text("old")
    with pytest.raises(OutputError, match="--force"):
        OutputDir(out).open()
    (tmp_path / "file").write_text("x")
    with pytest.raises(OutputError, match="not a folder"):
        OutputDir(tmp_path / "file").open()


def test_outputdir_commit_and_force_replace(tmp_path):
    out = tmp_path / "run"
    with OutputDir(out) as od:
        write_text_atomic(od.path("sub/a.txt"), "A")
        assert not out.exists()             # nothing visible until the run succeeds
    assert (out / "sub" / "a.txt").read_text() == "A"
    with OutputDir(out, force=True) as od:
        write_text_atomic(od.path("b.txt"), "B")
    assert sorted(os.listdir(out)) == ["b.txt"]
    assert _leftovers(tmp_path) == []


def test_failing_run_leaves_nothing(tmp_path):
    out = tmp_path / "run"
    with pytest.raises(ZeroDivisionError):
        with OutputDir(out) as od:
            write_text_atomic(od.path("stations.csv"), "y_m\n0\n")
            1 / 0
    assert not out.exists() and _leftovers(tmp_path) == []
    # with --force over an old run, a failure keeps the old run untouched
    out.mkdir()
    (out / "old.txt").write_text("old")
    with pytest.raises(ZeroDivisionError):
        with OutputDir(out, force=True) as od:
            write_text_atomic(od.path("new.txt"), "new")
            1 / 0
    assert os.listdir(out) == ["old.txt"] and _leftovers(tmp_path) == []


def test_write_all_failure_injected_in_report(tmp_path, monkeypatch):
    from geomload.export import report, write_all

    def boom(*a, **k):
        raise RuntimeError("injected failure")

    monkeypatch.setattr(report, "write_report", boom)
    run = fakerun.make_run()
    out = tmp_path / "run"
    with pytest.raises(RuntimeError, match="injected"):
        with OutputDir(out, inputs=[run.case_path]) as od:
            write_all(run, od.staging, render=False)
    assert not out.exists() and os.listdir(tmp_path) == []


def test_safe_name_unique():
    taken = set()
    names = [safe_name(n, taken) for n in ("a b", "a_b", "<script>", "", "A B")]
    assert names[0] == "a_b" and len(set(n.lower() for n in names)) == 5
    assert all(ch.isalnum() or ch in "_.+-" for n in names for ch in n)
