"""A terminal progress bar for the CLI, matching records.Progress: progress(stage, done, total).

On a terminal (the stream's isatty()) it redraws one line on stderr, at most every
`min_interval` seconds and always at the end of a stage; anywhere else it stays silent, so logs
and pipes carry no control characters. Library code never writes; only the CLI creates this.
"""

from __future__ import annotations

import sys
import time


class ProgressBar:
    """Callable progress bar; `enabled=None` means "only when `stream` is a terminal"."""

    def __init__(self, stream=None, enabled=None, width: int = 28, min_interval: float = 0.1,
                 clock=time.monotonic):
        self.stream = stream if stream is not None else sys.stderr
        if enabled is None:
            isatty = getattr(self.stream, "isatty", None)
            enabled = bool(isatty and isatty())
        self.enabled = enabled
        self.width = int(width)
        self.min_interval = float(min_interval)
        self.clock = clock
        self._stage = None
        self._last = -1e9
        self._open = False

    def render(self, stage: str, done: int, total: int) -> str:
        """The text of one bar line, e.g. 'cutting   [#######.......]  50% (10/20)'."""
        total, done = max(int(total), 0), max(int(done), 0)
        if total == 0:  # unknown total: a count only
            return f"{stage[:20]:<20} {done} done"
        done = min(done, total)
        frac = done / total
        fill = int(round(frac * self.width))
        bar = "#" * fill + "." * (self.width - fill)
        return f"{stage[:20]:<20} [{bar}] {100 * frac:3.0f}% ({done}/{total})"

    def __call__(self, stage: str, done: int, total: int) -> None:
        if not self.enabled:
            return
        now = self.clock()
        finished = total > 0 and done >= total
        if stage != self._stage:
            self._end_line()
            self._stage, self._last = stage, -1e9
        if not finished and now - self._last < self.min_interval:
            return
        self._last = now
        self.stream.write("\r" + self.render(stage, done, total))
        self._open = True
        if finished:
            self._end_line()
            self._stage = None
        self.stream.flush()

    def _end_line(self) -> None:
        if self._open:
            self.stream.write("\n")
            self._open = False

    def close(self) -> None:
        """End a bar left half-way (e.g. on an error) so the next message starts on a new line."""
        if self.enabled:
            self._end_line()
            self.stream.flush()


def make_progress(stream=None, enabled=None) -> ProgressBar:
    """A ProgressBar on stderr (or `stream`): drawn on a terminal, silent otherwise."""
    return ProgressBar(stream=stream, enabled=enabled)
