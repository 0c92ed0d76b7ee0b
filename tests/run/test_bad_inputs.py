"""The bad-input corpus (tests/bad_inputs): every case gives its exit code and one clean line.

Contract under test (README "Exit codes"): 0 ok, 1 bad input, 2 usage; an error is
one line on stderr starting "geomload: error:", naming the file or key, never a traceback; a
failed `run` leaves no output folder and no partial file. The corpus files are rebuilt by
tests/bad_inputs/make_corpus.py into a scratch folder (so no command can touch the committed
copies) and the committed copies are checked against that build.
"""

from __future__ import annotations
from helpers.paths import TESTS

import os
import shutil
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest
from click.testing import CliRunner

from geomload.cli import cli
from geomload.export.run_marker import write_marker
from helpers.nothinglost import snapshot

HERE = TESTS
CORPUS_DIR = HERE / "bad_inputs"
from helpers import make_corpus  # noqa: E402

CASES = tomllib.loads((CORPUS_DIR / "cases.toml").read_text())["case"]


@pytest.fixture(scope="module")
def corpus(tmp_path_factory):
    folder = tmp_path_factory.mktemp("corpus")
    make_corpus.build(folder)
    return folder


def _fill(text, corpus, tmp):
    return text.format(corpus=str(corpus), out=str(tmp / "out"), tmp=str(tmp))


def _mount(tmp, size, readonly=False):
    d = tmp / "disk"
    d.mkdir()
    opts = f"size={size}" + (",ro" if readonly else "")
    p = subprocess.run(["mount", "-t", "tmpfs", "-o", opts, "tmpfs", str(d)], capture_output=True,
                       text=True)
    if p.returncode != 0:
        d.rmdir()
        pytest.skip(f"cannot mount a small tmpfs here ({p.stderr.strip() or p.returncode})")
    return d


def _setup(kind, tmp, corpus):
    """Build the case's scene in tmp (real files, real links); returns a cleanup callable."""
    done = lambda: None  # noqa: E731
    if kind == "plain_file":
        (tmp / "plain").write_text("a regular file, not a folder\n")
    elif kind == "existing_out":
        (tmp / "out").mkdir()
        (tmp / "out" / "keep.txt").write_text("a previous result\n")
    elif kind == "precious_file":  # the current folder of an "--out ." / "--out ''" run
        (tmp / "precious.txt").write_text("the user's work\n")
    elif kind == "project_with_alias":  # proj/ holds the inputs; alias -> tmp, projlink -> proj
        (tmp / "proj").mkdir()
        for n in ("good.toml", "wing.stl"):
            shutil.copyfile(corpus / n, tmp / "proj" / n)
        (tmp / "proj" / "notes.txt").write_text("not geomload's\n")
        (tmp / "alias").symlink_to(tmp)
        (tmp / "projlink").symlink_to(tmp / "proj")
    elif kind == "out_symlink":
        (tmp / "real").mkdir()
        (tmp / "real" / "keep.txt").write_text("behind the link\n")
        (tmp / "out").symlink_to(tmp / "real")
    elif kind == "marked_out_with_user_file":  # an earlier geomload run the user added notes to
        (tmp / "out").mkdir()
        (tmp / "out" / "stations.csv").write_text("y_m\n0\n")
        write_marker(tmp / "out", corpus / "good.toml")
        (tmp / "out" / "notes.txt").write_text("added by the user\n")
    elif kind == "locked_out":  # another run holds the lock of {out}
        import fcntl

        fh = open(tmp / ".out.geomload-lock", "w")
        fcntl.flock(fh, fcntl.LOCK_EX)

        def done():
            os.unlink(tmp / ".out.geomload-lock")
            fh.close()
    elif kind in ("small_disk", "read_only_disk"):
        d = _mount(tmp, 96 * 1024, readonly=kind == "read_only_disk")

        def done():
            left = os.listdir(d)
            subprocess.run(["umount", "-l", str(d)], capture_output=True)
            d.rmdir()
            assert left == [], f"left on the small disk: {left}"
    elif kind == "csv_symlink":
        (tmp / "plain").write_text("the user's file the link points to\n")
        (tmp / "link.csv").symlink_to(tmp / "plain")
    elif kind == "csv_fifo":
        os.mkfifo(tmp / "fifo.csv")
    elif kind:
        raise AssertionError(f"unknown setup {kind!r} in cases.toml")
    return done


