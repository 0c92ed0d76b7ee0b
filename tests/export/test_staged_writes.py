"""Files written inside a staged run folder being filled (`atomic.sync_at_end`): through folder
descriptors and a rename that never replaces a name already taken. They must give the same
files and the same refusals as the checked path, leak no descriptor and leave nothing behind.
Real files, links and folders in a temporary folder (the nothing-lost rule is the product's
own contract, common practice for safe file output, no source; renameat2's RENAME_NOREPLACE
and syncfs are documented in the Linux man pages renameat2(2) and syncfs(2))."""

import os
import stat
import sys
from pathlib import Path

import pytest

from geomload.errors import OutputError
from geomload.export import atomic
from geomload.export.atomic import write_bytes_atomic, write_text_atomic
from geomload.export.run_folder import OutputDir, leftovers

from helpers.nothinglost import snapshot

pytestmark = pytest.mark.skipif(sys.platform != "linux", reason="descriptor paths: Linux")


@pytest.fixture()
def project(tmp_path):
    proj = tmp_path / "proj"
    proj.mkdir()
    (proj / "case.toml").write_text('title = "QM-36 Pellin"\n')
    (proj / "notes.txt").write_text("my notes, not geomload's\n")
    return proj


def _fds() -> int:
    return len(os.listdir("/proc/self/fd"))


def _files(folder) -> dict:
    out = {}
    for root, _dirs, names in os.walk(folder):
        for n in names:
            p = Path(root) / n
            out[str(p.relative_to(folder))] = (p.read_bytes(), stat.S_IMODE(p.stat().st_mode))
    return out


def _write_set(od):
    write_text_atomic(od.staging / "a.csv", "a\n", [])
    write_bytes_atomic(od.staging / "fe" / "deck one.inp", b"*NODE\n", [])
    write_text_atomic(od.staging / "fe" / "deep" / "b.csv", "b\n", [])
    final = od.staging / "fe" / "c.vtp"
    with atomic.atomic_path(final) as tmp:  # a writer opening by name, as vtkxml does
        with open(tmp, "wb") as fh:
            fh.write(b"<VTKFile/>")
            atomic.flush_to_disk(fh, final)


@pytest.mark.parametrize("fast", [True, False])
def test_staged_files_equal_the_checked_path_and_leak_nothing(tmp_path, project, fast,
                                                              monkeypatch):
    if not fast:  # a system without renameat2/syncfs: every file through the checked path
        from geomload.export import atomic_staged

        monkeypatch.setattr(atomic_staged, "_LIBC", [None])
        monkeypatch.setattr(atomic_staged, "_SYNCFS_OK", [False])
    before = _fds()
    with OutputDir(tmp_path / "run", inputs=[project / "case.toml"]) as od:
        with atomic.sync_at_end(od.staging):
            _write_set(od)
            assert len(atomic._STAGED_DIRS) == 1
            assert sorted(Path(p).name for p, _ident in atomic._SYNC_AT_END[str(od.staging)]) == [
                "a.csv", "b.csv", "c.vtp", "deck one.inp"]
        assert atomic._STAGED_DIRS == {} and atomic._SYNC_AT_END == {}
    assert _fds() == before
    mode = 0o666 & ~atomic._UMASK
    got = _files(tmp_path / "run")
    from geomload.export.run_folder import MARKER

    got.pop(MARKER)  # the run folder's marker, written at the commit (outside the block)
    assert got == {"a.csv": (b"a\n", mode), "fe/deck one.inp": (b"*NODE\n", mode),
                   "fe/deep/b.csv": (b"b\n", mode), "fe/c.vtp": (b"<VTKFile/>", mode)}
    assert leftovers(tmp_path) == []


def test_a_name_taken_by_a_link_to_an_input_is_refused(tmp_path, project):
    keep = snapshot(project)
    with pytest.raises(OutputError, match="refusing to overwrite the input file"):
        with OutputDir(tmp_path / "run", inputs=[project / "case.toml"]) as od:
            with atomic.sync_at_end(od.staging):
                (od.staging / "fe").mkdir()
                os.symlink(project / "case.toml", od.staging / "fe" / "deck.inp")
                write_text_atomic(od.staging / "fe" / "deck.inp", "*NODE\n",
                                  [project / "case.toml"])
    assert snapshot(project) == keep and leftovers(tmp_path) == []


def test_a_name_taken_by_a_hard_link_of_an_input_is_refused(tmp_path, project):
    keep = snapshot(project)
    with pytest.raises(OutputError, match="refusing to overwrite the input file"):
        with OutputDir(tmp_path / "run", inputs=[project / "case.toml"]) as od:
            with atomic.sync_at_end(od.staging):
                os.link(project / "case.toml", od.staging / "h.csv")
                write_text_atomic(od.staging / "h.csv", "x\n", [project / "case.toml"])
    assert snapshot(project) == keep and leftovers(tmp_path) == []


def test_a_subfolder_swapped_for_a_link_is_never_written_through(tmp_path, project):
    keep = snapshot(project)
    with pytest.raises(OutputError, match="fe: is a symbolic link"):
        with OutputDir(tmp_path / "run", inputs=[project / "case.toml"]) as od:
            with atomic.sync_at_end(od.staging):
                os.symlink(project, od.staging / "fe")
                write_text_atomic(od.staging / "fe" / "notes.txt", "overwritten\n", [])
    assert snapshot(project) == keep and leftovers(tmp_path) == []


