"""The deck's expressions and units: values with their dimensions worked out by walking the
parse tree (never Python eval), the parameters in scope (let, loop counters, overrides given
with `let=` or --set) and the units that bare numbers stand for (assume)."""

from __future__ import annotations

import math
import re
from contextlib import contextmanager
from pathlib import Path

import numpy as np
from lark import Token, Tree

from ..errors import DeckError, Location, suggest
from . import literals
from . import units as U
from .compiled import binary as _binary
from .compiled import compiled
from .units import Quantity

__all__ = ["MAX_NESTING", "WILD", "Evaluator", "too_deep"]

WILD = None  # dimension of a bare literal 0, which fits any dimension
# Our choice: expressions and loops are read by walking their tree, one Python call per level;
# 200 levels keep that far inside the interpreter's recursion limit (1000 frames) whatever
# calls the reader, and no deck written by hand nests so deep.
MAX_NESTING = 200
_EXPRESSIONS = {"add", "sub", "mul", "div", "pow", "neg", "unary", "call", "var", "number", "quantity",
                "vector", "name", "index"}
_FUNCS = {"sqrt": math.sqrt, "sin": math.sin, "cos": math.cos, "tan": math.tan,
          "atan": math.atan, "abs": abs, "exp": math.exp, "log": math.log}
_ASSUMABLE = {"length": U.LENGTH, "force": U.FORCE, "mass": U.MASS, "time": U.TIME,
              "stress": U.PRESSURE, "density": U.DENSITY}
_FLOAT_MAX = float(np.finfo(float).max)
_OPS = {"add": "__add__", "sub": "__sub__", "mul": "__mul__", "div": "__truediv__", "pow": "__pow__"}