def test_corpus_is_large_enough_and_ids_unique():
    # the corpus covers at least 30 cases across geometry and case files
    ids = [c["id"] for c in CASES]
    assert len(ids) == len(set(ids))
    geometry = [c for c in CASES if c["args"][0] in ("inspect", "aero")]
    case_files = [c for c in CASES if c["args"][0] == "run"]
    assert len(geometry) >= 15 and len(case_files) >= 15 and len(CASES) >= 30
    for c in CASES:
        assert c["exit"] in (0, 1, 2) and c["fragment"] and c["names"]
    # the output-safety findings each have a case (folders, files, disks, names)
    have = set(ids)
    for cid in ("out_through_symlinked_parent_is_the_input_folder", "out_empty_string", "out_dot",
                "out_exists_with_force_but_not_geomloads", "out_locked_by_another_run",
                "out_on_a_full_disk", "out_on_a_read_only_disk", "csv_target_is_a_symlink",
                "csv_target_is_a_fifo", "unicode_and_hostile_case_names_run"):
        assert cid in have, cid


@pytest.mark.parametrize("case", [
    pytest.param(c, marks=pytest.mark.xfail(strict=True, reason=c["xfail"])) if c.get("xfail") else c
    for c in CASES], ids=[c["id"] for c in CASES])
def test_bad_input_case(case, corpus, tmp_path, monkeypatch):
    cleanup = _setup(case.get("setup"), tmp_path, corpus)
    if case.get("cwd_tmp"):
        monkeypatch.chdir(tmp_path)
    before = sorted(p.name for p in tmp_path.iterdir())
    kept = snapshot(tmp_path)
    args = [_fill(a, corpus, tmp_path) for a in case["args"]]
    try:
        res = CliRunner().invoke(cli, args)
        now = snapshot(tmp_path)
        after = sorted(p.name for p in tmp_path.iterdir())
    finally:
        cleanup()
    out, err = res.stdout, res.stderr
    lost = {k: v for k, v in kept.items() if now.get(k) != v}
    assert not lost, f"nothing lost: changed or gone {sorted(lost)}"
    assert res.exit_code == case["exit"], (res.exit_code, out, err, res.exception)
    # a library error or a crash surfaces as SystemExit only (the CLI's guard), never raw
    assert res.exception is None or isinstance(res.exception, SystemExit), repr(res.exception)
    assert "Traceback" not in out + err
    fragment, names = _fill(case["fragment"], corpus, tmp_path), _fill(case["names"], corpus, tmp_path)
    lines = [ln for ln in err.splitlines() if ln.strip()]
    if case["exit"] == 1:
        assert len(lines) == 1, err
        assert lines[0].startswith("geomload: error: ")
        assert fragment in lines[0] and names in lines[0], lines[0]
        assert out == ""
    elif case["exit"] == 2:  # click's usage error: a usage line and an "Error:" line
        assert lines[-1].startswith("Error:") and fragment in err and names in err, err
    else:
        assert fragment in out + err and names in out + err, out + err
    if args[0] == "run" and case["exit"] != 0:
        assert after == before, f"left behind: {set(after) - set(before)}"
        if case.get("setup") == "existing_out":
            assert [p.name for p in (tmp_path / "out").iterdir()] == ["keep.txt"]
        # nothing was written beside the inputs either
        assert not [p for p in corpus.iterdir() if "partial" in p.name or p.name.startswith(".")]


def test_committed_corpus_matches_the_generator(corpus):
    """tests/bad_inputs/files is exactly what make_corpus.py builds (no drift, no stale file)."""
    committed = CORPUS_DIR / "files"
    names = sorted(p.name for p in committed.iterdir())
    assert names == sorted(p.name for p in corpus.iterdir())
    for n in names:
        assert (committed / n).read_bytes() == (corpus / n).read_bytes(), n


