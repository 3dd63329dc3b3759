"""Notes: what the reader or a solve found worth saying without refusing, kept as data (where,
what, which kind) and formatted only when shown."""

from __future__ import annotations

from dataclasses import dataclass

from .errors import Location

__all__ = ["Note"]


@dataclass(frozen=True)
class Note:
    """A located remark. kind is "warning" (worth checking) or "note" (for information).

    str(note) is how the console, results.json and the report show it:
    ``rack.deck:12:3: warning: ...``, or ``warning: ...`` when it belongs to no line.
    """

    location: Location | None
    text: str
    kind: str = "warning"

    def __post_init__(self):
        if self.kind not in ("warning", "note"):
            raise ValueError(f"a note's kind is 'warning' or 'note', not {self.kind!r}")

    def __str__(self) -> str:
        where = "" if self.location is None else f"{self.location}: "
        return f"{where}{self.kind}: {self.text}"
