"""Number literals of the deck, bare (6.5, 1e-3) or with a unit (6 m, 7850 kg/m^3), to values in
SI units: one definition shared by the expression evaluator and the quick line reader, so both
give the same float to the last bit.

A failure is a LiteralError carrying the message and hint; the caller adds the location.
"""

from __future__ import annotations

import math
import re

import numpy as np

from ..errors import suggest
from . import units as U
from .units import Quantity

__all__ = ["LiteralError", "number", "quantity", "unit_steps"]

_FLOAT_MAX = float(np.finfo(float).max)
# the number at the front of a QUANTITY token (grammar/deck.lark); no unit starts with e or E
_NUMBER = re.compile(r"(\d+(?:\.\d+)?|\.\d+)(?:[eE][+-]?\d+)?")
_STEPS: dict[str, tuple] = {}          # unit text -> its steps, e.g. 'kg/m^3' -> ((*, kg), (/, m^3))


class LiteralError(ValueError):
    """A literal that cannot be read: `message` and `hint` for a DeckError at its token."""

    def __init__(self, message: str, hint: str = ""):
        super().__init__(message)
        self.message, self.hint = message, hint


def number(text: str) -> float:
    """A number as written in the deck; one that overflows to inf or underflows to 0 is refused
    rather than silently changed."""
    v = float(text)
    if math.isinf(v):
        raise LiteralError(f"the number {text} is too large (numbers reach about {_FLOAT_MAX:.1e})")
    if v == 0 and re.search(r"[1-9]", re.split(r"[eE]", text)[0]):
        raise LiteralError(f"the number {text} is too small to hold (the smallest is about 5e-324)",
                           "write 0 if zero is meant")
    return v


def quantity(text: str) -> Quantity:
    """The SI value of a number with its unit, the text of a QUANTITY token ('6 m', '9.81 m/s^2').
    An exponent of a unit beyond units.MAX_UNIT_POWER raises ArithmeticError (as any operation on
    quantities does)."""
    head = _NUMBER.match(text)
    value = number(head.group(0))
    steps = unit_steps(text[head.end():].strip())
    if len(steps) == 1 and steps[0][0] == "*":      # one unit: the product Quantity.__mul__ forms
        base = steps[0][1]
        q = Quantity(value * base.value, base.dim)
    else:
        q = Quantity(value)
        for op, base in steps:
            q = q * base if op == "*" else q / base
    if not math.isfinite(q.value) or (q.value == 0 and value != 0):
        raise LiteralError(f"{text} is beyond the range of numbers once converted to SI units")
    return q


def unit_steps(unit: str) -> tuple:
    """The steps that convert a number with the unit `unit` ('kg/m^3') to SI, in order, as
    (operator, Quantity) pairs: (('*', kg), ('/', m^3)); worked out once per unit text."""
    steps = _STEPS.get(unit)
    if steps is None:
        steps = _STEPS[unit] = _steps(unit)
    return steps


def _steps(unit: str) -> tuple:
    """'kg/m^3' -> (('*', kg), ('/', m^3)): each unit's value raised to its power, in order."""
    out = []
    for op, sym, power in _split_unit(unit):
        base = U.unit_value(sym)
        if base is None:
            raise LiteralError(f"unknown unit '{sym}'; {suggest(sym, U.UNITS)}")
        out.append((op, base ** Quantity(power)))
    return tuple(out)


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
