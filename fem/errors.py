"""Quaver's exception tree.

::

    QuaverError
    +-- DeckError(QuaverError, ValueError)          a mistake in the deck, with its location
    +-- ModelError(QuaverError, ValueError)         a model that cannot be analysed as given
    |   +-- MechanismError(ModelError)              singular stiffness: free nodes and directions
    +-- ResultsError(QuaverError, OSError)          results could not be written

The CLI prints any QuaverError as one message and exits with status 2; any other exception
is an internal error (status 70, a message asking for a report; see fem/cli.py).
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass

__all__ = [
    "DeckError",
    "Location",
    "MechanismError",
    "ModelError",
    "QuaverError",
    "ResultsError",
    "suggest",
]


class QuaverError(Exception):
    """Base of every error Quaver reports to a user."""


@dataclass(frozen=True)
class Location:
    file: str
    line: int
    column: int
    source_line: str = ""

    def __str__(self) -> str:
        return f"{self.file}:{self.line}:{self.column}"


class DeckError(QuaverError, ValueError):
    """A mistake in the deck text; carries the file, line and column."""

    def __init__(self, message: str, location: Location | None = None, hint: str = ""):
        self.message = message
        self.location = location
        self.hint = hint
        super().__init__(self.render())

    def render(self) -> str:
        return _located(self.message, self.location, self.hint)


def _located(message: str, location: Location | None, hint: str = "") -> str:
    """The message after its location, then the source line with a caret, then the hint."""
    head = f"{location}: {message}" if location else message
    parts = [head]
    if location and location.source_line:
        src = location.source_line.rstrip("\n")
        # tabs kept in the caret line, so the caret sits under the token however tabs are shown
        pad = "".join(c if c == "\t" else " " for c in src[:location.column - 1])
        parts.append("    " + src)
        parts.append("    " + pad + "^")
    if hint:
        parts.append(f"hint: {hint}")
    return "\n".join(parts)


class ModelError(QuaverError, ValueError):
    """A model that parses but cannot be analysed (for example no mass for a modes case); when
    one case is at fault, `location` is where the deck defines it."""

    location: Location | None = None

    def __init__(self, message: str, location: Location | None = None):
        self.message = message
        self.location = location
        super().__init__(_located(message, location))


class MechanismError(ModelError):
    """The stiffness matrix is singular; `free` lists (node, direction) pairs that are unrestrained."""

    def __init__(self, message: str, free: list[tuple[str, str]], location: Location | None = None):
        self.free = free
        super().__init__(message, location)


class ResultsError(QuaverError, OSError):
    """Results could not be written."""


def suggest(name: str, known, n: int = 3) -> str:
    """'; did you mean X?' text for an unknown name, or a list of what exists."""
    known = list(known)
    close = difflib.get_close_matches(name, known, n=n, cutoff=0.5)
    if close:
        return "did you mean " + " or ".join(f"'{c}'" for c in close) + "?"
    if not known:
        return "none is defined yet"
    shown = ", ".join(known[:8]) + (", ..." if len(known) > 8 else "")
    return f"defined: {shown}"
