"""Read a deck file into a validated Model.

Parsing is lark LALR with the contextual lexer; meaning comes from our own walk over the tree
(never Python eval). Every user error is a DeckError with file, line and column.
"""

from __future__ import annotations

import difflib
import fnmatch
import math
import os
import re
import stat
from functools import lru_cache
from importlib import resources
from pathlib import Path

import numpy as np
from lark import Lark, Token, Tree

from ..errors import DeckError, Location, suggest
from ..model import DIRECTIONS, Combination, Material, Model, Section
from ..sections import SHAPES, make_section
from . import units as U
from .case_options import CaseOptions
from .plausible import model_warnings
from .syntax import keyword_callbacks
from .syntax import parse as parse_deck_text
from .units import Quantity

__all__ = ["read_deck", "read_text"]

WILD = None  # dimension of a bare literal 0, which fits any dimension
# Nodes (and member ends) closer than this fraction of the model's size (bounding-box diagonal)
# are one place: 0.03 mm on a 30 m mast, far below any dimension that can be built or typed on
# purpose, and far above the round-off of computed coordinates (1e-16). A member that short
# would also be ~1e18 times stiffer in bending than its neighbours.
COINCIDENT = 1e-6
# A million kilometres: beyond any structure, and it keeps products of coordinates (lengths
# cubed in the stiffness) well inside the floating-point range.
MAX_COORDINATE = 1e9
# Our choice, from a measurement: a generated deck of node lines parsed at about 10-15 s and
# 170 MB of memory per MB of deck (2-core machine shared with other jobs, load 4-9); `quaver
# check` of an 8 MB one (176 000 node lines) took 190 s with a peak of 1.36 GB. So 8 MB, the
# deck and its includes together, reads in minutes within about 1.5 GB; a deck of a hundred
# thousand members written out line by line fits, and loops keep larger models short.
MAX_DECK_BYTES = 8_000_000
# Our choice: a table (two numbers a row, ~25 bytes) of 32 MB holds over a million rows, e.g.
# 20 minutes of a record sampled at 1 kHz; read row by row at ~6 bytes of memory per byte.
MAX_TABLE_BYTES = 32_000_000
# Our choice: expressions and loops are read by walking their tree, one Python call per level;
# 200 levels keep that far inside the interpreter's recursion limit (1000 frames) whatever
# calls the reader, and no deck written by hand nests so deep.
MAX_NESTING = 200
_EXPRESSIONS = {"add", "sub", "mul", "div", "pow", "neg", "unary", "call", "var", "number", "quantity",
                "vector", "name", "index"}
# Statements a deck's loops may execute in all, nested loops and included files counted pass by
# pass (our choice): reading takes some 30-100 us a statement, so this bounds a deck to a minute
# or two, while a model of a hundred thousand members and nodes is far inside it. A mistyped
# range (0..999999 nested twice) is refused at once instead of running for days.
LOOP_STATEMENTS = 1_000_000
_FUNCS = {"sqrt": math.sqrt, "sin": math.sin, "cos": math.cos, "tan": math.tan,
          "atan": math.atan, "abs": abs, "exp": math.exp, "log": math.log}
_ASSUMABLE = {"length": U.LENGTH, "force": U.FORCE, "mass": U.MASS, "time": U.TIME,
              "stress": U.PRESSURE, "density": U.DENSITY}


@lru_cache(maxsize=1)
def _parser() -> Lark:
    here = Path(__file__).resolve().parents[2] / "grammar" / "deck.lark"
    text = here.read_text() if here.exists() else \
        resources.files("fem.grammar").joinpath("deck.lark").read_text()
    return Lark(text, parser="lalr", lexer="contextual", propagate_positions=True,
                lexer_callbacks=keyword_callbacks())


