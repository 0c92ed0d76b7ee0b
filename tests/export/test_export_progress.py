"""The CLI progress bar: drawn on a terminal, silent otherwise."""

import io

from geomload.progress import ProgressBar, make_progress


class _Tty(io.StringIO):
    def isatty(self):
        return True


def test_silent_when_not_a_terminal():
    s = io.StringIO()
    bar = make_progress(stream=s)
    for i in range(11):
        bar("cutting", i, 10)
    bar.close()
    assert s.getvalue() == ""


def test_bar_on_a_terminal():
    s = _Tty()
    t = [0.0]
    bar = ProgressBar(stream=s, width=10, min_interval=0.5, clock=lambda: t[0])
    bar("cutting", 0, 4)
    bar("cutting", 1, 4)        # throttled: same instant
    t[0] = 1.0
    bar("cutting", 2, 4)
    bar("cutting", 4, 4)        # the end is always drawn, then a newline
    bar("solving", 1, 2)
    bar.close()
    out = s.getvalue()
    assert "cutting" in out and "[#####.....]  50% (2/4)" in out and "(1/4)" not in out
    assert "[##########] 100% (4/4)\n" in out
    assert out.endswith("(1/2)\n")
    assert ProgressBar(stream=s).render("x", 3, 0).endswith(" 3 done")
