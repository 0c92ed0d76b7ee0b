"""One exception family. Each carries a one-line, user-facing message naming the file or key.

The CLI maps them to exit codes (see README): InputError family -> 1, usage -> 2, anything
else -> 3 (internal error, with a pointer to report it).
"""


class GeomloadError(Exception):
    """Base of every error the user is meant to see (one line, no traceback)."""

    exit_code = 1


class InputError(GeomloadError):
    """A file, option or case-file key is wrong (missing, unreadable, out of range)."""


class GeometryError(InputError):
    """The CAD geometry cannot be turned into a wing (not a wing, too few stations, ...)."""


class CaseError(InputError):
    """The case file is invalid; the message names the key."""


class AeroError(InputError):
    """The aerodynamic problem is ill-posed (M >= 1, zero panels, degenerate stations)."""


class OutputError(GeomloadError):
    """An output cannot be written (directory exists without --force, not writable, ...)."""


class Interrupted(KeyboardInterrupt):
    """The run was stopped by a signal (SIGINT, SIGTERM, SIGHUP). Raised from the signal
    handler, it unwinds through the normal cleanup path (staging folder removed, nothing
    partial left); the CLI exits with 128 + the signal number (130, 143, 129)."""

    def __init__(self, signum: int = 2):
        super().__init__(f"interrupted by signal {signum}")
        self.signum = int(signum)