class Evaluator:
    """Values of expressions in the parameters in scope. `loc` locates a tree or token (the
    deck's sources); `let` maps parameter names to overrides (deck text or plain numbers)."""

    def __init__(self, sources, let: dict | None = None):
        self.sources = sources
        self.loc = sources.loc
        self.vars: dict[str, Quantity] = {"pi": Quantity(math.pi), "g0": Quantity(9.80665, U.ACCEL)}
        self.unitless: set[str] = set()           # parameters written as bare numbers (let a = 30)
        self.loop_vars: list[str] = []            # the counters of the enclosing loops
        self.assumed: dict[tuple, float] = {}
        self.assume_sites: dict[tuple, tuple[str, float, Location]] = {}   # dim -> (statement, factor, where)
        self.quantities: dict[str, Quantity] = {}      # literal text -> value, e.g. "6 m"
        self.overrides = self.override_trees(let or {})  # name -> (text, expression tree) from --set
        self.overridden: dict[str, str] = {}           # the overrides used, name -> text, in deck order
        self._fast: dict[int, tuple] = {}              # id(tree) -> (tree, compiled), in loops

    # ---------- scopes
    def scope(self) -> tuple:
        """The parameters in force now, for a statement whose values are worked out when the
        model is built (a case, a combination): inside a loop, the values of this pass."""
        return dict(self.vars), frozenset(self.unitless), tuple(self.loop_vars)

    def use_scope(self, scope: tuple) -> None:
        self.vars, self.unitless, self.loop_vars = scope[0], set(scope[1]), list(scope[2])

    @contextmanager
    def counter(self, name: str):
        """`name` is a loop's counter while the block runs (set each pass with `count`); after the
        loop, the name means what it meant before."""
        saved = self.vars.get(name)
        self.loop_vars.append(name)
        try:
            yield
        finally:
            self.loop_vars.pop()
        if saved is not None:
            self.vars[name] = saved
        else:
            self.vars.pop(name, None)

    def count(self, name: str, k: int) -> None:
        self.vars[name] = Quantity(float(k), WILD if k == 0 else U.NONE)

    def let_name(self, name: str, where: Location) -> None:
        """Refuse a let of a loop counter or a built-in constant."""
        if name in self.loop_vars:
            raise DeckError(f"'{name}' is the variable of an enclosing loop; a let cannot change it", where,
                            "give the parameter another name")
        if name in ("pi", "g0"):
            raise DeckError(f"'{name}' is a built-in constant and cannot be redefined", where)

    def let(self, name: str, expr, where: Location) -> None:
        """`let name = expr`, or its override."""
        if name in self.overrides:
            self.vars[name] = self.overridden_let(name, expr, where)
        else:
            self.vars[name] = self.evaluate(expr)
        if self.bare(expr):
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

    # ---------- overrides of let parameters (--set NAME=VALUE, read_deck(let=...))
    def override_trees(self, let: dict) -> dict[str, tuple[str, Tree]]:
        """Each override parsed as the expression of a let, so the deck's own evaluator reads it;
        its tokens are located in a line of its own named after the option, '--set NAME'."""
        sources = self.sources
        out = {}
        for name, value in let.items():
            label = f"--set {name}"
            if not isinstance(name, str) or not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", name):
                raise DeckError(f"{label}: '{name}' is not a parameter name (letters, digits and _)")
            text = _override_text(value, label)
            line = f"let {name} = {text}"
            path = Path(label)
            sources.lines[path] = [line]
            with sources.reading(path):
                tree = sources.parse(line + "\n", path)
            stmts = tree.children
            if len(stmts) != 1 or stmts[0].data != "let":
                raise DeckError(f"{label}: '{text}' is not one value", None,
                                "give a value or an expression, e.g. --set H=30 m or --set n=4")
            sources.mark(stmts[0], path)
            out[name] = (text, stmts[0].children[1])
        return out

    def overridden_let(self, name: str, expr, where: Location) -> Quantity:
        """The value of `let name = expr` with its override: the same dimension as the deck's
        own expression (worked out too, so the check never depends on the override), and a
        parameter written as a bare number stays one."""
        text, tree = self.overrides[name]
        label = f"--set {name}"
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
                            f"({U.dim_name(new.dim)})", None, U.unit_remedy(own.dim, new.dim))
        self.overridden[name] = text
        return new

    def unused_overrides(self, lets) -> None:
        """Refuse an override that names no let of the deck (`lets`), with the nearest let name."""
        for name in self.overrides:
            if name not in self.overridden:
                lets = list(lets)
                raise DeckError(f"--set {name}: the deck has no let of that name; "
                                + (suggest(name, lets) if lets else "it defines no parameters with let"))

    # ---------- values
    def evaluate(self, t) -> Quantity:
        """The value of expression tree `t`. Inside loops each tree is compiled once into nested
        closures (fem/deck/compiled.py) that the later passes call; any failure of theirs is worked out again
        by the tree walk, which gives the located error."""
        if self.loop_vars and isinstance(t, Tree):
            fast = self._fast.get(id(t))
            if fast is None or fast[0] is not t:
                fast = self._fast[id(t)] = (t, compiled(self, t))     # the tree kept: its id stays its own
            try:
                return fast[1]()
            except Exception:   # noqa: BLE001 - the walk below raises the located error
                pass
        return self.walk(t)

    def walk(self, t) -> Quantity:
        if isinstance(t, Token):
            raise DeckError(f"expected a value, found {t!s}", self.loc(t))
        d = t.data
        ch = t.children
        try:
            if d == "number":
                try:
                    v = literals.number(str(ch[0]))
                except literals.LiteralError as exc:
                    raise DeckError(exc.message, self.loc(t), exc.hint) from None
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
            if d == "pow" and isinstance(ch[0], Tree) and ch[0].data == "quantity":
                self.spaced_power(ch[0].children[0])
            if d in _OPS:
                a, b = self.evaluate(ch[0]), self.evaluate(ch[1])
                q = _binary(a, b, _OPS[d])
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
        try:
            q = literals.quantity(text)
        except literals.LiteralError as exc:
            raise DeckError(exc.message, self.loc(tok), exc.hint) from None
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
        return self.si(self.evaluate(t), dim, what, t)

    def si(self, q: Quantity, dim, what: str, t=None) -> float:
        """The SI float of `q`, the value of `t` (the tree refusals point at), as `dim`."""
        if q.dim is WILD or q.dim == dim:
            v = q.value
        elif q.dim == U.NONE and (f := self.assumed_factor(dim)) is not None:
            v = q.value * f
        elif q.dim == U.NONE:
            example, assume = U.UNIT_EXAMPLES.get(dim, ("6 m", "length in m"))
            raise DeckError(f"{what} needs {U.dim_name(dim)}, but a bare number was given", self._at(t),
                            f"write the unit after the number, e.g. '{example}'"
                            + (f", or declare 'assume {assume}'" if assume else ""))
        else:
            raise DeckError(f"{what} needs {U.dim_name(dim)}, but {U.dim_name(q.dim)} was given", self._at(t),
                            U.unit_remedy(dim, q.dim))
        if not math.isfinite(v):
            raise DeckError(f"{what} is not a finite number", self._at(t))
        return v

    def _at(self, t) -> Location | None:
        return None if t is None else self.loc(t)

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

    def name(self, t) -> str:
        """A name as written, with its indices worked out: N[i, 2] -> N3_2 (i = 3)."""
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

    # ---------- assumed units of bare numbers
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

    def assume(self, what_tok, unit_tok, where: Location) -> None:
        """`assume WHAT in UNIT`: bare numbers of that quantity are in that unit from here on."""
        what, unit = str(what_tok), str(unit_tok)
        if what not in _ASSUMABLE:
            raise DeckError(f"cannot assume units for '{what}'; {suggest(what, _ASSUMABLE)}", self.loc(what_tok))
        q = U.unit_value(unit)
        if what == "density":
            raise DeckError("a density has no unit symbol of its own: it follows from the assumed mass and "
                            "length", self.loc(what_tok), "e.g. assume mass in t and assume length in mm "
                            "make a bare density mean t/mm^3; or write the unit, density = 7850 kg/m^3")
        if q is None or q.dim != _ASSUMABLE[what]:
            raise DeckError(f"'{unit}' is not a unit of {what}", self.loc(unit_tok))
        dim = _ASSUMABLE[what]
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


def _g(v: float) -> str:
    return f"{v:g}"


def too_deep(tree: Tree):
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
