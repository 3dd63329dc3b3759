"""The rules of typed inputs: the error a broken rule raises (naming the deck options it
concerns, so the reader can point at them) and the equality of frozen inputs holding arrays."""

from __future__ import annotations

from dataclasses import fields, is_dataclass

import numpy as np

__all__ = ["RuleError", "same_fields"]


class RuleError(ValueError):
    """A case or damping rule broken. `options` are the deck options the rule concerns (the reader
    locates the message at the first of them the deck writes, else at the case); `hint` says
    how to mend it."""

    def __init__(self, message: str, *options: str, hint: str = ""):
        super().__init__(message)
        self.message = message
        self.options = options
        self.hint = hint


def same_fields(a, b) -> bool:
    """Equality field by field, arrays by value, fields marked compare=False left out."""
    if isinstance(a, np.ndarray) or isinstance(b, np.ndarray):
        return (isinstance(a, np.ndarray) and isinstance(b, np.ndarray) and a.shape == b.shape
                and bool(np.array_equal(a, b)))
    if is_dataclass(a) and not isinstance(a, type):
        return type(a) is type(b) and all(same_fields(getattr(a, f.name), getattr(b, f.name))
                                          for f in fields(a) if f.compare)
    if isinstance(a, (tuple, list)):
        return type(a) is type(b) and len(a) == len(b) and all(map(same_fields, a, b))
    if isinstance(a, dict):
        return isinstance(b, dict) and a.keys() == b.keys() and all(same_fields(a[k], b[k]) for k in a)
    return a == b


def g(v: float) -> str:
    return f"{v:g}"


def vector(v, n: int = 3) -> np.ndarray:
    """A copy of v as a float array of n finite values (a case keeps its own)."""
    out = np.array(v, dtype=float).reshape(-1)
    if out.shape != (n,) or not np.isfinite(out).all():
        raise RuleError(f"expected {n} finite values, got {v!r}")
    return out