def test_good_corpus_case_runs(corpus, tmp_path):
    """The base case every bad case is an edit of does run: the edits are what fail."""
    res = CliRunner().invoke(cli, ["run", str(corpus / "good.toml"), "--out", str(tmp_path / "r"),
                                   "--no-render"])
    assert res.exit_code == 0, res.stderr
    assert (tmp_path / "r" / "summary.json").is_file()
    assert (tmp_path / "r" / "loads" / "pull-up.csv").is_file()


def test_unit_hint_then_right_unit(corpus):
    """The mm wing read with --units mm gives no unit warning and a 1.8 m semi-span."""
    res = CliRunner().invoke(cli, ["inspect", str(corpus / "wing_in_mm.stl"), "--units", "mm",
                                   "--stations", "8", "--json"])
    assert res.exit_code == 0, res.stderr
    assert "wrong unit" not in res.stderr
    import json

    data = json.loads(res.stdout)
    span = data["planform"]["span_m"]
    assert abs(span - 2 * make_corpus.SEMISPAN) < 1e-3 * span  # design: 1.8 m semi-span


def test_body_option_selects_the_other_body(corpus):
    """--body picks a body of a two-body file; the other one is reported as left out."""
    res = CliRunner().invoke(cli, ["inspect", str(corpus / "two_bodies.glb"), "--stations", "8"])
    assert res.exit_code == 0
    kept = [ln for ln in res.stderr.splitlines() if "bodies in" in ln]
    assert len(kept) == 1 and "largest surface area" in kept[0]
    k = int(kept[0].split("kept body ")[1].split()[0])
    other = 3 - k
    res2 = CliRunner().invoke(cli, ["inspect", str(corpus / "two_bodies.glb"), "--body", str(other),
                                    "--stations", "5"])
    assert "Traceback" not in res2.stdout + res2.stderr
    # the other body of the file is a small box: chosen with --body it is refused as not a wing
    assert res2.exit_code == 1 and "does not look like a wing" in res2.stderr


def test_body_option_on_the_box_is_refused(corpus):
    res = CliRunner().invoke(cli, ["inspect", str(corpus / "two_bodies.glb"), "--body", "1"])
    assert res.exit_code == 1 and "does not look like a wing" in res.stderr


# --------------------------------------------------------------------- real processes
REAL = ["truncated_binary_stl", "nan_vertex", "signalling_nan_vertex", "unknown_key_with_suggestion", "mach_1_2", "unknown_option",
        "out_exists_without_force"]


KNOWN_REAL: dict = {}  # case id -> "BUG: ..." reason, for a known bug (xfail)


@pytest.mark.parametrize("cid", [pytest.param(c, marks=pytest.mark.xfail(strict=True, reason=KNOWN_REAL[c]))
                                 if c in KNOWN_REAL else c for c in REAL])
def test_real_process(cid, corpus, tmp_path):
    case = next(c for c in CASES if c["id"] == cid)
    _setup(case.get("setup"), tmp_path, corpus)()
    args = [_fill(a, corpus, tmp_path) for a in case["args"]]
    p = subprocess.run([sys.executable, "-m", "geomload.cli", *args], capture_output=True, text=True,
                       timeout=120, env={**os.environ, "GEOMLOAD_DEBUG": ""})
    assert p.returncode == case["exit"], p.stderr
    assert "Traceback" not in p.stdout + p.stderr
    lines = [ln for ln in p.stderr.splitlines() if ln.strip()]
    if case["exit"] == 1:
        assert len(lines) == 1 and lines[0].startswith("geomload: error: ")
    assert _fill(case["fragment"], corpus, tmp_path) in p.stderr


@pytest.mark.parametrize("name", ["garbage.step", "no_solid.step"])
def test_real_process_bad_step_prints_one_line(name, corpus):
    p = subprocess.run([sys.executable, "-m", "geomload.cli", "inspect", str(corpus / name)],
                       capture_output=True, text=True, timeout=120)
    assert p.returncode == 1
    assert p.stdout == ""
    lines = [ln for ln in p.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("geomload: error: "), p.stderr
