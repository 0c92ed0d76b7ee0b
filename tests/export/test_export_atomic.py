"""Nothing lost: single files renamed into place, run folders staged, marked, locked and never
replacing a folder geomload did not make. Every data-loss test builds real files, real symlinks,
FIFOs and folders in a temporary folder and checks them byte for byte afterwards (the rule is
the product's own contract, common practice for safe file output, no source)."""

from helpers.paths import ROOT, TESTS
import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from geomload.errors import OutputError
from geomload.export import atomic
from geomload.export.atomic import safe_name, write_text_atomic
from geomload.export.run_folder import MARKER, OutputDir, held_signals, leftovers, read_marker

from helpers import fakerun
from helpers.nothinglost import snapshot


@pytest.fixture()
def project(tmp_path):
    """A user's project folder: case file, CAD file, notes (the inputs), beside the outputs."""
    proj = tmp_path / "proj"
    proj.mkdir()
    (proj / "case.toml").write_text('title = "QM-36 Pellin"\n')
    (proj / "wing.stl").write_bytes(b"solid pellin\nendsolid pellin\n")
    (proj / "notes.txt").write_text("my notes, not geomload's\n")
    return proj


def inputs_of(proj):
    return [proj / "case.toml", proj / "wing.stl"]


def run_into(out, proj, force=False, files=("stations.csv",)):
    with OutputDir(out, force=force, inputs=inputs_of(proj)) as od:
        for f in files:
            write_text_atomic(od.path(f), f"{f}\n")
    return Path(out)


# ------------------------------------------------------------------------------- single files
def test_atomic_write_and_failure_keeps_old_file(tmp_path):
    p = tmp_path / "a.csv"
    write_text_atomic(p, "one\n")
    assert p.read_text() == "one\n"
    with pytest.raises(RuntimeError):
        with atomic.atomic_path(p) as tmp:
            tmp.write_text("half")
            raise RuntimeError("injected")
    assert p.read_text() == "one\n"          # the old content survives a failed rewrite
    assert leftovers(tmp_path) == []         # and no temporary file is left behind


def test_single_file_refuses_symlink_fifo_device_folder_and_inputs(tmp_path, project):
    before = snapshot(tmp_path)
    target = project / "notes.txt"
    (tmp_path / "link.csv").symlink_to(target)
    os.mkfifo(tmp_path / "pipe.csv")
    (tmp_path / "adir.csv").mkdir()
    before = snapshot(tmp_path)
    for name, why in (("link.csv", "symbolic link"), ("pipe.csv", "FIFO"), ("adir.csv", "folder")):
        with pytest.raises(OutputError, match=why):
            write_text_atomic(tmp_path / name, "x\n")
    with pytest.raises(OutputError, match="device"):
        write_text_atomic("/dev/null", "x\n")
    # an input, reached directly, through a hard link and through a symlinked parent
    os.link(project / "wing.stl", tmp_path / "hard.stl")
    (tmp_path / "plink").symlink_to(project)
    before = snapshot(tmp_path)
    for p in (project / "wing.stl", tmp_path / "hard.stl", tmp_path / "plink" / "case.toml"):
        with pytest.raises(OutputError, match="input"):
            write_text_atomic(p, "oops", inputs=inputs_of(project))
    assert snapshot(tmp_path) == before
    assert leftovers(tmp_path) == []


# ------------------------------------------------------------------------------- run folders
@pytest.mark.parametrize("out, why", [("", "empty"), (".", "current folder"), ("/", "root"),
                                      ("~", "home")])
def test_run_folder_refuses_empty_dot_root_home(out, why, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "precious.txt").write_text("keep me\n")
    before = snapshot(tmp_path)
    for force in (False, True):
        with pytest.raises(OutputError, match=why):
            OutputDir(out, force=force).open()
    assert snapshot(tmp_path) == before


def test_run_folder_refuses_a_folder_above_the_current_one(tmp_path, monkeypatch):
    (tmp_path / "sub").mkdir()
    monkeypatch.chdir(tmp_path / "sub")
    with pytest.raises(OutputError, match="current folder"):
        OutputDir("..", force=True).open()


def test_out_through_symlinked_parent_onto_the_input_folder_is_refused(tmp_path, project):
    # the reported loss: --out reaches the input folder through a symlinked parent, with --force
    (tmp_path / "alias").symlink_to(tmp_path)          # alias/proj resolves to proj
    (tmp_path / "projlink").symlink_to(project)         # projlink resolves to proj
    before = snapshot(tmp_path)
    for out in (tmp_path / "alias" / "proj", tmp_path / "projlink", tmp_path,
                tmp_path / "alias"):
        with pytest.raises(OutputError, match="input|symbolic link"):
            OutputDir(out, force=True, inputs=inputs_of(project)).open()
    assert snapshot(tmp_path) == before
    assert leftovers(tmp_path) == []


