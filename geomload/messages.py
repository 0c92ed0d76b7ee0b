"""What the library hands the caller besides its results: messages for the user (Message:
kind and text; the library returns them, the CLI prints them) and the progress callback form
(progress(stage_name, done, total); the CLI fills it with a progress bar)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Optional

# progress(stage_name, done, total) - the CLI fills it with a progress bar; library code calls it.
Progress = Optional[Callable[[str, int, int], None]]


def no_progress(stage: str, done: int, total: int) -> None:  # noqa: D401 - trivial
    """A progress callback that does nothing."""


@dataclass(frozen=True)
class Message:
    """A message for the user: kind "warning" (something that can change a number: a guessed
    unit, a case beyond stall, an extrapolated table) or "note" (a fact that cannot); text: one
    line, without a prefix. The library returns these; the CLI prints them."""

    kind: str
    text: str

    def __post_init__(self):
        if self.kind not in ("warning", "note"):
            raise ValueError(f"warning kind must be 'warning' or 'note', got {self.kind!r}")

    def __str__(self) -> str:
        return f"{self.kind}: {self.text}"

    @classmethod
    def from_prefixed(cls, text: str) -> "Message":
        """From the prefixed form ("warning: ...", "note: ..."; bare text is a note) that the
        geometry stage still returns: the one place such prefixes are read."""
        for kind in ("warning", "note"):
            if text.startswith(kind + ": "):
                return cls(kind, text[len(kind) + 2:])
        return cls("note", text)


__all__ = ["Message", "Progress", "no_progress"]
