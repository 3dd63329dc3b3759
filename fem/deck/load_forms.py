"""What follows a load's value in a harmonic case: `lag ANGLE`, `like f^n at FREQ`, and an
unbalance's `about AXIS` (docs/deck.md, Harmonic cases; the meaning in fem/harmonic_forms.py).

    force B1 = (0, 0, 800 N) lag 90 deg
    force B2 = (0, 0, 1.2 kN) like f^2 at 24.7 Hz
    unbalance B1 = 0.12 kg*m about (1, 0, 0) lag 30 deg
"""

from __future__ import annotations

import numpy as np
from lark import Token, Tree

from ..errors import DeckError
from . import units as U

__all__ = ["UNBALANCE", "load_forms"]

UNBALANCE = (1, 1, 0)       # m e: kg m
_AXES = {"x": (1.0, 0.0, 0.0), "y": (0.0, 1.0, 0.0), "z": (0.0, 0.0, 1.0)}


def _power(reader, t, what: str) -> float:
    """n of `f^n` (or 1 of `f`), written as the letter f raised to a plain number."""
    if isinstance(t, Tree) and t.data == "var" and str(t.children[0]) == "f":
        return 1.0
    if isinstance(t, Tree) and t.data == "pow" and isinstance(t.children[0], Tree) \
            and t.children[0].data == "var" and str(t.children[0].children[0]) == "f":
        return reader.value(t.children[1], U.NONE, what)
    raise DeckError(f"{what}: 'like' takes f raised to a power, e.g. like f^2 at 24.7 Hz", reader.loc(t),
                    "f stands for the frequency; the load's value is its amplitude at the frequency after 'at'")


def _axis(reader, t, what: str) -> np.ndarray:
    if isinstance(t, Tree) and t.data == "var" and str(t.children[0]).lower() in _AXES:
        return np.array(_AXES[str(t.children[0]).lower()])
    if not (isinstance(t, Tree) and t.data == "vector"):
        raise DeckError(f"{what}: 'about' takes the shaft's axis, x, y, z or a direction (ax, ay, az)", reader.loc(t))
    a = reader.vector(t, U.NONE, what)
    if not np.linalg.norm(a) > 0:
        raise DeckError(f"{what}: the shaft's axis cannot be (0, 0, 0)", reader.loc(t), "e.g. about (1, 0, 0)")
    return a / np.linalg.norm(a)


def load_forms(reader, case: str, kind: str, load: str, value, extra, where) -> dict:
    """The LoadItem fields of a load's `extra` trees (lag, like, about) in case `case` of `kind`:
    {'lag': rad, 'like': (n, f0 Hz), 'vector': an unbalance's m e along its axis}; each refused
    where it is written when the case or the load does not take it."""
    what = f"case {case}: {load}"
    out, seen = {}, {}
    for t in extra:
        key = t.data
        if key in seen:
            raise DeckError(f"{what}: '{key}' is given twice; the first is at {seen[key]}", reader.loc(t))
        seen[key] = reader.loc(t)
        if kind != "harmonic":
            raise DeckError(f"{what}: '{key}' belongs to the loads of a harmonic case; a {kind} case's loads "
                            "act as written", reader.loc(t))
        if key == "lag":
            out["lag"] = reader.ev.angle(t.children[0], f"{what}: lag")
        elif key == "like":
            if load == "unbalance":
                raise DeckError(f"{what}: an unbalance already grows with the square of the frequency",
                                reader.loc(t), "remove 'like ...'")
            n = _power(reader, t.children[0], what)
            if not abs(n) <= 4:
                raise DeckError(f"{what}: like f^{n:g}: the power is a number from -4 to 4", reader.loc(t))
            f0 = reader.value(t.children[1], U.FREQ, f"{what}: like ... at")
            if not f0 > 0:
                raise DeckError(f"{what}: like ... at: the frequency must be positive", reader.loc(t.children[1]))
            out["like"] = (n, f0)
        elif load != "unbalance":
            raise DeckError(f"{what}: 'about' gives an unbalance's shaft axis; a {load} has its direction "
                            "in its value", reader.loc(t))
        else:
            out["vector"] = _axis(reader, t.children[0], f"{what}: about")
    if load == "unbalance":
        if isinstance(value, Tree) and value.data == "vector" or isinstance(value, Token) and value.type == "STRING":
            raise DeckError(f"{what}: an unbalance is one value, m e (mass times eccentricity), "
                            "with its shaft's axis after 'about'", reader.loc(value),
                            "e.g. unbalance B1 = 0.12 kg*m about (1, 0, 0)")
        dim = reader.ev.evaluate(value).dim
        if dim not in (UNBALANCE, None):                   # None: a bare 0, refused below
            raise DeckError(f"{what}: m e is a mass times its eccentricity, in kg*m, but {U.dim_name(dim)} was "
                            "given", reader.loc(value), "e.g. 0.12 kg*m, or 2.4 kg * 50 mm")
        me = reader.value(value, UNBALANCE, f"{what} (m e, kg*m)")
        if not me > 0:
            raise DeckError(f"{what}: m e must be positive", reader.loc(value))
        if "vector" not in out:
            raise DeckError(f"{what}: give the shaft's axis the unbalance turns about", where,
                            "e.g. unbalance B1 = 0.12 kg*m about (1, 0, 0) (turning positively about +X)")
        out["vector"] = me * out["vector"]
    return out
