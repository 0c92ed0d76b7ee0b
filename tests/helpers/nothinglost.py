"""Nothing-lost checks shared by the tests: a byte-for-byte picture of a folder tree, taken
before and after a command, and the hidden folders and files a run must never leave behind."""

from __future__ import annotations

import hashlib
import os
from pathlib import Path

from geomload.export.run_folder import leftovers  # noqa: F401  (re-exported for the tests)


def snapshot(folder) -> dict:
    """Every file, folder and symlink below `folder` (links not followed): relative path ->
    sha256 of the bytes, the link's text, "dir" or "special" (a FIFO, a socket, a device)."""
    out = {}
    for root, dirs, names in os.walk(folder):
        for n in dirs + names:
            p = os.path.join(root, n)
            rel = os.path.relpath(p, folder)
            if os.path.islink(p):
                out[rel] = "link:" + os.readlink(p)
            elif os.path.isfile(p):
                out[rel] = hashlib.sha256(Path(p).read_bytes()).hexdigest()
            else:
                out[rel] = "dir" if os.path.isdir(p) else "special"
    return out


__all__ = ["snapshot", "leftovers"]


def refused_run(case, out):
    """`geomload run CASE --out OUT --no-render` in a child process that must refuse the case:
    exit 1, one stderr line, no traceback. Returns that line."""
    import subprocess
    import sys

    from helpers.paths import ROOT

    p = subprocess.run([sys.executable, "-m", "geomload.cli", "run", str(case), "--out",
                        str(out), "--no-render"], capture_output=True, text=True,
                       env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin"}, timeout=300)
    assert p.returncode == 1, p.stderr
    lines = [ln for ln in p.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and "Traceback" not in p.stderr, p.stderr
    return lines[0]
