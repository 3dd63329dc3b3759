"""A harmonic case's options (`HarmonicOptions`, mixed into the case options) and what may
follow a load's value in a harmonic case: `lag ANGLE`, `like f^n at FREQ` and an unbalance's
`about AXIS` (docs/deck.md, Harmonic sweep; their meaning in fem/harmonic_forms.py).

    force B1 = (0, 0, 800 N) lag 90 deg
    force B2 = (0, 0, 1.2 kN) like f^2 at 24.7 Hz
    unbalance B1 = 0.12 kg*m about (1, 0, 0) lag 30 deg
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
from lark import Token, Tree

from ..cases import HarmonicCase
from ..errors import DeckError, suggest
from ..vibration import range_problem
from . import units as U

__all__ = ["UNBALANCE", "HarmonicOptions", "listed_frequencies", "load_forms", "sweep_or_list"]

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


def listed_frequencies(reader, val, what: str) -> list[float]:
    """A harmonic case's `at`: one frequency or a list (f1, f2, ...), Hz."""
    many = isinstance(val, Tree) and val.data == "vector"
    return [reader.value(v, U.FREQ, what) for v in (val.children if many else [val])]


def sweep_or_list(case: str, options: dict, where) -> None:
    """Refuse a harmonic case's sweep options (from, to, points, spacing) beside `at`, and a case
    with neither a sweep's from and to nor `at`; `options` key -> (tree, location)."""
    if "at" in options:
        for key in ("from", "to", "points", "spacing"):
            if key in options:
                raise DeckError(f"case {case}: '{key}' belongs to a sweep; this case gives its "
                                "frequencies with at", options[key][1], f"remove {key}, or at")
        return
    for key in ("from", "to"):
        if key not in options:
            raise DeckError(f"case {case}: a harmonic case needs {key} = ... Hz (a sweep) or "
                            "at = ... Hz (one frequency or a list)", where)


class HarmonicOptions:
    """Mixed into the case options: a harmonic case from its options."""

    def harmonic_options(self, case, nidx) -> HarmonicCase:
        """Options of a harmonic case: from, to, points, spacing (a sweep) or at (frequencies),
        ground, correction, damping, rayleigh, modes, record."""
        out = {}
        for key, (val, where) in case.options.items():
            what = f"case {case.name}: {key}"
            word = str(val.children[0]) if isinstance(val, Tree) and val.data == "var" else None
            if key in ("from", "to"):
                out["fmin" if key == "from" else "fmax"] = self.value(val, U.FREQ, what)
            elif key == "at":
                out[key] = listed_frequencies(self, val, what)
            elif key == "points":
                out[key] = self.value(val, U.NONE, what)
            elif key == "spacing":
                out[key] = word
            elif key == "ground":
                out[key] = self.vector(val, U.ACCEL, what)
            elif key == "correction":
                if word not in ("on", "off"):
                    raise DeckError(f"{what} is on or off", where)
                out[key] = word == "on"
            elif not self.dynamic_common(case, key, val, where, out, nidx):
                known = ["from", "to", "points", "spacing", "at", "ground", "correction", "damping",
                         "rayleigh", "modes", "record"]
                raise DeckError(f"case {case.name}: unknown option '{key}' for a harmonic case; "
                                f"{suggest(key, known)}", where)
        sweep_or_list(case.name, case.options, case.location)
        out = self.typed(case, HarmonicCase, **self.response_fields(case, out))
        for limit in case.limits:              # each limit's range against the case's frequencies, at the limit
            if problem := range_problem(out, limit):
                raise DeckError(problem, limit.location, "")
        if case.limits:
            out = replace(out, limits=tuple(case.limits))
        self.table_rows(out, out.points if out.at is None else len(out.at), "frequencies", out.record, nidx,
                        "fewer points")
        return out