class _Reader(CaseOptions):
    def __init__(self, top: Path, let: dict | None = None):
        self.top_dir = top.resolve().parent
        self.vars: dict[str, Quantity] = {"pi": Quantity(math.pi), "g0": Quantity(9.80665, U.ACCEL)}
        self.assumed: dict[tuple, float] = {}
        self.assume_sites: dict[tuple, tuple[str, float, Location]] = {}   # dim -> (statement, factor, where)
        self.title = ""
        self.nodes: dict[str, tuple[np.ndarray, Location]] = {}
        self.members: dict[str, dict] = {}
        self.materials: dict[str, Material] = {}
        self.sections: dict[str, Section] = {}
        self.groups: dict[str, list[str]] = {}
        self.supports: list = []
        self.springs: list = []
        self.masses: list = []
        self.cases: list = []
        self.references: dict = {}      # response case -> (start, modes) as written: (name, where) or None
        self.combos: list = []
        self.settings: dict = {}
        self.defined: dict[tuple[str, str], tuple[str, Location]] = {}   # (space, name) -> (kind, where)
        self.let_sites: dict[str, tuple] = {}     # parameter -> (file, line, column) of its let
        self.unitless: set[str] = set()           # parameters written as bare numbers (let a = 30)
        self.mixed_seen: set[tuple[str, str]] = set()   # (group, kind) already warned as mixed
        self.loop_vars: list[str] = []
        self.loop_sites: list[Location] = []      # the enclosing loops, outermost first
        self.loop_steps = 0                       # statements executed inside loops so far
        self.warnings: list[str] = []
        self.stack: list[Path] = []
        self.lines: dict[Path, list[str]] = {}
        self.token_file: dict[int, Path] = {}
        self.quantities: dict[str, Quantity] = {}      # literal text -> value, e.g. "6 m"
        self.section_params: dict[str, tuple[str, dict]] = {}   # name -> (shape, SI dimensions)
        self.deck_bytes = 0                            # bytes of deck text read so far (all files)
        self.overrides = self.override_trees(let or {})  # name -> (text, expression tree) from --set
        self.overridden: dict[str, str] = {}           # the overrides used, name -> text, in deck order

    # ---------- files and locations
    def read_file(self, path: Path, where: Location | None = None) -> None:
        path = _resolved(path, "include" if where else "deck", where)
        if path in self.stack:
            raise DeckError(f"'{self.shown(path)}' includes itself (through {' -> '.join(self.shown(p) for p in self.stack)})", where)
        if path == self.top_dir:
            raise DeckError(f"include names the deck's own folder {self.top_dir}, not a file", where,
                            "give the name of a deck file in it")
        if self.top_dir not in path.parents:
            raise DeckError(f"include '{path}' is outside the deck's folder {self.top_dir}", where,
                            "keep included decks in the same folder as the top deck or below it")
        text = _read_utf8(path, "deck", where, self.shown(path), MAX_DECK_BYTES - self.deck_bytes,
                          total=self.deck_bytes)
        self.deck_bytes += len(text.encode("utf-8", errors="surrogatepass"))
        self.lines[path] = text.splitlines()
        self.stack.append(path)
        try:
            tree = self.parse(text, path)
            for sub in tree.iter_subtrees():        # remember each item's file, once per file
                sub.meta.qfile = path
                for c in sub.children:
                    if isinstance(c, Token):
                        self.token_file[id(c)] = path
            for stmt in tree.children:
                self.statement(stmt)
        finally:
            self.stack.pop()

    def loc(self, item) -> Location:
        meta = getattr(item, "meta", None)
        path = self.token_file.get(id(item)) or getattr(meta, "qfile", None) or self.stack[-1]
        if isinstance(item, Token):
            line, col = item.line, item.column
        else:
            meta = item.meta
            line, col = getattr(meta, "line", 1), getattr(meta, "column", 1)
        src = self.lines[path][line - 1] if 0 < line <= len(self.lines[path]) else ""
        return Location(self.shown(path), line, col, src)

    def shown(self, path: Path) -> str:
        """How a file is named in messages: its place below the top deck's folder (rack.deck,
        parts/legs.deck), so that included files of the same name in different folders differ."""
        try:
            return str(path.relative_to(self.top_dir))
        except ValueError:
            return str(path)

    def parse(self, text: str, path: Path) -> Tree:
        tree = parse_deck_text(_parser(), text, Path(self.shown(path)))
        deep = _too_deep(tree)
        if deep is not None:
            sub, levels = deep
            path = path.resolve()
            self.lines.setdefault(path, text.splitlines())
            self.stack.append(path)
            try:
                where = self.loc(sub)
            finally:
                self.stack.pop()
            raise DeckError(f"this is nested {levels} levels deep, above the limit of {MAX_NESTING} (each term of a "
                            "sum or product, each sign and each enclosing loop is one level)", where,
                            "split it with let parameters, e.g. let a = ... and let b = ..., then a + b")
        return tree

    # ---------- overrides of let parameters (--set NAME=VALUE, read_deck(let=...))
    def override_trees(self, let: dict) -> dict[str, tuple[str, Tree]]:
        """Each override parsed as the expression of a let, so the deck's own evaluator reads it;
        its tokens are located in a line of its own named after the option, '--set NAME'."""
        out = {}
        for name, value in let.items():
            label = f"--set {name}"
            if not isinstance(name, str) or not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", name):
                raise DeckError(f"{label}: '{name}' is not a parameter name (letters, digits and _)")
            text = _override_text(value, label)
            line = f"let {name} = {text}"
            path = Path(label)
            self.lines[path] = [line]
            self.stack.append(path)
            try:
                tree = self.parse(line + "\n", path)
            finally:
                self.stack.pop()
            stmts = tree.children
            if len(stmts) != 1 or stmts[0].data != "let":
                raise DeckError(f"{label}: '{text}' is not one value", None,
                                "give a value or an expression, e.g. --set H=30 m or --set n=4")
            for sub in stmts[0].iter_subtrees():
                sub.meta.qfile = path
                for c in sub.children:
                    if isinstance(c, Token):
                        self.token_file[id(c)] = path
            out[name] = (text, stmts[0].children[1])
        return out

    def overridden_let(self, name: str, expr, where: Location) -> Quantity:
        """The value of `let name = expr` with its override: the same dimension as the deck's
        own expression (worked out too, so the check never depends on the override), and a
        parameter written as a bare number stays one."""
        text, tree = self.overrides[name]
        label = f"--set {name}"
        if self.loop_sites:
            raise DeckError(f"{label}: the let of {name} at {where} is inside the loop at {self.loop_sites[-1]}, "
                            "which works it out again on every pass, so one value cannot replace it",
                            None, "move the let out of the loop if it is the same on every pass")
        own = self.evaluate(expr)
        new = self.evaluate(tree)
        own_bare, new_bare = self.bare(expr), self.bare(tree)
        own_text = _source_text(self.loc(expr), expr)
        gives = f"the deck's let at {where} gives {own_text}"
        if own_bare and not new_bare:
            raise DeckError(f"{label}: a bare number is expected ({gives}, a bare number), got {text} "
                            f"({U.dim_name(new.dim) if new.dim is not WILD else 'with a unit'})", None,
                            "a parameter written as a bare number stays one; give the number alone")
        if new_bare and not own_bare:
            raise DeckError(f"{label}: {U.dim_name(own.dim)} is expected ({gives}), got the bare number {text}",
                            None, f"write the value with its unit, as the deck does: --set {name}={own_text}")
        if not own_bare and WILD not in (own.dim, new.dim) and own.dim != new.dim:
            raise DeckError(f"{label}: {U.dim_name(own.dim)} is expected ({gives}), got {text} "
                            f"({U.dim_name(new.dim)})", None, _unit_remedy(own.dim, new.dim))
        self.overridden[name] = text
        return new

    def unused_overrides(self) -> None:
        """Refuse an override that names no let of the deck, with the nearest let name."""
        for name in self.overrides:
            if name not in self.overridden:
                lets = [n for (space, n) in self.defined if space == "let"]
                raise DeckError(f"--set {name}: the deck has no let of that name; "
                                + (suggest(name, lets) if lets else "it defines no parameters with let"))

    # ---------- expressions
    def evaluate(self, t) -> Quantity:
        if isinstance(t, Token):
            raise DeckError(f"expected a value, found {t!s}", self.loc(t))
        d = t.data
        ch = t.children
        try:
            if d == "number":
                v = _literal(str(ch[0]), self.loc(t))
                return Quantity(v, WILD if v == 0 else U.NONE)
            if d == "quantity":
                return self.quantity(ch[0])
            if d == "var":
                name = str(ch[0])
                if name not in self.vars and name in U.UNITS:
                    raise DeckError(f"'{name}' is not defined; if the unit {name} is meant, write the whole unit "
                                    f"directly after its number, with no spaces inside it", self.loc(ch[0]),
                                    "units are written joined: 9.81 m/s^2, 7850 kg/m^3, 25 kN*m")
                if name not in self.vars:
                    raise DeckError(f"'{name}' is not defined; {suggest(name, self.vars)}", self.loc(ch[0]))
                return self.vars[name]
            if d == "call":
                fname = str(ch[0])
                args = [self.evaluate(a) for a in ch[1:]]
                if fname in ("sin", "cos", "tan") and args and args[0].value != 0 and self.bare(ch[1]):
                    n = _g(args[0].value)
                    raise DeckError(f"{fname}() of a bare number would read it in radians: write {fname}({n} deg) "
                                    f"or {fname}({n} rad)", self.loc(ch[1]))
                return self.call(fname, args, ch[0])
            ops = {"add": "__add__", "sub": "__sub__", "mul": "__mul__", "div": "__truediv__",
                   "pow": "__pow__"}
            if d == "pow" and isinstance(ch[0], Tree) and ch[0].data == "quantity":
                self.spaced_power(ch[0].children[0])
            if d in ops:
                a, b = self.evaluate(ch[0]), self.evaluate(ch[1])
                q = _binary(a, b, ops[d])
                if not math.isfinite(q.value):
                    raise DeckError(f"the result is too large to compute (numbers reach about {_FLOAT_MAX:.1e})",
                                    self.loc(t))
                if q.value == 0 and a.value != 0 and d in ("mul", "div", "pow") and (b.value != 0 or d == "div"):
                    raise DeckError("the result is too small to hold (it would become 0)", self.loc(t))
                return q
            if d == "neg":
                return -self.evaluate(ch[0])
            if len(ch) == 1:   # unary plus
                return self.evaluate(ch[0])
        except OverflowError:
            raise DeckError(f"the result is too large to compute (numbers reach about {_FLOAT_MAX:.1e})",
                            self.loc(t)) from None
        except ArithmeticError as exc:
            raise DeckError(str(exc), self.loc(t)) from None
        raise DeckError(f"expected a single value here, found {d}", self.loc(t))

    def spaced_power(self, tok: Token) -> None:
        """Refuse `9.81 m/s ^2` and `2 m ^2`: a space before '^' raises the whole quantity, number
        included, to the power, which is never what is meant without brackets around it."""
        line = self.loc(tok).source_line
        rest = line[tok.end_column - 1:] if tok.end_line == tok.line else ""
        if rest[:1] in (" ", "\t") and rest.lstrip(" \t").startswith("^"):
            raise DeckError(f"'{tok} ^...' raises the number and its unit together to the power", self.loc(tok),
                            ("" if "^" in str(tok) else f"for a power of the unit write it joined ({tok}^2); ")
                            + f"for a power of the whole quantity put it in brackets: ({tok})^2")

    def quantity(self, tok: Token) -> Quantity:
        text = str(tok)
        known = self.quantities.get(text)
        if known is not None:            # loops read the same literals over and over
            return known
        i = 0
        while i < len(text) and (text[i].isdigit() or text[i] in ".eE+-") and not (
                text[i] in "eE" and (i + 1 >= len(text) or not (text[i + 1].isdigit() or text[i + 1] in "+-"))):
            i += 1
        value, unit = _literal(text[:i], self.loc(tok)), text[i:].strip()
        q = Quantity(value)
        for k, part in enumerate(_split_unit(unit)):
            op, sym, power = part
            base = U.unit_value(sym)
            if base is None:
                raise DeckError(f"unknown unit '{sym}'; {suggest(sym, U.UNITS)}", self.loc(tok))
            base = base ** Quantity(power)
            q = q * base if op == "*" else q / base
        if not math.isfinite(q.value) or (q.value == 0 and value != 0):
            raise DeckError(f"{text} is beyond the range of numbers once converted to SI units", self.loc(tok))
        self.quantities[text] = q
        return q

    def call(self, fname, args, tok) -> Quantity:
        if fname not in _FUNCS:
            raise DeckError(f"unknown function '{fname}'; {suggest(fname, _FUNCS)}", self.loc(tok))
        if len(args) != 1:                 # every function here takes one value
            raise DeckError(f"{fname}() takes one value, {len(args)} were given", self.loc(tok))
        if fname == "sqrt" and len(args) == 1:
            a = args[0]
            dim = a.dim if a.dim is not WILD else U.NONE
            if any(e % 2 for e in dim):
                raise DeckError(f"sqrt of {U.dim_name(dim)} has no whole-power unit", self.loc(tok))
            if a.value < 0:
                raise DeckError("sqrt of a negative number", self.loc(tok))
            return Quantity(math.sqrt(a.value), tuple(e // 2 for e in dim))
        if fname == "abs":
            return Quantity(abs(args[0].value), args[0].dim)
        for a in args:
            if a.dim not in (U.NONE, WILD):
                raise DeckError(f"{fname}() takes a plain number or an angle, got {U.dim_name(a.dim)}", self.loc(tok))
        if fname == "log" and len(args) == 1 and args[0].value <= 0:
            raise DeckError(f"log() needs a positive number, got {_g(args[0].value)}", self.loc(tok))
        try:
            out = _FUNCS[fname](*[a.value for a in args])
        except OverflowError:
            raise DeckError(f"{fname}() of this value is too large to compute (numbers reach about "
                            f"{_FLOAT_MAX:.1e})", self.loc(tok)) from None
        except (ValueError, TypeError) as exc:
            raise DeckError(f"{fname}(): {exc}", self.loc(tok)) from None
        if out == 0 and fname == "exp":   # the only one of them that is never 0 but can round to it
            raise DeckError(f"exp({_g(args[0].value)}) is too small to hold (it would become 0)", self.loc(tok),
                            "write 0 if zero is meant")
        return Quantity(out)

    def value(self, t, dim, what: str) -> float:
        """Evaluate t and check it has dimension `dim`; return the SI float."""
        q = self.evaluate(t)
        if q.dim is WILD or q.dim == dim:
            v = q.value
        elif q.dim == U.NONE and (f := self.assumed_factor(dim)) is not None:
            v = q.value * f
        elif q.dim == U.NONE:
            example, assume = _UNIT_EXAMPLES.get(dim, ("6 m", "length in m"))
            raise DeckError(f"{what} needs {U.dim_name(dim)}, but a bare number was given", self.loc(t),
                            f"write the unit after the number, e.g. '{example}'"
                            + (f", or declare 'assume {assume}'" if assume else ""))
        else:
            raise DeckError(f"{what} needs {U.dim_name(dim)}, but {U.dim_name(q.dim)} was given", self.loc(t),
                            _unit_remedy(dim, q.dim))
        if not math.isfinite(v):
            raise DeckError(f"{what} is not a finite number", self.loc(t))
        return v

    def angle(self, t, what: str) -> float:
        """An angle in rad, written with its unit (30 deg, 0.5 rad) or from a parameter or function;
        a bare number other than 0 is refused, since it would silently be taken as radians."""
        q = self.evaluate(t)
        if q.dim not in (U.NONE, WILD):
            raise DeckError(f"{what} is an angle, e.g. 30 deg, but {U.dim_name(q.dim)} was given", self.loc(t))
        if self.bare(t) and q.value != 0:
            via = "" if isinstance(t, Token) or not any(
                x.type == "NAME" for x in t.scan_values(lambda v: isinstance(v, Token))) else \
                " (its parameters are bare numbers)"
            raise DeckError(f"{what} is an angle and needs its unit{via}: write {_g(q.value)} deg or "
                            f"{_g(q.value)} rad", self.loc(t), "a bare number would be read as radians")
        return self.value(t, U.NONE, what)

    def vector(self, t, dim, what: str, n: int = 3) -> np.ndarray:
        if not (isinstance(t, Tree) and t.data == "vector") or len(t.children) != n:
            raise DeckError(f"{what} needs a vector of {n} values like (x, y, z)", self.loc(t))
        return np.array([self.value(c, dim, what) for c in t.children])

    def assumed_factor(self, dim):
        if dim == U.NONE:
            return 1.0
        if dim in self.assumed:
            return self.assumed[dim]
        if not self.assumed:
            return None
        fl = self.assumed.get(U.LENGTH)
        ft = self.assumed.get(U.TIME, 1.0)
        fm = self.assumed.get(U.MASS)
        if fm is None and U.FORCE in self.assumed and fl:
            fm = self.assumed[U.FORCE] * ft ** 2 / fl
        need = dict(zip((0, 1, 2), dim))
        if (need[0] and fm is None) or (need[1] and fl is None):
            return None
        return (fm or 1.0) ** need[0] * (fl or 1.0) ** need[1] * ft ** need[2]

    # ---------- names
    def define(self, space: str, kind: str, name: str, where: Location) -> None:
        """Record where `name` is defined in its name space; a second definition is an error
        naming the first (cases and combinations share one space: both are result names)."""
        first = self.defined.get((space, name))
        if first is not None:
            fkind, fwhere = first
            what = "is defined twice" if fkind == kind else f"has the same name as {fkind} {name}"
            raise DeckError(f"{kind} {name} {what} (first at {fwhere})", where,
                            "give one of them another name")
        self.defined[(space, name)] = (kind, where)

    def once(self, seen: set, key: str, where: Location, what: str) -> None:
        """A key given twice in one statement is an error rather than the last one winning."""
        if key in seen:
            raise DeckError(f"{what}: '{key}' is given twice", where, "keep one of them")
        seen.add(key)

    def name(self, t) -> str:
        if isinstance(t, Token):
            return str(t)
        base = str(t.children[0])
        if len(t.children) > 1 and t.children[1] is not None:
            parts = []
            for e in t.children[1].children:
                q = self.evaluate(e)
                if q.dim not in (U.NONE, WILD) or q.value != int(q.value):
                    raise DeckError("a name index must be a whole number", self.loc(e))
                parts.append(str(int(q.value)))
            base += "_".join(parts)
        return base

    def targets(self, t, table: dict, what: str) -> list[str]:
        """Resolve a name, group or glob pattern to names defined in `table`."""
        if isinstance(t, Token) and t.type == "PATTERN":
            hit = [n for n in table if fnmatch.fnmatchcase(n, str(t))]
            if not hit:
                raise DeckError(f"pattern '{t}' matches no {what}", self.loc(t))
            return hit
        n = self.name(t)
        if n in self.groups:
            out = [m for m in self.groups[n] if m in table]
            if not out:
                raise DeckError(f"group '{n}' holds no {what}", self.loc(t))
            left = len(self.groups[n]) - len(out)
            if left and (n, what) not in self.mixed_seen:
                # a group of nodes and members: this statement takes only its kind
                self.mixed_seen.add((n, what))
                self.warnings.append(f"{self.loc(t)}: warning: group '{n}' also holds {left} name(s) that are "
                                     f"not a {what}, which this statement leaves out")
            return out
        if n not in table:
            self.other_kind(n, what, t)
            raise DeckError(f"{what} '{n}' is not defined; {suggest(n, list(table) + list(self.groups))}", self.loc(t))
        return [n]

    def other_kind(self, n: str, what: str, t) -> None:
        """Refuse a name of another kind (a node where a member is wanted) by what it is."""
        kinds = ("node", "member", "material", "section", "result", "let")
        kind = next((self.defined[(k, n)][0] for k in kinds if (k, n) in self.defined), None)
        if kind is None or kind in what.split(" or "):
            return
        acts = {"member": "a line load acts on members", "node": "this statement acts on nodes"}.get(
            what, f"this statement takes a {what}")
        hint = ""
        if kind == "member" and n in self.members:
            m = self.members[n]
            hint = f"member {n} runs from node {m['i'][0]} to node {m['j'][0]}"
        elif kind == "node" and what == "member":
            hint = f"for a load at the node write force {n} = (fx, fy, fz)"
        article = "an" if kind[0] in "aeiou" else "a"
        raise DeckError(f"'{n}' is {article} {kind}, not a {what}; {acts}", self.loc(t), hint)

    # ---------- statements
    def statement(self, s: Tree) -> None:
        if self.loop_sites:
            self.loop_steps += 1
            if self.loop_steps > LOOP_STATEMENTS:
                raise DeckError(f"the deck's loops execute more than {LOOP_STATEMENTS:,} statements in all "
                                "(nested loops multiply their passes)", self.loop_sites[0], _LOOP_HINT)
        getattr(self, "st_" + s.data)(s)

    def scope(self) -> tuple:
        """The parameters in force now, for a statement whose values are worked out when the
        model is built (a case, a combination): inside a loop, the values of this pass."""
        return dict(self.vars), frozenset(self.unitless), tuple(self.loop_vars)

    def use_scope(self, scope: tuple) -> None:
        self.vars, self.unitless, self.loop_vars = scope[0], set(scope[1]), list(scope[2])

    def fixed_name(self, t):
        """A support's, spring's or mass's target with its indices worked out now, in this pass
        of a loop: a token of the whole name at the same place (N[up] -> N3); a pattern or a
        plain name as written. The node table is searched when the model is built."""
        if isinstance(t, Token) or len(t.children) < 2 or t.children[1] is None:
            return t
        first = t.children[0]
        tok = Token("NAME", self.name(t), first.start_pos, first.line, first.column, first.end_line,
                    first.end_column, first.end_pos)
        self.token_file[id(tok)] = self.token_file.get(id(first)) or self.stack[-1]
        return tok

    def st_title(self, s):
        self.title = str(s.children[0])[1:-1]

    def st_let(self, s):
        name, where = str(s.children[0]), self.loc(s)
        site = (str(self.stack[-1]), where.line, where.column)
        if name in self.loop_vars:
            raise DeckError(f"'{name}' is the variable of an enclosing loop; a let cannot change it", where,
                            "give the parameter another name")
        if name in ("pi", "g0"):
            raise DeckError(f"'{name}' is a built-in constant and cannot be redefined", where)
        # a let inside a loop is re-evaluated on every pass; a second let elsewhere would change
        # the parameter for the statements after it only, silently, so it is refused
        first = self.let_sites.get(name)
        if first is not None and first != site:
            raise DeckError(f"parameter '{name}' is defined twice (first at {self.defined[('let', name)][1]})",
                            where, "give the new value another name")
        if first is None:
            self.defined[("let", name)] = ("parameter", where)
        self.let_sites[name] = site
        if name in self.overrides:
            self.vars[name] = self.overridden_let(name, s.children[1], where)
            if self.bare(s.children[1]):
                self.unitless.add(name)
            else:
                self.unitless.discard(name)
            return
        self.vars[name] = self.evaluate(s.children[1])
        if self.bare(s.children[1]):
            self.unitless.add(name)
        else:
            self.unitless.discard(name)

    def bare(self, t) -> bool:
        """True when an expression is numbers only: no unit anywhere, no function, and only
        parameters that are bare numbers themselves (or loop counters)."""
        if isinstance(t, Token):
            return t.type == "NUMBER"
        if t.data == "var":
            name = str(t.children[0])
            return name in self.unitless or name in self.loop_vars
        if t.data in ("quantity", "call"):
            return False
        return all(self.bare(c) for c in t.children if isinstance(c, (Tree, Token)))

    def st_assume(self, s):
        what, unit = str(s.children[0]), str(s.children[1])
        if what not in _ASSUMABLE:
            raise DeckError(f"cannot assume units for '{what}'; {suggest(what, _ASSUMABLE)}", self.loc(s.children[0]))
        q = U.unit_value(unit)
        if what == "density":
            raise DeckError("a density has no unit symbol of its own: it follows from the assumed mass and "
                            "length", self.loc(s.children[0]), "e.g. assume mass in t and assume length in mm "
                            "make a bare density mean t/mm^3; or write the unit, density = 7850 kg/m^3")
        if q is None or q.dim != _ASSUMABLE[what]:
            raise DeckError(f"'{unit}' is not a unit of {what}", self.loc(s.children[1]))
        dim, where = _ASSUMABLE[what], self.loc(s)
        first = self.assume_sites.get(dim)
        if first is not None:
            if math.isclose(first[1], q.value, rel_tol=1e-12):
                return                   # the same assume again (an included file's header)
            raise DeckError(f"assume {what} in {unit} would change the unit of bare {what} numbers set by "
                            f"'{first[0]}' at {first[2]}, so the numbers before and after it would not mean the "
                            "same", where, "keep one assume per quantity, at the top of the deck")
        self.consistent_assume(what, unit, dim, q.value, where)
        self.assumed[dim] = q.value
        self.assume_sites[dim] = (f"assume {what} in {unit}", q.value, where)

    def consistent_assume(self, what: str, unit: str, dim, value: float, where: Location) -> None:
        """Refuse an assume that disagrees with the earlier ones: force, stress and density follow
        from mass, length and time (seconds unless assumed), and bare numbers of derived quantities
        (a stiffness in force per length) are converted through them, so an inconsistent set
        (kN with mm and kg) would make them depend on which assume is used."""
        rows = [(d, math.log(f), text, at) for d, (text, f, at) in self.assume_sites.items()]
        if U.TIME not in self.assume_sites and dim != U.TIME:
            rows.append((U.TIME, 0.0, "time in s (the default)", None))
        if not rows:
            return
        A = np.array([r[0] for r in rows], float)
        b = np.array([r[1] for r in rows])
        d = np.array(dim, float)
        coef = np.linalg.lstsq(A.T, d, rcond=None)[0]      # d as a combination of the earlier rows
        if not np.allclose(A.T @ coef, d, atol=1e-9):
            return                                           # not fixed by the earlier ones
        implied = math.exp(float(coef @ b))
        if math.isclose(implied, value, rel_tol=1e-9):
            return
        used = [r for r, c in zip(rows, coef) if abs(c) > 1e-9]
        earlier = ", ".join(r[2] if r[3] is None else f"'{r[2]}' at {r[3]}" for r in used)
        si = {U.MASS: "kg", U.LENGTH: "m", U.TIME: "s", U.FORCE: "N", U.PRESSURE: "Pa", U.DENSITY: "kg/m^3"}[dim]
        raise DeckError(f"assume {what} in {unit} ({unit} = {value:g} {si}) disagrees with {earlier}: together those "
                        f"make the unit of {what} {implied:.6g} {si}, so derived quantities such as a stiffness or a "
                        "stress would take different units depending on which is used", where,
                        "assume one consistent set, e.g. N, mm, t, s with stress in MPa, or kN, m, t, s with stress "
                        "in kPa; or write units on the numbers")

    def st_include(self, s):
        rel = str(s.children[0])[1:-1]
        _file_name(rel, "include", self.loc(s.children[0]))
        self.read_file(self.stack[-1].parent / rel, self.loc(s.children[0]))

    def st_settings(self, s):
        for opt in s.children:
            if opt is None:
                continue
            key, val = str(opt.children[0]), opt.children[1]
            if key in self.settings:
                raise DeckError(f"settings: '{key}' is given twice (first at {self.settings[key][1]})",
                                self.loc(opt), "keep one of them")
            word = str(val.children[0]) if isinstance(val, Tree) and val.data == "var" else None
            self.settings[key] = (word if word is not None else val, self.loc(opt))

    def st_material(self, s):
        name = self.name(s.children[0])
        self.define("material", "material", name, self.loc(s))
        props, seen, at = {}, set(), {}
        for opt in s.children[1:]:
            if opt is None:
                continue
            key = str(opt.children[0])
            self.once(seen, key, self.loc(opt), f"material {name}")
            at[key] = self.loc(opt)
            dims = {"E": U.PRESSURE, "G": U.PRESSURE, "nu": U.NONE, "density": U.DENSITY}
            if key not in dims:
                raise DeckError(f"material {name}: unknown property '{key}'; {suggest(key, dims)}", self.loc(opt))
            props[key] = self.value(opt.children[1], dims[key], f"material {name}: {key}")
        where = self.loc(s)
        if "E" not in props:
            raise DeckError(f"material {name} needs E (Young's modulus)", where)
        if props["E"] <= 0:
            raise DeckError(f"material {name}: E must be positive", at["E"])
        if "G" not in props:
            if "nu" not in props:
                raise DeckError(f"material {name} needs G or nu", where)
            if not -1 < props["nu"] < 0.5:
                raise DeckError(f"material {name}: nu must lie between -1 and 0.5", at["nu"])
            props["G"] = props["E"] / (2 * (1 + props["nu"]))
        if props["G"] <= 0:
            raise DeckError(f"material {name}: G must be positive", at.get("G", where))
        dens = props.get("density", 0.0)
        if dens < 0:
            raise DeckError(f"material {name}: density cannot be negative", at["density"])
        self.materials[name] = Material(name, props["E"], props["G"], dens)

    def st_section(self, s):
        name = self.name(s.children[0])
        self.define("section", "section", name, self.loc(s))
        shape = str(s.children[1])
        kws = [kw for kw in s.children[2:] if kw is not None]
        self.section_names(name, s.children[1], kws)
        params, seen = {}, set()
        for kw in kws:
            key = str(kw.children[0])
            self.once(seen, key, self.loc(kw), f"section {name}")
            dim = {"A": (0, 2, 0), "Avy": (0, 2, 0), "Avz": (0, 2, 0), "Iy": (0, 4, 0),
                   "Iz": (0, 4, 0), "J": (0, 4, 0)}.get(key, U.LENGTH)
            params[key] = self.value(kw.children[1], dim, f"section {name}: {key}")
        try:
            props = make_section(shape, params)
        except ValueError as exc:
            raise DeckError(f"section {name}: {exc}", self.loc(s)) from None
        except ArithmeticError:
            raise DeckError(f"section {name}: the dimensions are too large to compute with", self.loc(s)) from None
        vals = [props.A, props.Iy, props.Iz, props.J, props.Avy, props.Avz]
        if not all(math.isfinite(v) for v in vals) or min(vals[:4]) <= 0:
            raise DeckError(f"section {name}: its properties are not finite and positive "
                            f"(A={props.A:.3g}, Iy={props.Iy:.3g}, Iz={props.Iz:.3g}, J={props.J:.3g})", self.loc(s))
        self.sections[name] = Section(name, props)
        self.section_params[name] = (shape, params)

    def section_names(self, name: str, shape_tok, kws) -> None:
        """Refuse an unknown shape or parameter name at its token, with the names that fit."""
        shape = str(shape_tok)
        if shape not in SHAPES:
            near = suggest(shape, SHAPES)
            near = "; " + near if near.startswith("did you mean") else ""
            raise DeckError(f"section {name}: unknown shape '{shape}'{near}", self.loc(shape_tok),
                            "shapes: " + ", ".join(f"{k}({', '.join(v[1] + v[2])})" for k, v in SHAPES.items()))
        required, optional = SHAPES[shape][1:]
        allowed = required + optional
        form = f"{shape}({', '.join(required + tuple(f'[{o}]' for o in optional))})"
        given = {str(kw.children[0]) for kw in kws}
        for kw in kws:
            key = str(kw.children[0])
            if key in allowed:
                continue
            near = [a for a in _PARAM_WORDS.get(key.lower(), ()) if a in allowed and a not in given]
            near = near or difflib.get_close_matches(key, [a for a in allowed if a not in given], n=2, cutoff=0.5)
            missing = [a for a in required if a not in given]
            if not near and len(missing) == 1:
                near = missing
            tip = "did you mean " + " or ".join(f"'{a}'" for a in near) + "? " if near else ""
            raise DeckError(f"section {name}: {shape} has no parameter '{key}'; {tip}it takes {form}",
                            self.loc(kw.children[0]))
        missing = [a for a in required if a not in given]
        if missing:
            raise DeckError(f"section {name}: {shape} needs {', '.join(missing)}; it takes {form}", self.loc(shape_tok))

    def st_node(self, s):
        name = self.name(s.children[0])
        self.define("node", "node", name, self.loc(s))
        self.not_a_group(name, "node", self.loc(s))
        xyz = self.vector(s.children[1], U.LENGTH, f"node {name}")
        if np.abs(xyz).max() > MAX_COORDINATE:
            raise DeckError(f"node {name}: a coordinate of {np.abs(xyz).max():.3g} m is beyond any structure "
                            f"(the limit is {MAX_COORDINATE:g} m)", self.loc(s), "check the units of the coordinates")
        self.nodes[name] = (xyz, self.loc(s))

    def not_a_group(self, name: str, kind: str, where: Location) -> None:
        """A group and a node or member of one name would make every reference ambiguous."""
        for space in ("group", "node", "member"):
            first = self.defined.get((space, name))
            if first is not None and first[0] != kind:
                raise DeckError(f"{kind} {name} has the same name as {first[0]} {name} (at {first[1]}); "
                                "a name in a support, load or group could then mean either", where,
                                "give one of them another name")

    def st_member(self, s):
        ch = s.children
        name = self.name(ch[0])
        self.define("member", "member", name, self.loc(s))
        self.not_a_group(name, "member", self.loc(s))
        kind = str(ch[3])
        if kind not in ("beam", "truss"):
            raise DeckError(f"member {name}: kind must be 'beam' or 'truss', not '{kind}'", self.loc(ch[3]))
        m = dict(name=name, i=(self.name(ch[1]), ch[1]), j=(self.name(ch[2]), ch[2]), kind=kind,
                 section=(self.name(ch[4]), ch[4]), material=(self.name(ch[5]), ch[5]),
                 roll=0.0, up=None, carried_mass=0.0, releases=np.zeros(12, bool), loc=self.loc(s))
        seen = set()
        for opt in ch[6:]:
            if opt.data == "release":
                end = str(opt.children[0])
                if end not in ("i", "j"):
                    raise DeckError(f"member {name}: release end must be 'i' or 'j', not '{end}'", self.loc(opt))
                if kind == "truss":
                    raise DeckError(f"member {name}: a truss member carries axial force only, so a release does "
                                    "nothing", self.loc(opt), "remove the release, or make the member a beam")
                for d in opt.children[1].children:
                    if str(d) not in DIRECTIONS:
                        raise DeckError(f"unknown direction '{d}'; {suggest(str(d), DIRECTIONS)}", self.loc(d))
                    m["releases"][DIRECTIONS.index(str(d)) + (6 if end == "j" else 0)] = True
                continue
            key, val = str(opt.children[0]), opt.children[1]
            self.once(seen, key, self.loc(opt), f"member {name}")
            if key == "roll":
                m["roll"] = self.angle(val, f"member {name}: roll")
            elif key == "up":
                m["up"] = self.vector(val, U.NONE, f"member {name}: up")
            elif key == "carried_mass":
                m["carried_mass"] = self.value(val, (1, -1, 0), f"member {name}: carried_mass")
                if m["carried_mass"] < 0:
                    raise DeckError(f"member {name}: carried_mass (mass per length) cannot be negative", self.loc(opt))
            elif key == "nsm":
                raise DeckError(f"member {name}: 'nsm' is not an option here; the mass per length a member carries "
                                "without stiffening it (contents, insulation, trays) is written carried_mass",
                                self.loc(opt.children[0]), "e.g. carried_mass = 12 kg/m")
            else:
                raise DeckError(f"member {name}: unknown option '{key}'; {suggest(key, ['roll', 'up', 'carried_mass'])}", self.loc(opt))
        motion = _released_motion(m["releases"]) if kind == "beam" else None
        if motion:
            raise DeckError(f"member {name}: its end releases let it {motion} with nothing to resist it", self.loc(s),
                            "release a direction at one end only (a hinge keeps the other end's rotations)")
        self.members[name] = m

    def st_support(self, s):
        target, how = s.children
        if isinstance(how, Token):
            fixes = {"fixed": DIRECTIONS, "pinned": DIRECTIONS[:3]}
            if str(how) not in fixes:
                raise DeckError(f"support must be 'fixed', 'pinned' or a list like (ux, uy); {suggest(str(how), fixes)}", self.loc(how))
            dirs = fixes[str(how)]
        else:
            dirs = []
            for d in how.children:
                if str(d) not in DIRECTIONS:
                    raise DeckError(f"unknown direction '{d}'; {suggest(str(d), DIRECTIONS)}", self.loc(d))
                dirs.append(str(d))
        self.supports.append((self.fixed_name(target), dirs, self.loc(s)))

    def st_spring(self, s):
        target, *kws = s.children
        vals = {}
        for kw in kws:
            d = str(kw.children[0])
            if d not in DIRECTIONS:
                raise DeckError(f"unknown direction '{d}'; {suggest(d, DIRECTIONS)}", self.loc(kw))
            if d in vals:
                raise DeckError(f"spring: '{d}' is given twice", self.loc(kw), "keep one of them")
            dim = (1, 0, -2) if d.startswith("u") else U.MOMENT
            vals[d] = self.value(kw.children[1], dim, f"spring {d}")
            if vals[d] < 0:
                raise DeckError(f"spring {d}: a stiffness cannot be negative", self.loc(kw))
            _not_huge(vals[d], f"spring {d}", self.loc(kw))
        self.springs.append((self.fixed_name(target), vals, self.loc(s)))

    def st_mass(self, s):
        target, value, *opts = s.children
        m = self.value(value, U.MASS, "mass")
        inertia = np.zeros(3)
        seen = set()
        for opt in opts:
            self.once(seen, str(opt.children[0]), self.loc(opt), "mass")
            if str(opt.children[0]) != "inertia":
                raise DeckError(f"mass: unknown option '{opt.children[0]}'; use inertia = (Ixx, Iyy, Izz)", self.loc(opt))
            inertia = self.vector(opt.children[1], (1, 2, 0), "mass inertia")
        if m < 0 or (inertia < 0).any():
            raise DeckError("a mass or inertia cannot be negative", self.loc(s))
        for v in (m, *inertia):
            _not_huge(v, "mass", self.loc(s))
        self.masses.append((self.fixed_name(target), np.r_[m, m, m, inertia], self.loc(s)))

    def st_group(self, s):
        name = self.name(s.children[0])
        self.define("group", "group", name, self.loc(s))
        self.not_a_group(name, "group", self.loc(s))
        members = []
        for t in s.children[1:]:
            table = {**{k: 1 for k in self.nodes}, **{k: 1 for k in self.members}}
            members += self.targets(t, table, "node or member")
        self.groups[name] = members

    def st_case(self, s):
        name, kind, *items = s.children
        if str(kind) not in _CASE_KINDS:
            raise DeckError(f"case {self.name(name)}: unknown kind '{kind}'; {suggest(str(kind), _CASE_KINDS)}",
                            self.loc(kind), "kinds: " + ", ".join(_CASE_KINDS))
        self.define("result", "case", self.name(name), self.loc(s))
        self.cases.append((self.name(name), str(kind), [i for i in items if i is not None], self.loc(s),
                           dict(self.assumed), self.scope()))

    def st_combo(self, s):
        self.define("result", "combination", self.name(s.children[0]), self.loc(s))
        self.combos.append((self.name(s.children[0]), s.children[1], self.loc(s), self.scope()))

    def st_loop(self, s):
        var, lo, hi, *body = s.children
        a, b = self.evaluate(lo), self.evaluate(hi)
        for q in (a, b):
            if q.dim not in (U.NONE, WILD) or q.value != int(q.value):
                raise DeckError("loop bounds must be whole numbers", self.loc(s))
        passes = max(int(b.value) - int(a.value) + 1, 0)
        for sub in (x for st in body for x in st.iter_subtrees()):
            if sub.data == "let" and str(sub.children[0]) in self.overrides:
                nm = str(sub.children[0])
                raise DeckError(f"--set {nm}: the let of {nm} at {self.loc(sub)} is inside the loop at {self.loc(s)}, "
                                "which works it out again on every pass, so one value cannot replace it", None,
                                "move the let out of the loop if it is the same on every pass")
        if not body:
            return                      # nothing to repeat
        if self.loop_steps + passes * len(body) > LOOP_STATEMENTS:
            again = f", and again on each pass of the loop at {self.loop_sites[-1]}" if self.loop_sites else ""
            raise DeckError(f"this loop would execute {passes:,} passes of {len(body)} statement(s){again}, taking "
                            f"the deck's loops past {LOOP_STATEMENTS:,} statements in all"
                            + (f" ({self.loop_steps:,} executed so far)" if self.loop_steps else ""),
                            self.loc(s), _LOOP_HINT)
        if b.value < a.value:
            w = (f"{self.loc(s)}: warning: loop range {a.value:g}..{b.value:g} is empty (a range counts up), so "
                 f"its statements are skipped; write {b.value:g}..{a.value:g} to run them")
            if w not in self.warnings:          # once, though an enclosing loop reads it again
                self.warnings.append(w)
        saved = self.vars.get(str(var))
        self.loop_vars.append(str(var))
        self.loop_sites.append(self.loc(s))
        try:
            for k in range(int(a.value), int(b.value) + 1):
                self.vars[str(var)] = Quantity(float(k), WILD if k == 0 else U.NONE)
                for st in body:
                    self.statement(st)
        finally:
            self.loop_vars.pop()
            self.loop_sites.pop()
        # the loop variable lives inside the loop only: after it, the name means what it meant before
        if saved is not None:
            self.vars[str(var)] = saved
        else:
            self.vars.pop(str(var), None)

    # ---------- building the model
    def build(self) -> Model:
        node_names = list(self.nodes)
        nidx = {n: k for k, n in enumerate(node_names)}
        coords = np.array([self.nodes[n][0] for n in node_names]).reshape(-1, 3)
        mems = list(self.members.values())
        e = len(mems)
        conn = np.zeros((e, 2), int)
        cols = {k: np.zeros(e) for k in ("E", "G", "rho", "A", "Iy", "Iz", "J", "Avy", "Avz", "roll", "carried_mass")}
        up = np.full((e, 3), np.nan)
        releases = np.zeros((e, 12), bool)
        truss = np.zeros(e, bool)
        lo, hi = (coords.min(axis=0), coords.max(axis=0)) if len(coords) else (np.zeros(3), np.zeros(3))
        tol = COINCIDENT * float(np.linalg.norm(hi - lo))
        for k, m in enumerate(mems):
            for end, col in (("i", 0), ("j", 1)):
                nm, tok = m[end]
                if nm not in nidx:
                    raise DeckError(f"member {m['name']}: node '{nm}' is not defined; {suggest(nm, node_names)}", self.loc(tok))
                conn[k, col] = nidx[nm]
            sname, tok = m["section"]
            if sname not in self.sections:
                raise DeckError(f"member {m['name']} uses section '{sname}', which is not defined; {suggest(sname, self.sections)}", self.loc(tok))
            mname, tok = m["material"]
            if mname not in self.materials:
                raise DeckError(f"member {m['name']} uses material '{mname}', which is not defined; {suggest(mname, self.materials)}", self.loc(tok))
            sp, mat = self.sections[sname].props, self.materials[mname]
            for key, val in (("E", mat.E), ("G", mat.G), ("rho", mat.density), ("A", sp.A), ("Iy", sp.Iy),
                             ("Iz", sp.Iz), ("J", sp.J), ("Avy", sp.Avy), ("Avz", sp.Avz),
                             ("roll", m["roll"]), ("carried_mass", m["carried_mass"])):
                cols[key][k] = val
            releases[k] = m["releases"]
            truss[k] = m["kind"] == "truss"
            axis = coords[conn[k, 1]] - coords[conn[k, 0]]
            length = float(np.linalg.norm(axis))
            if conn[k, 0] == conn[k, 1] or length <= tol:
                raise DeckError(f"member {m['name']} has zero length (its ends coincide within {tol:.3g} m, "
                                f"{COINCIDENT:g} of the model size)", m["loc"])
            if m["up"] is not None:
                up[k] = _up_vector(m["up"], axis / length, m)
        self.huge_members(mems, cols, coords[conn[:, 1]] - coords[conn[:, 0]])
        self.parallel_members(mems, conn)
        self.leaning_members(mems, coords[conn[:, 1]] - coords[conn[:, 0]], cols, up, truss)
        n = len(node_names)
        restraint = np.zeros((n, 6), bool)
        first = {}                    # node -> (location, node count) of the first support on it
        for target, dirs, where in self.supports:
            cols_ = [DIRECTIONS.index(d) for d in dirs]
            again = []
            hit = self.targets(target, nidx, "node")
            for nm in hit:
                k = nidx[nm]
                # a later support as specific as the earlier one (no more nodes) means this node; a
                # wider pattern sweeping over a node supported on its own does not (pin one end, then
                # support N* (uy, uz))
                if k in first and len(hit) <= first[k][1] and \
                        self.repeated_support(nm, dirs, restraint[k], where, first[k][0]):
                    again.append(f"{nm} (at {first[k][0]})")
                first.setdefault(k, (where, len(hit)))
                restraint[k, cols_] = True
            if again:
                shown = ", ".join(again[:3]) + (", ..." if len(again) > 3 else "")
                self.warnings.append(f"{where}: warning: this support repeats an earlier one at {len(again)} "
                                     f"node(s), {shown}; remove one of them")
        springs = np.zeros((n, 6))
        for target, vals, where in self.springs:
            held, acting = [], 0
            for nm in self.targets(target, nidx, "node"):
                for d, v in vals.items():
                    springs[nidx[nm], DIRECTIONS.index(d)] += v
                    if v > 0 and restraint[nidx[nm], DIRECTIONS.index(d)]:
                        held.append(f"{nm} {d}")
                    acting += v > 0
            if held and len(held) == acting:           # it acts nowhere: every spring of it is held
                shown = ", ".join(held[:5]) + (", ..." if len(held) > 5 else "")
                self.warnings.append(f"{where}: warning: this spring acts only where a support already holds the "
                                     f"node ({len(held)}: {shown}), so it has no effect; to model a flexible "
                                     "support, leave those directions out of the support")
        pmass = np.zeros((n, 6))
        on_member = np.zeros(n, bool)
        on_member[conn.ravel()] = True
        turned = _rotation_stiffness(coords, conn, truss, releases, cols["roll"], up) > 0 \
            if any((vec[3:] > 0).any() for _, vec, _ in self.masses) else np.ones((n, 3), bool)
        for target, vec, where in self.masses:
            idle = {}
            for nm in self.targets(target, nidx, "node"):
                k = nidx[nm]
                pmass[k] += vec
                # rotations that no beam end, support or spring holds carry no stiffness: the
                # assembly holds them (a truss node's rotations), so inertia there does nothing
                dead = (vec[3:] > 0) & ~turned[k] & ~restraint[k, 3:] & ~(springs[k, 3:] > 0)
                if dead.any():
                    idle[nm] = ", ".join(d for d, x in zip(DIRECTIONS[3:], dead) if x)
                loose = (vec[:3] > 0) & ~restraint[k, :3] & ~(springs[k, :3] > 0)
                if not on_member[k] and loose.any():
                    dirs = ", ".join(d for d, x in zip(DIRECTIONS, loose) if x)
                    raise DeckError(f"mass on node {nm}, which no member, support or spring holds in {dirs}: the "
                                    "mass would not move with the structure and would be left out of its modes",
                                    where, "connect the node with a member, or put the mass on a node of the structure")
            if idle:
                shown = "; ".join(f"{nm} ({d})" for nm, d in list(idle.items())[:5]) + (", ..." if len(idle) > 5 else "")
                self.warnings.append(
                    f"{where}: warning: the rotary inertia of this mass is left out at {len(idle)} node(s), {shown}: "
                    "no beam end there keeps those rotations (truss members and released ends carry no moment), so "
                    "they have no stiffness and are held; connect a beam member without that release (or a "
                    "rotational spring) if the inertia matters")
        midx = {m["name"]: k for k, m in enumerate(mems)}
        reading = self.scope()
        cases = [self.build_case(c, nidx, midx) for c in self.cases]
        for c in cases:
            for item in c.loads:
                if item.kind in ("force", "moment"):
                    first = 0 if item.kind == "force" else 3
                    acts = np.asarray(item.vector) != 0
                    held = restraint[item.targets, first:first + 3] & acts
                    if acts.any() and (held == acts).all():          # at every node it names
                        at = [f"{node_names[item.targets[k]]} {DIRECTIONS[first + d]}" for k, d in np.argwhere(held)]
                        shown = ", ".join(at[:4]) + (", ..." if len(at) > 4 else "")
                        self.warnings.append(
                            f"{item.location}: warning: case {c.name}: this {item.kind} acts only in directions a "
                            f"support holds ({shown}), so it goes straight into the support and moves nothing; "
                            "check the node names or pattern")
                if item.kind in ("displacement", "velocity"):
                    held = restraint[item.targets, :3] & (item.vector != 0)
                    if held.any():
                        k, d = np.argwhere(held)[0]
                        raise DeckError(f"case {c.name}: initial {item.kind} in {DIRECTIONS[d]} at node "
                                        f"{node_names[item.targets[k]]}, which is restrained there and cannot move",
                                        item.location, "give initial values at free nodes only")
        used = on_member | restraint.any(axis=1) | (springs > 0).any(axis=1) | (pmass > 0).any(axis=1)
        for c in cases:
            for item in c.loads:
                if item.kind in ("force", "moment", "displacement", "velocity"):
                    used[item.targets] = True
        self.coincident_nodes(node_names, coords, tol, used)
        names = {c.name for c in cases if c.kind == "static"}
        combos = []
        for nm, tree, where, scope in self.combos:
            self.use_scope(scope)             # the parameters where the combination is written
            combos.append(Combination(nm, _combo_factors(self, tree, names), where))
        self.use_scope(reading)
        modal = [c.name for c in cases if c.kind == "modes"]
        if modal:
            self.massless_materials(mems, cols["carried_mass"], modal)
        for c in cases:
            if c.kind not in ("free", "history", "harmonic", "spectrum"):
                continue
            start, mref = self.references[c.name]
            if start and start[0] not in names | {cb.name for cb in combos}:
                raise DeckError(f"case {c.name}: start '{start[0]}' is not a static case or combination; "
                                f"{suggest(start[0], names)}", start[1])
            if mref and mref[0] not in modal:
                raise DeckError(f"case {c.name}: '{mref[0]}' is not a modes case; {suggest(mref[0], modal)}", mref[1])
            if not modal:
                raise DeckError(f"case {c.name}: this case is computed from modes; add a modes case",
                                c.location)
        settings = {}
        for key, (val, where) in self.settings.items():
            if key == "mass":
                if val not in ("consistent", "lumped"):
                    raise DeckError("settings: mass must be 'consistent' or 'lumped'", where)
                settings[key] = val
            elif key == "shear":
                if val not in ("on", "off"):
                    raise DeckError("settings: shear must be 'on' or 'off'", where)
                settings[key] = val == "on"
            else:
                raise DeckError(f"settings: unknown key '{key}'; {suggest(key, ['mass', 'shear'])}", where)
        return self.plausible(Model(title=self.title, node_names=node_names, coords=coords,
                     member_names=[m["name"] for m in mems], conn=conn, truss=truss,
                     up=up, releases=releases, restraint=restraint, springs=springs,
                     point_mass=pmass, materials=self.materials, sections=self.sections,
                     member_section=[m["section"][0] for m in mems],
                     member_material=[m["material"][0] for m in mems],
                     cases=cases, combinations=combos, settings=settings, warnings=self.warnings, **cols), mems)

    def plausible(self, model: Model, mems) -> Model:
        """Add the located plausibility warnings of a built model (deck.plausible)."""
        self.warnings += model_warnings(model, self.defined, [m["loc"] for m in mems], self.section_params,
                                        self.assume_sites.get(U.LENGTH))
        return model

    def repeated_support(self, nm, dirs, held, where, first) -> bool:
        """A second support statement on a node: supports add up. Asking for less than is already
        held (fixed, then pinned) is refused, since the earlier support would silently win; True
        for the same directions again (a warning)."""
        if not held[[DIRECTIONS.index(d) for d in dirs]].all():
            return False                                   # it adds directions: they add up
        have = ", ".join(d for d, x in zip(DIRECTIONS, held) if x)
        if held.sum() > len(set(dirs)):
            raise DeckError(f"support on node {nm} ({', '.join(dirs)}) conflicts with the support at {first}, "
                            f"which already holds {have} there: supports add up, so the node would stay held "
                            f"in {have}", where,
                            f"give node {nm} one support: leave it out of the earlier one (e.g. a group or "
                            "pattern without it)")
        return True

    def coincident_nodes(self, names, coords, tol, used) -> None:
        """Distinct nodes at one place are not connected: an error when both carry something
        (members, supports, springs, masses, loads), a warning when one of them is bare."""
        from scipy.spatial import cKDTree

        if len(coords) < 2:
            return
        pairs = cKDTree(coords).query_pairs(tol, output_type="ndarray")
        for a, b in sorted(pairs.tolist(), key=lambda p: (max(p), min(p))):
            a, b = min(a, b), max(a, b)           # b is the one defined later
            first, where = self.nodes[names[a]][1], self.nodes[names[b]][1]
            text = (f"node {names[b]} is at the same place as node {names[a]} (at {first}), within {tol:.3g} m "
                    f"({COINCIDENT:g} of the model size); distinct nodes are not connected")
            if used[a] and used[b]:
                raise DeckError(text + ", so the members, supports or loads on them act on separate parts",
                                where, f"use one name for both (refer to {names[a]} everywhere)")
            bare = names[b] if not used[b] else names[a]
            self.warnings.append(f"{where}: warning: {text}; {bare} carries nothing (remove it, or use one name)")

    def huge_members(self, mems, cols, axis) -> None:
        """Refuse a member whose stiffness or mass entries would be beyond what the assembly can
        compute with (assembly.HUGE): E = 1e308 Pa on a 1 mm member overflows E A / L to inf and
        the transforms to NaN. Worked in log10 so the check itself cannot overflow."""
        from ..assembly import HUGE

        if not len(mems):
            return
        with np.errstate(divide="ignore"):          # log10(0) = -inf: a zero term is no risk
            lg = {k: np.log10(np.abs(cols[k])) for k in ("E", "G", "rho", "A", "Iy", "Iz", "J", "carried_mass")}
            lL = np.log10(np.linalg.norm(axis, axis=1))
        lI = np.maximum(lg["Iy"], lg["Iz"])
        terms = {
            "axial stiffness E*A/L": (lg["E"] + lg["A"] - lL, "N/m"),
            "torsional stiffness G*J/L": (lg["G"] + lg["J"] - lL, "N*m"),
            "bending stiffness 12*E*I/L^3": (np.log10(12) + lg["E"] + lI - 3 * lL, "N/m"),
            "bending stiffness 4*E*I/L": (np.log10(4) + lg["E"] + lI - lL, "N*m"),
            "mass (density*A + carried_mass)*L": (np.log10(2) + np.maximum(lg["rho"] + lg["A"], lg["carried_mass"]) + lL, "kg"),
            "rotary mass density*(Iy + Iz)*L": (np.log10(2) + lg["rho"] + lI + lL, "kg*m^2"),
        }
        limit = math.log10(HUGE)
        for what, (x, unit) in terms.items():
            over = np.flatnonzero(x > limit)
            if len(over):
                k = int(over[0])
                m = mems[k]
                raise DeckError(f"member {m['name']}: its {what} is about 1e{x[k]:.0f} {unit}, beyond the "
                                f"{HUGE:.0e} that can be computed with (length {10 ** lL[k]:.3g} m)", m["loc"],
                                "check the units of the material and section values and the member length")

    def parallel_members(self, mems, conn) -> None:
        """Warn about two members joining the same two nodes: both act, which a copied line
        does silently (built-up members may be meant, so it is not refused)."""
        if len(conn) < 2:
            return
        ends = np.sort(conn, axis=1)
        order = np.lexsort((ends[:, 1], ends[:, 0]))
        same = np.flatnonzero((np.diff(ends[order], axis=0) == 0).all(axis=1))
        for k in same[:20]:
            a, b = mems[order[k]], mems[order[k + 1]]
            if b["loc"].line < a["loc"].line and b["loc"].file == a["loc"].file:
                a, b = b, a
            self.warnings.append(f"{b['loc']}: warning: member {b['name']} joins the same two nodes as member "
                                 f"{a['name']} (at {a['loc']}); both act, with their stiffness and mass added")

    def leaning_members(self, mems, axis, cols, up, truss) -> None:
        """Warn about members a little off vertical (1 % to 10 % horizontal projection) with a
        section that is not the same about both axes and no `up`: the default axes follow the
        inclined-member rule there, which can turn the section 90 degrees from a plumb
        neighbour's (members under 1 % count as vertical; see elements.frame.LEAN_VERTICAL)."""
        from ..elements.frame import LEAN_VERTICAL

        length = np.linalg.norm(axis, axis=1)
        lean = np.hypot(axis[:, 0], axis[:, 1]) / np.where(length > 0, length, 1.0)
        unequal = np.abs(cols["Iy"] - cols["Iz"]) > 1e-3 * np.maximum(cols["Iy"], cols["Iz"])
        odd = np.flatnonzero((lean >= LEAN_VERTICAL) & (lean < 0.1) & unequal & np.isnan(up).any(axis=1) & ~truss)
        for k in odd[:10]:
            m = mems[k]
            self.warnings.append(
                f"{m['loc']}: warning: member {m['name']} leans {np.degrees(np.arcsin(lean[k])):.2g} deg from "
                f"vertical, more than the {np.degrees(np.arcsin(LEAN_VERTICAL)):.2g} deg within which members count "
                "as vertical, so its section axes follow the rule for inclined members and may be turned 90 deg "
                "from those of a plumb column; give `up` to set them")
        if len(odd) > 10:
            self.warnings.append(f"{mems[odd[10]]['loc']}: warning: {len(odd) - 10} more members lean like this")

    def massless_materials(self, mems, carried_mass, modal) -> None:
        """Warn about materials of zero density whose members carry no mass in the modes."""
        for name, mat in self.materials.items():
            if mat.density != 0:
                continue
            count = sum(1 for k, m in enumerate(mems) if m["material"][0] == name and carried_mass[k] == 0)
            if count:
                where = self.defined[("material", name)][1]
                self.warnings.append(
                    f"{where}: warning: material {name} has zero density, so {count} member(s) of it carry no "
                    f"mass in modes case {', '.join(modal)}; give its density if their mass matters")

    def read_table(self, rel: str, where, deck_file: Path) -> np.ndarray:
        """Two-column CSV (time s, factor), relative to the deck file and inside its folder tree."""
        _file_name(rel, "table", where)
        path = _resolved(deck_file.parent / rel, "table", where)
        if self.top_dir not in path.parents:
            raise DeckError(f"table '{rel}' is outside the deck's folder {self.top_dir}", where)
        lines = _read_utf8(path, "table", where, self.shown(path), MAX_TABLE_BYTES).splitlines()
        rows, at = [], []
        fix = (f"table named at {where}; two numbers a row, separated by a comma, semicolon, tab or spaces, "
               "decimals with a point")
        for k, line in enumerate(lines, 1):
            parts = [x for x in re.split(r"[,;\s]+", line.split("#")[0]) if x]
            if not parts:
                continue                  # blank, or a comment
            vals = []
            for x in parts:
                try:
                    vals.append(float(x))
                except ValueError:
                    vals.append(None)
            here = Location(self.shown(path), k, 1, line)
            if all(v is None for v in vals) and not rows:
                continue                  # a header line
            if None in vals:
                bad = parts[vals.index(None)]
                here = Location(self.shown(path), k, line.find(bad) + 1, line)
                raise DeckError(f"expected two numbers in this row, found '{bad}'", here, fix)
            if len(vals) != 2 or not all(map(math.isfinite, vals)):
                raise DeckError(f"expected two finite numbers in this row, found {len(vals)}: "
                                f"{', '.join(parts)}", here, fix)
            if rows and vals[0] <= rows[-1][0]:
                raise DeckError(f"the first column must increase row by row: {_g(vals[0])} follows "
                                f"{_g(rows[-1][0])} (row {at[-1]})", here, f"table named at {where}")
            rows.append(vals)
            at.append(k)
        table = np.array(rows).reshape(-1, 2)
        if len(table) < 2:
            raise DeckError(f"table '{rel}' needs at least two rows of numbers (time or period, value); "
                            f"it has {len(table)}", where)
        if not table[:, 1].any():
            raise DeckError(f"table '{rel}': every value in its second column is zero, so it would give no "
                            "response", where, "check the file, or that the right column holds the values")
        return table



# words a user may write for a shape's parameters -> the names the shapes use
_PARAM_WORDS = {"thick": ("wall", "t"), "thickness": ("wall", "t"), "t": ("wall",), "wt": ("wall", "t"),
                "diameter": ("od", "d"), "dia": ("od", "d"), "d": ("od",), "outside": ("od",),
                "width": ("b", "bf"), "w": ("b", "bf"), "height": ("h", "d"), "depth": ("d", "h"),
                "flange": ("tf",), "web": ("tw",), "area": ("A",), "a": ("A",), "ix": ("J",), "it": ("J",)}
_CASE_KINDS = ("static", "modes", "free", "history", "harmonic", "spectrum")
_FLOAT_MAX = float(np.finfo(float).max)
_LOOP_HINT = (f"check the loop ranges: a deck's loops may execute at most {LOOP_STATEMENTS:,} statements, "
              "which keeps a mistyped range from running for hours")


# an example of a value with its unit for each dimension a deck asks for, and the assume that
# would let bare numbers stand for it (None where no single assume does)
_UNIT_EXAMPLES = {
    U.LENGTH: ("6 m", "length in m"), U.MASS: ("2.5 t", "mass in t"), U.TIME: ("0.01 s", "time in s"),
    U.FORCE: ("12 kN", "force in kN"), U.PRESSURE: ("210 GPa", "stress in MPa"),
    U.DENSITY: ("7850 kg/m^3", None), U.ACCEL: ("0.25 gee", None), U.MOMENT: ("20 kN*m", None),
    U.FREQ: ("5 Hz", None), (1, 0, -2): ("4 kN/m", None), (1, -1, 0): ("12 kg/m", None),
    (1, 2, 0): ("0.4 t*m^2", None),
}


def _unit_remedy(need, got) -> str:
    """A hint for a value of the wrong kind that is a common slip: a weight for a mass (divide by
    g0), a period for a frequency, a translational stiffness for a rotational one."""
    weight = tuple(a + b for a, b in zip(need, U.ACCEL))
    if got == weight:
        example = {U.MASS: "25 kN / g0", U.DENSITY: "78.5 kN/m^3 / g0", (1, -1, 0): "0.5 kN/m / g0"}
        return (f"this is a weight: divide by g0 for {U.dim_name(need)}"
                + (f", e.g. {example[need]}" if need in example else ""))
    if need == U.FREQ and got == U.TIME:
        return "a frequency is one over the period: write it in Hz or rpm, or as 1 / (0.5 s)"
    if need == U.TIME and got == U.FREQ:
        return "a time is one over the frequency: write it in s, or as 1 / (2 Hz)"
    if need == U.MOMENT and got == (1, 0, -2):
        return "a rotational stiffness is a moment per radian, e.g. rz = 2e5 N*m"
    return ""


def _override_text(value, label: str) -> str:
    """An override's value as deck text: a string as given, a plain number in a form that reads
    back to the same float."""
    if isinstance(value, bool) or not isinstance(value, (str, int, float, np.integer, np.floating)):
        raise DeckError(f"{label}: the value is deck text such as '30 m' or a plain number, not "
                        f"{type(value).__name__}")
    if isinstance(value, str):
        text = value.strip()
    elif isinstance(value, (float, np.floating)):
        text = repr(float(value))
    else:
        text = str(int(value))
    if not text or "\n" in text or "\r" in text:
        raise DeckError(f"{label}: the value is empty or spans lines", None,
                        "give one value, e.g. --set H=30 m or --set n=4")
    return text


def _source_text(where: Location, t) -> str:
    """The text of an expression as written, from its line (the start of its line when it
    spans more than one)."""
    meta = t if isinstance(t, Token) else t.meta
    end = getattr(meta, "end_column", None) if getattr(meta, "end_line", None) == where.line else None
    return where.source_line[where.column - 1:(end - 1) if end else None].strip()


def _not_huge(v: float, what: str, where: Location) -> None:
    from ..assembly import HUGE

    if abs(v) > HUGE:
        raise DeckError(f"{what} of {v:.3g} in SI units is beyond the {HUGE:.0e} that can be computed with", where,
                        "check the units")


def _g(v: float) -> str:
    return f"{v:g}"


def _literal(text: str, where: Location) -> float:
    """A number as written in the deck; one that overflows to inf or underflows to 0 is refused
    rather than silently changed."""
    v = float(text)
    if math.isinf(v):
        raise DeckError(f"the number {text} is too large (numbers reach about {_FLOAT_MAX:.1e})", where)
    if v == 0 and re.search(r"[1-9]", re.split(r"[eE]", text)[0]):
        raise DeckError(f"the number {text} is too small to hold (the smallest is about 5e-324)", where,
                        "write 0 if zero is meant")
    return v


def _file_name(name: str, what: str, where: Location | None) -> None:
    """Refuse a file name that no file can have (empty, a NUL character, a part too long)."""
    if not name:
        raise DeckError(f"{what}: the file name is empty", where, 'write the name between the quotes: "legs.deck"'
                        if what == "include" else 'write the name between the quotes: "record.csv"')
    if "\0" in name:
        raise DeckError(f"{what}: the file name holds a NUL character, which no file name can", where)
    longest = max(len(part.encode("utf-8", errors="surrogatepass")) for part in name.split("/"))
    if longest > 255 or len(name.encode("utf-8", errors="surrogatepass")) > 4095:
        raise DeckError(f"{what}: the file name is longer than a file system allows ({longest} bytes in one part; "
                        "the limit is 255, and 4095 for the whole path)", where)


def _resolved(path: Path, what: str, where: Location | None) -> Path:
    """path.resolve(), with a name no file can have or a loop of links a DeckError."""
    _file_name(str(path), what, where)
    try:
        return path.resolve()
    except (OSError, RuntimeError, ValueError) as exc:
        reason = "its symbolic links form a loop" if isinstance(exc, RuntimeError) else \
            getattr(exc, "strerror", None) or str(exc)
        raise DeckError(f"{what} '{path}' cannot be followed: {reason}", where) from None


def _read_utf8(path: Path, what: str, where: Location | None, shown: str | None = None,
               limit: int = MAX_DECK_BYTES, total: int = 0) -> str:
    """The text of a deck or table file, which must be UTF-8 (a UTF-8 byte-order mark is
    allowed). A folder, anything but a regular file (a pipe or device, which could block or never
    end), a file above `limit` bytes (checked before reading), an unreadable file or other bytes
    are a DeckError that says what is wrong; `where` is the statement that named the file (None
    for the top deck); `total` is the deck text already read from other files."""
    site = f" ({'included' if what == 'deck' else 'named'} at {where})" if where else ""
    try:
        info = os.stat(path)
    except OSError as exc:
        raise DeckError(f"cannot read {what} '{path}': {exc.strerror}", where) from None
    if stat.S_ISDIR(info.st_mode):
        inside = sorted(p.name for p in path.glob("*.deck"))[:5]
        hint = f"decks in it: {', '.join(inside)}" if inside else "give the path of a file"
        raise DeckError(f"{what} '{path}' is a folder, not a file", where, hint)
    _regular(info, path, what, where)
    _small_enough(info.st_size, path, what, where, limit, total)
    try:
        # non-blocking, so that a pipe put in the file's place after the check cannot hang the open
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
        with os.fdopen(fd, "rb") as f:
            _regular(os.fstat(f.fileno()), path, what, where)
            data = f.read(limit + 1)
    except OSError as exc:
        raise DeckError(f"cannot read {what} '{path}': {exc.strerror}", where) from None
    _small_enough(len(data), path, what, where, limit, total)
    fix = "save it as UTF-8 (in most editors: Save As, encoding UTF-8)"
    if data.startswith((b"\xff\xfe", b"\xfe\xff")) or (b"\x00" in data[:200] and data.count(b"\x00") * 4 > len(data)):
        raise DeckError(f"{what} '{path.name}' is UTF-16 (or UTF-32) text; a {what} file must be UTF-8", where, fix)
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        start = data.rfind(b"\n", 0, exc.start) + 1
        end = data.find(b"\n", exc.start)
        raw = data[start:end if end >= 0 else len(data)]
        line = data.count(b"\n", 0, exc.start) + 1
        column = len(data[start:exc.start].decode("utf-8", errors="replace")) + 1
        bad = data[exc.start]
        guess = bytes([bad]).decode("cp1252", errors="replace")
        like = f" ('{guess}' in the Windows/Latin-1 encoding)" if guess.isprintable() and guess != "\ufffd" else ""
        src = raw.decode("utf-8", errors="replace").rstrip("\r")
        raise DeckError(f"byte 0x{bad:02x}{like} is not UTF-8 text{site}; a {what} file must be UTF-8",
                        Location(shown or path.name, line, column, src), fix) from None


def _regular(info: os.stat_result, path: Path, what: str, where: Location | None) -> None:
    if not stat.S_ISREG(info.st_mode):
        kind = ("a named pipe" if stat.S_ISFIFO(info.st_mode) else "a device" if stat.S_ISCHR(info.st_mode)
                or stat.S_ISBLK(info.st_mode) else "a socket" if stat.S_ISSOCK(info.st_mode) else "not a file")
        raise DeckError(f"{what} '{path}' is {kind}, not a regular file", where,
                        f"a {what} is read from an ordinary file saved on disk")


def _small_enough(size: int, path: Path, what: str, where: Location | None, limit: int, total: int) -> None:
    if size <= limit:
        return
    cap = MAX_DECK_BYTES if what == "deck" else MAX_TABLE_BYTES
    if what == "deck":
        whole = f"the deck and its includes would be over {_mb(total + size)}" if total else \
            f"the deck '{path.name}' is {_mb(size)}"
        raise DeckError(f"{whole}, above the limit of {_mb(cap)} of deck text (reading takes about 170 MB of "
                        "memory per MB)", where, "write repeated nodes and members with for loops, which keeps "
                        "a deck of any model size short")
    raise DeckError(f"table '{path.name}' is {_mb(size)}, above the limit of {_mb(cap)} for a table", where,
                    "thin the record to the time step the case uses, or cut it to the part of interest")


def _mb(n: int) -> str:
    return f"{n / 1e6:.3g} MB" if n < 1e12 else f"{n:.3g} bytes"


def _rotation_stiffness(coords, conn, truss, releases, roll, up) -> np.ndarray:
    """(n, 3): for each node and global rotation, how much of it the beam ends there keep
    (sum over ends of the kept local rotation axes' squared components): 0 where only truss
    members or released ends meet, as on the diagonal of the assembled K."""
    from ..elements.frame import local_axes

    out = np.zeros((len(coords), 3))
    beams = np.flatnonzero(~truss)
    if not len(beams):
        return out
    xi, xj = coords[conn[beams, 0]], coords[conn[beams, 1]]
    R, _ = local_axes(xi, xj, roll=roll[beams])
    given = ~np.isnan(up[beams]).any(axis=1)
    if given.any():
        R[given] = local_axes(xi[given], xj[given], roll=roll[beams][given], up=up[beams][given])[0]
    for end, first in ((0, 3), (1, 9)):
        kept = ~releases[beams, first:first + 3]
        np.add.at(out, conn[beams, end], np.einsum("bl,blg->bg", kept.astype(float), R ** 2))
    out[out < 1e-12] = 0.0      # round-off of the axes of members along global axes
    return out


def _released_motion(released: np.ndarray) -> str | None:
    """A rigid motion of a member that its end releases (12,) leave free, in words, or None.

    The member's rigid motions (translation a, rotation t; end j moves by a + t x L e_x) must
    each move some end DOF that is kept, else the released block of its stiffness is singular."""
    G = np.zeros((12, 6))
    G[0:3, 0:3] = G[6:9, 0:3] = G[3:6, 3:6] = G[9:12, 3:6] = np.eye(3)
    G[7, 5], G[8, 4] = 1.0, -1.0          # t_z moves end j along local y, t_y against local z
    kept = G[~released]
    if len(kept) >= 6 and np.linalg.matrix_rank(kept) == 6:
        return None
    v = np.linalg.svd(np.vstack([kept, np.zeros((6, 6))]))[2][-1]
    words = ["slide along its axis", "move along its local y", "move along its local z",
             "twist about its axis", "turn about its local y", "turn about its local z"]
    return words[int(np.argmax(np.abs(v)))]


def _up_vector(up: np.ndarray, x: np.ndarray, m: dict) -> np.ndarray:
    """The member's `up` vector as a unit vector, refused if zero or along the member axis x."""
    big = float(np.abs(up).max())
    if big == 0:
        raise DeckError(f"member {m['name']}: the up vector is zero", m["loc"], "give a vector across the member")
    u = up / big
    u = u / np.linalg.norm(u)
    if abs(float(u @ x)) > 1 - 1e-9:
        raise DeckError(f"member {m['name']}: the up vector ({', '.join(f'{v:g}' for v in up)}) is parallel to "
                        "the member axis, so it cannot set the local axes", m["loc"],
                        "give a vector across the member (e.g. up = (1, 0, 0) for a vertical member), or leave it out")
    return u


def _too_deep(tree: Tree):
    """(the outermost expression or loop nested deeper than MAX_NESTING levels, its depth), or None."""
    height = {}
    for sub in tree.iter_subtrees():          # children before their parents, without recursion
        height[id(sub)] = 1 + max((height[id(c)] for c in sub.children if isinstance(c, Tree)), default=0)
    sub = tree
    while height[id(sub)] > MAX_NESTING:
        if sub.data in _EXPRESSIONS:
            return sub, height[id(sub)]
        deeper = [c for c in sub.children if isinstance(c, Tree) and height[id(c)] > MAX_NESTING]
        if not deeper:
            return (sub, height[id(sub)]) if sub.data == "loop" else None
        sub = deeper[0]
    return None


def _binary(a: Quantity, b: Quantity, op: str) -> Quantity:
    if op in ("__add__", "__sub__"):
        if a.dim is WILD:
            a = Quantity(a.value, b.dim)
        if b.dim is WILD:
            b = Quantity(b.value, a.dim)
        if a.dim is WILD:
            return Quantity(getattr(a.value, op)(b.value), WILD)
    elif op == "__pow__":
        a = Quantity(a.value, U.NONE if a.dim is WILD else a.dim)
        b = Quantity(b.value, U.NONE)
    else:
        if a.dim is WILD or b.dim is WILD:
            if op == "__truediv__" and b.value == 0:
                raise ArithmeticError("division by zero")
            return Quantity(0.0 if a.value == 0 else getattr(a.value, op)(b.value), WILD)
    return getattr(a, op)(b)


def _split_unit(unit: str):
    """'kg/m^3' -> [('*','kg',1), ('/','m',3)]"""
    out, op, buf = [], "*", ""
    for ch in unit + "*":
        if ch in "*/":
            sym, _, p = buf.partition("^")
            out.append((op, sym, int(p) if p else 1))
            op, buf = ch, ""
        else:
            buf += ch
    return out


def _combo_factors(r: _Reader, t, cases: set[str]) -> dict[str, float]:
    if isinstance(t, Tree) and t.data == "var":
        n = str(t.children[0])
        if n not in cases:
            other = r.defined.get(("result", n))
            if other is not None:
                kind = next((k for nm, k, *_ in r.cases if nm == n), None)
                what = f"a {kind} case" if other[0] == "case" else "a combination"
                raise DeckError(f"combination refers to '{n}', which is {what} (at {other[1]}); a combination "
                                "adds static cases only", r.loc(t),
                                "write out the static cases it is made of" if other[0] != "case" else "")
            raise DeckError(f"combination refers to case '{n}', which is not defined; {suggest(n, cases)}", r.loc(t))
        return {n: 1.0}
    if isinstance(t, Tree) and t.data in ("add", "sub"):
        a, b = (_combo_factors(r, c, cases) for c in t.children)
        s = 1.0 if t.data == "add" else -1.0
        for k, v in b.items():
            if k in a:
                r.warnings.append(f"{r.loc(t.children[1])}: warning: case {k} appears more than once in this "
                                  f"combination; its factors add up to {_g(a[k] + s * v)}")
            a[k] = a.get(k, 0.0) + s * v
        return a
    if isinstance(t, Tree) and t.data == "neg":
        return {k: -v for k, v in _combo_factors(r, t.children[0], cases).items()}
    if isinstance(t, Tree) and t.data == "mul":
        x, y = t.children
        if isinstance(y, Tree) and y.data in ("var", "add", "sub", "neg", "mul"):
            f = r.value(x, U.NONE, "combination factor")
            return {k: f * v for k, v in _combo_factors(r, y, cases).items()}
    raise DeckError("a combination is a sum of factor*CASE terms, e.g. 1.35*DEAD + 1.5*PIPES", r.loc(t))


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
    _file_name(str(path), "deck", None)
    try:
        there = path.exists()
    except OSError as exc:
        raise DeckError(f"deck '{path}' cannot be read: {exc.strerror}") from None
    if not there:
        raise DeckError(f"deck '{path}' does not exist")
    r = _Reader(path, let)
    r.read_file(path)
    r.unused_overrides()
    model = r.build()
    model.source = str(path)
    model.overrides = dict(r.overridden)
    return model


def read_text(text: str, name: str = "deck.deck", folder: str | Path = ".", let: dict | None = None) -> Model:
    """Read a deck from a string (used by tests); includes resolve relative to `folder`;
    `let` overrides parameters as in read_deck."""
    path = Path(folder) / name
    r = _Reader(path, let)
    r.lines[path.resolve()] = text.splitlines()
    r.stack.append(path.resolve())
    for stmt in r.parse(text, path).children:
        r.statement(stmt)
    r.stack.pop()
    r.unused_overrides()
    r.stack.append(path.resolve())
    model = r.build()
    model.overrides = dict(r.overridden)
    return model
