"""The error estimate's coarse lattices computed in a forked child (pipeline.compute with
parallel=True) give the same error bars, bit for bit, as computed in the run's own process; a
child that dies costs only time: the parent computes them itself.

Reference: the in-process computation of the same run (speed work must not change a number;
common practice, no source). The child is a real forked process; only the load test that decides
whether a CPU is free (geomload.forked.parallel_pays) is forced, so the child starts on a busy
test machine too.
"""

from __future__ import annotations

import math
import os

import pytest
from helpers.batch_helpers import SAMPLE

import geomload.forked as forked
import geomload.pipeline as pipeline
from geomload.config.parse import read_case_file


@pytest.fixture(scope="module")
def in_process():
    case = read_case_file(SAMPLE)
    return case, pipeline.compute(case, error_bars=True)


def _same_bars(a, b):
    # repr compares every float exactly, NaN orders included (NaN != NaN under ==)
    assert repr(a.error_bars) == repr(b.error_bars)
    assert a.messages == b.messages
    for _name, bar in a.error_bars.cases:  # real estimates, not empty records
        assert bar.root_shear_N > 0.0 and math.isfinite(bar.root_bending_Nm)


@pytest.mark.filterwarnings("ignore")
def test_forked_coarse_lattices_give_the_same_error_bars(in_process, monkeypatch):
    case, ref = in_process
    started = []
    real_start = forked.ForkedJob.start

    def start(*args, **kw):
        job = real_start(*args, **kw)
        started.append(job)
        return job

    monkeypatch.setattr(forked, "parallel_pays", lambda jobs=1: True)
    monkeypatch.setattr(forked.ForkedJob, "start", start)
    got = pipeline.compute(case, error_bars=True, parallel=True)
    assert len(started) == 1 and started[0] is not None
    assert started[0].proc.exitcode == 0  # the child delivered and ended
    _same_bars(ref, got)
    assert len(ref.error_bars.cases) > 20
    # the child's own time is reported beside the parent's wait for it
    assert got.timings["error estimate, coarse lattices in a child process"] > 0.0


@pytest.mark.filterwarnings("ignore")
def test_a_dead_child_costs_only_time(in_process, monkeypatch):
    case, ref = in_process
    monkeypatch.setattr(forked, "parallel_pays", lambda jobs=1: True)
    # the child process ends abruptly (as under a kill) before sending anything
    monkeypatch.setattr(pipeline, "_coarse_levels", lambda *a: os._exit(3))
    got = pipeline.compute(case, error_bars=True, parallel=True)
    _same_bars(ref, got)
    assert not any("child" in k for k in got.timings)  # no child time when it delivered none
