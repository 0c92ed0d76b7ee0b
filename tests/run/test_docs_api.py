"""docs/api.md's worked example runs as written, and what it prints is true: the trimmed wing
force is the load factor times the weight share (definition of the load factor, 14 CFR
23.321(a)), and the files written hold the loads it computed."""

from __future__ import annotations
from helpers.paths import ROOT

import contextlib
import csv
import io
import os
import re
import shutil
from pathlib import Path

import pytest

from geomload.units import G0
from helpers.validation import check



def _example() -> str:
    text = (ROOT / "docs" / "api.md").read_text(encoding="utf-8")
    blocks = re.findall(r"```python\n(.*?)```", text, flags=re.S)
    assert len(blocks) == 1
    return blocks[0]


def test_worked_example_runs_and_its_numbers_hold(monkeypatch):
    monkeypatch.chdir(ROOT)
    ns = {}
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        exec(compile(_example(), "docs/api.md", "exec"), ns)  # noqa: S102 - our own document
    printed = out.getvalue()
    assert "launch pull-up cg aft: n = 2.5" in printed
    pull_up, run_dir = ns["pull_up"], ns["out"]
    t = pull_up.loads.trim
    check("definition of the load factor (14 CFR 23.321(a)); force balance with the tail "
          "(Etkin & Reid, static longitudinal equilibrium)",
          "trimmed wing force of the pull-up = n x m g0 - tail load (N)",
          pull_up.load_factor * pull_up.mass_kg * G0 - pull_up.tail_load_N, t.force_required_N,
          rel=1e-9)
    env_csv = (run_dir / "envelope.csv").read_text(encoding="utf-8")
    rows = list(csv.DictReader(line for line in env_csv.splitlines() if not line.startswith("#")))
    assert float(rows[0]["bending_max_Nm"]) == pytest.approx(
        ns["env"].maximum["bending_Nm"][0], rel=1e-9)
    assert len(ns["files"]) > 40 and os.path.isdir(run_dir)
    shutil.rmtree(run_dir.parent)  # the example's temporary folder
