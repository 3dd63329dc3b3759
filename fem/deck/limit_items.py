"""A harmonic case's vibration limits as written in the deck (fem/vibration.py for their meaning):

    limit velocity M* = 4.5 mm/s rms over FAN          # a machine's speed range, or a band's
    limit displacement TOP = 0.2 mm over (10 Hz, 20 Hz)
    limit acceleration B1 = 0.5 m/s^2                   # every frequency of the case

The quantity is velocity, displacement or acceleration, each amplitude of X, Y, Z at the nodes
named (a name, a group or a pattern); the value an amplitude, or an RMS value with `rms`;
`over` a machine (its running-speed range), a band (from-to), a range (low, high) or one
frequency, each frequency with its unit (Hz or rpm).
"""

from __future__ import annotations

from lark import Token, Tree

from ..errors import DeckError, suggest
from ..excitation import Machine
from ..rules import RuleError
from ..vibration import QUANTITIES, VibrationLimit
from . import units as U
from .excitations import _frequency

__all__ = ["read_limit"]

_DIM = {"velocity": (0, 1, -1), "displacement": U.LENGTH, "acceleration": (0, 1, -2)}


def read_limit(reader, case: str, kind: str, it: Tree, nidx: dict) -> VibrationLimit:
    """The VibrationLimit of the `limit` item `it` of case `case` of `kind`, read with the case
    reader `reader` (its loc, value, targets, ev and defs)."""
    quantity_t, target, val, *extra = it.children
    where = reader.loc(it)
    if kind != "harmonic":
        raise DeckError(f"case {case}: a vibration limit belongs to a harmonic case (the motion allowed over its "
                        f"frequencies); a {kind} case takes none", where)
    quantity = str(quantity_t)
    if quantity not in QUANTITIES:
        raise DeckError(f"case {case}: limit '{quantity}' is not a quantity a limit holds; "
                        f"{suggest(quantity, QUANTITIES)}", reader.loc(quantity_t),
                        "e.g. limit velocity M* = 4.5 mm/s rms over FAN")
    what = f"case {case}: limit {quantity}"
    names = reader.targets(target, nidx, "node")
    if isinstance(val, Tree) and val.data == "vector" or isinstance(val, Token) and val.type == "STRING":
        raise DeckError(f"{what}: the limit is one value, the largest amplitude allowed in each of X, Y and Z",
                        reader.loc(val), f"e.g. limit {quantity} ... = {_EXAMPLE[quantity]}")
    value = reader.value(val, _DIM[quantity], what)
    if not value > 0:
        raise DeckError(f"{what}: the value must be above 0", reader.loc(val))
    rms, over, source, seen = False, None, None, {}
    for t in extra:
        if t.data in seen:
            raise DeckError(f"{what}: '{t.data}' is given twice; the first is at {seen[t.data]}", reader.loc(t))
        seen[t.data] = reader.loc(t)
        if t.data == "rms":
            rms = True
        else:
            over, source = _range(reader, t.children[0], what)
    text = str(target) if isinstance(target, Token) else ", ".join(names)
    try:
        return VibrationLimit(quantity, tuple(nidx[n] for n in names), value, rms, over, source, text, where)
    except RuleError as exc:
        raise DeckError(f"case {case}: {exc.message}", where, exc.hint) from None


_EXAMPLE = {"velocity": "4.5 mm/s rms", "displacement": "0.1 mm", "acceleration": "0.5 m/s^2"}


def _range(reader, t, what: str) -> tuple[tuple[float, float], str | None]:
    """((low, high) Hz, the excitation's name or None) of `over`: a machine's running-speed range,
    a band's from-to, a range (low, high) or one frequency."""
    if isinstance(t, Tree) and t.data == "var":
        name = str(t.children[0])
        declared = {e.name: e for e, *_ in reader.defs.excitations}
        if name in declared:
            e = declared[name]
            return (e.speed if isinstance(e, Machine) else (e.low, e.high)), name
        try:
            f = _frequency(reader.ev, t, f"{what}: over")
        except DeckError:
            raise DeckError(f"{what}: over '{name}' is not a machine or band of the deck, nor a frequency; "
                            + (suggest(name, list(declared)) if declared else "the deck declares none"),
                            reader.loc(t), "name a machine or band, or give a range, e.g. over (10 Hz, 16.5 Hz)"
                            ) from None
        return (f, f), None
    if isinstance(t, Tree) and t.data == "vector":
        if len(t.children) != 2:
            raise DeckError(f"{what}: over is a range of two frequencies (low, high), a machine or a band",
                            reader.loc(t))
        lo, hi = (_frequency(reader.ev, c, f"{what}: over") for c in t.children)
        if hi < lo:
            raise DeckError(f"{what}: over: the range runs backwards (it ends below where it starts)",
                            reader.loc(t), "give it as (low, high)")
        return (lo, hi), None
    f = _frequency(reader.ev, t, f"{what}: over")
    return (f, f), None
