"""Errors that reach the user: a bad drawing, a bad table.

A :class:`DrawingError` carries *every* problem found in a drawing at once, each with the TOML key
path where it sits, the value that was found and what was expected. The CLI prints them one a line
and exits with code 2; no traceback reaches the user.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Problem:
    """One thing wrong in a drawing or table.

    ``where`` is a TOML key path such as ``harness[3].rating`` (or ``line 12`` for a syntax error),
    ``found`` the text that was there (may be empty) and ``expected`` what would be right.
    """

    where: str
    found: str
    expected: str

    def __str__(self) -> str:
        found = f"found {self.found}; " if self.found else ""
        return f"{self.where}: {found}expected {self.expected}"


class CoilstageError(Exception):
    """Base of the errors this package raises on purpose."""


class DrawingError(CoilstageError):
    """A drawing that cannot be used; ``problems`` lists everything wrong with it."""

    def __init__(self, source: str, problems: list[Problem]) -> None:
        self.source = source
        self.problems = list(problems)
        super().__init__(f"{source}: {len(self.problems)} problem(s)\n" + "\n".join(map(str, self.problems)))


class DataError(CoilstageError):
    """A shipped or user-supplied data table that is malformed."""

    def __init__(self, source: str, problems: list[Problem]) -> None:
        self.source = source
        self.problems = list(problems)
        super().__init__(f"table {source}: " + "; ".join(map(str, self.problems)))


class AnalysisError(CoilstageError):
    """A valid drawing whose analysis cannot be completed within bounded work (a non-finite state in
    an integrator, a simulation over its budget, a size over a stated limit). ``reason`` says what
    happened and, where one exists, which limit to raise or which value to change. The CLI reports it
    like bad input (exit 2), never as an internal error."""

    def __init__(self, source: str, reason: str) -> None:
        self.source = source
        self.reason = reason
        super().__init__(f"{source}: {reason}")
