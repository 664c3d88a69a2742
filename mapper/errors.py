"""Diagnostics and the exception hierarchy shared by every stage.

Exit codes (see DESIGN.md): 0 success, 1 the answer is "no", 2 bad input or
usage, 3 internal error.
"""
from __future__ import annotations

from dataclasses import dataclass

__all__ = [
    "Diagnostic",
    "NetfitError",
    "InputError",
    "NetlistError",
    "UsageError",
    "InternalError",
]


@dataclass(frozen=True)
class Diagnostic:
    """One message about an input, with its position (1-based line and column).

    Any of ``file``, ``line`` and ``col`` may be ``None`` when not known.
    """

    message: str
    file: str | None = None
    line: int | None = None
    col: int | None = None
    severity: str = "error"

    def __str__(self) -> str:
        where = [str(p) for p in (self.file, self.line, self.col) if p is not None]
        prefix = ":".join(where)
        return f"{prefix}: {self.severity}: {self.message}" if prefix else f"{self.severity}: {self.message}"


class NetfitError(Exception):
    """Base of every error netfit raises on purpose."""

    exit_code = 2


class InputError(NetfitError):
    """Bad input: carries one or more diagnostics (all that could be collected)."""

    def __init__(self, diagnostics):
        if isinstance(diagnostics, Diagnostic):
            diagnostics = [diagnostics]
        self.diagnostics = list(diagnostics)
        super().__init__("\n".join(str(d) for d in self.diagnostics))

    @property
    def first(self) -> Diagnostic:
        return self.diagnostics[0]


class NetlistError(InputError):
    """The design is malformed as a circuit (undriven nets, loops, two drivers)."""


class UsageError(NetfitError):
    """The command line asks for something impossible."""


class InternalError(NetfitError):
    """A bug of ours (for example a build that fails its own proof)."""

    exit_code = 3
