"""The bounded read-only memo the loads stage keeps per grid and lattice
(geomload.record_checks.kept). A property of the helper itself, not a physics result: plain
asserts (common practice, no source)."""

import numpy as np
import pytest

from geomload.loads import beam
from geomload.record_checks import kept


def test_kept_builds_once_freezes_and_clears_when_full():
    cache, calls = {}, []

    def build(v):
        def f():
            calls.append(v)
            return (np.arange(3.0) * v, np.ones(2), "label")
        return f

    first = kept(cache, b"a", build(1.0), keep=2)
    again = kept(cache, b"a", build(99.0), keep=2)
    assert again is first and calls == [1.0]  # a hit: build not called
    assert not first[0].flags.writeable and not first[1].flags.writeable
    with pytest.raises(ValueError):
        first[0][0] = 5.0
    kept(cache, b"b", build(2.0), keep=2)
    assert set(cache) == {b"a", b"b"}
    kept(cache, b"c", build(3.0), keep=2)  # full: cleared before the third entry
    assert set(cache) == {b"c"} and calls == [1.0, 2.0, 3.0]
    single = kept(cache, b"d", lambda: np.zeros(4), keep=2)
    assert isinstance(single, np.ndarray) and not single.flags.writeable


def test_shared_spar_frame_is_the_spar_frame():
    y = np.linspace(0.0, 2.0, 7)
    sx, sz = 0.3 - 0.05 * y, 0.02 * y
    s, b, n, p, rel, dy = beam._shared_spar_frame(y, sx, sz)
    s2, b2, n2 = beam.spar_frame(y, sx, sz)
    assert np.array_equal(s, s2) and np.array_equal(b, b2) and np.array_equal(n, n2)
    assert np.array_equal(rel, p - p[-1]) and np.array_equal(dy, np.diff(y))
    assert beam._shared_spar_frame(y, sx, sz)[0] is s  # the second call is the kept value
    assert not s.flags.writeable