def test_folder_not_made_by_geomload_is_never_replaced(tmp_path, project):
    out = tmp_path / "results"
    out.mkdir()
    (out / "thesis.docx").write_bytes(b"\x00years of work\xff")
    before = snapshot(tmp_path)
    for force in (False, True):
        with pytest.raises(OutputError, match="no geomload run marker") as e:
            run_into(out, project, force=force)
        assert "\n" not in str(e.value)
    assert snapshot(tmp_path) == before
    assert leftovers(tmp_path) == []


def test_marked_run_is_replaced_only_with_force_and_only_when_untouched(tmp_path, project):
    out = run_into(tmp_path / "run", project, files=("a.csv", "sub/b.csv"))
    m = read_marker(out)
    assert m["geomload_version"] and m["case_file"].endswith("case.toml") and m["created"]
    assert m["files"] == {"a.csv": 6, "sub/b.csv": 10}
    with pytest.raises(OutputError, match="--force"):
        run_into(out, project)
    run_into(out, project, force=True, files=("new.csv",))
    assert sorted(os.listdir(out)) == [MARKER, "new.csv"]
    # a user file added to a geomload run folder: the folder is no longer replaceable
    (out / "my_notes.txt").write_text("mine\n")
    before = snapshot(tmp_path)
    with pytest.raises(OutputError, match="my_notes.txt"):
        run_into(out, project, force=True)
    assert snapshot(tmp_path) == before
    os.unlink(out / "my_notes.txt")
    # a run file edited by the user: refused too
    (out / "new.csv").write_text("edited by hand, longer\n")
    with pytest.raises(OutputError, match="changed"):
        run_into(out, project, force=True)
    (out / "new.csv").write_text("new.csv\n")
    # a symlink planted in the run folder: refused, its target untouched
    (out / "data").symlink_to(project)
    before = snapshot(tmp_path)
    with pytest.raises(OutputError, match="link"):
        run_into(out, project, force=True)
    assert snapshot(tmp_path) == before
    assert leftovers(tmp_path) == []


def test_out_that_is_a_symlink_is_refused(tmp_path, project):
    run_into(tmp_path / "real", project)
    (tmp_path / "out").symlink_to(tmp_path / "real")
    before = snapshot(tmp_path)
    with pytest.raises(OutputError, match="symbolic link"):
        run_into(tmp_path / "out", project, force=True)
    assert snapshot(tmp_path) == before


def test_folder_created_during_the_run_is_never_clobbered(tmp_path, project):
    out = tmp_path / "out"
    for force in (False, True):
        od = OutputDir(out, force=force, inputs=inputs_of(project)).open()
        write_text_atomic(od.path("a.csv"), "a\n")
        out.mkdir()                                   # a colleague's folder appears meanwhile
        (out / "colleague.txt").write_text("theirs\n")
        before = (snapshot(out), snapshot(project))
        with pytest.raises(OutputError):
            od.commit()
        assert (snapshot(out), snapshot(project)) == before   # theirs kept, byte for byte
        assert sorted(os.listdir(tmp_path)) == ["out", "proj"]  # nothing of ours left
        assert leftovers(tmp_path) == []
        os.unlink(out / "colleague.txt")
        out.rmdir()


def test_failing_run_leaves_nothing_and_keeps_the_previous_run(tmp_path, project):
    out = tmp_path / "run"
    with pytest.raises(ZeroDivisionError):
        with OutputDir(out) as od:
            write_text_atomic(od.path("stations.csv"), "y_m\n0\n")
            1 / 0
    assert not out.exists() and leftovers(tmp_path) == []
    run_into(out, project, files=("old.csv",))
    before = snapshot(out)
    with pytest.raises(ZeroDivisionError):
        with OutputDir(out, force=True, inputs=inputs_of(project)) as od:
            write_text_atomic(od.path("new.csv"), "new")
            1 / 0
    assert snapshot(out) == before and leftovers(tmp_path) == []


def test_missing_parents_made_for_a_failed_run_are_removed(tmp_path):
    with pytest.raises(ZeroDivisionError):
        with OutputDir(tmp_path / "a" / "b" / "run") as od:
            write_text_atomic(od.path("x.csv"), "x")
            1 / 0
    assert list(tmp_path.iterdir()) == []


def test_second_run_into_the_same_folder_is_refused(tmp_path, project):
    out = tmp_path / "out"
    first = OutputDir(out, inputs=inputs_of(project)).open()
    with pytest.raises(OutputError, match="another geomload run"):
        OutputDir(out, force=True, inputs=inputs_of(project)).open()
    # a real second process too (flock is per open file, so it holds across processes)
    code = ("import sys; from geomload.export.run_folder import OutputDir\n"
            "try:\n    OutputDir(sys.argv[1]).open()\nexcept Exception as e:\n"
            "    print(e); sys.exit(1)\n")
    p = subprocess.run([sys.executable, "-c", code, str(out)], capture_output=True, text=True,
                       timeout=60, env={**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)})
    assert p.returncode == 1 and "another geomload run" in p.stdout
    write_text_atomic(first.path("a.csv"), "a\n")
    first.commit()
    assert (out / "a.csv").read_text() == "a\n"
    assert leftovers(tmp_path) == []                  # the lock file went with the run


