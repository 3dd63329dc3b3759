"""Machines and frequency bands in a deck, and the modes case's choice of them.

    machine FAN at HUB { speed = (900 rpm, 1480 rpm), orders = (1, 2), blades = 6, margin = 20 percent }
    machine MOTOR at BASE { speed = 1480 rpm, line = 50 Hz }
    band FOOTFALL { from = 1.6 Hz, to = 2.4 Hz, margin = 0 percent }
    band STACK at TOP { wind = (4 m/s, 14 m/s), width = 323.9 mm }      # vortex shedding, f = St v / b
    case MODES modes { fmax = 60 Hz, resonance = (FAN, STACK) }            # default: every one declared

Each statement is read where it is written (the values of its pass of a loop) into the types of
`fem.excitation`; the node after `at` is looked up when the model is built, like a member's
nodes. Speeds and frequencies need their unit (`1480` alone could be rpm or Hz), even under an
`assume`; a margin is a fraction (`20 percent`).
"""

from __future__ import annotations

from lark import Tree

from ..errors import DeckError, suggest
from ..excitation import DEFAULT_MARGIN, STROUHAL_CIRCLE, FrequencyBand, Machine
from . import units as U

__all__ = ["BAND_KEYS", "MACHINE_KEYS", "excitation_statement", "model_excitations", "resonance_names"]

MACHINE_KEYS = ("speed", "orders", "blades", "line", "margin")
BAND_KEYS = ("from", "to", "at", "wind", "width", "strouhal", "margin")
_VELOCITY = (0, 1, -1)


def excitation_statement(st, s: Tree, kind: str) -> None:
    """Read a `machine` or `band` statement `s` with the statement runner `st` (its evaluator,
    definitions and locations) into st.defs.excitations as (excitation, where, node token)."""
    ev, defs, loc = st.ev, st.defs, st.loc
    name_t, node_t, *items = s.children
    name, where = ev.name(name_t), loc(s)
    defs.define("excitation", kind, name, where)
    keys = MACHINE_KEYS if kind == "machine" else BAND_KEYS
    opts, seen = {}, set()
    for opt in items:
        if opt is None:
            continue
        key = str(opt.children[0])
        defs.once(seen, key, loc(opt), f"{kind} {name}")
        if key not in keys:
            raise DeckError(f"{kind} {name}: unknown option '{key}'; {suggest(key, keys)}", loc(opt.children[0]),
                            f"a {kind} takes " + ", ".join(keys))
        opts[key] = (opt.children[1], loc(opt))
    node_tok = None if node_t is None else st.fixed_name(node_t)
    node = None if node_t is None else ev.name(node_t)
    who = f"{kind} {name}"
    margin = _margin(ev, opts, who)
    try:
        if kind == "machine":
            made = _machine(ev, name, opts, who, margin, node, where)
        else:
            made = _band(ev, name, opts, who, margin, node, where)
    except DeckError:
        raise
    except ValueError as exc:         # a rule of fem.excitation, located at the statement
        raise DeckError(str(exc), where) from None
    defs.excitations.append((made, where, node_tok))


def _frequency(ev, t, what: str) -> float:
    """A frequency written with its unit (Hz or rpm); a bare number is refused even under an assume."""
    if ev.bare(t):
        v = ev.evaluate(t).value
        raise DeckError(f"{what} needs its unit: {v:g} could be rpm or Hz", ev.loc(t),
                        f"write {v:g} rpm or {v:g} Hz")
    return ev.value(t, U.FREQ, what)


def _pair(ev, t, where, what: str, read) -> tuple[float, float]:
    """(low, high) from a vector of two values, each read by read(tree, what); a range that runs
    backwards is refused."""
    if not (isinstance(t, Tree) and t.data == "vector" and len(t.children) == 2):
        raise DeckError(f"{what} is a range of two values (low, high)", ev.loc(t))
    lo, hi = (read(c, what) for c in t.children)
    if hi < lo:
        raise DeckError(f"{what}: the range runs backwards (it ends below where it starts)", where,
                        "give it as (low, high)")
    return lo, hi


def _margin(ev, opts, who: str) -> float:
    if "margin" not in opts:
        return DEFAULT_MARGIN
    t, where = opts["margin"]
    v = ev.value(t, U.NONE, f"{who}: margin")
    if not 0 <= v < 1:
        raise DeckError(f"{who}: margin is a fraction of the excitation frequency, from 0 to below 100 percent, "
                        f"got {v:g}", where, f"write it with its unit, e.g. margin = {v:g} percent" if v >= 1 else "")
    return v


