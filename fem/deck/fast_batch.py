"""The quick lines of a file (fem/deck/fast_lines.py) read a run at a time: a run is the quick
lines between two of lark's statements, so the parameters, assumed units and names in force are
the same for all of them. The node and member lines of a run are read together: their literals
converted column by column with the evaluator's rules (literals.py, Evaluator.si), their names
checked at once, their definitions recorded in the order of the lines. The support and mass
lines, and a run any line of which would be refused (a name defined twice, a unit that does not
fit, a coordinate beyond any structure), are read line by line by `fast_lines.run`, whose
refusal makes the reader read the deck again with lark alone (fem/deck/reader.py)."""

from __future__ import annotations

import re

import numpy as np
from ..errors import Location
from . import fast_lines, literals
from . import units as U

__all__ = ["run"]

_G = {name: k - 1 for name, k in fast_lines.LINE.groupindex.items()}     # group name -> index in groups()
_NN, _MN, _MI, _MJ, _MK, _MS, _MM = (_G[g] for g in ("nn", "mn", "mi", "mj", "mk", "ms", "mm"))
_XYZ = [(_G[t + "s"], _G[t + "n"], _G[t + "u"]) for t in "xyz"]
_FEW = 16            # a shorter run is read line by line


class _Refused(Exception):
    """A line of the run would be refused: the run is read line by line."""


def run(st, items: list, path, shown: str, src: list[str]) -> None:
    """Run the quick lines `items` of file `path` (named `shown`, lines `src`), consecutive in the
    file with none of lark's statements between them, through Statements `st`."""
    rest = items
    if len(items) >= _FEW:
        try:
            with np.errstate(all="ignore"):
                rest = _together(st, items, path, shown, src)
        except _Refused:
            rest = items
    for q in rest:
        fast_lines.run(st, q, path, shown, src)


def _together(st, items: list, path, shown: str, src: list[str]) -> list:
    """Read the node and member lines of `items` together; the other lines, to be read one by one."""
    rows = [q.match.groups() for q in items]
    nodes = [k for k, g in enumerate(rows) if g[_NN] is not None]
    members = [k for k, g in enumerate(rows) if g[_MN] is not None]
    if not nodes and not members:
        return items
    node_names = [rows[k][_NN] for k in nodes]
    member_names = [rows[k][_MN] for k in members]
    xyz = np.empty((len(nodes), 3))
    for c, (s, n, u) in enumerate(_XYZ):
        xyz[:, c] = _si(st.ev, [rows[k][s] for k in nodes], [rows[k][n] for k in nodes],
                        [rows[k][u] for k in nodes], U.LENGTH)
    from .statements import MAX_COORDINATE        # (statements imports the reader of quick lines)
    if len(nodes) and np.abs(xyz).max() > MAX_COORDINATE:
        raise _Refused
    names = node_names + member_names
    defined = st.defs.defined
    if len(set(names)) != len(names) or any((space, n) in defined for n in names
                                            for space in ("node", "member", "group")):
        raise _Refused
    # every line of the run is accepted: record them in the order of the lines
    nsrc = len(src)
    where = [Location(shown, q.line, q.column, src[q.line - 1] if 0 < q.line <= nsrc else "") for q in items]
    kinds = [None] * len(items)
    for k, n in zip(nodes, node_names):
        kinds[k] = ("node", n)
    for k, n in zip(members, member_names):
        kinds[k] = ("member", n)
    defined.update([(key, (key[0], where[k])) for k, key in enumerate(kinds) if key is not None])
    st.defs.nodes.update(zip(node_names, zip(list(xyz), [where[k] for k in nodes])))
    plain, mems, spot = st.plain_member, st.defs.members, fast_lines.Spot
    for k, name in zip(members, member_names):
        q, g = items[k], rows[k]
        m, line = q.match, q.line
        mems[name] = plain(name, (g[_MI], spot(m, "mi", line, path)), (g[_MJ], spot(m, "mj", line, path)), g[_MK],
                           (g[_MS], spot(m, "ms", line, path)), (g[_MM], spot(m, "mm", line, path)), where[k])
    done = set(nodes) | set(members)
    return [q for k, q in enumerate(items) if k not in done]


def _si(ev, signs: list, nums: list, units: list, dim) -> np.ndarray:
    """The SI values, as `dim`, of literals written sign, number, unit (None for a bare number),
    as fast_lines._si gives them one by one: literals.number or literals.quantity, the sign, then
    Evaluator.si (a sign commutes with the conversion's products and quotients)."""
    v = np.array(list(map(float, nums)))
    if not np.all(np.isfinite(v)):
        raise _Refused
    for k in np.flatnonzero(v == 0).tolist():            # a number too small to hold
        if re.search(r"[1-9]", re.split(r"[eE]", nums[k])[0]):
            raise _Refused
    out = np.where(np.array([s == "-" for s in signs], bool), -v, v)
    by_unit: dict = {}
    for k, u in enumerate(units):
        by_unit.setdefault(u, []).append(k)
    for u, ks in by_unit.items():
        ks = np.array(ks)
        x = out[ks]
        if u is None:                                    # a bare number; a bare 0 fits any dimension
            f = ev.assumed_factor(dim)
            if f is None and np.any(x != 0):
                raise _Refused
            if f is not None:
                out[ks] = np.where(x == 0, x, x * f)
            continue
        try:
            steps = literals.unit_steps(u.strip())
        except Exception:   # noqa: BLE001 - an unknown unit: refused line by line
            raise _Refused from None
        d = U.NONE
        for op, base in steps:
            x = x * base.value if op == "*" else x / base.value
            d = tuple((a + b) if op == "*" else (a - b) for a, b in zip(d, base.dim))
        if d != dim or not np.all(np.isfinite(x)) or np.any((x == 0) & (v[ks] != 0)):
            raise _Refused
        out[ks] = x
    if not np.all(np.isfinite(out)):
        raise _Refused
    return out
