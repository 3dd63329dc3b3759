"""A quick reader for the one-line statements that make up most of a large deck.

The grammar (grammar/deck.lark) stays the reference. A line is read here only when it is, by
itself, exactly one of these statements, with plain names and literal values:

    node NAME = (v, v, v)
    member NAME : NAME -> NAME beam|truss NAME NAME
    support TARGET fixed|pinned|(direction, ...)
    mass TARGET = v

(v a number, signed or not, with or without a unit; TARGET a name or a name pattern; a comment
may end the line). Such lines are blanked with spaces in the text lark parses, so every other
token keeps its offset, line and column, and they run in their places in the file's order
through the same statement code as lark's statements. Anything else, and every name that is a
keyword, goes to lark. Lark's parse checks the cut: a statement of it that spans a blanked line
shows that line was part of a longer statement (inside a loop's braces, or after an operator),
and the line is given back to lark. A file whose cut text does not parse is parsed whole by
lark; a deck that fails to read is read again by lark alone (`lark_only`), so every refusal is
lark's reading's (fem/deck/reader.py). tests/test_fast_reader.py compares both readings.
"""

from __future__ import annotations

import bisect
import re
from contextlib import contextmanager
from contextvars import ContextVar
from itertools import chain
from operator import itemgetter

import numpy as np
from lark import Token

from ..errors import DeckError, Location
from ..model import DIRECTIONS
from . import literals
from . import units as U
from .expressions import WILD
from .syntax import STATEMENTS
from .units import Quantity

__all__ = ["LINE", "QuickLine", "cut", "in_order", "lark_only", "quick", "run", "spanned"]

_QUICK = ContextVar("quaver_quick_lines", default=True)
_LINE_OF = itemgetter(1)

# names the grammar reserves anywhere: such a line goes to lark
_RESERVED = frozenset(STATEMENTS) | {"release", "in", "at", "over", "times", "lag", "about", "like", "limit", "rms"}
_NAME = r"[A-Za-z_][A-Za-z0-9_]*+"
_FREE = rf"(?!(?:{'|'.join(sorted(_RESERVED))})(?![A-Za-z0-9_])){_NAME}"      # a name that is not reserved
_PATTERN = r"(?=[A-Za-z0-9_.\-]*[*?])[A-Za-z0-9_.\-*?]++"         # the grammar's PATTERN
_NUM = r"(?:[0-9]++(?:\.[0-9]++)?|\.[0-9]++)(?:[eE][+-]?[0-9]++)?"
_UNIT = r"[ \t]*+[A-Za-z]++(?:\^-?[0-9]++)?(?:[/*][A-Za-z]++(?:\^-?[0-9]++)?)*+"
_S = r"[ \t]*+"


def _value(tag: str) -> str:
    return rf"(?P<{tag}s>[-+]?){_S}(?P<{tag}n>{_NUM})(?P<{tag}u>{_UNIT})?{_S}"


_DIR = "(?:" + "|".join(DIRECTIONS) + ")"
LINE = re.compile(
    rf"^(?P<lead>{_S})(?:"
    rf"node[ \t]++(?P<nn>{_FREE}){_S}={_S}\({_S}{_value('x')},{_S}{_value('y')},{_S}{_value('z')}\)"
    rf"|member[ \t]++(?P<mn>{_FREE}){_S}:{_S}(?P<mi>{_FREE}){_S}->{_S}(?P<mj>{_FREE})[ \t]++(?P<mk>beam|truss)"
    rf"[ \t]++(?P<ms>{_FREE})[ \t]++(?P<mm>{_FREE})"
    rf"|support[ \t]++(?:(?P<sp>{_PATTERN})|(?P<sn>{_FREE}))"
    rf"(?:[ \t]++(?P<sh>fixed|pinned)|{_S}\((?P<sd>{_S}{_DIR}{_S}(?:,{_S}{_DIR}{_S})*+)\))"
    rf"|mass[ \t]++(?:(?P<gp>{_PATTERN})|(?P<gn>{_FREE})){_S}={_S}{_value('w')}"
    r")[ \t\r]*+(?:#[^\n]*+)?$", re.MULTILINE)


# A quick line, one statement read here: the tuple (its match, its line, the column of its
# keyword); plain tuples, as a large deck has hundreds of thousands of them.
QuickLine = tuple


def quick() -> bool:
    """True when lines may be read here (outside `lark_only`)."""
    return _QUICK.get()


@contextmanager
def lark_only():
    """Every statement read by lark while the block runs (the reference reading)."""
    token = _QUICK.set(False)
    try:
        yield
    finally:
        _QUICK.reset(token)


