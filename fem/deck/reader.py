"""Read a deck file into a validated Model.

Parsing is lark LALR with the contextual lexer; meaning comes from our own walk over the tree
(never Python eval). Every user error is a DeckError with file, line and column.

The reader in parts, in the order a deck flows through them::

    sources.py      files, includes, sizes and encodings; the Location of every token
    expressions.py  values, units and parameters (let, assume, loop counters, overrides)
    statements.py   each statement checked and recorded in ...
    definitions.py  ... the located definitions and their name spaces
    build.py        the Model's arrays from the definitions (case_options.py builds each case)
    model_checks.py located notes on what reads but is probably not meant (plausible.py: sizes)
    tables.py       CSV tables named by cases
"""

from __future__ import annotations

import gc
from contextlib import contextmanager
from pathlib import Path

from ..errors import DeckError
from ..model import Model
from ..notes import Note
from . import fast_lines
from .build import build
from .case_options import CaseOptions
from .definitions import Definitions
from .expressions import Evaluator
from .sources import Sources, file_name
from .statements import Statements
from .tables import read_table

__all__ = ["read_deck", "read_text"]


class _Reader(CaseOptions):
    """One deck's reading: its sources, evaluator, definitions and statements, and the notes
    they find. It is the host the case options are built on (loc, value, vector, name, targets,
    once, use_scope, read_table, token_file, stack, assumed, warnings)."""

    def __init__(self, top: Path, let: dict | None = None):
        self.warnings: list = []                  # the Notes the reading finds
        self.sources = Sources(top)
        self.ev = Evaluator(self.sources, let)
        self.defs = Definitions(self.ev.name, self.sources.loc, self.warnings)
        self.statements = Statements(self.sources, self.ev, self.defs, self.warnings)
        self.loc = self.sources.loc
        self.token_file, self.stack = self.sources.token_file, self.sources.stack
        self.value, self.vector, self.name = self.ev.value, self.ev.vector, self.ev.name
        self.use_scope = self.ev.use_scope
        self.targets, self.once = self.defs.targets, self.defs.once
        self.cases = self.defs.cases             # the case statements, for the default modes case
        self.references: dict = {}      # response case -> (start, modes) as written: (name, where) or None

    @property
    def assumed(self) -> dict:
        return self.ev.assumed

    @assumed.setter
    def assumed(self, value: dict) -> None:
        self.ev.assumed = value

    def note(self, location, text: str, kind: str = "warning") -> None:
        """Record a located note of the case options."""
        self.warnings.append(Note(location, text, kind))

    def read_table(self, rel: str, where, deck_file: Path):
        return read_table(self.sources, rel, where, deck_file)

    def model(self) -> Model:
        """The Model of what has been read, once every statement has run."""
        self.ev.unused_overrides(n for (space, n) in self.defs.defined if space == "let")
        model = build(self.defs, self.ev, self.build_case, self.warnings, self.references)
        model.overrides = dict(self.ev.overridden)
        return model


def read_deck(path, let: dict | None = None) -> Model:
    """Read and validate the deck at `path` (and its includes) into a Model.

    Parameters
    ----------
    path : str or Path
        The deck file.
    let : dict, optional
        Overrides of the deck's `let` parameters, name -> value, e.g. ``{"H": "30 m", "n": 4}``:
        deck text read by the deck's own evaluator (it may use the parameters defined before
        that let), or a plain number for a parameter the deck writes as a bare number. Each
        replaces the value of its let before anything uses it; it must have the dimension of
        the deck's own expression. A name with no let in the deck, or the let of a loop (worked
        out again on every pass), is refused. ``model.overrides`` records the ones used.

    Examples
    --------
    >>> model = read_deck("decks/rack.deck", let={"bay": "7 m"})   # doctest: +SKIP
    """
    path = Path(path)
    file_name(str(path), "deck", None)
    try:
        there = path.exists()
    except OSError as exc:
        raise DeckError(f"deck '{path}' cannot be read: {exc.strerror}") from None
    if not there:
        raise DeckError(f"deck '{path}' does not exist")
    with _collector_paused():
        model = _reference_on_error(lambda: _read_file(path, let))
    model.source = str(path)
    return model


def _read_file(path: Path, let: dict | None) -> Model:
    r = _Reader(path, let)
    r.statements.read_file(path)
    return r.model()


def read_text(text: str, name: str = "deck.deck", folder: str | Path = ".", let: dict | None = None) -> Model:
    """Read a deck from a string (used by tests); includes resolve relative to `folder`;
    `let` overrides parameters as in read_deck."""
    path = Path(folder) / name
    with _collector_paused():
        return _reference_on_error(lambda: _read_string(text, path, let))


def _read_string(text: str, path: Path, let: dict | None) -> Model:
    r = _Reader(path, let)
    where = path.resolve()
    r.sources.lines[where] = text.splitlines()
    with r.sources.reading(where):
        tree, quick = r.sources.read(text, path)
        r.statements.run(tree.children, quick, where)
    with r.sources.reading(where):      # the deck's own file for what has no other
        return r.model()


def _reference_on_error(read):
    """read(), and when it refuses the deck, the refusal of the reference reading (lark for every
    statement, fem/deck/fast_lines.py), so that a user sees the same error either way."""
    if not fast_lines.quick():
        return read()
    try:
        return read()
    except Exception:   # noqa: BLE001 - a refusal, or a fault of the quick reader: lark's reading decides
        pass
    with fast_lines.lark_only():
        return read()


@contextmanager
def _collector_paused():
    """The garbage collector paused while a deck is read: the parse tree, the tokens and the
    definitions are a million or more objects in a large deck, which each collection would scan
    again, and reading makes no reference cycles worth collecting meanwhile."""
    enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if enabled:
            gc.enable()