def _machine(ev, name, opts, who, margin, node, where) -> Machine:
    if "speed" not in opts:
        raise DeckError(f"{who} needs its running speed: speed = 1480 rpm, or a range speed = (900 rpm, 1480 rpm)",
                        where)
    t, at = opts["speed"]
    if isinstance(t, Tree) and t.data == "vector":
        speed = _pair(ev, t, at, f"{who}: speed", lambda c, w: _frequency(ev, c, w))
    else:
        speed = _frequency(ev, t, f"{who}: speed")
    orders = (1.0, 2.0)
    if "orders" in opts:
        t, at = opts["orders"]
        if isinstance(t, Tree) and t.data == "var" and str(t.children[0]) == "none":
            orders = ()
        else:
            items = t.children if isinstance(t, Tree) and t.data == "vector" else [t]
            orders = tuple(ev.value(c, U.NONE, f"{who}: orders") for c in items)
            if any(k <= 0 for k in orders):
                raise DeckError(f"{who}: orders are multiples of the running speed, above 0 (1 for 1x, 2 for 2x)", at)
    blades = None
    if "blades" in opts:
        t, at = opts["blades"]
        b = ev.value(t, U.NONE, f"{who}: blades")
        if b != int(b) or b < 1:
            raise DeckError(f"{who}: blades is the number of blades or vanes, a whole number of 1 or more, got {b:g}",
                            at)
        blades = int(b)
    line = _frequency(ev, opts["line"][0], f"{who}: line") if "line" in opts else None
    return Machine(name, speed, orders, blades, line, node, margin)


def _band(ev, name, opts, who, margin, node, where) -> FrequencyBand:
    plain = [k for k in ("from", "to", "at") if k in opts]
    vortex = [k for k in ("wind", "width", "strouhal") if k in opts]
    if plain and vortex:
        raise DeckError(f"{who}: give the band as from and to (or at), or as vortex shedding with wind and width, "
                        f"not both ({', '.join(plain)} with {', '.join(vortex)})", opts[vortex[0]][1])
    if vortex:
        for k in ("wind", "width"):
            if k not in opts:
                raise DeckError(f"{who}: vortex shedding needs wind = (low, high) in m/s and width, the member's "
                                f"cross-wind size; {k} is missing", where)
        wind = _pair(ev, opts["wind"][0], opts["wind"][1], f"{who}: wind",
                     lambda c, w: ev.value(c, _VELOCITY, w))
        width = ev.value(opts["width"][0], U.LENGTH, f"{who}: width")
        st = ev.value(opts["strouhal"][0], U.NONE, f"{who}: strouhal") if "strouhal" in opts else STROUHAL_CIRCLE
        return FrequencyBand.vortex_shedding(name, width, wind, st, margin, node)
    if "at" in opts:
        if "from" in opts or "to" in opts:
            raise DeckError(f"{who}: give one frequency (at) or a band (from and to), not both", opts["at"][1])
        f = _frequency(ev, opts["at"][0], f"{who}: at")
        return FrequencyBand(name, f, f, margin, node)
    if "from" not in opts or "to" not in opts:
        raise DeckError(f"{who} needs from and to (e.g. from = 1.6 Hz, to = 2.4 Hz), one frequency at = 100 Hz, or "
                        "wind and width for vortex shedding", where)
    lo = _frequency(ev, opts["from"][0], f"{who}: from")
    hi = _frequency(ev, opts["to"][0], f"{who}: to")
    if hi < lo:
        raise DeckError(f"{who}: 'to' ({hi:g} Hz) is below 'from' ({lo:g} Hz)", opts["to"][1], "give from below to")
    return FrequencyBand(name, lo, hi, margin, node)


def model_excitations(defs, nidx) -> tuple:
    """The excitations of the definitions, each one's node checked against the model's nodes."""
    out = []
    for made, _where, tok in defs.excitations:
        if made.node is not None and made.node not in nidx:
            raise DeckError(f"{'machine' if isinstance(made, Machine) else 'band'} {made.name}: node '{made.node}' "
                            f"is not defined; {suggest(made.node, list(nidx))}", defs.loc(tok))
        out.append(made)
    return tuple(out)


def resonance_names(val, where, case: str, declared, loc) -> tuple[str, ...]:
    """A modes case's `resonance = FAN`, `= (FAN, STACK)` or `= none`: the excitations it checks."""
    items = val.children if isinstance(val, Tree) and val.data == "vector" else [val]
    names = []
    for t in items:
        if not (isinstance(t, Tree) and t.data == "var"):
            raise DeckError(f"case {case}: resonance names the machines and bands to check, e.g. "
                            "resonance = (FAN, STACK), or none", loc(t))
        n = str(t.children[0])
        if n == "none" and len(items) == 1:
            return ()
        if n not in declared:
            raise DeckError(f"case {case}: resonance: '{n}' is not a machine or band of the deck; "
                            + (suggest(n, declared) if declared else "the deck declares none"), loc(t),
                            "declare it with machine NAME { ... } or band NAME { ... }")
        if n in names:
            raise DeckError(f"case {case}: resonance: '{n}' is named twice", loc(t), "keep one of them")
        names.append(n)
    return tuple(names)
