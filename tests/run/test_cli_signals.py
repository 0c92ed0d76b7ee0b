"""SIGTERM and SIGHUP stop a run as Ctrl-C does: exit 128 + signal (POSIX shell convention for
a process ended by a signal; 143 SIGTERM, 129 SIGHUP), nothing left behind (no output folder,
no hidden staging folder). A real `geomload run` subprocess is sent the signal while it works."""

from __future__ import annotations
from helpers.paths import ROOT

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"
POLL_S, MAX_POLLS = 0.02, 6000  # wait for the run to start (bounded); no timing is asserted


@pytest.mark.skipif(not hasattr(signal, "SIGHUP"), reason="POSIX signals only")
@pytest.mark.parametrize("sig", ["SIGTERM", "SIGHUP"])
def test_signal_stops_the_run_cleanly(tmp_path, sig):
    signum = getattr(signal, sig)
    out = tmp_path / "out"
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    proc = subprocess.Popen([sys.executable, "-m", "geomload.cli", "run", str(SAMPLE), "--out",
                             str(out), "--no-render"], env=env, stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True)
    try:
        for _ in range(MAX_POLLS):  # the staging folder exists once the run is under way
            if any(p.name.startswith(".out.partial") for p in tmp_path.iterdir()):
                break
            if proc.poll() is not None:
                break
            time.sleep(POLL_S)
        assert proc.poll() is None, "the run ended before it could be signalled"
        proc.send_signal(signum)
        _, err = proc.communicate(timeout=120)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
    assert proc.returncode == 128 + signum, err
    assert "interrupted; no output was written" in err
    assert "Traceback" not in err
    assert list(tmp_path.iterdir()) == []  # no output, no staging folder