def test_a_name_taken_by_our_own_earlier_file_is_replaced(tmp_path, project):
    with OutputDir(tmp_path / "run", inputs=[project / "case.toml"]) as od:
        with atomic.sync_at_end(od.staging):
            write_text_atomic(od.staging / "a.csv", "first\n", [])
            write_text_atomic(od.staging / "a.csv", "second\n", [])
    assert (tmp_path / "run" / "a.csv").read_text() == "second\n"
    assert leftovers(tmp_path) == []


def test_full_disk_inside_the_block_fails_with_one_line_and_leaves_nothing(small_tmpfs,
                                                                            project):
    disk = small_tmpfs(256 * 1024)
    out = disk / "run"
    with pytest.raises(OutputError) as e:
        with OutputDir(out, inputs=[project / "case.toml"]) as od:
            with atomic.sync_at_end(od.staging):
                write_text_atomic(od.staging / "small.csv", "ok\n", [])
                write_text_atomic(od.staging / "fe" / "big.csv", "x" * (600 * 1024), [])
    msg = str(e.value)
    assert "\n" not in msg and str(out) in msg and "No space left on device" in msg
    assert os.listdir(disk) == [] and atomic._STAGED_DIRS == {}


@pytest.fixture()
def per_file_flush(monkeypatch):
    """The flush pass as on a system where syncfs does not report write-back errors (a kernel
    before 5.8, a stacked or network file system): one fsync per file."""
    from geomload.export import atomic_staged

    monkeypatch.setattr(atomic_staged, "_SYNCFS_OK", [False])


def _bounded(seconds: int):
    """A SIGALRM after `seconds`: a call that would block for ever fails the test instead."""
    import signal

    def boom(*_):
        raise TimeoutError("blocked")

    old = signal.signal(signal.SIGALRM, boom)
    signal.alarm(seconds)
    return lambda: (signal.alarm(0), signal.signal(signal.SIGALRM, old))


def test_a_refused_fifo_target_never_hangs_the_per_file_flush(tmp_path, project,
                                                              per_file_flush):
    # open(2) of a FIFO for reading blocks until a writer comes, unless O_NONBLOCK (fifo(7),
    # open(2) man pages): the pass must not open a name whose write was refused like that
    done = _bounded(10)
    try:
        with OutputDir(tmp_path / "run", inputs=[project / "case.toml"]) as od:
            with atomic.sync_at_end(od.staging):
                write_text_atomic(od.staging / "a.csv", "a\n", [])
                os.mkfifo(od.staging / "pipe.csv")
                with pytest.raises(OutputError, match="FIFO"):
                    write_text_atomic(od.staging / "pipe.csv", "never\n", [])
                os.unlink(od.staging / "pipe.csv")  # the caller cleans up, and goes on
    finally:
        done()
    assert (tmp_path / "run" / "a.csv").read_text() == "a\n"
    assert not (tmp_path / "run" / "pipe.csv").exists()


def test_the_per_file_flush_leaves_alone_what_is_not_the_file_written(tmp_path,
                                                                     per_file_flush):
    from geomload.export.atomic_staged import fsync_ours

    done = _bounded(10)
    try:
        fifo = tmp_path / "fifo"
        os.mkfifo(fifo)
        fsync_ours(str(fifo))  # not a regular file: returned at once, nothing opened to wait
        f = tmp_path / "f.csv"
        f.write_text("x\n")
        st = os.stat(f)
        fsync_ours(str(f), (st.st_dev, st.st_ino))  # the very file: flushed without error
        fsync_ours(str(f), (st.st_dev, st.st_ino + 1))  # another inode: left alone
        link = tmp_path / "link.csv"
        link.symlink_to(f)
        with pytest.raises(OSError):  # a link at the name is not followed (O_NOFOLLOW)
            fsync_ours(str(link))
    finally:
        done()


def test_syncfs_is_trusted_only_on_a_local_file_system_it_reports_for(tmp_path):
    # statfs(2) f_type against GNU coreutils' `stat -f -c %t` (hex magic), an outside reader of
    # the same call; the magic numbers are those of linux/magic.h
    import shutil
    import subprocess

    from geomload.export import atomic_staged as st

    if st._libc() is None or shutil.which("stat") is None:
        pytest.skip("no fstatfs or no stat(1) here")
    fd = os.open(tmp_path, os.O_RDONLY)
    try:
        got = st.fs_type(fd)
        ref = int(subprocess.run(["stat", "-f", "-c", "%t", str(tmp_path)], check=True,
                                 capture_output=True, text=True).stdout.strip(), 16)
        assert got == ref
        assert st.syncfs_reports_errors(fd) == (st._kernel_reports_syncfs_errors()
                                                and ref in st._SYNCFS_TYPES)
    finally:
        os.close(fd)
    assert 0x794C7630 not in st._SYNCFS_TYPES  # overlayfs (linux/magic.h OVERLAYFS_SUPER_MAGIC)


def test_a_batch_folder_flush_per_file_skips_fifos_and_links(tmp_path, per_file_flush):
    from geomload.batch.assemble import flush_to_disk

    (tmp_path / "b" / "runs" / "v1").mkdir(parents=True)
    (tmp_path / "b" / "runs" / "v1" / "loads.csv").write_text("1\n")
    os.mkfifo(tmp_path / "b" / "runs" / "pipe")
    (tmp_path / "outside").mkdir()
    (tmp_path / "b" / "to_outside").symlink_to(tmp_path / "outside")
    done = _bounded(10)
    try:
        flush_to_disk(tmp_path / "b")  # returns: the FIFO not waited on, the link not followed
    finally:
        done()
    with pytest.raises(OutputError, match="cannot write"):
        flush_to_disk(tmp_path / "missing")
