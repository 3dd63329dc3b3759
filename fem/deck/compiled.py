"""Loop bodies compiled once: an expression tree turned into nested closures that give its value
in the parameters in force when called, the same value as the tree walk of the Evaluator
(fem/deck/expressions.py), which calls them on every pass of a loop after the first. A closure
that fails raises; the Evaluator then walks the tree, which raises the located error."""

from __future__ import annotations

import math

from lark import Tree

from ..errors import DeckError
from . import units as U
from .units import Quantity

__all__ = ["binary", "compiled"]

WILD = None  # dimension of a bare literal 0, which fits any dimension (expressions.WILD)

_OPS = {"add": "__add__", "sub": "__sub__", "mul": "__mul__", "div": "__truediv__", "pow": "__pow__"}
_COMPILED = {"number", "quantity", "var", "neg", "unary", *_OPS}


def compiled(ev, t):
    """A function of no arguments giving the value of `t` in the parameters in force when it is
    called, as `ev.walk` does; the parts it does not compile call `ev.walk`."""
    d, ch = t.data, t.children
    if d in ("number", "quantity"):
        try:
            q = ev.walk(t)            # a literal's value depends on nothing else
        except DeckError:
            return lambda: ev.walk(t)
        return lambda: q
    if d == "var":
        name = str(t.children[0])
        return lambda: ev.vars[name]
    if d not in _COMPILED or not all(isinstance(c, Tree) for c in ch):
        return lambda: ev.walk(t)
    parts = [compiled(ev, c) for c in ch]
    if d == "neg":
        return lambda: -parts[0]()
    if d == "unary":
        return parts[0]
    if d == "pow" and ch[0].data == "quantity":
        try:
            ev.spaced_power(ch[0].children[0])
        except DeckError:
            return lambda: ev.walk(t)
    fa, fb, op, scaled = parts[0], parts[1], _OPS[d], d in ("mul", "div", "pow")

    def combined():
        a, b = fa(), fb()
        q = binary(a, b, op)
        if not math.isfinite(q.value) or (scaled and q.value == 0 and a.value != 0
                                          and (b.value != 0 or op == "__truediv__")):
            raise ArithmeticError        # refused by the walk, at its place
        return q
    return combined


def binary(a: Quantity, b: Quantity, op: str) -> Quantity:
    """a op b with a bare 0 (dimension WILD) fitting any dimension."""
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