def cut(text: str, skip: frozenset = frozenset()) -> tuple[str, list[QuickLine]]:
    """(the text with the quick lines blanked, those lines in order); lines numbered in `skip`
    are left to lark. Each step over all the lines at once: a line's number is one more than the
    newlines before it."""
    ms = list(LINE.finditer(text))
    if not ms:
        return text, []
    starts = [m.start() for m in ms]
    breaks = np.flatnonzero(np.frombuffer(text.encode("utf-32-le", "surrogatepass"), np.uint32) == 10)
    lines = (np.searchsorted(breaks, starts) + 1).tolist()
    if skip:
        keep = [k for k, line in enumerate(lines) if line not in skip]
        if not keep:
            return text, []
        ms, starts, lines = [ms[k] for k in keep], [starts[k] for k in keep], [lines[k] for k in keep]
    ends = [m.end() for m in ms]
    items = list(zip(ms, lines, [m.end(1) - a + 1 for m, a in zip(ms, starts)]))
    kept = [text[b:a] for b, a in zip([0, *ends], starts)]
    blanks = [" " * (b - a) for a, b in zip(starts, ends)]
    return "".join([*chain.from_iterable(zip(kept, blanks)), text[ends[-1]:]]), items


def spanned(tree, items: list[QuickLine]) -> frozenset:
    """The quick lines that a statement of lark's `tree` spans (they belong to it)."""
    lines = [q[1] for q in items]
    out = set()
    for stmt in tree.children:
        meta = stmt.meta
        first, end = getattr(meta, "line", None), getattr(meta, "end_line", None)
        if first is None or end is None or end <= first:
            continue
        k = bisect.bisect_right(lines, first)
        while k < len(lines) and lines[k] < end:
            out.add(lines[k])
            k += 1
    return frozenset(out)


def in_order(stmts, quick: list[QuickLine]):
    """Lark's statements and the runs of quick lines between them (lists), in the order of their lines."""
    k = 0
    for stmt in stmts:
        j = bisect.bisect_left(quick, getattr(stmt.meta, "line", 0), k, key=_LINE_OF)
        if j > k:
            yield quick[k:j]
            k = j
        yield stmt
    if k < len(quick):
        yield quick[k:]


def run(st, q: QuickLine, path, shown: str, src: list[str]) -> None:
    """Run quick line `q` of file `path` (named `shown`, lines `src`) through Statements `st`."""
    m, line, column = q
    where = Location(shown, line, column, src[line - 1] if 0 < line <= len(src) else "")
    ev = st.ev
    name = m.group("nn")
    if name is not None:
        xyz = np.array([_si(ev, m, t, U.LENGTH, f"node {name}") for t in "xyz"])
        st.new_name("node", name, where)
        st.place_node(name, xyz, where)
        return
    name = m.group("mn")
    if name is not None:
        st.new_name("member", name, where)
        ends = [(m.group(g), (m, g, line, path)) for g in ("mi", "mj", "ms", "mm")]   # located by Sources.loc
        st.defs.members[name] = st.plain_member(name, ends[0], ends[1], m.group("mk"), ends[2], ends[3], where)
        return
    files = st.sources.token_file
    if m.group("sp") is not None or m.group("sn") is not None:
        g = "sp" if m.group("sp") is not None else "sn"
        target = _token(m, g, "PATTERN" if g == "sp" else "NAME", line, files, path)
        how = m.group("sh")
        if how is not None:
            dirs = DIRECTIONS if how == "fixed" else DIRECTIONS[:3]
        else:
            dirs = [d.strip(" \t") for d in m.group("sd").split(",")]
        st.defs.supports.append((target, dirs, where))
        return
    g = "gp" if m.group("gp") is not None else "gn"
    target = _token(m, g, "PATTERN" if g == "gp" else "NAME", line, files, path)
    st.add_mass(target, _si(ev, m, "w", U.MASS, "mass"), np.zeros(3), None, where)


def _si(ev, m: re.Match, t: str, dim, what: str) -> float:
    """The SI value of literal `t` of the match as the evaluator gives it (sign, number, unit)."""
    num, unit = m.group(t + "n"), m.group(t + "u")
    try:
        if unit is None:
            v = literals.number(num)
            q = Quantity(v, WILD if v == 0 else U.NONE)
        else:
            q = literals.quantity(num + unit)
    except (literals.LiteralError, ArithmeticError) as exc:
        raise DeckError(str(exc)) from None       # read again by lark, which locates it
    if m.group(t + "s") == "-":
        q = -q
    return ev.si(q, dim, what)


def _token(m: re.Match, g: str, kind: str, line: int, files: dict, path) -> Token:
    """The token of group `g`, placed as lark would place it, its file recorded."""
    start, end = m.span(g)
    column = start - m.start() + 1
    tok = Token(kind, m.group(g), start, line, column, line, column + end - start, end)
    files[id(tok)] = path
    return tok