def test_relative_paths_only_inside_the_run(tmp_path, project):
    od = OutputDir(tmp_path / "out", inputs=inputs_of(project)).open()
    with pytest.raises(OutputError, match="relative"):
        od.path("../wing.stl")
    od.abort()


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


def test_signals_are_held_during_the_folder_move():
    # SIGINT inside the critical section is delivered after it, as KeyboardInterrupt (POSIX)
    code = ("import os, signal, sys\n"
            "from geomload.export.run_folder import held_signals\n"
            "done = []\n"
            "try:\n"
            "    with held_signals():\n"
            "        os.kill(os.getpid(), signal.SIGINT)\n"
            "        done.append(1)\n"
            "except KeyboardInterrupt:\n"
            "    print('interrupted after', done)\n")
    p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60,
                       env={**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)})
    assert "interrupted after [1]" in p.stdout, p.stderr
    with held_signals():  # usable in-process as a plain context manager
        pass


# --------------------------------------------------------------------- full and read-only disks
def test_full_disk_fails_with_one_line_and_leaves_nothing(small_tmpfs, project):
    disk = small_tmpfs(256 * 1024)
    out = disk / "run"
    big = "x" * (600 * 1024)
    with pytest.raises(OutputError) as e:
        with OutputDir(out, inputs=inputs_of(project)) as od:
            write_text_atomic(od.path("small.csv"), "ok\n")
            write_text_atomic(od.path("big.csv"), big)
    msg = str(e.value)
    assert "\n" not in msg and str(out) in msg and "No space left on device" in msg
    assert os.listdir(disk) == []                     # no run, no staging, no lock, no temp


def test_read_only_file_system_fails_with_one_line(small_tmpfs, project):
    disk = small_tmpfs(64 * 1024, readonly=True)
    with pytest.raises(OutputError) as e:
        run_into(disk / "run", project)
    assert "Read-only file system" in str(e.value) and str(disk / "run") in str(e.value)
    with pytest.raises(OutputError, match="Read-only file system"):
        write_text_atomic(disk / "a.csv", "x\n")
    assert os.listdir(disk) == []


def test_safe_name_unique_ascii_and_unicode():
    taken = set()
    names = [safe_name(n, taken) for n in ("a b", "a_b", "<script>", "", "A B", "Überziehen",
                                           "banked turn 60°", "上升")]
    assert names[0] == "a_b" and len(set(n.lower() for n in names)) == len(names)
    assert names[5] == "Uberziehen" and names[6] == "banked_turn_60"
    assert all(ch.isascii() and (ch.isalnum() or ch in "_.+-") for n in names for ch in n)


def test_marker_is_strict_json(tmp_path, project):
    out = run_into(tmp_path / "run", project)
    json.loads((out / MARKER).read_text(encoding="utf-8"))


# ------------------------------------------------------------- a real run, really interrupted
def _interrupt_real_run(tmp_path, sig):
    import signal
    import time

    from helpers import make_corpus

    make_corpus.build(tmp_path / "c")
    out = tmp_path / "out"
    root = str(ROOT)
    # started the way the installed `geomload` console script starts it (a script calling main)
    launcher = tmp_path / "geomload_script.py"
    launcher.write_text("import sys\nfrom geomload.cli import main\nsys.exit(main())\n")
    p = subprocess.Popen([sys.executable, str(launcher), "run",
                          str(tmp_path / "c" / "good_envelope.toml"), "--out", str(out)],
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                         env={**os.environ, "PYTHONPATH": root})
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline and p.poll() is None:
        if any(".partial-" in n for n in os.listdir(tmp_path)):
            break
        time.sleep(0.02)
    assert p.poll() is None, "the run ended before it could be interrupted"
    time.sleep(0.05)  # into the work (the export may take well under a second)
    p.send_signal(getattr(signal, sig))
    _, err = p.communicate(timeout=120)
    return p.returncode, err, out


def test_interrupted_run_leaves_nothing(tmp_path):
    code, err, out = _interrupt_real_run(tmp_path, "SIGINT")
    assert code == 130, err
    assert "Traceback" not in err
    assert not out.exists() and leftovers(tmp_path) == []


def test_terminated_run_leaves_nothing(tmp_path):
    code, err, out = _interrupt_real_run(tmp_path, "SIGTERM")
    assert code == 128 + 15, err  # exit 128 + signal number (README exit codes)
    assert "Traceback" not in err
    assert not out.exists() and leftovers(tmp_path) == []


def test_staging_of_a_killed_run_is_removed_by_the_next_run(tmp_path, project):
    stale = tmp_path / ".out.partial-k1ll3d"      # what a SIGKILLed run leaves
    stale.mkdir()
    (stale / "stations.csv").write_text("half\n")
    other = tmp_path / ".other.partial-abc"        # another folder's staging: not ours to touch
    other.mkdir()
    od = OutputDir(tmp_path / "out", inputs=inputs_of(project)).open()
    assert od.removed_stale == [str(stale)] and not stale.exists() and other.is_dir()
    od.abort()
    other.rmdir()
